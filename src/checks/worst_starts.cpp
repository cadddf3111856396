// The engine half of the worst-case search (checks/worst_search.hpp): the box of starts the case
// sets declare, the worst sampled cases per limit, and the verdicts the search changes. The
// optimiser itself (NLopt) is in worst_search.cpp, built into swaybound::sizing.
#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/worst_search.hpp"
#include "swaybound/modal/modal_start.hpp"
#include "swaybound/spec/case_set_kinds.hpp"

namespace swaybound {

double& start_quantity(InitialState& start, int d, int n) {
  std::vector<double>* lists[] = {&start.theta, &start.omega, &start.phi, &start.phi_rate};
  return (*lists[d / n])[static_cast<std::size_t>(d % n)];
}

StartBox start_box(const Spec& spec) {
  const std::size_t n = spec.links.size();
  const std::size_t blocks = spec.motion == Motion::spatial ? 4 : 2;
  StartBox box;
  box.links = static_cast<int>(n);
  box.lo.assign(blocks * n, INFINITY);
  box.hi.assign(blocks * n, -INFINITY);
  box.periodic.assign(blocks * n, false);
  const auto widen = [&](std::size_t d, double a, double b) {
    box.lo[d] = std::min(box.lo[d], a);
    box.hi[d] = std::max(box.hi[d], b);
  };
  for (const InitialSetSpec& set : spec.cases.initial) {
    // Modal and equilibrium starts have boxes of their own (set_box).
    if (start_kind(set) != StartKind::angles) continue;
    const bool ranged = set.kind == InitialKind::grid || set.kind == InitialKind::corners ||
                        set.kind == InitialKind::random;
    const auto lists = start_lists(set);
    for (std::size_t q = 0; q < blocks; ++q)
      for (std::size_t i = 0; i < n; ++i) {
        // A link the set does not list starts at 0 there.
        const Range r = i < lists[q]->size() ? (*lists[q])[i] : Range{};
        widen(q * n + i, r.lo, ranged ? r.hi : r.lo);
      }
    if (set.kind == InitialKind::ladder && set.perturb_link >= 0 && static_cast<std::size_t>(set.perturb_link) < n) {
      const auto k = static_cast<std::size_t>(set.perturb_link);
      const double base = k < set.theta.size() ? set.theta[k].lo : 0.0;
      for (double step : set.steps) {
        const double theta = set.relative ? base * (1 + step) : base + step;
        widen(k, theta, theta);
      }
    }
  }
  for (std::size_t d = 0; d < box.lo.size(); ++d)
    if (box.hi[d] > box.lo[d]) box.free.push_back(static_cast<int>(d));
  return box;
}

StartBox set_box(const Spec& spec, int set_index) {
  const InitialSetSpec& set = spec.cases.initial.at(static_cast<std::size_t>(set_index));
  const StartKind kind = start_kind(set);
  if (kind == StartKind::angles) return start_box(spec);
  StartBox box;
  box.links = static_cast<int>(spec.links.size());
  box.kind = kind;
  box.set = set_index;
  // The set's values in the order of InitialState::quantities (CaseSpace::at): amplitudes then
  // phases, or the steady acceleration then the wind speed (a value it does not sample stays fixed).
  const bool ranged = kind == StartKind::equilibrium ? set.sampling != InitialKind::single
                                                     : set.kind == InitialKind::grid || set.kind == InitialKind::corners ||
                                                           set.kind == InitialKind::random;
  const auto add = [&](const Range& r, bool phase) {
    box.lo.push_back(r.lo);
    box.hi.push_back(ranged ? r.hi : r.lo);
    // A phase over a whole turn: its ends are the same start.
    box.periodic.push_back(phase && std::fabs((box.hi.back() - box.lo.back()) - 2 * std::numbers::pi) < 1e-9);
  };
  if (kind == StartKind::modal) {
    for (const Range& r : set.amplitude) add(r, false);
    for (const Range& r : set.phase) add(r, true);
  } else {
    add(set.accel_range.empty() ? Range{} : set.accel_range.front(), false);
    add(set.wind_range.empty() ? Range{} : set.wind_range.front(), false);
  }
  for (std::size_t d = 0; d < box.lo.size(); ++d)
    if (box.hi[d] > box.lo[d]) box.free.push_back(static_cast<int>(d));
  return box;
}

double box_value(const StartBox& box, const InitialState& start, int d) {
  if (box.kind == StartKind::angles) return start_quantity(const_cast<InitialState&>(start), d, box.links);
  return start.quantities.at(static_cast<std::size_t>(d));
}

std::string move_start(const StartBox& box, const std::vector<double>& values, const Spec& spec, const CaseSpace& space,
                       const Model& model, Workspace& ws, CaseDef& def) {
  if (box.kind == StartKind::angles) {
    for (std::size_t k = 0; k < box.free.size(); ++k) start_quantity(def.initial, box.free[k], box.links) = values.at(k);
    return {};
  }
  std::vector<double>& q = def.initial.quantities;
  for (std::size_t k = 0; k < box.free.size(); ++k) q.at(static_cast<std::size_t>(box.free[k])) = values.at(k);
  const InitialSetSpec& set = spec.cases.initial.at(static_cast<std::size_t>(box.set));
  if (box.kind == StartKind::modal) {
    const auto modes = static_cast<std::ptrdiff_t>(set.amplitude.size());
    const InitialState m = modal_start(*space.modes(), std::vector<double>(q.begin(), q.begin() + modes),
                                       std::vector<double>(q.begin() + modes, q.end()));
    def.initial.theta = m.theta;
    def.initial.omega = m.omega;
    return {};
  }
  const EquilibriumResult e = steady_equilibrium(spec, model, ws, set, def.scenario, q.at(0), q.at(1));
  if (!e.converged)
    return fmt::format("no equilibrium start at {:g} m/s^2{}: {}", q.at(0),
                       std::isnan(q.at(1)) ? std::string() : fmt::format(", wind {:g} m/s", q.at(1)), e.reason);
  def.initial.theta = e.theta;
  std::fill(def.initial.omega.begin(), def.initial.omega.end(), 0.0);
  return {};
}

WorstStarts::WorstStarts(const Spec& spec, int starts) : spec_(&spec), starts_(std::max(starts, 1)) {
  slots_ = residual_slots(spec);
  kept_.resize(spec.limits.size());
  // A set of modal or equilibrium starts with nothing to move (values, not ranges) is searched only
  // where its scenario has uncertain values.
  for (std::size_t i = 0; i < spec.cases.initial.size(); ++i)
    fixed_.push_back(start_kind(spec.cases.initial[i]) != StartKind::angles &&
                     set_box(spec, static_cast<int>(i)).free.empty());
}

double WorstStarts::value(int limit, const CaseMetrics& m) const {
  int link;
  double time;
  const auto k = static_cast<std::size_t>(limit);
  return limit_value_in_case(spec_->limits[k], slots_[k], m, link, time);
}

void WorstStarts::offer(const CaseMetrics& m) {
  if (!m.ok()) return;
  if (fixed_[static_cast<std::size_t>(m.set)] && spec_->scenarios[static_cast<std::size_t>(m.scenario)].uncertain.empty())
    return;
  for (std::size_t k = 0; k < spec_->limits.size(); ++k) {
    const LimitKindInfo& info = limit_kind(spec_->limits[k].kind);
    if (!info.per_case) continue;
    const double v = value(static_cast<int>(k), m);
    if (std::isnan(v)) continue;
    const double u = utilisation(info.bound, v);
    std::vector<CaseMetrics>& kept = kept_[k];
    // Worst first; a tie goes after the cases kept before it (case order).
    auto at = kept.begin();
    while (at != kept.end() && utilisation(info.bound, value(static_cast<int>(k), *at)) >= u) ++at;
    if (at - kept.begin() >= starts_) continue;
    kept.insert(at, m);
    if (static_cast<int>(kept.size()) > starts_) kept.pop_back();
  }
}

UncertainDims uncertain_dims(const Spec& spec, int scenario) {
  UncertainDims dims;
  for (const UncertainSpec& v : spec.scenarios.at(static_cast<std::size_t>(scenario)).uncertain) {
    std::string error;
    const auto target = parse_uncertain_path(spec, scenario, v.path, error);
    SWAYBOUND_REQUIRE(target.has_value(), "uncertain value '{}' of scenario {}: {}", v.path, scenario, error);
    dims.targets.push_back(*target);
    dims.paths.push_back(v.path);
    dims.units.push_back(units::si_unit(spec_path_dim(*target)));
    dims.lo.push_back(v.lo);
    dims.hi.push_back(v.hi);
    dims.nominal.push_back(get_spec_value(spec, *target));
  }
  return dims;
}

std::shared_ptr<const ScenarioVariant> scenario_variant(const Spec& spec, const Model& model, int scenario,
                                                        const UncertainDims& dims, const std::vector<double>& values) {
  auto variant = std::make_shared<ScenarioVariant>(ScenarioVariant{spec, model});
  for (std::size_t k = 0; k < dims.size(); ++k) set_spec_value(variant->spec, dims.targets[k], values.at(k));
  const auto s = static_cast<std::size_t>(scenario);
  variant->model.scenarios.at(s) = build_scenario(variant->spec.scenarios.at(s), variant->spec.wind);
  return variant;
}

long audit_search(const CheckPlan& plan, int jobs, std::vector<LimitSearch>& searches) {
  const Spec& spec = *plan.spec;
  RunSettings tight = plan.streaming;
  tight.rtol = std::max(plan.run.rtol / 100, 1e-15);
  tight.atol = std::max(plan.run.atol / 100, 1e-18);
  std::vector<std::size_t> audited;
  for (std::size_t k = 0; k < searches.size(); ++k)
    if (searches[k].searched && !searches[k].failed_run && !std::isnan(searches[k].searched_worst)) audited.push_back(k);
  const WorstStarts values(spec, 1);
  long time_budget = 0;
  std::vector<CaseMetrics> reruns;
  RunnerOptions runner;
  runner.jobs = jobs;
  run_ordered<CaseMetrics>(
      static_cast<long>(audited.size()), runner, [&] { return Workspace(plan.model); },
      [&](long k, Workspace& ws) {
        const LimitSearch& s = searches[audited[static_cast<std::size_t>(k)]];
        if (s.uncertain.empty())
          return run_case(plan.model, spec, ws, s.worst_case, tight, plan.case_options);
        const auto variant = scenario_variant(spec, plan.model, s.worst_case.scenario, s.uncertain_dims, s.uncertain);
        return run_case(variant->model, variant->spec, ws, s.worst_case, tight, plan.case_options);
      },
      [&](CaseMetrics&& m) {
        if (m.status == RunStatus::time_budget) ++time_budget;
        reruns.push_back(std::move(m));
      });
  for (std::size_t j = 0; j < audited.size(); ++j) {
    LimitSearch& s = searches[audited[j]];
    const CaseMetrics& m = reruns[j];
    s.audited = true;
    s.audit_value = m.ok() ? values.value(s.limit, m) : std::nan("");
    s.audit_change = s.audit_value - s.searched_worst;
    s.audit_warning = !(std::fabs(s.audit_change) <= std::fabs(s.margin));
  }
  return time_budget;
}

void apply_search(const std::vector<LimitSearch>& searches, std::vector<CheckResult>& checks) {
  for (const LimitSearch& s : searches)
    if (s.searched && !s.pass) checks.at(static_cast<std::size_t>(s.limit)).pass = false;
}

}  // namespace swaybound
