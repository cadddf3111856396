// The sizing search's ledger: the objective, every evaluation recorded against the budget, the
// screening set and the verification of a candidate on every case.
#include "sizer.hpp"

#include <algorithm>
#include <cmath>

#include "swaybound/spec/loader.hpp"

namespace swaybound::sizing_search {

// --- objective -------------------------------------------------------------------------------
double Sizer::objective_value(const std::vector<double>& values, const DesignOutcome& o) const {
  switch (sizing_.objective) {
    case Objective::min_cost:
      return design_cost(vars_, values);
    case Objective::min_metric:
      return o.metric;
    case Objective::max_margin:
      return o.least();
  }
  return 0;
}
double Sizer::scaled_objective(const std::vector<double>& values, const DesignOutcome& o) const {
  double f = 0;
  switch (sizing_.objective) {
    case Objective::min_cost:
      f = (design_cost(vars_, values) - cost_floor_) / cost_span_;
      break;
    case Objective::min_metric:
      f = std::isfinite(o.metric) ? (evaluator_.metric().lower ? -o.metric : o.metric) / metric_scale_ : 1e3;
      break;
    case Objective::max_margin:
      f = std::isfinite(o.least()) ? -o.least() : 0.0;
      break;
  }
  return std::clamp(f, -1e6, 1e6);
}
/// Lower bound of the scaled cost over designs with these catalogue values (min_cost only).
double Sizer::cost_lower_bound(const std::vector<double>& values, const std::vector<int>& free) const {
  std::vector<double> v = values;
  for (int i : free) v[static_cast<std::size_t>(i)] = vars_[static_cast<std::size_t>(i)].lo;
  return (design_cost(vars_, v) - cost_floor_) / cost_span_;
}

void Sizer::note_budget_stop() {
  if (stop_reason_ != "converged") return;
  stop_reason_ = out_of_time() ? "time budget" : "evaluation budget";
}

Point Sizer::make_point(const std::vector<double>& values, DesignOutcome outcome) const {
  Point p;
  p.values = values;
  p.outcome = std::move(outcome);
  p.f = scaled_objective(values, p.outcome);
  p.pass = p.outcome.pass();
  p.least = p.outcome.least();
  return p;
}

void Sizer::record(const Point& p, EvaluationKind kind) {
  SizingEvaluation e;
  e.number = static_cast<long>(history_.size());
  e.kind = kind;
  e.cases = p.outcome.cases;
  e.values = p.values;
  e.cost = design_cost(vars_, p.values);
  e.objective = objective_value(p.values, p.outcome);
  e.ratio = p.outcome.ratio;
  e.geometry = p.outcome.geometry;
  e.least = p.least;
  e.pass = p.pass;
  e.seconds = elapsed();
  history_.push_back(std::move(e));
  if (kind == EvaluationKind::screening && p.pass && (!best_screen_ || p.f < best_screen_->f))
    best_screen_ = p;
  if (!least_violation_ || p.least > least_violation_->least ||
      (p.least == least_violation_->least && p.verified && !least_violation_->verified))
    if (kind != EvaluationKind::initial || initial_in_range_) least_violation_ = p;
  report_progress(kind == EvaluationKind::screening ? "search" : std::string(evaluation_kind_name(kind)));
}

void Sizer::report_progress(const std::string& phase) const {
  if (!options_.progress) return;
  SizingProgress s;
  s.evaluations = evaluations_;
  s.max_evaluations = sizing_.max_evaluations;
  // The best design so far: the best screened one when it beats the best verified one.
  const Point* best = best_verified_ ? &*best_verified_ : nullptr;
  if (best_screen_ && (!best || best_screen_->f < best->f)) best = &*best_screen_;
  if (best) {
    s.best_objective = objective_value(best->values, best->outcome);
    s.best_verified = best->verified;
    s.best_least = best->least;
  }
  s.elapsed = elapsed();
  s.seconds_left = searching_ ? std::max(0.0, sizing_.max_seconds - search_elapsed()) : 0.0;
  s.phase = phase;
  options_.progress(s);
}

/// The design on the screening set (memoised while the set does not change).
const Point& Sizer::screen(const std::vector<double>& values) {
  const auto hit = memo_.find(values);
  if (hit != memo_.end()) return hit->second;
  if (!budget_left()) {
    note_budget_stop();
    throw BudgetSpent{};
  }
  ++evaluations_;
  ++screening_evaluations_;
  Point p =
      make_point(values, evaluator_.screen(values, screening_, screen_onset_ ? nullptr : &onset_worst_));
  record(p, EvaluationKind::screening);
  return memo_.emplace(values, std::move(p)).first->second;
}

/// The design on every case (no audit); its governing and failed cases join the screening set
/// when they are not in it. Returns the verified point.
DesignOutcome Sizer::full_check(const Spec& design, CheckReport& report, std::vector<long>& failed) {
  ++full_checks_;
  CheckOptions o;
  o.jobs = options_.jobs;
  o.audit = false;
  o.record = false;
  // The verification rounds search only when screening does (sizing.search_in_screening).
  if (evaluator_.search_in_screening()) o.search = search_worst;
  o.on_case = [&](const CaseMetrics& m) {
    if (!m.ok() && failed.size() < 16) failed.push_back(m.index);
  };
  return evaluator_.check(design, o, report);
}

Point Sizer::verify(const std::vector<double>& values, bool& added) {
  ++evaluations_;
  // Through the normalised YAML, as the final design will be: the spec verified is the spec written.
  const Spec design = round_trip(evaluator_.design(values));
  std::vector<long> failed;
  CheckReport report;
  Point p = make_point(values, full_check(design, report, failed));
  p.verified = true;
  std::vector<long> extra = failed;
  for (long g : p.outcome.governing)
    if (g >= 0) extra.push_back(g);
  added = add_to_screening(extra);
  added |= update_onset(p.outcome);
  record(p, EvaluationKind::verification);
  consider_verified(p);
  return p;
}

/// The spec as re-loaded from its normalised YAML (values at 12 significant digits); the spec
/// itself when it cannot be re-loaded (a point beyond the end of its link: an infeasible design).
Spec Sizer::round_trip(const Spec& design) const {
  try {
    return load_spec_text(normalised_yaml(design), "sized spec", options_.load);
  } catch (const SpecError&) {
    Spec s = design;
    s.source_file.clear();
    s.source_text.clear();
    return s;
  }
}

void Sizer::consider_verified(const Point& p) {
  const bool acceptable = sizing_.objective == Objective::max_margin ? p.outcome.geometry >= 0 : p.pass;
  if (acceptable && (!best_verified_ || p.f < best_verified_->f)) best_verified_ = p;
}

/// The chaotic-onset margin (an onset search per design) is screened only once a full check
/// finds it failing or within kOnsetScreen of its limit; until then screening takes it from the
/// latest full check, where it holds with room, so screening stays optimistic (a relaxation).
/// Returns true when the screening changes (the onset starts to be screened).
bool Sizer::update_onset(const DesignOutcome& full) {
  bool any = false, close = false;
  for (std::size_t i = 0; i < spec_.limits.size(); ++i)
    if (spec_.limits[i].kind == LimitKind::onset_margin) {
      any = true;
      close |= !(full.ratio[i] >= kOnsetScreen);
    }
  if (!any || screen_onset_) return false;
  if (close) {
    screen_onset_ = true;
    memo_.clear();
    return true;
  }
  if (full.worst != onset_worst_) memo_.clear();
  onset_worst_ = full.worst;
  return false;
}

bool Sizer::add_to_screening(const std::vector<long>& cases) {
  bool added = false;
  for (long c : cases)
    if (c >= 0 && !std::binary_search(screening_.begin(), screening_.end(), c)) {
      screening_.insert(std::upper_bound(screening_.begin(), screening_.end(), c), c);
      added = true;
    }
  if (added) memo_.clear();
  return added;
}

}  // namespace swaybound::sizing_search
