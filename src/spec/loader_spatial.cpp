// The spec keys of spatial chains: `motion`, and the refusals of what a spatial chain does not
// model yet (specs/README.md, "Spatial chains").
#include <algorithm>
#include <cctype>
#include <numbers>

#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/model/profile.hpp"

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

void read_slew(const MapView& scenario, const Spec& spec, ScenarioSpec& sc) {
  Context& ctx = scenario.ctx();
  if (!require_spatial(scenario, "slew", spec, "a base turning about a vertical axis")) return;
  for (const char* other : {"accel", "initial_velocity", "travel"})
    if (scenario.has(other))
      ctx.error(scenario.key_mark(other), scenario.path(other),
                fmt::format("'{}' and 'slew' both set the base's motion", other),
                "give the motion either as slewing (slew: {radius, speed, moves}) or as travel, not both");
  MapView m(ctx, scenario.get("slew"), scenario.path("slew"), {"radius", "speed", "moves", "shaper", "stop", "luff"});
  if (!m.ok()) return;
  ScenarioSpec::Slew slew;
  slew.mark = scenario.key_mark("slew");
  if (m.require("radius", "the pivot's distance from the slewing axis, e.g. '18 m'"))
    if (auto v = read_quantity(ctx, m.get("radius"), m.path("radius"), units::length, Bounds::positive()))
      slew.radius = *v;
  (void)read_drive_keys(m, MoveOf::slew, slew.initial_rate, slew.moves, slew.shaper, slew.stop);
  if (m.has("luff")) read_luff(m, slew);
  sc.slew = slew;
}

void refuse_with_spatial(Context& ctx, const Spec& spec) {
  if (spec.motion != Motion::spatial) return;
  // A dashpot anchored on the base would have to turn with a slewing boom; its anchor is fixed in
  // the ground's directions today.
  const auto slewing = std::find_if(spec.scenarios.begin(), spec.scenarios.end(),
                                    [](const ScenarioSpec& sc) { return sc.slew.has_value(); });
  if (slewing != spec.scenarios.end())
    for (std::size_t i = 0; i < spec.dashpots.size(); ++i)
      if (spec.dashpots[i].from.link < 0 || spec.dashpots[i].to.link < 0)
        ctx.error(spec.dashpots[i].mark, fmt::format("dashpots[{}]", i),
                  fmt::format("dashpot '{}' is anchored on the base, and scenario '{}' slews it: a base anchor that "
                              "turns with the boom is not modelled yet",
                              spec.dashpots[i].name, slewing->name),
                  "check the slewing scenario without this dashpot, or anchor it between links");
}

std::optional<double> read_damper_axis(Context& ctx, const YAML::Node& node, const std::string& path, Motion motion) {
  const std::string forms =
      "write 'across' (the shaft across the travel, or across a slewing boom: it damps the swing in the travel "
      "plane), 'along' (the shaft along the travel or the boom: it damps the swing across it) or the shaft's angle "
      "in the horizontal plane from the travel direction towards +z, e.g. '30 deg'";
  if (node.IsDefined() && !node.IsScalar()) {
    ctx.error(node, path,
              node.IsNull() ? "the damper axis is empty" : "a damper axis is one word or one angle, not a list or a map",
              forms);
    return std::nullopt;
  }
  const auto text = read_string(ctx, node, path);
  if (!text) return std::nullopt;
  std::optional<double> axis;
  const bool word = !text->empty() && std::isalpha(static_cast<unsigned char>((*text)[0]));
  if (word && (*text == "along" || *text == "across")) {
    axis = *text == "along" ? 0.0 : kDamperAcross;
  } else if (word) {
    const std::string guess = nearest(*text, {"along", "across"});
    ctx.error(node, path, fmt::format("'{}' is not a damper axis", *text),
              guess.empty() ? forms : fmt::format("did you mean '{}'? {}", guess, forms));
    return std::nullopt;
  } else {
    axis = read_quantity(ctx, node, path, units::angle,
                         Bounds{-std::numbers::pi, std::numbers::pi, false, false,
                                "a shaft is a line, so -180 to 180 deg gives every direction"});
    if (!axis) return std::nullopt;
  }
  if (motion == Motion::planar && *text != "across") {
    ctx.error(node, path,
              fmt::format("a damper on a planar chain acts in the travel plane, about the axis across the travel; "
                          "'axis: {}' would damp a swing the chain does not have",
                          *text),
              "write 'axis: across' or remove 'axis' (the same damper), or add 'motion: spatial' at the top of the "
              "spec to swing the chain in both directions");
    return std::nullopt;
  }
  return axis;
}

}  // namespace swaybound::spec_detail
