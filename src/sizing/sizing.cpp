// Sizing: the run as a whole (the design as given, the search, rounding to steps, the final check
// through the sized spec's YAML) and its result; the stages are in the files sizer.hpp lists.
#include "swaybound/sizing/sizing.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>

#include <fmt/format.h>

#include "sizer.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/core/version.hpp"

namespace swaybound {

std::string_view evaluation_kind_name(EvaluationKind kind) {
  switch (kind) {
    case EvaluationKind::initial: return "initial";
    case EvaluationKind::screening: return "screening";
    case EvaluationKind::verification: return "verification";
    case EvaluationKind::final_check: return "final";
  }
  return "?";
}

namespace sizing_search {

double round12(double v) { return std::strtod(fmt::format("{:.12g}", v).c_str(), nullptr); }
std::vector<double> round12(std::vector<double> v) {
  for (double& x : v) x = round12(x);
  return v;
}

SizingResult Sizer::run() {
  SizingResult r;
  start_ = Clock::now();
  r.variables = vars_;
  r.required_margin = evaluator_.required_margin();
  r.case_count = evaluator_.case_count();
  r.source_file = spec_.source_file;
  geometry_ = varies_geometry(vars_);
  for (const auto& v : vars_) {
    cost_floor_ += v.cost * v.lo;
    r.initial_values.push_back(v.initial);
  }
  double span = 0;
  for (const auto& v : vars_) span += v.cost * (v.hi - v.lo);
  cost_span_ = span > 0 ? span : 1.0;
  initial_in_range_ = true;
  for (const auto& v : vars_) {
    const bool in = v.discrete() ? std::find(v.catalogue.begin(), v.catalogue.end(), v.initial) != v.catalogue.end()
                                 : v.initial >= v.lo && v.initial <= v.hi;
    initial_in_range_ &= in;
  }
  r.initial_in_range = initial_in_range_;

  // 1. The design as given, on every case.
  {
    std::vector<long> failed;
    r.outcome_before = full_check(spec_, r.before, failed);
    const double metric = r.outcome_before.metric;
    metric_scale_ = std::isfinite(metric) && metric != 0 ? std::fabs(metric) : 1.0;
    Point p = make_point(r.initial_values, r.outcome_before);
    p.verified = true;
    if (initial_in_range_) consider_verified(p);
    record(p, EvaluationKind::initial);
    // 2. The screening set: every k-th case, the governing and the failed cases of the design as given.
    const long n = r.case_count;
    const long target = options_.screening_cases;
    const long stride = target <= 0 || target >= n ? 1 : (n + target - 1) / target;
    for (long i = 0; i < n; i += stride) screening_.push_back(i);
    std::vector<long> extra = failed;
    for (long g : r.outcome_before.governing) extra.push_back(g);
    add_to_screening(extra);
    update_onset(r.outcome_before);
    r.objective_before = objective_value(r.initial_values, r.outcome_before);
  }

  // 3. The search.
  std::vector<double> start;
  for (const auto& v : vars_) start.push_back(v.discrete() ? v.nearest(v.initial) : std::clamp(v.initial, v.lo, v.hi));
  std::vector<int> cont, cat;
  for (std::size_t i = 0; i < vars_.size(); ++i) (vars_[i].discrete() ? cat : cont).push_back(static_cast<int>(i));
  r.screening_size = static_cast<long>(screening_.size());
  search_start_ = Clock::now();
  searching_ = true;
  if (cat.empty())
    solve(cont, start, sizing_.max_evaluations, sizing_.seed);
  else
    size_with_catalogue(cont, cat, start);
  searching_ = false;

  // 4. The final design: the best verified one, else the one nearest to holding.
  std::vector<double> final_values = start;
  if (best_verified_)
    final_values = best_verified_->values;
  else if (least_violation_)
    final_values = least_violation_->values;
  final_values = round12(final_values);
  r.unrounded_values = final_values;
  // 4a. Variables with a step: the multiples next to the values found, each verified on every case.
  r.rounding = round_to_steps(final_values);
  r.values = final_values;

  // 5. Through its YAML, then every case with the audit.
  r.algorithm = sizing_.mode == SearchMode::global ? "ISRES, then COBYLA polish" : "COBYLA";
  r.catalogue_method = catalogue_method_;
  r.stop_reason = stop_reason_;
  r.stages = stages_;
  r.evaluations = evaluations_;
  r.screening_evaluations = screening_evaluations_;
  r.full_checks = full_checks_ + 1;
  r.source_sha256 = spec_sha256(spec_);
  const Spec design = evaluator_.design(final_values);
  r.sized_yaml = sized_spec_header(r) + normalised_yaml(design);
  if (options_.write_sized_spec) r.sized_path = options_.write_sized_spec(r.sized_yaml);
  try {
    r.sized = r.sized_path.empty() ? load_spec_text(r.sized_yaml, "sized spec", options_.load)
                                   : load_spec(r.sized_path, options_.load);
  } catch (const SpecError&) {
    // Only a design with a point beyond the end of its link (infeasible) fails to re-load.
    r.sized = design;
    r.sized.source_file.clear();
    r.sized.source_text.clear();
  }
  for (std::size_t i = 0; i < vars_.size(); ++i) {
    const double written = get_spec_value(r.sized, vars_[i].target);
    SWAYBOUND_REQUIRE(written == final_values[i], "the sized spec holds {} for {}, the search found {}", written,
                      vars_[i].path, final_values[i]);
  }
  report_progress("final check");
  CheckOptions o;
  o.jobs = options_.jobs;
  o.audit = options_.audit;
  o.record = options_.record;
  o.on_case = options_.on_final_case;
  if (options_.search) o.search = search_worst;
  r.outcome_after = evaluator_.check(r.sized, o, r.after);
  r.searched_final = r.after.searched;
  r.searched_screening = evaluator_.search_in_screening();
  Point p = make_point(final_values, r.outcome_after);
  p.verified = true;
  record(p, EvaluationKind::final_check);
  r.feasible = r.after.pass && r.outcome_after.pass();
  r.objective_after = objective_value(final_values, r.outcome_after);
  r.history = history_;
  build_result(r);
  r.seconds = elapsed();
  return r;
}

void Sizer::build_result(SizingResult& r) const {
  switch (sizing_.objective) {
    case Objective::min_cost:
      r.objective_label = "weighted cost";
      r.objective_unit = "";
      break;
    case Objective::min_metric:
      r.objective_label = evaluator_.metric().label;
      r.objective_unit = evaluator_.metric().unit;
      break;
    case Objective::max_margin:
      r.objective_label = "least margin ratio";
      r.objective_unit = "";
      break;
  }
  for (std::size_t i = 0; i < vars_.size(); ++i) {
    const DesignVariable& v = vars_[i];
    VariableOutcome o;
    o.path = v.path;
    o.unit = v.unit;
    o.lo = v.lo;
    o.hi = v.hi;
    o.cost = v.cost;
    o.discrete = v.discrete();
    o.before = r.initial_values[i];
    o.after = r.values[i];
    o.at_bound = v.at_bound(o.after);
    o.step = v.step;
    o.unrounded = i < r.unrounded_values.size() ? r.unrounded_values[i] : o.after;
    r.variable_outcomes.push_back(o);
  }
  for (std::size_t i = 0; i < r.after.checks.size(); ++i) {
    const CheckResult& a = r.after.checks[i];
    LimitOutcome l;
    l.limit = a.limit;
    l.key = a.key;
    l.subject = a.subject;
    l.unit = a.unit;
    l.limit_value = a.limit_value;
    if (i < r.before.checks.size()) {
      l.worst_before = r.before.checks[i].worst;
      l.ratio_before = r.outcome_before.ratio[i];
      l.pass_before = r.before.checks[i].pass;
    }
    l.sampled_after = a.worst;
    l.worst_after = r.outcome_after.worst[i];  // the searched worst where the search ran
    l.ratio_after = r.outcome_after.ratio[i];
    l.pass_after = a.pass;
    l.binding = !a.pass || l.ratio_after < r.required_margin + kBindingRatio;
    double margin = a.margin;
    for (const LimitSearch& s : r.after.search)
      if (s.limit == a.limit && s.searched) margin = s.margin;
    l.shortfall = a.pass ? 0.0 : (std::isnan(margin) ? std::nan("") : -margin);
    l.governing_after = a.governing_id;
    l.start_transient_after = a.start_transient;
    l.time_after = a.time;
    l.start_note_after = a.start_note;
    r.limits.push_back(l);
  }
}

}  // namespace sizing_search

SizingResult run_sizing(const Spec& spec, const SizingOptions& options) {
  design_variables(spec);  // SpecError when there is nothing to size
  sizing_search::Sizer sizer(spec, options);
  return sizer.run();
}

std::string sized_spec_header(const SizingResult& r) {
  std::string h;
  h += fmt::format("# Sized by swaybound {} (commit {}), `swaybound size`, from {} (sha256 {}).\n", tool_version(),
                   git_commit(), r.source_file.empty() ? std::string("a spec in memory") : r.source_file,
                   r.source_sha256);
  h += "# The normalised spec (SI units, defaults written out; the original's comments are not kept) with\n";
  h += "# the design variables set to the values the search found:\n";
  for (std::size_t i = 0; i < r.variables.size(); ++i)
    h += fmt::format("#   {} = {:.12g} {} (was {:.12g})\n", r.variables[i].path, r.values[i], r.variables[i].unit,
                     r.initial_values[i]);
  if (r.required_margin > 0)
    h += fmt::format("# Every limit was required to hold with {:g}% to spare (sizing.required_margin).\n",
                     100 * r.required_margin);
  for (std::size_t i = 0; i < r.variables.size(); ++i)
    if (r.variables[i].step > 0 && !r.variables[i].discrete() && i < r.unrounded_values.size())
      h += fmt::format("#   {} rounded to a multiple of {:.12g} {} from {:.12g}\n", r.variables[i].path,
                       r.variables[i].step, r.variables[i].unit, r.unrounded_values[i]);
  h += "# The check of exactly this file on every case is in results.json beside it; the verdict there\n";
  h += "# decides. CAUTION: a sized design is a proposal, not a certification. It still needs the review\n";
  h += "# and sign-off of a licensed professional engineer against the applicable codes and standards.\n";
  return h;
}

}  // namespace swaybound