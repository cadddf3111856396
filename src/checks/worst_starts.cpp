// The engine half of the worst-case search (checks/worst_search.hpp): the box of starts the case
// sets declare, the worst sampled cases per limit, and the verdicts the search changes. The
// optimiser itself (NLopt) is in worst_search.cpp, built into swaybound::sizing.
#include <algorithm>
#include <cmath>

#include "swaybound/checks/worst_search.hpp"
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
  const auto widen = [&](std::size_t d, double a, double b) {
    box.lo[d] = std::min(box.lo[d], a);
    box.hi[d] = std::max(box.hi[d], b);
  };
  for (const InitialSetSpec& set : spec.cases.initial) {
    // Modal and equilibrium starts are checked at their samples only (the box is of link angles).
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

WorstStarts::WorstStarts(const Spec& spec, int starts) : spec_(&spec), starts_(std::max(starts, 1)) {
  slots_ = residual_slots(spec);
  kept_.resize(spec.limits.size());
}

double WorstStarts::value(int limit, const CaseMetrics& m) const {
  int link;
  double time;
  const auto k = static_cast<std::size_t>(limit);
  return limit_value_in_case(spec_->limits[k], slots_[k], m, link, time);
}

void WorstStarts::offer(const CaseMetrics& m) {
  if (!m.ok()) return;
  if (start_kind(spec_->cases.initial[static_cast<std::size_t>(m.set)]) != StartKind::angles) return;
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

void apply_search(const std::vector<LimitSearch>& searches, std::vector<CheckResult>& checks) {
  for (const LimitSearch& s : searches)
    if (s.searched && !s.pass) checks.at(static_cast<std::size_t>(s.limit)).pass = false;
}

}  // namespace swaybound
