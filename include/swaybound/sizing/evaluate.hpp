#pragma once
// One evaluation of a design during sizing: the spec with the design's values, checked either on
// a screening subset of the cases (fast, during the search) or on every case (run_check: the
// verification, whose result is what a sizing run reports).
//
// Each limit becomes a dimensionless constraint r >= m: the check's margin divided by |limit|
// (its margin_ratio), or, for a limit of 0, by a fixed scale of its dimension
// (constraint_scale); m is the sizing's required margin (0 by default), so with m = 0.05 an upper
// limit holds when worst <= limit - 0.05 |limit|, and rope_tension_min: 0 N when the least
// tension is at least 5% of the chain's static weight. A limit with a failed case has r <= -1: a
// failed run cannot show the design holds.
#include <limits>
#include <string>
#include <vector>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// The scale a limit's margin is divided by: |limit value|, or for a limit of 0 the static weight
/// of the chain (forces), 1 / horizon (ftle_max) or 1 (dimensionless).
double constraint_scale(const Spec& spec, const LimitSpec& limit);
/// The check as a constraint value (see above); finite, clamped to [-1e6, 1e6].
double constraint_ratio(const Spec& spec, const CheckResult& check);

/// The quantity `objective: {min: KIND, link: NAME}` minimises, per design: the worst value of
/// that kind over the cases evaluated (for a lower-bound kind the least value, which the search
/// raises). Kinds residual_sway, ftle_max and onset_margin need a limit of that kind for the same
/// link in the spec (it defines `after`, `horizon`, or switches the computation on).
struct ObjectiveMetric {
  bool active = false;
  LimitSpec limit;         ///< kind and link; for residual_sway the limit whose `after` applies
  int check = -1;          ///< index of a spec limit with the same kind and link (its worst is the metric)
  int residual_slot = 0;
  bool lower = false;      ///< a lower-bound kind: the search maximises it
  std::string unit;        ///< SI unit of the value
  std::string label;       ///< e.g. "worst peak_angle (link 'rope')"
};
/// Throws SpecError when the metric cannot be computed for this spec.
ObjectiveMetric objective_metric(const Spec& spec);

struct DesignOutcome {
  std::vector<double> ratio;     ///< per limit: constraint value (>= 0 holds)
  std::vector<double> worst;     ///< per limit: worst value [SI] (NaN: none)
  std::vector<long> governing;   ///< per limit: governing case index (-1: none, or not per case)
  double geometry = std::numeric_limits<double>::infinity();  ///< geometry_margin when a length or com varies, else +inf
  double metric = std::nan("");  ///< ObjectiveMetric value [SI]
  long cases = 0;                ///< cases run
  long failed_cases = 0;         ///< of which failed
  double required = 0;           ///< the sizing's required margin: each ratio must reach it
  /// Least constraint value over the limits; +inf with no limits.
  double least() const;
  /// Every limit holds with the required margin and every point lies on its link.
  bool pass() const { return least() >= required && geometry >= 0; }
};

class DesignEvaluator {
 public:
  /// `search`: the search for the worst case between the samples may run (the spec's cases.search
  /// permitting): in check() when its options ask for it, in screen() with sizing.search_in_screening.
  DesignEvaluator(const Spec& base, std::vector<DesignVariable> variables, int jobs, bool search = true);
  /// Screening (and the verification rounds) search for the worst case between the samples.
  bool search_in_screening() const { return search_screening_; }
  const std::vector<DesignVariable>& variables() const { return variables_; }
  const Spec& base() const { return base_; }
  /// The base spec with the design's values set.
  Spec design(const std::vector<double>& values) const;
  /// Evaluates the design on the given cases (ascending case indices of the spec's case space)
  /// with run_check's own stages (plan_check, stream_cases over the list), so the same settings
  /// and checks. The modal damping, which is not per case, is computed in full; so is the
  /// chaotic-onset margin (the onset stage, onset_search: the costliest part of a screening)
  /// unless `onset_worst` is given: then each onset_margin check takes its value from it (per
  /// limit, e.g. the last full check's worst values).
  DesignOutcome screen(const std::vector<double>& values, const std::vector<long>& cases,
                       const std::vector<double>* onset_worst = nullptr) const;
  /// The full check of a design spec: run_check with `options` (its on_case is kept and chained).
  /// Where the search ran, each limit's constraint is its searched worst's.
  DesignOutcome check(const Spec& design, CheckOptions options, CheckReport& report) const;
  long case_count() const { return case_count_; }
  const ObjectiveMetric& metric() const { return metric_; }
  /// The required margin (the spec's sizing.required_margin): a design passes when every
  /// constraint value reaches it.
  double required_margin() const { return required_; }

 private:
  Spec base_;
  std::vector<DesignVariable> variables_;
  int jobs_;
  bool search_screening_ = false;
  long case_count_ = 0;
  double envelope_ = 0;
  double required_ = 0;
  ObjectiveMetric metric_;
};

}  // namespace swaybound
