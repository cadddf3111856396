// Spec loader, starts that are not raw angles: a set's modal coordinates (`amplitude`, `phase` per
// mode) and the `equilibrium` set (the chain hanging still under a steady acceleration and wind).
// The starts themselves are computed from the model (cases/case_space.cpp); here only what the spec
// says is read and checked.
#include <fmt/format.h>

#include "loader_parts.hpp"

namespace swaybound::spec_detail {

namespace u = units;

namespace {

/// Refuses a start of kind `what` on a spatial chain or one with an elastic rope, at `at`; true when
/// it is allowed.
bool planar_rigid_chain(Context& ctx, Mark at, const std::string& path, const Spec& spec, std::string_view what) {
  if (spec.motion == Motion::spatial) {
    ctx.error(at, path, fmt::format("{} are for planar chains: a spatial chain's swing across the travel has no such start yet", what),
              "give the spatial chain's starts as angles (theta, rate, phi, phi_rate), or check it with 'motion: planar'");
    return false;
  }
  for (const auto& link : spec.links)
    if (link.elastic) {
      ctx.error(at, path,
                fmt::format("{} need a chain without elastic ropes, and link '{}' is one (its length would have to "
                            "start in the mode or the equilibrium too)",
                            what, link.name),
                "give the starts as angles (theta, rate), or make the rope inextensible (remove elastic:)");
      return false;
    }
  return true;
}

}  // namespace

void read_modal_keys(const MapView& s, const Spec& spec, bool ranges, bool counted, InitialSetSpec& set) {
  Context& ctx = s.ctx();
  if (!s.has("amplitude") && !s.has("phase")) return;
  if (!s.has("amplitude")) {
    ctx.error(s.key_mark("phase"), s.path("phase"), "'phase' is given without 'amplitude'",
              "give each mode's amplitude, e.g. amplitude: [5 deg], phase: [90 deg]");
    return;
  }
  if (!planar_rigid_chain(ctx, s.key_mark("amplitude"), s.path("amplitude"), spec, "modal starts")) return;
  for (const char* raw : {"theta", "rate", "phi", "phi_rate"})
    if (s.has(raw)) {
      ctx.error(s.key_mark("amplitude"), s.path("amplitude"),
                fmt::format("the set gives both link angles ('{}') and modal coordinates ('amplitude'): a set's starts "
                            "are one or the other",
                            raw),
                "put the modal starts in a set of their own");
      return;
    }
  const std::size_t modes = spec.links.size();  // a planar chain of rigid links and ropes has one mode per link
  for (auto [key, list] : {std::pair{"amplitude", &set.amplitude}, std::pair{"phase", &set.phase}}) {
    if (!s.has(key)) continue;
    const YAML::Node node = s.get(key);
    if (node.IsSequence() && node.size() > modes) {
      ctx.error(node, s.path(key), fmt::format("{} values given for a chain of {} modes", node.size(), modes),
                "give at most one value per mode, lowest mode first (as `swaybound modes` lists them)");
      return;
    }
    if (ranges)
      read_range_list(ctx, node, s.path(key), u::angle, modes, counted, *list);
    else
      read_value_list(ctx, node, s.path(key), u::angle, modes, *list);
  }
  if (set.phase.size() > set.amplitude.size())
    ctx.error(s.get("phase"), s.path("phase"),
              fmt::format("{} phases for {} amplitudes: a phase of a mode without an amplitude does nothing",
                          set.phase.size(), set.amplitude.size()),
              "give an amplitude for every mode that has a phase (0 deg for none)");
}

void read_equilibrium(const MapView& set_map, const MapView& s, const Spec& spec, InitialSetSpec& set) {
  Context& ctx = s.ctx();
  if (!planar_rigid_chain(ctx, set_map.key_mark("equilibrium"), set_map.path("equilibrium"), spec, "equilibrium starts"))
    return;
  // A lift-off needs an elastic rope, refused above: its load starts on the ground, not hanging.
  if (s.has("acceleration")) {
    const YAML::Node a = s.get("acceleration");
    if (a.IsScalar() && a.Scalar() == "scenario") {
      set.accel_from_scenario = true;
    } else if (auto v = read_quantity(ctx, a, s.path("acceleration"), u::acceleration,
                                      Bounds{-100, 100, false, false, "a trolley or boom tip accelerates far less than 10 g"})) {
      set.accel_from_scenario = false;
      set.accel = *v;
    }
  } else {
    ctx.defaults_filled.push_back(s.path("acceleration"));
  }
  if (s.has("wind_speed")) {
    const YAML::Node w = s.get("wind_speed");
    if (w.IsScalar() && w.Scalar() == "steady") {
      set.wind_from_spec = true;
    } else if (auto v = read_quantity(ctx, w, s.path("wind_speed"), u::speed,
                                      Bounds{-200, 200, false, false, "wind speeds stay well below 200 m/s"})) {
      set.wind_from_spec = false;
      set.wind_speed = *v;
      if (spec.wind.empty() && *v != 0)
        ctx.error(w, s.path("wind_speed"), "the spec has no wind loads, so there is no wind for the load to hang in",
                  "add a 'wind' section (the drag areas the wind acts on), or remove wind_speed");
    }
  } else {
    ctx.defaults_filled.push_back(s.path("wind_speed"));
  }
}

}  // namespace swaybound::spec_detail
