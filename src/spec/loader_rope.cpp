// Spec loader, rope part: a rope link's parts of line and elastic law, and per scenario the hoist
// drum and the lift-off start. Called from loader.cpp (links, base) and after the cases are read
// (the hoisted length over the run).
#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/modal/shaper_modes.hpp"
#include "swaybound/model/profile.hpp"
#include "swaybound/model/shaper.hpp"
#include "swaybound/spec/paths.hpp"

namespace swaybound::spec_detail {

namespace u = units;

namespace {

/// "a, b and c" for the names of the rope links, or "none".
std::string rope_names(const Spec& spec) {
  std::string out;
  for (const auto& l : spec.links)
    if (l.kind == LinkKind::rope) out += (out.empty() ? "'" : ", '") + l.name + "'";
  return out.empty() ? "none" : out;
}

constexpr const char* kStiffnessFix =
    "give one: ea, the axial stiffness EA of one part of line in N (e.g. '90 MN'), or stiffness, the spring "
    "rate of the whole fall at the link's length in N/m (e.g. '3 MN/m')";

/// links[i].elastic: exactly one of ea and stiffness, at most one of damping and damping_ratio.
void read_elastic(const MapView& link_map, LinkSpec& link) {
  Context& ctx = link_map.ctx();
  MapView e(ctx, link_map.get("elastic"), link_map.path("elastic"),
            {"ea", "stiffness", "damping", "damping_ratio"});
  if (!e.ok()) return;
  RopeElasticSpec elastic;
  elastic.mark = e.mark();
  bool ok = true;
  if (e.has("ea") && e.has("stiffness")) {
    ctx.error(e.key_mark("stiffness"), e.path("stiffness"), "both 'ea' and 'stiffness' are given",
              kStiffnessFix);
    ok = false;
  } else if (!e.has("ea") && !e.has("stiffness")) {
    ctx.error(e.mark(), e.path(),
              "the elastic rope has no axial stiffness: neither 'ea' nor 'stiffness' is given",
              kStiffnessFix);
    ok = false;
  } else if (e.has("ea")) {
    const auto v = read_quantity(ctx, e.get("ea"), e.path("ea"), u::force,
                                 Bounds{0, kMaxRopeEa, true, false, "EA of one part of line, up to 1e12 N"});
    ok = v.has_value();
    if (v) elastic.ea = *v;
  } else {
    const auto v =
        read_quantity(ctx, e.get("stiffness"), e.path("stiffness"), u::stiffness, Bounds::positive());
    ok = v.has_value();
    if (v) elastic.stiffness = *v;
  }
  if (e.has("damping") && e.has("damping_ratio")) {
    ctx.error(e.key_mark("damping_ratio"), e.path("damping_ratio"),
              "both 'damping' and 'damping_ratio' are given",
              "give one: damping, the axial damping coefficient of the fall in N s/m (e.g. '20 kN s/m'), or "
              "damping_ratio, the damping ratio of the load's bounce on the rope (e.g. 0.02)");
    ok = false;
  } else if (e.has("damping")) {
    if (auto v = read_quantity(ctx, e.get("damping"), e.path("damping"), u::linear_damping,
                               Bounds::non_negative()))
      elastic.damping = *v;
  } else if (e.has("damping_ratio")) {
    if (auto v = read_quantity(ctx, e.get("damping_ratio"), e.path("damping_ratio"), u::dimensionless,
                               Bounds{0, 1, false, true, "an underdamped bounce"}))
      elastic.damping_ratio = *v;
  } else {
    ctx.defaults_filled.push_back(e.path("damping"));
  }
  if (ok) link.elastic = elastic;
}

/// The rope hauled in at the drum, as the speed profile of `hoist` (throws ProfileError).
SpeedProfile drum_profile(const HoistSpec& hoist) {
  std::vector<SpeedMove> moves;
  for (const auto& m : hoist.moves) moves.push_back(SpeedMove{m.at, m.to, m.accel, m.jerk});
  return SpeedProfile::build(hoist.initial_speed, moves);
}

void read_hoist(const MapView& scenario, const Spec& spec, ScenarioSpec& sc) {
  Context& ctx = scenario.ctx();
  MapView h(ctx, scenario.get("hoist"), scenario.path("hoist"), {"rope", "drum_speed", "moves"});
  if (!h.ok()) return;
  HoistSpec hoist;
  hoist.mark = scenario.key_mark("hoist");  // the length check after the cases are read reports here
  if (h.has("rope")) {
    hoist.link = read_link_ref(ctx, h.get("rope"), h.path("rope"), spec);
    if (hoist.link >= 0 && spec.links[static_cast<std::size_t>(hoist.link)].kind != LinkKind::rope) {
      ctx.error(h.get("rope"), h.path("rope"),
                fmt::format("link '{}' is rigid, and a drum winds a rope",
                            spec.links[static_cast<std::size_t>(hoist.link)].name),
                fmt::format("name a link of kind: rope (ropes: {}), or set kind: rope on that link",
                            rope_names(spec)));
      hoist.link = -1;
    }
  } else {
    std::vector<int> ropes;
    for (std::size_t i = 0; i < spec.links.size(); ++i)
      if (spec.links[i].kind == LinkKind::rope) ropes.push_back(static_cast<int>(i));
    if (ropes.size() == 1) {
      hoist.link = ropes[0];
      ctx.defaults_filled.push_back(h.path("rope"));
    } else if (ropes.empty()) {
      ctx.error(hoist.mark, h.path(), "no link is of kind rope, so there is no rope for the drum to wind",
                "set kind: rope on the link the drum winds (and name it here with rope: NAME)");
    } else {
      ctx.error(hoist.mark, h.path(),
                fmt::format("{} links are ropes ({}), and the hoist does not say which one the drum winds",
                            ropes.size(), rope_names(spec)),
                "add rope: NAME, the rope link the drum winds");
    }
  }
  (void)read_speed_moves(h, MoveOf::drum, "drum_speed", "drum moves", hoist.initial_speed, hoist.moves);
  sc.hoist = hoist;
}

void read_lift_off(const MapView& scenario, const Spec& spec, ScenarioSpec& sc) {
  Context& ctx = scenario.ctx();
  MapView l(ctx, scenario.get("lift_off"), scenario.path("lift_off"), {"slack"});
  if (!l.ok()) return;
  LiftOffSpec lift;
  lift.mark = scenario.key_mark("lift_off");
  const std::string path = scenario.path("lift_off");
  const char* elastic_fix =
      "give links[0] kind: rope and elastic: {ea: EA of one part of line, e.g. '90 MN'}";
  if (spec.links.empty()) return;  // the links are reported already
  const LinkSpec& top = spec.links[0];
  if (spec.links.size() < 2)
    ctx.error(
        lift.mark, path,
        fmt::format("lift-off needs a load below the rope, and the chain has one link ('{}')", top.name),
        "add the load as a link below the rope: links[0] the elastic rope, the links below it the load "
        "that starts on the ground");
  else if (top.kind != LinkKind::rope)
    ctx.error(
        lift.mark, path,
        fmt::format("lift-off needs links[0] to be an elastic rope, and links[0] '{}' is rigid", top.name),
        elastic_fix);
  else if (!top.elastic)
    ctx.error(
        lift.mark, path,
        fmt::format("lift-off needs links[0] to be an elastic rope (one that can start slack and stretch as "
                    "it takes the load), and rope '{}' has no 'elastic'",
                    top.name),
        elastic_fix);
  if (l.has("slack")) {
    if (auto v = read_quantity(ctx, l.get("slack"), l.path("slack"), u::length, Bounds::non_negative())) {
      if (*v >= top.length)
        ctx.error(
            l.get("slack"), l.path("slack"),
            fmt::format("slack {} is not less than the length of links[0] '{}', {}",
                        u::format_si(*v, u::length), top.name, u::format_si(top.length, u::length)),
            "give the rope's slack at t = 0 (its unstretched length minus the distance it spans), below its "
            "length");
      else
        lift.slack = *v;
    }
  } else {
    ctx.defaults_filled.push_back(l.path("slack"));
  }
  sc.lift_off = lift;
}

}  // namespace

/// Times in [0, duration] where the drum's rope position can have an extreme or changes law:
/// 0, the duration, every breakpoint before it and every zero of the speed.
std::vector<double> profile_check_times(const SpeedProfile& profile, double duration) {
  std::vector<double> times{0.0, duration};
  for (double t : profile.breakpoints())
    if (t < duration) times.push_back(t);
  for (const ProfilePiece& q : profile.pieces()) {
    const double end = std::min(q.t1, duration);
    if (!(q.t0 < end)) continue;
    // v(d) = v0 + a0 d + j d^2 / 2 = 0
    std::vector<double> roots;
    if (q.j == 0) {
      if (q.a0 != 0) roots.push_back(-q.v0 / q.a0);
    } else {
      const double disc = q.a0 * q.a0 - 2 * q.j * q.v0;
      if (disc >= 0)
        for (double sign : {-1.0, 1.0}) roots.push_back((-q.a0 + sign * std::sqrt(disc)) / q.j);
    }
    for (double d : roots)
      if (d > 0 && q.t0 + d < end) times.push_back(q.t0 + d);
  }
  std::sort(times.begin(), times.end());
  times.erase(std::unique(times.begin(), times.end()), times.end());
  return times;
}

void read_rope_keys(const MapView& link_map, bool kind_read, LinkSpec& link) {
  Context& ctx = link_map.ctx();
  if (link.kind != LinkKind::rope) {
    if (kind_read)
      for (const char* key : {"parts_of_line", "elastic"})
        if (link_map.has(key))
          ctx.error(link_map.key_mark(key), link_map.path(key),
                    fmt::format("'{}' needs kind: rope, and this link is {}", key,
                                link_map.has("kind") ? "of kind rigid" : "rigid (the default kind)"),
                    fmt::format("set kind: rope on this link, or remove '{}'", key));
    return;
  }
  if (link_map.has("parts_of_line")) {
    if (auto v = read_integer(ctx, link_map.get("parts_of_line"), link_map.path("parts_of_line"), 1,
                              kMaxPartsOfLine))
      link.parts_of_line = static_cast<int>(*v);
  } else {
    ctx.defaults_filled.push_back(link_map.path("parts_of_line"));
  }
  if (link_map.has("elastic")) read_elastic(link_map, link);
}

void check_elastic_ropes(Context& ctx, const YAML::Node& links_node, const Spec& spec) {
  double mass_below = 0;
  for (std::size_t k = spec.links.size(); k-- > 0;) {
    const LinkSpec& l = spec.links[k];
    if (l.kind == LinkKind::rope && l.elastic) {
      const bool by_ea = l.elastic->ea > 0;
      const double stiffness = by_ea ? l.parts_of_line * l.elastic->ea / l.length : l.elastic->stiffness;
      const double mass = l.mass + mass_below;
      const char* key = by_ea ? "ea" : "stiffness";
      const std::string path = fmt::format("links[{}].elastic.{}", k, key);
      const YAML::Node node = links_node[k]["elastic"][key];
      const std::string law =
          by_ea ? fmt::format("k = parts_of_line EA / length = {} x {:.4g} N / {:.4g} m = {:.4g} N/m",
                              l.parts_of_line, l.elastic->ea, l.length, stiffness)
                : fmt::format("k = {:.4g} N/m", stiffness);
      const double period = 2 * std::numbers::pi * std::sqrt(mass / stiffness);
      const double stretch = mass * spec.gravity / stiffness;
      if (!(period >= kMinRopePeriod)) {
        ctx.error(
            node, path,
            fmt::format("the rope is so stiff that the load would bounce on it with a period of {:.3g} s "
                        "(2 pi sqrt(m / k), m = {:.4g} kg: the rope and every link below it, {}), below the "
                        "{:g} s a check can follow",
                        period, mass, law, kMinRopePeriod),
            by_ea ? "give EA of one part of line in N (e.g. 90 MN); check the value's unit"
                  : "give the spring rate of the whole fall in N/m (e.g. 3 MN/m); check the value's unit");
      } else if (stretch > 0.5 * l.length) {
        ctx.error(
            node, path,
            fmt::format("the rope is so soft that the load would stretch it by more than half its length: "
                        "m g / k = {:.4g} m at rest for its length {} (m = {:.4g} kg: the rope and every "
                        "link below it, {})",
                        stretch, u::format_si(l.length, u::length), mass, law),
            by_ea ? "give EA of one part of line in N (e.g. 90 MN); check the value's unit and parts_of_line"
                  : "give the spring rate of the whole fall in N/m (e.g. 3 MN/m); check the value's unit");
      }
    }
    mass_below += l.mass;
  }
}

void read_scenario_rope_keys(const MapView& scenario, const Spec& spec, ScenarioSpec& sc) {
  if (scenario.has("hoist")) read_hoist(scenario, spec, sc);
  if (scenario.has("lift_off")) read_lift_off(scenario, spec, sc);
}

void check_hoisted_lengths(Context& ctx, const Spec& spec) {
  const double duration = spec.cases.duration;
  if (!(duration > 0)) return;
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i) {
    const ScenarioSpec& sc = spec.scenarios[i];
    if (!sc.hoist || sc.hoist->link < 0) continue;
    const HoistSpec& hoist = *sc.hoist;
    SpeedProfile profile;
    try {
      profile = drum_profile(hoist);
    } catch (const Error&) {
      continue;  // reported at the move
    }
    const LinkSpec& rope = spec.links[static_cast<std::size_t>(hoist.link)];
    const auto length_at = [&](double t) { return rope.length - profile.position(t) / rope.parts_of_line; };
    const double shortest = kMinHoistedShare * rope.length, longest = kMaxHoistedFactor * rope.length;
    const auto outside = [&](double t) {
      const double ell = length_at(t);
      return ell < shortest || ell > longest;
    };
    // Between two of these times the length is monotonic: the first time outside is bracketed.
    const std::vector<double> times = profile_check_times(profile, duration);
    std::size_t k = 0;
    while (k < times.size() && !outside(times[k])) ++k;
    if (k == times.size()) continue;
    const bool too_short = length_at(times[k]) < shortest;
    double lo = k > 0 ? times[k - 1] : 0.0, hi = times[k];
    for (int step = 0; step < 200 && lo < hi; ++step) {
      const double mid = lo + (hi - lo) / 2;
      if (mid <= lo || mid >= hi) break;
      (outside(mid) ? hi : lo) = mid;
    }
    // The extreme length over the run, for the message.
    double extreme_time = times[k], extreme = length_at(times[k]);
    for (double t : times)
      if (too_short ? length_at(t) < extreme : length_at(t) > extreme) {
        extreme = length_at(t);
        extreme_time = t;
      }
    const std::string path = fmt::format("base.scenarios[{}].hoist", i);
    const std::string law =
        rope.parts_of_line > 1 ? fmt::format(" (length - drum travel / {} parts of line)", rope.parts_of_line)
                               : " (length - drum travel)";
    if (too_short)
      ctx.error(
          hoist.mark, path,
          fmt::format("the drum would wind rope '{}' in to less than {}, 5% of its length {}, at t = {:.6g} "
                      "s{}; it reaches {:.4g} m at t = {:.6g} s",
                      rope.name, u::format_si(shortest, u::length), u::format_si(rope.length, u::length), hi,
                      law, extreme, extreme_time),
          fmt::format("hoist less within cases.duration ({}): a shorter hoisting move (an earlier move to "
                      "drum speed 0, or a lower speed), or a longer rope",
                      u::format_si(duration, u::duration)));
    else
      ctx.error(
          hoist.mark, path,
          fmt::format("the drum would pay rope '{}' out to more than {}, 10 times its length {}, at t = "
                      "{:.6g} s{}; it reaches {:.4g} m at t = {:.6g} s",
                      rope.name, u::format_si(longest, u::length), u::format_si(rope.length, u::length), hi,
                      law, extreme, extreme_time),
          fmt::format("lower less within cases.duration ({}): a shorter lowering move (an earlier move to "
                      "drum speed 0, or a lower speed), or a longer rope at t = 0",
                      u::format_si(duration, u::duration)));
  }
}

void check_sized_ropes(Context& ctx, const YAML::Node& links_node, const Spec& spec) {
  if (!spec.sizing) return;
  bool any_rope_check = false;
  for (const auto& l : spec.links) any_rope_check |= l.kind == LinkKind::rope && l.elastic;
  bool mode_shaped = false;  // a shaper designed from a mode: every design value may move the mode
  for (const auto& sc : spec.scenarios) {
    any_rope_check |= (sc.hoist && sc.hoist->link >= 0) || sc.travel || sc.cross_travel || sc.slew;
    for (const auto* shaper : {sc.travel ? &sc.travel->shaper : nullptr,
                               sc.cross_travel ? &sc.cross_travel->shaper : nullptr, sc.slew ? &sc.slew->shaper : nullptr})
      mode_shaped |= shaper && *shaper && (*shaper)->mode > 0;
  }
  if (!any_rope_check) return;
  const auto& variables = spec.sizing->variables;
  for (std::size_t i = 0; i < variables.size(); ++i) {
    const SizingVariableSpec& v = variables[i];
    std::string why;
    const auto target = parse_spec_path(spec, v.path, why);
    // The rope checks read links' lengths and masses, the ropes' stiffness and parts of line and
    // the drum's moves; each is monotonic in every one of them, so the ends of a range (or of a
    // catalogue) are the designs to check.
    using F = SpecPath::Field;
    if (!target || !(mode_shaped || target->field == F::length || target->field == F::mass || target->field == F::rope_ea ||
                     target->field == F::rope_stiffness || target->field == F::parts_of_line ||
                     target->field >= F::drum_speed))
      continue;
    const bool listed = !v.catalogue.empty();
    const double low = listed ? *std::min_element(v.catalogue.begin(), v.catalogue.end()) : v.lo;
    const double high = listed ? *std::max_element(v.catalogue.begin(), v.catalogue.end()) : v.hi;
    for (const auto& [end, value] : {std::pair{"low", low}, std::pair{"high", high}}) {
      Spec design = spec;
      set_spec_value(design, *target, value);
      Context probe;
      check_elastic_ropes(probe, links_node, design);
      for (Diagnostic& d : resolve_shaper_modes(design)) probe.error(d.mark, d.path, d.message, d.fix);
      try {
        for (const auto& sc : design.scenarios) {
          if (sc.hoist) (void)drum_profile(*sc.hoist);
          if (sc.travel) (void)travel_drive_profile(*sc.travel);  // moves, shaper and stop
          if (sc.cross_travel) (void)travel_drive_profile(*sc.cross_travel);
          if (sc.slew) (void)slew_drive_profile(*sc.slew);
        }
        check_hoisted_lengths(probe, design);
      } catch (const ProfileError& e) {
        const auto [message, fix] = split_profile_error(e);
        probe.error(v.mark, fmt::format("hoist.moves[{}]", e.move_index()), message, fix);
      } catch (const ArgumentError& e) {
        // A travel drive's shaper or stop (model/shaper.hpp) that cannot be built with this value.
        const std::string text = e.what();
        const auto cut = text.find("failed: ");
        probe.error(v.mark, "travel", cut == std::string::npos ? text : text.substr(cut + 8),
                    "keep a shaper's damping ratio below 1 (and an EI shaper's below about 0.6)");
      }
      if (probe.diagnostics.empty()) continue;
      const Diagnostic& d = probe.diagnostics.front();
      const u::Dim dim = spec_path_dim(*target);
      ctx.error(v.mark, fmt::format("sizing.variables[{}]", i),
                fmt::format("at the {} end of its {}, {} = {}, {}: {}", end, listed ? "catalogue" : "range",
                            v.path, u::format_si(value, dim), d.path, d.message),
                fmt::format("narrow the {} to designs the loader accepts, or: {}",
                            listed ? "catalogue" : "range", d.fix));
      break;
    }
  }
}

void refuse_ftle_with_elastic_ropes(Context& ctx, const Spec& spec) {
  const auto elastic = std::find_if(spec.links.begin(), spec.links.end(),
                                    [](const LinkSpec& l) { return l.kind == LinkKind::rope && l.elastic; });
  if (elastic == spec.links.end()) return;
  const std::string why = fmt::format(
      "the finite-time Lyapunov exponent does not follow an elastic rope's switches between slack and taut yet, so it "
      "would not describe the motion of rope '{}'",
      elastic->name);
  for (std::size_t i = 0; i < spec.limits.size(); ++i) {
    const LimitSpec& l = spec.limits[i];
    if (l.kind == LimitKind::ftle_max || l.kind == LimitKind::onset_margin)
      ctx.error(l.mark, fmt::format("limits[{}]", i), fmt::format("{}: {}", l.key, why),
                "remove this limit, or check the chaotic onset on a copy of the spec with the rope inextensible "
                "(without its elastic: section)");
  }
  if (spec.chaos.given)
    ctx.error(spec.chaos.mark, "chaos", fmt::format("the chaos section: {}", why),
              "remove the chaos section, or study the chaotic onset on a copy of the spec with the rope "
              "inextensible (without its elastic: section)");
}

}  // namespace swaybound::spec_detail
