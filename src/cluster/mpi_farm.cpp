#include "mpi_farm.hpp"

#include <mpi.h>
#include <sched.h>

#include <algorithm>
#include <chrono>
#include <condition_variable>
#include <cstdio>
#include <cstring>
#include <functional>
#include <limits>
#include <map>
#include <memory>
#include <mutex>
#include <string_view>

#include <fmt/format.h>

#include "swaybound/cases/runner.hpp"
#include "swaybound/checks/case_wire.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound::cluster {

namespace {

enum Tag : int { kHello = 1, kWork = 2, kResult = 3, kFailure = 4, kStop = 5 };

/// Most blocks a rank's threads get at once, in cases per thread.
constexpr long kBlockPerThread = 16;

/// Bytes in the order they are put; read back in the same order by Unpack.
struct Pack {
  std::string bytes;
  template <class T>
  void put(T v) {
    static_assert(std::is_trivially_copyable_v<T>);
    bytes.append(reinterpret_cast<const char*>(&v), sizeof v);
  }
  void put_text(std::string_view s) {
    put(static_cast<std::uint64_t>(s.size()));
    bytes.append(s);
  }
};

struct Unpack {
  std::string_view in;
  std::size_t at = 0;
  template <class T>
  T get() {
    T v;
    if (in.size() - at < sizeof v) throw RunError("cluster message: shorter than its contents");
    std::memcpy(&v, in.data() + at, sizeof v);
    at += sizeof v;
    return v;
  }
  std::string get_text() {
    const auto n = get<std::uint64_t>();
    if (n > in.size() - at) throw RunError("cluster message: a text runs past its end");
    std::string s(in.substr(at, n));
    at += n;
    return s;
  }
  std::string_view rest() const { return in.substr(at); }
};

void send(const std::string& bytes, int rank, int tag) {
  if (bytes.size() > static_cast<std::size_t>(std::numeric_limits<int>::max()))
    throw RunError(fmt::format("cluster message of {} bytes: more than one MPI message holds", bytes.size()));
  MPI_Send(bytes.data(), static_cast<int>(bytes.size()), MPI_BYTE, rank, tag, MPI_COMM_WORLD);
}

/// Receives the message `status` announced (from MPI_Probe or MPI_Iprobe).
std::string receive(const MPI_Status& status) {
  int count = 0;
  MPI_Get_count(&status, MPI_BYTE, &count);
  std::string bytes(static_cast<std::size_t>(count), '\0');
  MPI_Recv(bytes.data(), count, MPI_BYTE, status.MPI_SOURCE, status.MPI_TAG, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
  return bytes;
}

/// CPUs this process may run on (its affinity mask: what mpirun's binding left it).
int allowed_cpus() {
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof set, &set) != 0) return default_jobs();
  return std::max(1, CPU_COUNT(&set));
}

int world_rank() {
  int rank = 0;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  return rank;
}

/// Runs the listed cases of `plan` on `jobs` threads, in list order.
std::vector<CaseMetrics> run_block(const CheckPlan& plan, const std::vector<long>& indices, int jobs) {
  std::vector<CaseMetrics> out;
  out.reserve(indices.size());
  RunnerOptions runner;
  runner.jobs = jobs;
  run_ordered<CaseMetrics>(
      static_cast<long>(indices.size()), runner, [&] { return Workspace(plan.model); },
      [&](long k, Workspace& ws) {
        return run_case(plan.model, *plan.spec, ws, plan.space.at(indices[static_cast<std::size_t>(k)]),
                        plan.streaming, plan.case_options);
      },
      [&](CaseMetrics&& m) { out.push_back(std::move(m)); });
  return out;
}

/// A worker's current plan, rebuilt from its key.
struct RebuiltPlan {
  std::unique_ptr<Spec> spec;
  std::unique_ptr<CheckPlan> plan;
};

RebuiltPlan rebuild(const std::string& key) {
  Unpack u{key};
  const std::string text = u.get_text(), file = u.get_text();
  std::vector<double> values(u.get<std::uint64_t>());
  for (double& v : values) v = u.get<double>();
  const auto fingerprint = u.get<std::uint64_t>();
  constexpr long kNoCap = std::numeric_limits<long>::max();  // rank 0 applied the caps when it loaded the spec
  RebuiltPlan r;
  r.spec = std::make_unique<Spec>(load_spec_text(text, file, LoadOptions{kNoCap, kNoCap}));
  if (!values.empty()) apply_design(*r.spec, design_variables(*r.spec), values);
  if (spec_fingerprint(*r.spec) != fingerprint)
    throw RunError(fmt::format("rank {} rebuilt the spec '{}' with other values than rank 0 holds; every rank must "
                               "run the same build of swaybound",
                               world_rank(), file));
  r.plan = std::make_unique<CheckPlan>(plan_check(*r.spec));
  return r;
}

}  // namespace

std::uint64_t spec_fingerprint(const Spec& spec) {
  Spec cases_only = spec;
  cases_only.sizing.reset();
  cases_only.report = ReportSpec{};
  cases_only.source_file.clear();
  // FNV-1a, 64 bits: the same on every rank of the same build.
  std::uint64_t h = 14695981039346656037ull;
  for (unsigned char c : normalised_yaml(cases_only)) h = (h ^ c) * 1099511628211ull;
  return h;
}

std::string plan_key(const Spec& spec) {
  if (spec.source_text.empty()) return {};
  Pack p;
  p.put_text(spec.source_text);
  p.put_text(spec.source_file);
  p.put(static_cast<std::uint64_t>(spec.design_values.size()));
  for (double v : spec.design_values) p.put(v);
  p.put(spec_fingerprint(spec));
  return std::move(p.bytes);
}

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

int serve_cases() {
  // Whether this rank shares rank 0's node: the ranks of rank 0's shared-memory group.
  MPI_Comm node;
  MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, 0, MPI_INFO_NULL, &node);
  int on_node_of_0 = 0, node_leader = world_rank();
  MPI_Bcast(&node_leader, 1, MPI_INT, 0, node);  // the lowest world rank of the group (ranks keep their order)
  on_node_of_0 = node_leader == 0;
  MPI_Comm_free(&node);
  Pack hello;
  hello.put(static_cast<std::int32_t>(default_jobs()));
  hello.put(static_cast<std::uint8_t>(on_node_of_0));
  hello.put(static_cast<std::int32_t>(allowed_cpus()));
  send(hello.bytes, 0, kHello);
  std::uint64_t serial = 0;
  RebuiltPlan current;
  for (;;) {
    // Waits without spinning (a blocking probe keeps a core busy in most MPI libraries, a core
    // rank 0 lends its own stages meanwhile): polls every 50 us for the first 20 ms, then every 2 ms.
    MPI_Status status;
    const auto idle = std::chrono::steady_clock::now();
    for (int waiting = 0;;) {
      MPI_Iprobe(0, MPI_ANY_TAG, MPI_COMM_WORLD, &waiting, &status);
      if (waiting) break;
      std::this_thread::sleep_for(std::chrono::steady_clock::now() - idle < std::chrono::milliseconds(20)
                                      ? std::chrono::microseconds(50)
                                      : std::chrono::microseconds(2000));
    }
    const std::string message = receive(status);
    if (status.MPI_TAG == kStop) return 0;
    try {
      if (status.MPI_TAG != kWork) throw RunError(fmt::format("cluster: unexpected message tag {}", status.MPI_TAG));
      Unpack u{message};
      const auto plan_serial = u.get<std::uint64_t>();
      if (u.get<std::uint8_t>() != 0) {
        current = rebuild(u.get_text());
        serial = plan_serial;
      } else if (plan_serial != serial || !current.plan) {
        throw RunError("cluster: a block for a plan this rank was never sent");
      }
      const int jobs = u.get<std::int32_t>();
      const long first = u.get<long>();
      std::vector<long> indices(static_cast<std::size_t>(u.get<long>()));
      for (long& i : indices) i = u.get<long>();
      Pack out;
      out.put(first);
      encode_cases(run_block(*current.plan, indices, jobs), out.bytes);
      send(out.bytes, 0, kResult);
    } catch (const std::exception& e) {
      Pack failure;
      failure.put_text(e.what());
      send(failure.bytes, 0, kFailure);
    }
  }
}

}  // namespace swaybound::cluster
