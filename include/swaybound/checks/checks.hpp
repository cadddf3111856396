#pragma once
// Limits become checks: the worst value over every case (and every link the limit names), the
// case that gives it, the margin (absolute, and as a ratio of the limit) and the verdict.
// A case whose integration failed fails every per-case check; it is never skipped.
#include <cmath>
#include <string>
#include <vector>

#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct CheckResult {
  int limit = 0;              ///< index into Spec::limits
  std::string key;            ///< e.g. "peak_angle"
  std::string subject;        ///< what it applies to, e.g. "link 'hoist rope'" or "every link"
  std::string unit;           ///< SI unit of value/worst/margin
  Bound bound = Bound::upper;
  double limit_value = 0;     ///< SI
  double worst = std::nan("");///< worst value found, SI (NaN: none computed)
  long governing = -1;        ///< case index giving `worst` (-1: not a per-case check, or none)
  std::string governing_id;
  int governing_link = -1;
  double time = std::nan(""); ///< when the worst value happened in that case [s]
  double margin = std::nan("");        ///< limit - worst (upper) or worst - limit (lower), SI
  double margin_ratio = std::nan("");  ///< margin / |limit|
  bool pass = false;
  long failed_cases = 0;      ///< cases whose run failed (each fails this check)
  std::string first_failure;  ///< id and reason of the first failed case
  bool per_case = true;       ///< false for modal and chaotic-onset checks
  // Accuracy audit: the governing case re-run at a 100x tighter tolerance.
  bool audited = false;
  double audit_value = std::nan("");
  double audit_change = std::nan("");  ///< audit_value - worst
  bool audit_warning = false;          ///< |audit_change| > |margin|
  /// The governing peak came so soon after a start that is not an equilibrium that it may be the
  /// start's own transient (checks/start_transient.hpp); `start_note` says which start
  /// (start_description: its id within the scenario, kind, angles and rates).
  bool start_transient = false;
  std::string start_note;
};

/// Accumulates per-case metrics into the spec's checks as cases stream past (in case order, so
/// ties resolve to the lowest case index and results do not depend on the thread count).
class CheckSet {
 public:
  CheckSet(const Spec& spec);
  void offer(const CaseMetrics& metrics);
  /// Sets the value of a check that is not per case (modal damping, onset margin).
  void set_global(int limit, double value, const std::string& note);
  /// Computes margins and verdicts.
  void finish();
  const std::vector<CheckResult>& results() const { return results_; }
  std::vector<CheckResult>& results() { return results_; }
  bool all_pass() const;

 private:
  const Spec* spec_;
  std::vector<CheckResult> results_;
};

/// The value a per-case limit sees in one case's metrics (worst over the links it names), with the
/// link and time; NaN when the case has no such value (e.g. no FTLE computed).
double limit_value_in_case(const LimitSpec& limit, int residual_slot, const CaseMetrics& m, int& link, double& time);

/// Per limit of `spec`, its slot in CaseMetrics::residual (its index among the limits with a window,
/// `after`; the slot a limit without a window would take), the `residual_slot` of limit_value_in_case.
std::vector<int> residual_slots(const Spec& spec);

/// What a limit applies to, as the packet says it: "link 'NAME'" or its kind's scope ("every
/// link", "every rope link", "the chain"), then its options (", after 20 s", ", top end").
std::string check_subject(const Spec& spec, const LimitSpec& limit);

}  // namespace swaybound
