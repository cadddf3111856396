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

namespace {

/// One range [low, high] or [low, high, count] of an equilibrium's steady value at `path`; nullopt
/// after reporting a wrong shape or an inverted range.
std::optional<Range> read_steady_range(Context& ctx, const YAML::Node& node, const std::string& path, const u::Dim& dim,
                                       const Bounds& bounds) {
  if (node.size() != 2 && node.size() != 3) {
    ctx.error(node, path, "expected a range [low, high] (sampled at random) or [low, high, count] (a grid)",
              "write e.g. [0.1 m/s^2, 0.5 m/s^2, 5]");
    return std::nullopt;
  }
  const auto lo = read_quantity(ctx, node[0], path + "[0]", dim, bounds);
  const auto hi = read_quantity(ctx, node[1], path + "[1]", dim, bounds);
  Range r;
  if (node.size() == 3) {
    const auto n = read_integer(ctx, node[2], path + "[2]", 1, 100'000);
    if (!n) return std::nullopt;
    r.count = static_cast<int>(*n);
  }
  if (!lo || !hi) return std::nullopt;
  if (*lo > *hi) {
    ctx.error(node, path, fmt::format("the range is inverted: low {} > high {}", u::format_si(*lo, dim), u::format_si(*hi, dim)),
              "write the lower bound first");
    return std::nullopt;
  }
  r.lo = *lo;
  r.hi = *hi;
  return r;
}

}  // namespace

void read_equilibrium(const MapView& set_map, const MapView& s, const Spec& spec, InitialSetSpec& set) {
  Context& ctx = s.ctx();
  if (!planar_rigid_chain(ctx, set_map.key_mark("equilibrium"), set_map.path("equilibrium"), spec, "equilibrium starts"))
    return;
  const std::size_t errors_before = ctx.diagnostics.size();
  // A lift-off needs an elastic rope, refused above: its load starts on the ground, not hanging.
  const Bounds accel_bounds{-100, 100, false, false, "a trolley or boom tip accelerates far less than 10 g"};
  const Bounds wind_bounds{-200, 200, false, false, "wind speeds stay well below 200 m/s"};
  if (s.has("acceleration")) {
    const YAML::Node a = s.get("acceleration");
    if (a.IsScalar() && a.Scalar() == "scenario") {
      set.accel_from_scenario = true;
    } else if (a.IsSequence()) {
      if (auto r = read_steady_range(ctx, a, s.path("acceleration"), u::acceleration, accel_bounds)) {
        set.accel_from_scenario = false;
        set.accel = r->lo;
        set.accel_range.push_back(*r);
      }
    } else if (auto v = read_quantity(ctx, a, s.path("acceleration"), u::acceleration, accel_bounds)) {
      set.accel_from_scenario = false;
      set.accel = *v;
    }
  } else {
    ctx.defaults_filled.push_back(s.path("acceleration"));
  }
  if (s.has("wind_speed")) {
    const YAML::Node w = s.get("wind_speed");
    std::optional<double> value;
    if (w.IsScalar() && w.Scalar() == "steady") {
      set.wind_from_spec = true;
    } else if (w.IsSequence()) {
      if (auto r = read_steady_range(ctx, w, s.path("wind_speed"), u::speed, wind_bounds)) {
        set.wind_from_spec = false;
        set.wind_speed = r->lo;
        set.wind_range.push_back(*r);
        value = r->hi > r->lo || r->lo != 0 ? 1.0 : 0.0;
      }
    } else if ((value = read_quantity(ctx, w, s.path("wind_speed"), u::speed, wind_bounds))) {
      set.wind_from_spec = false;
      set.wind_speed = *value;
    }
    if (value && spec.wind.empty() && *value != 0)
      ctx.error(w, s.path("wind_speed"), "the spec has no wind loads, so there is no wind for the load to hang in",
                "add a 'wind' section (the drag areas the wind acts on), or remove wind_speed");
  } else {
    ctx.defaults_filled.push_back(s.path("wind_speed"));
  }
  if (ctx.diagnostics.size() != errors_before) return;
  // How the ranges are sampled: a grid when they carry counts, at random when the set gives a count.
  std::vector<std::pair<const char*, const Range*>> ranges;
  if (!set.accel_range.empty()) ranges.emplace_back("acceleration", &set.accel_range.front());
  if (!set.wind_range.empty()) ranges.emplace_back("wind_speed", &set.wind_range.front());
  const bool random = s.has("count") || s.has("seed") || s.has("method");
  for (const auto& [key, range] : ranges) {
    const bool counted = s.get(key).size() == 3;
    if (counted && random) {
      ctx.error(s.get(key), s.path(key),
                "a range with a count is a grid, and the set also gives 'count'/'seed' for random samples",
                fmt::format("write {} as [low, high] for random samples, or remove count, seed and method for a grid", key));
      return;
    }
    if (!counted && !random) {
      ctx.error(s.get(key), s.path(key), "a range [low, high] without a count: how many starts should it give?",
                fmt::format("give {} as [low, high, count] (evenly spaced), or add 'count' and 'seed' (random samples)", key));
      return;
    }
  }
  if (ranges.empty()) {
    if (random)
      for (const char* key : {"count", "seed", "method"})
        if (s.has(key)) {
          ctx.error(s.key_mark(key), s.path(key),
                    fmt::format("'{}' samples a range, and neither acceleration nor wind_speed is one", key),
                    "give acceleration or wind_speed as a range [low, high], or remove this key");
          return;
        }
    return;
  }
  if (!random) {
    set.sampling = InitialKind::grid;
    return;
  }
  set.sampling = InitialKind::random;
  read_random_sampling(s, set);
}

}  // namespace swaybound::spec_detail
