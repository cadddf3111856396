// Rank 0's side of an MPI job: the farm that deals out blocks of cases and gathers their metrics
// in case order (mpi_farm.hpp).
#include "mpi_farm.hpp"

#include <algorithm>
#include <chrono>
#include <condition_variable>
#include <cstdio>
#include <functional>
#include <map>
#include <mutex>

#include <fmt/format.h>

#include "mpi_wire.hpp"
#include "swaybound/cases/runner.hpp"
#include "swaybound/checks/case_wire.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/error.hpp"

namespace swaybound::cluster {

namespace {

/// Most blocks a rank's threads get at once, in cases per thread.
constexpr long kBlockPerThread = 16;

}  // namespace

MpiFarm::MpiFarm(int ranks)
    : ranks_(ranks),
      worker_threads_(static_cast<std::size_t>(ranks), 1),
      worker_plan_(static_cast<std::size_t>(ranks), 0),
      main_thread_(std::this_thread::get_id()) {
  stats_.cases_by_rank.assign(static_cast<std::size_t>(ranks), 0);
  same_node_.assign(static_cast<std::size_t>(ranks), 0);
  cpus_.assign(static_cast<std::size_t>(ranks), 1);
  // The other side of serve_cases' node grouping (collective over every rank).
  MPI_Comm node;
  MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, 0, MPI_INFO_NULL, &node);
  int leader = 0;
  MPI_Bcast(&leader, 1, MPI_INT, 0, node);
  MPI_Comm_free(&node);
  for (int r = 1; r < ranks_; ++r) {
    MPI_Status status;
    MPI_Probe(r, kHello, MPI_COMM_WORLD, &status);
    Unpack u{receive(status)};
    worker_threads_[static_cast<std::size_t>(r)] = std::max(1, u.get<std::int32_t>());
    same_node_[static_cast<std::size_t>(r)] = u.get<std::uint8_t>();
    cpus_[static_cast<std::size_t>(r)] = std::max(1, u.get<std::int32_t>());
  }
  cpus_[0] = allowed_cpus();
}

void MpiFarm::warn_binding(int jobs) {
  if (warned_binding_) return;
  warned_binding_ = true;
  for (int r = 0; r < ranks_; ++r) {
    const long threads = r == 0 ? std::max<long>(stage_jobs(jobs), jobs > 0 ? jobs : default_jobs())
                                : (jobs > 0 ? jobs : worker_threads_[static_cast<std::size_t>(r)]);
    if (threads > cpus_[static_cast<std::size_t>(r)]) {
      std::fprintf(stderr,
                   "swaybound: note: rank %d may run on %d core(s) but runs %ld threads: mpirun bound it; start "
                   "mpirun with --bind-to none (or give each rank as many cores as --jobs) so that its threads "
                   "run side by side\n",
                   r, cpus_[static_cast<std::size_t>(r)], threads);
      return;
    }
  }
}

int MpiFarm::stage_jobs(int jobs) const {
  const int hardware = default_jobs();
  long threads = jobs > 0 ? jobs : hardware;
  for (int r = 1; r < ranks_; ++r)
    if (same_node_[static_cast<std::size_t>(r)]) threads += jobs > 0 ? jobs : worker_threads_[static_cast<std::size_t>(r)];
  return static_cast<int>(std::min<long>(threads, hardware));
}

std::string MpiFarm::describe(int jobs) const {
  if (jobs > 0) return fmt::format("{} MPI ranks x {} thread{} each", ranks_, jobs, jobs == 1 ? "" : "s");
  std::string threads = std::to_string(default_jobs());
  for (int r = 1; r < ranks_; ++r) threads += ", " + std::to_string(worker_threads_[static_cast<std::size_t>(r)]);
  return fmt::format("{} MPI ranks x ({}) threads", ranks_, threads);
}

bool MpiFarm::stream(const CheckPlan& plan, const CaseList& cases, const RunnerOptions& runner,
                     const std::function<void(CaseMetrics&&)>& consume) {
  if (ranks_ < 2 || std::this_thread::get_id() != main_thread_) return false;
  std::string key = plan_key(*plan.spec);
  if (key.empty()) return false;  // a spec built in memory: only this process has it
  if (broken_) throw RunError("the ranks of this job are out of step after an earlier failure");
  if (key != plan_key_) {
    plan_key_ = std::move(key);
    ++plan_serial_;
  }
  const long n = cases.size();
  ++stats_.lists;
  warn_binding(runner.jobs);
  const auto threads_of = [&](int rank) {
    if (runner.jobs > 0) return static_cast<long>(runner.jobs);
    return static_cast<long>(rank == 0 ? default_jobs() : worker_threads_[static_cast<std::size_t>(rank)]);
  };
  long all_threads = 0;
  for (int r = 0; r < ranks_; ++r) all_threads += threads_of(r);
  const long window = std::max(runner.window, 2 * kBlockPerThread * all_threads);

  std::mutex mutex;
  std::condition_variable changed;
  long next = 0;      // next list position to deal out; guarded by mutex
  long consumed = 0;  // positions handed to consume; guarded by mutex
  std::map<long, std::vector<CaseMetrics>> done;  // finished blocks by first position; guarded
  std::exception_ptr local_failure;               // guarded
  bool stop = false;                              // guarded
  // Under the lock: the next block for a rank with `threads` threads (guided: a share of what is
  // left, at least one case per thread while there are enough), or count 0 when none may start.
  const auto carve = [&](long threads) -> std::pair<long, long> {
    const long room = std::min(n, consumed + window) - next;
    if (room <= 0) return {next, 0};
    const long share = (n - next) / (3 * static_cast<long>(ranks_));
    const long count = std::min(room, std::clamp(share, threads, kBlockPerThread * threads));
    const long first = next;
    next += count;
    ++stats_.blocks;
    return {first, count};
  };

  // Rank 0's own threads work through blocks like any other rank.
  std::thread local([&] {
    try {
      const long threads = threads_of(0);
      for (;;) {
        std::pair<long, long> block;
        {
          std::unique_lock lock(mutex);
          changed.wait(lock, [&] { return stop || next >= n || next < consumed + window; });
          if (stop || next >= n) return;
          block = carve(threads);
        }
        std::vector<long> indices;
        for (long k = block.first; k < block.first + block.second; ++k) indices.push_back(cases[k]);
        std::vector<CaseMetrics> out = run_block(plan, indices, static_cast<int>(threads));
        {
          std::lock_guard lock(mutex);
          done.emplace(block.first, std::move(out));
          stats_.cases_by_rank[0] += block.second;
        }
        changed.notify_all();
      }
    } catch (...) {
      {
        std::lock_guard lock(mutex);
        local_failure = std::current_exception();
        stop = true;
      }
      changed.notify_all();
    }
  });

  std::vector<long> busy(static_cast<std::size_t>(ranks_), -1);  // per worker: its block's first position
  const auto deal = [&] {
    for (int r = 1; r < ranks_; ++r) {
      if (busy[static_cast<std::size_t>(r)] >= 0) continue;
      std::pair<long, long> block;
      {
        std::lock_guard lock(mutex);
        block = carve(threads_of(r));
      }
      if (block.second == 0) return;
      Pack p;
      p.put(plan_serial_);
      const bool with_plan = worker_plan_[static_cast<std::size_t>(r)] != plan_serial_;
      p.put(static_cast<std::uint8_t>(with_plan));
      if (with_plan) p.put_text(plan_key_);
      p.put(static_cast<std::int32_t>(runner.jobs));
      p.put(block.first);
      p.put(block.second);
      for (long k = block.first; k < block.first + block.second; ++k) p.put(cases[k]);
      send(p.bytes, r, kWork);
      worker_plan_[static_cast<std::size_t>(r)] = plan_serial_;
      busy[static_cast<std::size_t>(r)] = block.first;
    }
  };
  // Workers' messages, without waiting on any: each announced one starts a non-blocking receive
  // (so a slow sender never holds rank 0 up), and each received one puts its block into `done` or
  // throws its failure. True when something moved.
  struct Incoming {
    MPI_Request request = MPI_REQUEST_NULL;
    std::string bytes;
    int tag = 0;
  };
  std::vector<Incoming> incoming(static_cast<std::size_t>(ranks_));
  const auto collect = [&]() -> bool {
    const auto start = std::chrono::steady_clock::now();
    bool moved = false;
    for (;;) {
      int waiting = 0;
      MPI_Message message;
      MPI_Status status;
      MPI_Improbe(MPI_ANY_SOURCE, MPI_ANY_TAG, MPI_COMM_WORLD, &waiting, &message, &status);
      if (!waiting) break;
      const int r = status.MPI_SOURCE;
      if (r <= 0 || r >= ranks_ || busy[static_cast<std::size_t>(r)] < 0)
        throw RunError(fmt::format("cluster: an unexpected message from rank {}", r));
      Incoming& in = incoming[static_cast<std::size_t>(r)];
      int count = 0;
      MPI_Get_count(&status, MPI_BYTE, &count);
      in.bytes.assign(static_cast<std::size_t>(count), '\0');
      in.tag = status.MPI_TAG;
      MPI_Imrecv(in.bytes.data(), count, MPI_BYTE, &message, &in.request);
      moved = true;
    }
    for (int r = 1; r < ranks_; ++r) {
      Incoming& in = incoming[static_cast<std::size_t>(r)];
      if (in.request == MPI_REQUEST_NULL) continue;
      int received = 0;
      MPI_Test(&in.request, &received, MPI_STATUS_IGNORE);
      if (!received) continue;
      moved = true;
      const long first = busy[static_cast<std::size_t>(r)];
      busy[static_cast<std::size_t>(r)] = -1;
      Unpack u{in.bytes};
      if (in.tag == kFailure) throw RunError(fmt::format("rank {} could not run its cases: {}", r, u.get_text()));
      if (in.tag != kResult || u.get<long>() != first)
        throw RunError(fmt::format("cluster: rank {} answered out of turn", r));
      std::vector<CaseMetrics> out = decode_cases(u.rest());
      stats_.bytes += static_cast<double>(in.bytes.size());
      stats_.remote_cases += static_cast<long>(out.size());
      stats_.cases_by_rank[static_cast<std::size_t>(r)] += static_cast<long>(out.size());
      {
        std::lock_guard lock(mutex);
        done.emplace(first, std::move(out));
      }
    }
    if (moved)
      stats_.gather_seconds += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    return moved;
  };

  const auto started = std::chrono::steady_clock::now();
  auto last_report = started;
  try {
    deal();
    long at = 0;  // = consumed; read without the lock on this thread, which alone writes it
    while (at < n) {
      std::vector<CaseMetrics> ready;
      {
        std::lock_guard lock(mutex);
        if (local_failure) std::rethrow_exception(local_failure);
        if (auto it = done.find(at); it != done.end()) {
          ready = std::move(it->second);
          done.erase(it);
        }
      }
      if (!ready.empty()) {
        const auto consume_start = std::chrono::steady_clock::now();
        for (CaseMetrics& m : ready) {
          if (m.index != cases[at]) throw RunError(fmt::format("cluster: case {} came back as case {}", cases[at], m.index));
          consume(std::move(m));
          ++at;
        }
        stats_.consume_seconds +=
            std::chrono::duration<double>(std::chrono::steady_clock::now() - consume_start).count();
        {
          std::lock_guard lock(mutex);
          consumed = at;
        }
        changed.notify_all();
        const auto now = std::chrono::steady_clock::now();
        if (runner.progress && (now - last_report > std::chrono::milliseconds(250) || at == n)) {
          runner.progress({at, n, std::chrono::duration<double>(now - started).count()});
          last_report = now;
        }
        deal();
        continue;
      }
      if (collect()) {
        deal();
        continue;
      }
      throw_if_cancelled();
      std::unique_lock lock(mutex);
      changed.wait_for(lock, std::chrono::milliseconds(1));  // a finished local block wakes it sooner
    }
  } catch (...) {
    {
      std::lock_guard lock(mutex);
      stop = true;
    }
    changed.notify_all();
    local.join();
    // A worker still computing will send a block nobody receives: the job cannot go on.
    if (std::any_of(busy.begin() + 1, busy.end(), [](long b) { return b >= 0; })) broken_ = true;
    throw;
  }
  {
    std::lock_guard lock(mutex);
    stop = true;
  }
  changed.notify_all();
  local.join();
  stats_.cases += n;
  return true;
}

void MpiFarm::stop_workers() {
  if (broken_) return;
  for (int r = 1; r < ranks_; ++r) send(std::string(), r, kStop);
}

}  // namespace swaybound::cluster
