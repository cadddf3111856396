#include "swaybound/sizing/evaluate.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/cases/runner.hpp"
#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/checks/worst_search.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound {

namespace {

/// Running worst value of the objective metric over the cases offered (when it is not a check's).
struct MetricAccumulator {
  const ObjectiveMetric* metric = nullptr;
  double value = std::nan("");
  void offer(const CaseMetrics& m) {
    if (!metric->active || metric->check >= 0 || !m.ok()) return;
    int link;
    double time;
    const double v = limit_value_in_case(metric->limit, metric->residual_slot, m, link, time);
    if (std::isnan(v)) return;
    if (std::isnan(value) || (metric->lower ? v < value : v > value)) value = v;
  }
};

bool has_kind(const Spec& spec, LimitKind kind) {
  for (const auto& l : spec.limits)
    if (l.kind == kind) return true;
  return false;
}

/// The outcome of `checks`; a check with a search in `searches` counts its searched worst (a failed
/// run during the search fails the constraint, as a failed case does).
DesignOutcome outcome_from(const Spec& spec, const std::vector<CheckResult>& checks,
                           const std::vector<LimitSearch>& searches = {}) {
  DesignOutcome out;
  for (const auto& c : checks) {
    CheckResult counted = c;
    for (const LimitSearch& s : searches)
      if (s.limit == c.limit && s.searched) {
        counted.worst = s.searched_worst;
        counted.margin = s.margin;
        if (s.failed_run) counted.failed_cases = std::max(counted.failed_cases, 1L);
      }
    out.ratio.push_back(constraint_ratio(spec, counted));
    out.worst.push_back(counted.worst);
    out.governing.push_back(c.per_case ? c.governing : -1);
  }
  return out;
}

}  // namespace

double constraint_scale(const Spec& spec, const LimitSpec& limit) {
  if (limit.value != 0) return std::fabs(limit.value);
  const LimitKindInfo& info = limit_kind(limit.kind);
  const units::Dim dim = info.dim;
  if (dim == units::force) {
    double mass = 0;
    for (const auto& l : spec.links) mass += l.mass;
    return mass * spec.gravity > 0 ? mass * spec.gravity : 1.0;
  }
  if (info.options.horizon) {
    const double horizon = limit.horizon > 0 ? limit.horizon : spec.cases.duration;
    return horizon > 0 ? 1.0 / horizon : 1.0;
  }
  return 1.0;
}

double constraint_ratio(const Spec& spec, const CheckResult& check) {
  const LimitSpec& limit = spec.limits.at(static_cast<std::size_t>(check.limit));
  double r = std::isnan(check.margin) ? -1.0 : check.margin / constraint_scale(spec, limit);
  if (check.failed_cases > 0) r = std::min(r, -1.0);
  if (std::isnan(r)) r = -1.0;
  return std::clamp(r, -1e6, 1e6);
}

ObjectiveMetric objective_metric(const Spec& spec) {
  ObjectiveMetric m;
  if (!spec.sizing || spec.sizing->objective != Objective::min_metric) return m;
  const SizingSpec& s = *spec.sizing;
  const LimitKindInfo* info = find_limit_kind(s.metric);
  const std::string file = spec.source_file.empty() ? std::string("spec") : spec.source_file;
  if (!info)
    throw SpecError(file, {Diagnostic{s.mark, "sizing.objective.min", fmt::format("unknown limit kind '{}'", s.metric),
                                      "name a limit kind from specs/README.md, 'limits'"}});
  m.active = true;
  m.limit.kind = info->kind;
  m.limit.key = std::string(info->key);
  m.limit.link = s.metric_link;
  m.lower = info->bound == Bound::lower;
  m.unit = units::si_unit(info->dim);
  m.label = fmt::format("worst {}{}", info->key,
                        s.metric_link >= 0
                            ? fmt::format(" (link '{}')", spec.links[static_cast<std::size_t>(s.metric_link)].name)
                            : std::string());
  int slot = 0;
  for (std::size_t i = 0; i < spec.limits.size(); ++i) {
    const LimitSpec& l = spec.limits[i];
    if (l.kind == info->kind && l.link == s.metric_link) {
      m.check = static_cast<int>(i);
      m.limit = l;
      m.residual_slot = slot;
      break;
    }
    slot += limit_kind(l.kind).options.after;
  }
  if (info->objective_needs_limit && m.check < 0)
    throw SpecError(file, {Diagnostic{s.mark, "sizing.objective",
                                      fmt::format("objective {{min: {}}} needs a {} limit{} in the spec", info->key,
                                                  info->key, s.metric_link >= 0 ? " for the same link" : ""),
                                      info->options.after
                                          ? "add the limit: it gives the time after which sway counts"
                                          : "add the limit: it switches its computation on and sets its horizon"}});
  return m;
}

double DesignOutcome::least() const {
  double least = std::numeric_limits<double>::infinity();
  for (double r : ratio) least = std::min(least, r);
  return least;
}

DesignEvaluator::DesignEvaluator(const Spec& base, std::vector<DesignVariable> variables, int jobs, bool search)
    : base_(base), variables_(std::move(variables)), jobs_(jobs) {
  search_screening_ = search && base_.sizing && base_.sizing->search_in_screening && base_.cases.search.enabled;
  const CaseSpace space(base_);
  case_count_ = space.size();
  envelope_ = space.envelope_amplitude();
  metric_ = objective_metric(base_);
  required_ = base_.sizing ? base_.sizing->required_margin : 0.0;
}

Spec DesignEvaluator::design(const std::vector<double>& values) const {
  Spec s = base_;
  apply_design(s, variables_, values);
  return s;
}

DesignOutcome DesignEvaluator::screen(const std::vector<double>& values, const std::vector<long>& cases,
                                      const std::vector<double>* onset_worst) const {
  const Spec spec = design(values);
  const CheckPlan plan = plan_check(spec);
  CheckSet checks(spec);
  CaseTotals totals;
  MetricAccumulator metric{&metric_};
  RunnerOptions runner;
  runner.jobs = jobs_;
  WorstStarts starts(spec, spec.cases.search.starts);
  stream_cases(plan, CaseList::of(cases), runner, checks, totals, [&](const CaseMetrics& m) {
    metric.offer(m);
    if (search_screening_) starts.offer(m);
  });
  const long run_count = totals.cases, failed = totals.failed_total;

  double least_damping = std::nan("");
  if (plan.modal_limit || (metric_.active && metric_.limit.kind == LimitKind::modal_damping_min)) {
    const ModalResult modes = modal_analysis(plan.model);
    least_damping = modes.least_damping_ratio;
    set_modal_checks(spec, modes, checks);
  }
  if (has_kind(spec, LimitKind::onset_margin) && onset_worst) {
    for (std::size_t i = 0; i < spec.limits.size(); ++i)
      if (spec.limits[i].kind == LimitKind::onset_margin)
        checks.set_global(static_cast<int>(i), onset_worst->at(i), "last full check");
  } else if (has_kind(spec, LimitKind::onset_margin)) {
    // The onset stage of the full check (it searches from the first scenario whatever the cases);
    // the ratio uses the full case set's envelope, as the full check does.
    const OnsetResult onset =
        onset_search(plan.model, spec, plan.case_options.ftle_settings, jobs_ > 0 ? jobs_ : default_jobs());
    set_onset_checks(spec, onset, envelope_, checks);
  }
  checks.finish();
  std::vector<LimitSearch> searches;
  if (search_screening_) {
    // From the worst screening cases: the search sees only what screening ran.
    searches = search_worst(plan, starts, checks.results(),
                            {spec.cases.search.evaluations, spec.cases.search.starts}, jobs_);
    apply_search(searches, checks.results());
  }
  DesignOutcome out = outcome_from(spec, checks.results(), searches);
  out.cases = run_count;
  out.failed_cases = failed;
  out.required = required_;
  out.geometry = varies_geometry(variables_) ? geometry_margin(spec) : INFINITY;
  if (metric_.active) {
    if (metric_.check >= 0)
      out.metric = checks.results()[static_cast<std::size_t>(metric_.check)].worst;
    else if (metric_.limit.kind == LimitKind::modal_damping_min)
      out.metric = least_damping;
    else
      out.metric = metric.value;
  }
  return out;
}

DesignOutcome DesignEvaluator::check(const Spec& design, CheckOptions options, CheckReport& report) const {
  MetricAccumulator metric{&metric_};
  const auto user = options.on_case;
  options.on_case = [&](const CaseMetrics& m) {
    metric.offer(m);
    if (user) user(m);
  };
  report = run_check(design, options);
  DesignOutcome out = outcome_from(design, report.checks, report.search);
  out.cases = report.case_count;
  out.failed_cases = report.failed_total;
  out.required = required_;
  out.geometry = varies_geometry(variables_) ? geometry_margin(design) : INFINITY;
  if (metric_.active) {
    if (metric_.check >= 0)
      out.metric = report.checks[static_cast<std::size_t>(metric_.check)].worst;
    else if (metric_.limit.kind == LimitKind::modal_damping_min)
      out.metric = report.modes.least_damping_ratio;
    else
      out.metric = metric.value;
  }
  return out;
}

}  // namespace swaybound
