#include "swaybound/checks/checks.hpp"

#include <fmt/format.h>

#include "swaybound/core/units.hpp"

namespace swaybound {

namespace {

/// Index of `limit` among the spec's limits with a window (`after`): its slot in CaseMetrics::residual.
int residual_slot(const Spec& spec, int limit) {
  int slot = 0;
  for (int i = 0; i < limit; ++i) slot += limit_kind(spec.limits[static_cast<std::size_t>(i)].kind).options.after;
  return slot;
}

}  // namespace

std::vector<int> residual_slots(const Spec& spec) {
  std::vector<int> slots;
  for (std::size_t i = 0; i < spec.limits.size(); ++i) slots.push_back(residual_slot(spec, static_cast<int>(i)));
  return slots;
}

double limit_value_in_case(const LimitSpec& limit, int slot, const CaseMetrics& m, int& link, double& time) {
  const LimitKindInfo& info = limit_kind(limit.kind);
  link = -1;
  time = std::nan("");
  if (info.case_value) {
    const Extreme e = info.case_value(m, limit, slot);
    link = limit.link;
    time = e.time;
    return e.value;
  }
  double worst = std::nan("");
  if (!info.link_value) return worst;
  const bool lower = info.bound == Bound::lower;
  const int n = static_cast<int>(m.peak_angle.size());
  for (int i = 0; i < n; ++i) {
    if (limit.link >= 0 && limit.link != i) continue;
    const Extreme e = info.link_value(m, limit, static_cast<std::size_t>(i));
    if (std::isnan(e.value)) continue;
    if (std::isnan(worst) || (lower ? e.value < worst : e.value > worst)) {
      worst = e.value;
      link = i;
      time = e.time;
    }
  }
  return worst;
}

/// What a check applies to: the link it names or the links of its scope, then its options.
std::string check_subject(const Spec& spec, const LimitSpec& l) {
  const LimitKindInfo& info = limit_kind(l.kind);
  std::string s = l.link >= 0 ? fmt::format("link '{}'", spec.links[static_cast<std::size_t>(l.link)].name)
                  : info.scope == LimitScope::rope_links ? std::string("every rope link")
                  : info.scope == LimitScope::elastic_rope_links ? std::string("every elastic rope")
                  : info.scope == LimitScope::chain      ? std::string("the chain")
                                                         : std::string("every link");
  if (info.options.after) s += fmt::format(", after {:g} s", l.after);
  if (info.options.horizon) s += fmt::format(", horizon {:g} s", l.horizon);
  if (info.options.end)
    s += l.end == RopeEnd::top ? ", top end" : l.end == RopeEnd::bottom ? ", bottom end" : ", either end";
  return s;
}

CheckSet::CheckSet(const Spec& spec) : spec_(&spec) {
  for (std::size_t i = 0; i < spec.limits.size(); ++i) {
    const LimitSpec& l = spec.limits[i];
    CheckResult c;
    c.limit = static_cast<int>(i);
    c.key = l.key;
    const LimitKindInfo& info = limit_kind(l.kind);
    c.unit = units::si_unit(info.dim);
    c.bound = info.bound;
    c.limit_value = l.value;
    c.per_case = info.per_case;
    c.subject = check_subject(spec, l);
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
