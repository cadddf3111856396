#pragma once
// The cases of a check spread over the ranks of an MPI job (the MPI build's main, mpi_main.cpp).
// Rank 0 runs the command as the plain build does; stream_cases hands each list of cases to the
// MpiFarm, which deals out blocks of cases on demand to every rank, rank 0's own threads included,
// and gives their metrics to the checks in case order. The other ranks serve blocks (serve_cases)
// until rank 0 stops them. Only rank 0's main thread calls MPI (MPI_THREAD_FUNNELED).
//
// Protocol (point to point on MPI_COMM_WORLD, bytes):
//   worker -> 0  hello   its hardware thread count
//   0 -> worker  work    plan serial, the plan's key when the worker has another plan, threads,
//                        the block's first list position and its case indices
//   worker -> 0  result  the block's first list position and its cases' metrics (checks/case_wire.hpp)
//   worker -> 0  failure what went wrong (a spec that does not rebuild the same, an exception)
//   0 -> worker  stop    the job is over
// A plan's key is the spec's source text and file label, the design values sizing applied
// (Spec::design_values) and a fingerprint of the result: a worker rebuilds the plan from it and
// refuses to run when its fingerprint differs.
#include <cstdint>
#include <string>
#include <thread>
#include <vector>

#include "swaybound/checks/case_farm.hpp"
#include "swaybound/checks/check_run.hpp"

namespace swaybound::cluster {

/// What the farm did over the job, for the summary line on stderr.
struct FarmStats {
  long lists = 0;            ///< stream_cases calls spread over the ranks
  long blocks = 0;           ///< blocks dealt out (to every rank)
  long cases = 0;            ///< cases streamed
  long remote_cases = 0;     ///< of which computed by other ranks
  double bytes = 0;          ///< result bytes received from other ranks
  double gather_seconds = 0; ///< rank 0's time receiving and decoding them
  double consume_seconds = 0;///< rank 0's time handing every case to the checks and outputs
  std::vector<long> cases_by_rank;
};

class MpiFarm final : public CaseFarm {
 public:
  /// On rank 0 of `ranks`: receives every worker's hello.
  explicit MpiFarm(int ranks);
  bool stream(const CheckPlan& plan, const CaseList& cases, const RunnerOptions& runner,
              const std::function<void(CaseMetrics&&)>& consume) override;
  std::string describe(int jobs) const override;
  /// Rank 0's threads plus those of the ranks on its node (they wait while rank 0 runs the later
  /// stages), at most the node's hardware threads.
  int stage_jobs(int jobs) const override;
  /// True when a failure left workers busy or gone: the job must end with MPI_Abort.
  bool broken() const { return broken_; }
  /// Tells every worker the job is over (when not broken).
  void stop_workers();
  const FarmStats& stats() const { return stats_; }

 private:
  int ranks_;
  std::vector<int> worker_threads_;      ///< per rank (index 0 unused): hardware threads
  std::vector<char> same_node_;          ///< per rank: shares rank 0's node
  std::vector<int> cpus_;                ///< per rank: CPUs its affinity mask allows
  bool warned_binding_ = false;
  /// Once per job: a note on stderr when a rank runs more threads than mpirun's binding gives it cores.
  void warn_binding(int jobs);
  std::vector<std::uint64_t> worker_plan_;  ///< per rank: the plan serial it holds (0: none)
  std::string plan_key_;                  ///< key of the current plan
  std::uint64_t plan_serial_ = 0;
  std::thread::id main_thread_;
  bool broken_ = false;
  FarmStats stats_;
};

/// The loop of a rank other than 0: serves blocks until told to stop. Returns the exit status.
int serve_cases();

/// The key a worker rebuilds `spec` from (checks the spec can be rebuilt: source text present).
/// Empty when it cannot be rebuilt elsewhere (a spec built in memory).
std::string plan_key(const Spec& spec);

/// The fingerprint both sides compare: a hash of the normalised spec without its sizing and report
/// sections (which no case depends on).
std::uint64_t spec_fingerprint(const Spec& spec);

}  // namespace swaybound::cluster
