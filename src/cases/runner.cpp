#include "swaybound/cases/runner.hpp"

#include <algorithm>
#include <chrono>
#include <condition_variable>
#include <exception>
#include <mutex>
#include <thread>

#include "swaybound/core/cancel.hpp"
#include "swaybound/core/error.hpp"

namespace swaybound {

int default_jobs() {
  const unsigned n = std::thread::hardware_concurrency();
  return n == 0 ? 1 : static_cast<int>(n);
}

namespace detail {

long ordered_slots(long count, const RunnerOptions& options) {
  SWAYBOUND_REQUIRE(options.window >= 1, "the runner's window must be >= 1, got {}", options.window);
  return std::max(1L, std::min(options.window, count));
}

void run_ordered_slots(long count, const RunnerOptions& options,
                       const std::function<std::function<void(long index)>()>& make_worker,
                       const std::function<void(long index)>& consume_slot) {
  const long slots = ordered_slots(count, options);
  if (count <= 0) return;
  const int jobs = std::max(1, static_cast<int>(std::min<long>(options.jobs > 0 ? options.jobs : default_jobs(),
                                                               std::max(1L, count))));
  const auto start = std::chrono::steady_clock::now();
  std::mutex mutex;
  std::condition_variable ready, room;
  std::vector<char> finished(static_cast<std::size_t>(slots), 0);  // per slot: its item is done
  long next_to_claim = 0;    // guarded by mutex
  long consumed = 0;         // items whose consume returned; guarded by mutex
  std::exception_ptr failure;
  bool stop = false;
  const auto fail = [&](std::exception_ptr e) {
    std::lock_guard lock(mutex);
    if (!failure) failure = std::move(e);
    stop = true;
    ready.notify_all();
    room.notify_all();
  };

  const auto worker = [&]() {
    try {
      const std::function<void(long)> work = make_worker();
      for (;;) {
        long i;
        {
          std::unique_lock lock(mutex);
          if (stop || next_to_claim >= count) return;
          i = next_to_claim++;
        }
        throw_if_cancelled();
        {
          // Item i reuses the slot of item i - slots: wait until that one has been consumed.
          std::unique_lock lock(mutex);
          room.wait(lock, [&] { return stop || i < consumed + slots; });
          if (stop) return;
        }
        work(i);
        std::lock_guard lock(mutex);
        finished[static_cast<std::size_t>(i % slots)] = 1;
        ready.notify_all();
      }
    } catch (...) {
      fail(std::current_exception());
    }
  };

  std::vector<std::thread> threads;
  threads.reserve(static_cast<std::size_t>(jobs));
  try {
    for (int t = 0; t < jobs; ++t) threads.emplace_back(worker);
    auto last_report = start;
    for (long k = 0; k < count; ++k) {
      const auto s = static_cast<std::size_t>(k % slots);
      {
        std::unique_lock lock(mutex);
        ready.wait(lock, [&] { return stop || finished[s] != 0; });
        if (stop) break;
      }
      consume_slot(k);
      {
        std::lock_guard lock(mutex);
        finished[s] = 0;
        consumed = k + 1;
        room.notify_all();
      }
      const auto now = std::chrono::steady_clock::now();
      if (options.progress && (now - last_report > std::chrono::milliseconds(250) || k + 1 == count)) {
        options.progress({k + 1, count, std::chrono::duration<double>(now - start).count()});
        last_report = now;
      }
    }
  } catch (...) {
    fail(std::current_exception());
  }
  for (auto& t : threads) t.join();
  if (failure) std::rethrow_exception(failure);
}

}  // namespace detail

}  // namespace swaybound
