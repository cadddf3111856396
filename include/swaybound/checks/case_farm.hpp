#pragma once
// Where the cases of a check run: this process's threads (the default), or a farm of processes (the
// ranks of an MPI job, src/cluster/). stream_cases hands its cases to the farm installed here; the
// farm must give every case's metrics back in list order, bit for bit what this process would have
// computed, so one process, many threads and many ranks write the same results.
#include <functional>
#include <string>

#include "swaybound/cases/runner.hpp"
#include "swaybound/checks/metrics.hpp"

namespace swaybound {

struct CheckPlan;
class CaseList;

class CaseFarm {
 public:
  virtual ~CaseFarm() = default;
  /// Runs `cases` of `plan` (runner.jobs threads per process) and hands each case's metrics to
  /// `consume` in list order, calling runner.progress as run_ordered does. Returns false, having
  /// run nothing, when it cannot take this plan (then the caller runs it here).
  virtual bool stream(const CheckPlan& plan, const CaseList& cases, const RunnerOptions& runner,
                      const std::function<void(CaseMetrics&&)>& consume) = 0;
  /// How the cases run, for MANIFEST: e.g. "4 MPI ranks x 2 threads".
  virtual std::string describe(int jobs) const = 0;
  /// Threads for the stages this process runs alone after the cases (global checks, search,
  /// audit), given `jobs` per process (0: every hardware thread): `jobs` unless other processes
  /// of the farm wait on this machine meanwhile and lend it their cores.
  virtual int stage_jobs(int jobs) const { return jobs; }
};

/// Installs the farm stream_cases uses (nullptr: this process's threads). Not owned; it must stay
/// alive until it is replaced. Set once at start-up, before any check runs.
void set_case_farm(CaseFarm* farm);

/// The installed farm, or nullptr.
CaseFarm* case_farm();

/// How the cases of a check run with `jobs` threads per process (0: every hardware thread): the
/// installed farm's description, or "1 process x N threads".
std::string describe_execution(int jobs);

}  // namespace swaybound
