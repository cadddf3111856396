// The spec keys of spatial chains: `motion`, and the refusals of what a spatial chain does not
// model yet (specs/README.md, "Spatial chains").
#include <fmt/format.h>

#include "loader_parts.hpp"

namespace swaybound::spec_detail {

void read_motion(const MapView& top, Spec& spec) {
  Context& ctx = top.ctx();
  if (!top.has("motion")) {
    ctx.defaults_filled.push_back("motion");
    return;
  }
  if (auto c = read_choice(ctx, top.get("motion"), "motion", {"planar", "spatial"}))
    spec.motion = *c == "spatial" ? Motion::spatial : Motion::planar;
}

bool require_spatial(const MapView& map, std::string_view key, const Spec& spec, std::string_view what) {
  if (spec.motion == Motion::spatial) return true;
  map.ctx().error(map.key_mark(key), map.path(key),
                  fmt::format("'{}' is {}, which a planar chain does not have", key, what),
                  "add 'motion: spatial' at the top of the spec, or remove this key");
  return false;
}

void refuse_with_spatial(Context& ctx, const Spec& spec) {
  if (spec.motion != Motion::spatial) return;
  const std::string later = "a spatial chain does not model this yet";
  for (std::size_t i = 0; i < spec.links.size(); ++i)
    if (spec.links[i].elastic)
      ctx.error(spec.links[i].mark, fmt::format("links[{}].elastic", i),
                fmt::format("link '{}' is an elastic rope: {}", spec.links[i].name, later),
                "check the elastic rope with 'motion: planar', or make the rope inextensible (remove elastic:)");
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i) {
    const ScenarioSpec& s = spec.scenarios[i];
    if (s.hoist)
      ctx.error(s.hoist->mark, fmt::format("base.scenarios[{}].hoist", i),
                fmt::format("scenario '{}' hoists a rope: {}", s.name, later),
                "check hoisting with 'motion: planar', or remove the hoist");
    if (s.lift_off)
      ctx.error(s.lift_off->mark, fmt::format("base.scenarios[{}].lift_off", i),
                fmt::format("scenario '{}' lifts the load off the ground: {}", s.name, later),
                "check the lift-off with 'motion: planar', or remove lift_off");
  }
  for (std::size_t i = 0; i < spec.limits.size(); ++i) {
    const LimitSpec& l = spec.limits[i];
    if (l.kind == LimitKind::ftle_max || l.kind == LimitKind::onset_margin || l.kind == LimitKind::modal_damping_min)
      ctx.error(l.mark, fmt::format("limits[{}]", i),
                fmt::format("{}: the {} of a spatial chain is not computed yet", l.key,
                            l.kind == LimitKind::modal_damping_min ? "modal analysis" : "finite-time Lyapunov exponent"),
                "remove this limit, or check it on the planar chain ('motion: planar')");
  }
  if (spec.chaos.given)
    ctx.error(spec.chaos.mark, "chaos", "the chaos section: the finite-time Lyapunov exponent of a spatial chain is not computed yet",
              "remove the chaos section, or study the chaotic onset on the planar chain ('motion: planar')");
}

}  // namespace swaybound::spec_detail
