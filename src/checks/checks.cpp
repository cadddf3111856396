#include "swaybound/checks/checks.hpp"

#include <fmt/format.h>

#include "swaybound/core/units.hpp"

namespace swaybound {

namespace {

units::Dim limit_dim(LimitKind kind) {
  switch (kind) {
    case LimitKind::peak_angle:
    case LimitKind::relative_angle:
    case LimitKind::residual_sway: return units::angle;
    case LimitKind::peak_rate: return units::angular_rate;
    case LimitKind::pivot_load:
    case LimitKind::rope_tension_min: return units::force;
    case LimitKind::ftle_max: return units::rate;
    case LimitKind::dynamic_factor:
    case LimitKind::modal_damping_min:
    case LimitKind::onset_margin: return units::dimensionless;
  }
  return units::dimensionless;
}

bool is_lower_bound(LimitKind kind) {
  return kind == LimitKind::rope_tension_min || kind == LimitKind::modal_damping_min ||
         kind == LimitKind::onset_margin;
}

bool is_per_case(LimitKind kind) { return kind != LimitKind::modal_damping_min && kind != LimitKind::onset_margin; }

/// Index of `limit` among the spec's residual_sway limits (the slot in CaseMetrics::residual).
int residual_slot(const Spec& spec, int limit) {
  int slot = 0;
  for (int i = 0; i < limit; ++i) slot += spec.limits[static_cast<std::size_t>(i)].kind == LimitKind::residual_sway;
  return slot;
}

}  // namespace

double limit_value_in_case(const LimitSpec& limit, int slot, const CaseMetrics& m, int& link, double& time) {
  const int n = static_cast<int>(m.peak_angle.size());
  const bool lower = is_lower_bound(limit.kind);
  double worst = std::nan("");
  link = -1;
  time = std::nan("");
  const auto offer = [&](double v, int i, double t) {
    if (std::isnan(v)) return;
    if (std::isnan(worst) || (lower ? v < worst : v > worst)) {
      worst = v;
      link = i;
      time = t;
    }
  };
  for (int i = 0; i < n; ++i) {
    if (limit.link >= 0 && limit.link != i) continue;
    const auto k = static_cast<std::size_t>(i);
    switch (limit.kind) {
      case LimitKind::peak_angle: offer(m.peak_angle[k].value, i, m.peak_angle[k].time); break;
      case LimitKind::relative_angle: offer(m.peak_relative[k].value, i, m.peak_relative[k].time); break;
      case LimitKind::peak_rate: offer(m.peak_rate[k].value, i, m.peak_rate[k].time); break;
      case LimitKind::pivot_load: offer(m.peak_load[k].value, i, m.peak_load[k].time); break;
      case LimitKind::dynamic_factor: offer(m.dynamic_factor[k], i, m.peak_load[k].time); break;
      case LimitKind::rope_tension_min: {
        const auto& e = limit.end == RopeEnd::top      ? m.min_tension_top[k]
                        : limit.end == RopeEnd::bottom ? m.min_tension_bottom[k]
                                                       : m.min_tension[k];
        offer(e.value, i, e.time);
        break;
      }
      default: break;
    }
  }
  if (limit.kind == LimitKind::residual_sway) {
    worst = m.residual.at(static_cast<std::size_t>(slot));
    link = limit.link;
  }
  if (limit.kind == LimitKind::ftle_max) worst = m.ftle;
  return worst;
}

CheckSet::CheckSet(const Spec& spec) : spec_(&spec) {
  for (std::size_t i = 0; i < spec.limits.size(); ++i) {
    const LimitSpec& l = spec.limits[i];
    CheckResult c;
    c.limit = static_cast<int>(i);
    c.key = l.key;
    c.unit = units::si_unit(limit_dim(l.kind));
    c.bound = is_lower_bound(l.kind) ? Bound::lower : Bound::upper;
    c.limit_value = l.value;
    c.per_case = is_per_case(l.kind);
    if (l.link >= 0)
      c.subject = fmt::format("link '{}'", spec.links[static_cast<std::size_t>(l.link)].name);
    else if (l.kind == LimitKind::rope_tension_min)
      c.subject = "every rope link";
    else if (!c.per_case || l.kind == LimitKind::ftle_max)
      c.subject = "the chain";
    else
      c.subject = "every link";
    if (l.kind == LimitKind::residual_sway) c.subject += fmt::format(", after {:g} s", l.after);
    if (l.kind == LimitKind::ftle_max) c.subject += fmt::format(", horizon {:g} s", l.horizon);
    if (l.kind == LimitKind::rope_tension_min)
      c.subject += l.end == RopeEnd::top ? ", top end" : l.end == RopeEnd::bottom ? ", bottom end" : ", either end";
    results_.push_back(std::move(c));
  }
}

void CheckSet::offer(const CaseMetrics& m) {
  for (auto& c : results_) {
    if (!c.per_case) continue;
    if (!m.ok()) {
      if (c.failed_cases++ == 0) c.first_failure = fmt::format("{} ({}): {}", m.id, status_name(m.status), m.reason);
      continue;
    }
    const LimitSpec& l = spec_->limits[static_cast<std::size_t>(c.limit)];
    int link;
    double time;
    const double v = limit_value_in_case(l, residual_slot(*spec_, c.limit), m, link, time);
    if (std::isnan(v)) continue;
    const bool better = std::isnan(c.worst) || (c.bound == Bound::upper ? v > c.worst : v < c.worst);
    if (better) {
      c.worst = v;
      c.governing = m.index;
      c.governing_id = m.id;
      c.governing_link = link;
      c.time = time;
    }
  }
}

void CheckSet::set_global(int limit, double value, const std::string& note) {
  CheckResult& c = results_.at(static_cast<std::size_t>(limit));
  c.worst = value;
  c.governing_id = note;
}

void CheckSet::finish() {
  for (auto& c : results_) {
    if (!std::isnan(c.worst)) {
      c.margin = c.bound == Bound::upper ? c.limit_value - c.worst : c.worst - c.limit_value;
      c.margin_ratio = c.limit_value != 0 ? c.margin / std::fabs(c.limit_value) : std::nan("");
    }
    c.pass = c.failed_cases == 0 && !std::isnan(c.margin) && c.margin >= 0;
  }
}

bool CheckSet::all_pass() const {
  for (const auto& c : results_)
    if (!c.pass) return false;
  return true;
}

}  // namespace swaybound
