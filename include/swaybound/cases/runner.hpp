#pragma once
// Parallel, deterministic runner: `count` work items on `jobs` threads, each thread with its own
// state (e.g. a Workspace); results are handed to `consume` strictly in index order on the calling
// thread, so everything downstream (checks, CSV rows, JSON) is identical for any thread count.
// Item i starts only once item i - window has been consumed, so at most `window` results exist at
// a time whatever the count. Knows nothing of cases, checks or models: a result is any movable type.
#include <functional>
#include <memory>
#include <optional>
#include <utility>
#include <vector>

namespace swaybound {

struct Progress {
  long done = 0, total = 0;
  double elapsed = 0;  ///< [s]
};

struct RunnerOptions {
  int jobs = 0;          ///< 0: every hardware thread
  long window = 1024;    ///< how many items may be started ahead of the consumer (>= 1)
  std::function<void(const Progress&)> progress;  ///< called from the consuming thread, at most ~4 times/s
};

/// Number of threads `jobs = 0` means on this machine (at least 1).
int default_jobs();

namespace detail {

/// Number of result slots a run of `count` items keeps: min(window, count), at least 1.
long ordered_slots(long count, const RunnerOptions& options);

/// The scheduling of run_ordered, independent of the result type. Each thread calls `make_worker`
/// once (it builds the thread's state) and then the returned function for each index it claims;
/// that function must leave the item's result in slot index % ordered_slots. `consume_slot(i)` is
/// called on the calling thread for i = 0, 1, ... in order, once item i is finished. Cancellation
/// is polled before each item; the first exception (from any thread) stops the run, every thread
/// is joined, and it is rethrown.
void run_ordered_slots(long count, const RunnerOptions& options,
                       const std::function<std::function<void(long index)>()>& make_worker,
                       const std::function<void(long index)>& consume_slot);

}  // namespace detail

/// Runs work(index, state) for index = 0 .. count-1 on options.jobs threads, each thread with its
/// own state from make_state(), and hands each Result to consume(Result&&) in index order on the
/// calling thread. Throws Interrupted when cancellation is requested (polled between items) and
/// rethrows the first exception of work, make_state or consume after joining every thread.
template <class Result, class MakeState, class Work, class Consume>
void run_ordered(long count, const RunnerOptions& options, MakeState&& make_state, Work&& work, Consume&& consume) {
  std::vector<std::optional<Result>> slots(static_cast<std::size_t>(detail::ordered_slots(count, options)));
  const auto slot = [&](long index) -> std::optional<Result>& {
    return slots[static_cast<std::size_t>(index % static_cast<long>(slots.size()))];
  };
  detail::run_ordered_slots(
      count, options,
      [&]() -> std::function<void(long)> {
        // Shared so the std::function stays copyable whatever the state type.
        auto state = std::make_shared<decltype(make_state())>(make_state());
        return [&, state](long index) { slot(index).emplace(work(index, *state)); };
      },
      [&](long index) {
        Result result = std::move(*slot(index));
        slot(index).reset();
        consume(std::move(result));
      });
}

/// run_ordered without per-thread state: work(index) -> Result.
template <class Result, class Work, class Consume>
void run_ordered(long count, const RunnerOptions& options, Work&& work, Consume&& consume) {
  run_ordered<Result>(
      count, options, [] { return 0; }, [&](long index, int&) { return work(index); }, std::forward<Consume>(consume));
}

}  // namespace swaybound
