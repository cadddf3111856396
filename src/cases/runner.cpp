#include "swaybound/cases/runner.hpp"

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <exception>
#include <map>
#include <mutex>
#include <thread>

#include "swaybound/core/cancel.hpp"

namespace swaybound {

int default_jobs() {
  const unsigned n = std::thread::hardware_concurrency();
  return n == 0 ? 1 : static_cast<int>(n);
}

void run_parallel(const Model& model, long count, const RunnerOptions& options,
                  const std::function<CaseMetrics(long index, Workspace& ws)>& work,
                  const std::function<void(CaseMetrics&&)>& consume) {
  const int jobs = options.jobs > 0 ? options.jobs : default_jobs();
  const auto start = std::chrono::steady_clock::now();
  std::mutex mutex;
  std::condition_variable ready, room;
  std::map<long, CaseMetrics> pending;  // finished, waiting for their turn
  long next_to_consume = 0;
  std::atomic<long> next_index{0};
  std::exception_ptr failure;
  bool stop = false;

  const auto worker = [&]() {
    try {
      Workspace ws(model);
      for (;;) {
        const long i = next_index.fetch_add(1);
        if (i >= count) return;
        throw_if_cancelled();
        {
          std::unique_lock lock(mutex);
          room.wait(lock, [&] { return stop || i < next_to_consume + options.window; });
          if (stop) return;
        }
        CaseMetrics result = work(i, ws);
        std::lock_guard lock(mutex);
        pending.emplace(i, std::move(result));
        ready.notify_one();
      }
    } catch (...) {
      std::lock_guard lock(mutex);
      if (!failure) failure = std::current_exception();
      stop = true;
      ready.notify_all();
      room.notify_all();
    }
  };

  std::vector<std::thread> threads;
  for (int t = 0; t < jobs; ++t) threads.emplace_back(worker);
  auto last_report = start;
  try {
    while (next_to_consume < count) {
      CaseMetrics item;
      {
        std::unique_lock lock(mutex);
        ready.wait(lock, [&] { return stop || pending.count(next_to_consume) > 0; });
        if (stop) break;
        auto it = pending.find(next_to_consume);
        item = std::move(it->second);
        pending.erase(it);
        ++next_to_consume;
        room.notify_all();
      }
      consume(std::move(item));
      const auto now = std::chrono::steady_clock::now();
      if (options.progress && (now - last_report > std::chrono::milliseconds(250) || next_to_consume == count)) {
        options.progress({next_to_consume, count, std::chrono::duration<double>(now - start).count()});
        last_report = now;
      }
    }
  } catch (...) {
    std::lock_guard lock(mutex);
    if (!failure) failure = std::current_exception();
    stop = true;
    room.notify_all();
  }
  {
    std::lock_guard lock(mutex);
    stop = stop || failure != nullptr;
    room.notify_all();
  }
  for (auto& t : threads) t.join();
  if (failure) std::rethrow_exception(failure);
}

}  // namespace swaybound
