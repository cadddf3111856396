#include "swaybound/checks/limit_kinds.hpp"

#include <cmath>
#include <limits>

#include "swaybound/checks/metrics.hpp"

namespace swaybound {

namespace {

namespace u = units;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr LimitRange kPositive{0, 1e300, true, false};
constexpr LimitRange kNonNegative{0, 1e300, false, false};
constexpr LimitRange kAny{};

// Accessors: the value of a per-case kind in one case's metrics.

Extreme peak_angle(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return m.peak_angle[k]; }
Extreme relative_angle(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return m.peak_relative[k]; }
Extreme peak_rate(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return m.peak_rate[k]; }
Extreme pivot_load(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return m.peak_load[k]; }
/// At the time of the peak load it divides.
Extreme dynamic_factor(const CaseMetrics& m, const LimitSpec&, std::size_t k) {
  return {m.dynamic_factor[k], m.peak_load[k].time};
}
Extreme rope_tension(const CaseMetrics& m, const LimitSpec& l, std::size_t k) {
  return l.end == RopeEnd::top ? m.min_tension_top[k] : l.end == RopeEnd::bottom ? m.min_tension_bottom[k] : m.min_tension[k];
}
Extreme rope_tension_max(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return m.peak_rope_force[k]; }
Extreme line_pull(const CaseMetrics& m, const LimitSpec&, std::size_t k) {
  return {m.peak_rope_force[k].value / m.parts_of_line[k], m.peak_rope_force[k].time};
}
/// The total over the run (no instant recorded).
Extreme slack_time(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return {m.slack_time[k], kNaN}; }
Extreme snatch_load(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return m.snatch[k]; }
Extreme horizontal_support_force(const CaseMetrics& m, const LimitSpec&, int) { return m.support_force_x; }
/// The window's maximum over its links (no instant recorded).
Extreme residual_sway(const CaseMetrics& m, const LimitSpec&, int slot) {
  return {m.residual.at(static_cast<std::size_t>(slot)), kNaN};
}
Extreme ftle(const CaseMetrics& m, const LimitSpec&, int) { return {m.ftle, kNaN}; }
// On-demand figures (empty in metrics of a spec without such a limit).
Extreme at(const std::vector<Extreme>& v, std::size_t k) { return k < v.size() ? v[k] : Extreme{kNaN, kNaN}; }
Extreme in_plane(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return at(m.peak_in_plane, k); }
Extreme out_of_plane(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return at(m.peak_out_of_plane, k); }
Extreme load_x(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return at(m.peak_load_x, k); }
Extreme load_z(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return at(m.peak_load_z, k); }
Extreme load_vertical(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return at(m.peak_load_vertical, k); }
Extreme load_radial(const CaseMetrics& m, const LimitSpec&, std::size_t k) { return at(m.peak_load_radial, k); }
Extreme load_tangential(const CaseMetrics& m, const LimitSpec&, std::size_t k) {
  return at(m.peak_load_tangential, k);
}

constexpr LimitKindInfo kKinds[] = {
    {LimitKind::peak_angle, "peak_angle", u::angle, kPositive, Bound::upper, true, LimitScope::each_link, {}, false,
     "the largest |θ| of the link over the run; θ is its absolute angle from the downward vertical.", peak_angle,
     nullptr, "peak_angle", LimitNeeds::any, false},
    {LimitKind::relative_angle, "relative_angle", u::angle, kPositive, Bound::upper, true, LimitScope::each_link, {},
     false,
     "the largest |θ_i - θ_(i-1)| at the link's upper pivot over the run (the top link's is its own angle from the "
     "vertical).",
     relative_angle, nullptr, "peak_relative_angle", LimitNeeds::any, false},
    {LimitKind::peak_rate, "peak_rate", u::angular_rate, kPositive, Bound::upper, true, LimitScope::each_link, {},
     false, "the largest |ω| of the link over the run.", peak_rate, nullptr, "peak_rate", LimitNeeds::any, false},
    {LimitKind::pivot_load, "pivot_load", u::force, kPositive, Bound::upper, true, LimitScope::each_link, {}, false,
     "the largest magnitude |R| over the run of the reaction R at the link's upper pivot. Sign convention: R is the "
     "force of the upper body (the link above, or for the top link the trolley or boom tip) on the link; the force on "
     "the upper body is -R. It includes gravity, inertia of the swing and of the base motion, and the wind.",
     pivot_load, nullptr, "peak_pivot_load", LimitNeeds::any, false},
    {LimitKind::dynamic_factor, "dynamic_factor", u::dimensionless, LimitRange{1, 1e300, false, false}, Bound::upper,
     true, LimitScope::each_link, {}, false,
     "peak pivot load ÷ static pivot load of the same pivot (g × the mass at and below it, the static-load table). "
     "The peak comes from the simulation of each case; the factor is not a design standard's dynamic coefficient nor "
     "computed by its formula.",
     dynamic_factor, nullptr, "dynamic_factor", LimitNeeds::any, false},
    {LimitKind::horizontal_support_force, "horizontal_support_force", u::force, kPositive, Bound::upper, true,
     LimitScope::chain, {}, false,
     "the largest |F_x| over the run of the horizontal component of the force F = -R the chain applies to its "
     "support (the trolley or boom tip), R being the reaction at the top link's upper pivot: what a trolley drive "
     "and its brakes, or a boom's side-load rating, must carry.",
     nullptr, horizontal_support_force, "horizontal_support_force", LimitNeeds::any, false},
    {LimitKind::rope_tension_min, "rope_tension_min", u::force, kNonNegative, Bound::lower, true,
     LimitScope::rope_links, {.end = true}, false,
     "the least axial tension of a rope link over the run, at the end(s) the limit names (the least of both ends by "
     "default); below zero the rope would go slack.",
     rope_tension, nullptr, "min_rope_tension", LimitNeeds::any, false},
    {LimitKind::rope_tension_max, "rope_tension_max", u::force, kPositive, Bound::upper, true, LimitScope::rope_links,
     {}, false,
     "the largest tension of the rope's fall over the run: for an elastic rope the tension of its law (k δ + c δ' "
     "while taut), for an inextensible rope the axial force at its top end (what the sheave or the drum holds).",
     rope_tension_max, nullptr, "peak_rope_tension", LimitNeeds::any, false},
    {LimitKind::line_pull, "line_pull", u::force, kPositive, Bound::upper, true, LimitScope::rope_links, {}, false,
     "the largest tension of the rope's fall ÷ its parts of line: what one part of the rope carries, to be compared "
     "with the rope's minimum breaking force divided by the coefficient of utilisation the applicable standard "
     "requires.",
     line_pull, nullptr, "peak_line_pull", LimitNeeds::any, false},
    {LimitKind::slack_time, "slack_time", u::duration, kNonNegative, Bound::upper, true,
     LimitScope::elastic_rope_links, {}, false,
     "the total time over the run that the elastic rope is slack (carries no tension) after it was first taut (a rope "
     "that starts slack, as in a lift-off, is being taken up until then); a limit of 0 s allows no slack at all.",
     slack_time, nullptr, "slack_time", LimitNeeds::any, false},
    {LimitKind::snatch_load, "snatch_load", u::force, kPositive, Bound::upper, true, LimitScope::elastic_rope_links,
     {}, false,
     "the largest tension of the elastic rope after it first went slack: the snatch when the load is caught taut "
     "again (0 when the rope never went slack).",
     snatch_load, nullptr, "snatch_load", LimitNeeds::any, false},
    {LimitKind::residual_sway, "residual_sway", u::angle, kPositive, Bound::upper, true, LimitScope::each_link,
     {.after = true}, true,
     "the largest |θ| of the links after the limit's time (after:), i.e. the sway left once the base motion has "
     "stopped.",
     nullptr, residual_sway, "residual_sway", LimitNeeds::any, false},
    // The FTLE's cases.csv column is written after the settling time (its place before this table).
    {LimitKind::ftle_max, "ftle_max", u::rate, kAny, Bound::upper, true, LimitScope::chain, {.horizon = true}, true,
     "the largest finite-time Lyapunov exponent of a case over the limit's horizon (section 7); above zero, nearby "
     "starts drift apart.",
     nullptr, ftle, "", LimitNeeds::any, false},
    {LimitKind::modal_damping_min, "modal_damping_min", u::dimensionless, LimitRange{0, 1, false, false},
     Bound::lower, false, LimitScope::chain, {}, false,
     "the least damping ratio of the linear modes about the hanging rest position (section 5); one value for the "
     "design, not per case.",
     nullptr, nullptr, "", LimitNeeds::any, false},
    {LimitKind::onset_margin, "onset_margin", u::dimensionless, kPositive, Bound::lower, false, LimitScope::chain, {},
     true,
     "the start amplitude at which the FTLE first exceeds the chaos threshold ÷ the largest start amplitude of the "
     "case sets (section 7); one value for the design.",
     nullptr, nullptr, "", LimitNeeds::any, false},
    {LimitKind::in_plane_sway, "in_plane_sway", u::angle, kPositive, Bound::upper, true, LimitScope::each_link, {},
     true,
     "the largest in-plane sway of the link over the run: the angle from the downward vertical of the link seen "
     "from the side, i.e. of its shadow on the vertical plane of the travel (x), or on a slewing base of the boom "
     "(radial); a planar chain's |θ|.",
     in_plane, nullptr, "peak_in_plane_sway", LimitNeeds::any, true},
    {LimitKind::out_of_plane_sway, "out_of_plane_sway", u::angle, kPositive, Bound::upper, true,
     LimitScope::each_link, {}, true,
     "the largest out-of-plane sway of the link over the run: the angle from the downward vertical of the link seen "
     "along the travel (or along the boom), i.e. of its shadow on the vertical plane across the travel (z), or on a "
     "slewing base of the tangential direction.",
     out_of_plane, nullptr, "peak_out_of_plane_sway", LimitNeeds::spatial, true},
    {LimitKind::pivot_load_x, "pivot_load_x", u::force, kPositive, Bound::upper, true, LimitScope::each_link, {},
     true,
     "the largest |R_x| over the run of the reaction R at the link's upper pivot along the travel (ground frame, x "
     "horizontal); the force on the upper body is -R.",
     load_x, nullptr, "peak_pivot_load_x", LimitNeeds::any, true},
    {LimitKind::pivot_load_z, "pivot_load_z", u::force, kPositive, Bound::upper, true, LimitScope::each_link, {},
     true,
     "the largest |R_z| over the run of the reaction R at the link's upper pivot across the travel (ground frame, z "
     "horizontal).",
     load_z, nullptr, "peak_pivot_load_z", LimitNeeds::spatial, true},
    {LimitKind::pivot_load_vertical, "pivot_load_vertical", u::force, kPositive, Bound::upper, true,
     LimitScope::each_link, {}, true,
     "the largest |R_y| over the run of the vertical component of the reaction R at the link's upper pivot (the "
     "same in the ground and the boom frame).",
     load_vertical, nullptr, "peak_pivot_load_vertical", LimitNeeds::any, true},
    {LimitKind::pivot_load_radial, "pivot_load_radial", u::force, kPositive, Bound::upper, true,
     LimitScope::each_link, {}, true,
     "the largest radial component |R · r| over the run of the reaction R at the link's upper pivot, r the "
     "horizontal unit vector from the slewing axis out through the boom tip (boom frame; in a scenario that does "
     "not slew, r = x): for the top link, what the chain pulls the boom tip outwards or inwards with.",
     load_radial, nullptr, "peak_pivot_load_radial", LimitNeeds::slewing, true},
    {LimitKind::pivot_load_tangential, "pivot_load_tangential", u::force, kPositive, Bound::upper, true,
     LimitScope::each_link, {}, true,
     "the largest tangential component |R · t| over the run of the reaction R at the link's upper pivot, t the "
     "horizontal direction a positive slewing speed moves the boom tip (boom frame; in a scenario that does not "
     "slew, t = z): for the top link, the boom's side load from the swing.",
     load_tangential, nullptr, "peak_pivot_load_tangential", LimitNeeds::slewing, true},
};

/// Row i describes the i-th enumerator, and each per-case row has exactly one accessor.
constexpr bool table_is_consistent() {
  for (std::size_t i = 0; i < std::size(kKinds); ++i) {
    const LimitKindInfo& k = kKinds[i];
    if (static_cast<std::size_t>(k.kind) != i) return false;
    if (k.per_case != ((k.link_value != nullptr) != (k.case_value != nullptr))) return false;
    if (!k.per_case && (k.link_value != nullptr || k.case_value != nullptr)) return false;
    if (k.link_value != nullptr && k.scope == LimitScope::chain) return false;
  }
  return true;
}
static_assert(table_is_consistent(), "kKinds: one row per LimitKind, in enum order, per-case rows with one accessor");

}  // namespace

std::span<const LimitKindInfo> limit_kinds() { return kKinds; }

const LimitKindInfo& limit_kind(LimitKind kind) { return kKinds[static_cast<std::size_t>(kind)]; }

const LimitKindInfo* find_limit_kind(std::string_view key) {
  for (const auto& k : kKinds)
    if (k.key == key) return &k;
  return nullptr;
}

bool has_limit_of(const Spec& spec, LimitKind kind) {
  for (const auto& l : spec.limits)
    if (l.kind == kind) return true;
  return false;
}

bool needs_on_demand_metrics(const Spec& spec) {
  for (const auto& l : spec.limits)
    if (limit_kind(l.kind).on_demand) return true;
  return false;
}

std::string_view bound_name(Bound bound) { return bound == Bound::upper ? "upper" : "lower"; }

}  // namespace swaybound
