#pragma once
// The worst case between the samples. The sampled cases give each per-case limit its worst value
// over a finite set of starts; the true worst over the starts the case sets declare can lie
// between them. For each per-case limit this stage takes the few worst sampled cases and moves
// each one's initial angles and rates through the box the case sets declare (their union
// bounding box, the same for every scenario), with a derivative-free bounded local optimiser
// (NLopt's BOBYQA; Nelder-Mead, then COBYLA, when BOBYQA refuses, e.g. in one dimension) that
// maximises the limit's utilisation (larger is worse for an upper bound, smaller for a lower one),
// each evaluation one case run with the plan's model and streaming settings. A start of a set of
// modal or equilibrium starts moves instead through that set's own ranges (its modal amplitudes
// and phases, a phase over a whole turn wrapping round; its steady acceleration and wind speed),
// each point turned into angles and rates as the case space turns a sample (move_start).
//
// A scenario's uncertain values (base.scenarios[i].uncertain: a wind speed, a braking deceleration
// within a range) are further dimensions of the box for the cases of that scenario: the sampled
// cases use the spec's value, the search moves it through its range. A point with other values
// runs on a copy of the plan's model whose scenario is rebuilt from them (scenario_variant), made
// once per distinct vector of values and shared by every limit's search.
//
// The searched worst is the worse of the sampled worst and the best found: a local optimum, so
// a lower bound on the true worst, never a proof that nothing worse exists. A run that fails
// during the search fails the limit and is reported with its start. Where the worst case's FTLE
// is computed and above chaos.threshold, the result is flagged "local worst, statistical, not a
// bound": the metric is not smooth there and a local search means little.
//
// Library split: `WorstStarts` and `apply_search` are engine code (src/checks/worst_starts.cpp);
// `search_worst` uses NLopt and so lives in swaybound::sizing (src/checks/worst_search.cpp, built
// into that target). run_check calls it through CheckOptions::search, which a caller linking
// sizing sets to `search_worst` (the CLI does, unless --no-search).
#include <cmath>
#include <memory>
#include <string>
#include <vector>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/checks.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec/case_set_kinds.hpp"
#include "swaybound/spec/paths.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct CheckPlan;  // checks/check_run.hpp

/// The box a search moves a start through. For a start given as link angles: per link, the least
/// and largest initial angle [rad] and rate [rad/s] over every set of such starts (a set's ranges, a
/// single or ladder start's values and the ladder's perturbed angles; a link a set does not list
/// starts at 0 there, so 0 is in its box). For a start of a set of modal or equilibrium starts: that
/// set's own start quantities (InitialState::quantities), its modal amplitudes and phases, or its
/// steady acceleration and wind speed; the search derives the angles and rates of each point as the
/// case space does (move_start).
struct StartBox {
  int links = 0;  ///< n
  StartKind kind = StartKind::angles;
  int set = -1;   ///< modal and equilibrium boxes: the set (index into Spec::cases.initial)
  /// Angles: per start quantity d = q n + i (q = 0 theta, 1 rate, 2 phi, 3 phi_rate of link i; phi
  /// and phi_rate only for a spatial chain). Modal and equilibrium: per entry d of the set's
  /// quantities. The least and largest value, SI.
  std::vector<double> lo, hi;
  /// Dimensions d of positive width; the others stay at the start's value.
  std::vector<int> free;
  /// Per dimension d: it is a phase over a whole turn (hi - lo = 2 pi), whose ends are one start;
  /// the search lets it run across them (wrapped into [lo, hi)).
  std::vector<bool> periodic;
};

/// Start quantity d of `start` in the order of StartBox (theta, rate, phi, phi_rate per link of n);
/// the lists must hold n entries each (CaseSpace::at fills them).
double& start_quantity(InitialState& start, int d, int n);

/// The union bounding box of the starts of `spec`'s case sets given as link angles.
StartBox start_box(const Spec& spec);

/// The box a search moves a start of set `set` through: start_box(spec) for a set of link angles,
/// the set's own modal or equilibrium quantities otherwise (see StartBox).
StartBox set_box(const Spec& spec, int set);

/// The value of dimension d of `box` in `start`.
double box_value(const StartBox& box, const InitialState& start, int d);

/// Sets the free dimensions of `box` in `def` to `values` (in box.free order) and, for a modal or
/// equilibrium box, derives its angles and rates again: from the chain's modes (space.modes()), or
/// as the equilibrium of `model` (the model the case runs on, built from `spec`). Returns "" or why
/// there is no start there (an equilibrium not found).
std::string move_start(const StartBox& box, const std::vector<double>& values, const Spec& spec, const CaseSpace& space,
                       const Model& model, Workspace& ws, CaseDef& def);

/// The uncertain values of one scenario as dimensions of the search, in the order of its list.
struct UncertainDims {
  std::vector<SpecPath> targets;
  std::vector<std::string> paths;       ///< as written, relative to the scenario
  std::vector<std::string> units;       ///< SI unit of each
  std::vector<double> lo, hi, nominal;  ///< the range and the spec's value, SI
  std::size_t size() const { return targets.size(); }
};

/// The uncertain values of scenario `scenario` of `spec` (empty without a list).
UncertainDims uncertain_dims(const Spec& spec, int scenario);

/// A scenario with its uncertain values set: the spec with them, and a copy of the plan's model
/// whose scenario `scenario` is rebuilt from that spec (build_scenario). Only that scenario's phases
/// differ, so the copy keeps the model's id and a Workspace built for the model runs it; a case of
/// another scenario must not run on it (an uncertain wind speed is rebuilt in this scenario only).
struct ScenarioVariant {
  Spec spec;
  Model model;
};
std::shared_ptr<const ScenarioVariant> scenario_variant(const Spec& spec, const Model& model, int scenario,
                                                        const UncertainDims& dims, const std::vector<double>& values);

/// The utilisation of a per-case limit's value: the value for an upper bound, its negative for a
/// lower one (larger is always worse).
inline double utilisation(Bound bound, double value) { return bound == Bound::upper ? value : -value; }

/// Collects, as the sampled cases stream past (in case order), the `starts` worst successful cases
/// of each per-case limit (ties keep the earlier case), with their metrics.
class WorstStarts {
 public:
  WorstStarts(const Spec& spec, int starts);
  void offer(const CaseMetrics& m);
  /// The kept cases of limit `limit` (index into Spec::limits), worst first; empty for a global
  /// limit or when no case gave the limit a value.
  const std::vector<CaseMetrics>& of(int limit) const { return kept_[static_cast<std::size_t>(limit)]; }
  /// The value of limit `limit` in `m` (worst over its links), NaN when none.
  double value(int limit, const CaseMetrics& m) const;

 private:
  const Spec* spec_;
  int starts_;
  std::vector<int> slots_;  ///< per limit: its residual_sway slot
  std::vector<bool> fixed_; ///< per set: modal or equilibrium starts without a range to search
  std::vector<std::vector<CaseMetrics>> kept_;
};

/// The search of one per-case limit.
struct LimitSearch {
  int limit = -1;                        ///< index into Spec::limits
  bool searched = false;                 ///< false: no sampled value to start from, or the box is a point
  double sampled_worst = std::nan("");   ///< the sampled cases' worst value (CheckResult::worst), SI
  double searched_worst = std::nan("");  ///< the worse of it and the best found, SI (NaN after a failed run)
  /// The start that gives searched_worst (the sampled governing case when the search found nothing
  /// worse), or the start whose run failed.
  int scenario = -1;
  std::vector<double> theta, omega;  ///< per link [rad], [rad/s]
  std::vector<double> phi, phi_rate; ///< spatial chains: per link [rad], [rad/s] (empty for planar)
  std::string from_case;             ///< id of the sampled case the winning search started from
  /// The scenario's uncertain values at searched_worst (the spec's values when the search found
  /// nothing worse), in the order of its list; empty when the scenario has none.
  std::vector<double> uncertain;
  UncertainDims uncertain_dims;      ///< their paths, units, ranges and the spec's values
  CaseDef worst_case;                ///< the case of searched_worst (its start), for the audit
  bool found_worse = false;          ///< the search found a value worse than the sampled worst
  double raise = 0;                  ///< |searched_worst - sampled_worst|, in the worse direction, SI
  double raise_of_margin = std::nan("");  ///< raise / |sampled margin| (NaN when the margin is 0)
  double margin = std::nan("");      ///< limit - searched (upper) or searched - limit (lower), SI
  bool pass = false;                 ///< the verdict on the searched worst
  bool sampled_pass = false;         ///< the check's verdict on the samples alone
  /// The samples pass and the searched worst fails: sampling alone would have passed the design.
  bool sampling_missed() const { return sampled_pass && !pass; }
  /// Points the search evaluated, each a case run (the sampled starts cost none; a run another
  /// limit's search made at the same start is shared, so the runs made may be fewer)
  long evaluations = 0;
  std::vector<std::string> methods;  ///< the optimiser of each start ("BOBYQA", "Nelder-Mead", "COBYLA")
  bool failed_run = false;           ///< a run failed during the search (the limit fails)
  std::string failure;               ///< its status and reason
  /// The worst case's FTLE is computed and above chaos.threshold: a local worst, statistical, not a bound.
  bool chaotic = false;
  double ftle = std::nan("");        ///< that FTLE [1/s] (NaN: not computed)
  /// The audit (audit_search): searched_worst's case run again at a 100x tighter tolerance.
  bool audited = false;
  double audit_value = std::nan("");   ///< the limit's value in that run, SI (NaN: the run failed)
  double audit_change = std::nan("");  ///< audit_value - searched_worst, SI
  bool audit_warning = false;          ///< |audit_change| > |margin|: the verdict may depend on the tolerance
};

/// The search's settings for one run: spec.cases.search, or off.
struct SearchBudget {
  int evaluations = 40;  ///< evaluations (case runs) per per-case limit, shared by its starts
  int starts = 3;
};

/// Searches the worst case between the samples of every per-case limit of `checks` (finished, so
/// their margins are set) from the cases `starts` kept, on `jobs` threads (0: all); one result per
/// per-case check, in limit order. Deterministic: the same on every thread count. In swaybound::sizing.
std::vector<LimitSearch> search_worst(const CheckPlan& plan, const WorstStarts& starts,
                                      const std::vector<CheckResult>& checks, const SearchBudget& budget,
                                      int jobs);

/// The accuracy audit of the search: runs the case of each searched worst (but after a failed
/// run) again at a 100x tighter tolerance (as audit_governing does for the sampled worst),
/// with its uncertain values, on `jobs` threads, and writes each search's audit_value,
/// audit_change and audit_warning. Returns how many re-runs the wall-clock budget stopped. Engine code.
long audit_search(const CheckPlan& plan, int jobs, std::vector<LimitSearch>& searches);

/// Fails every check whose searched worst fails (the sampled worst may pass: then
/// LimitSearch::sampling_missed says sampling alone would have passed it). Engine code.
void apply_search(const std::vector<LimitSearch>& searches, std::vector<CheckResult>& checks);

}  // namespace swaybound
