#pragma once
// How the sampled worst of each per-case limit grows with the number of starts: the convergence
// view of a check. A start (one initial condition of the case sets) runs under every scenario; the
// worst over the first k starts (in case-set order, all scenarios) is what a case set of k starts
// would have reported. If the worst still moves over the last half of the starts, more samples
// (or the search between them) may change the answer.
#include <vector>

#include "swaybound/checks/metrics.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// The sampled worst of one per-case limit after the first `starts[j]` starts.
struct ConvergenceRow {
  int limit = -1;              ///< index into Spec::limits
  std::vector<long> starts;    ///< counts of starts, increasing; the last is every start
  std::vector<double> worst;   ///< the worst value over them, SI (NaN while no case gave a value)
};

/// Collects the worst value per start and per-case limit as the cases stream past (any order;
/// failed cases are left out: they fail their check whatever the count), then the running worst.
class ConvergenceTracker {
 public:
  /// `starts` = starts per scenario (CaseSpace::starts).
  ConvergenceTracker(const Spec& spec, long starts);
  void offer(const CaseMetrics& m);
  /// One row per per-case limit, at the counts 1, 2, 5, 10, 20, 50, ... below the total, and the
  /// quarter, half and whole of the starts.
  std::vector<ConvergenceRow> rows() const;

 private:
  const Spec* spec_;
  long starts_;
  std::vector<int> slots_;                  ///< per limit: its residual_sway slot
  std::vector<std::vector<double>> worst_;  ///< per limit, per start: utilisation (larger is worse), or -inf
};

}  // namespace swaybound
