// Long for a reason: one reader per spec key with its own diagnostics; splitting it per section
// (links, forces, base) is part of the planned renovation of the upper floors (one table per kind).
// Spec loader, part 1: file reading, top level, links, pivots, dashpots, wind, base motion.
// Part 2 (loader_cases.cpp) reads cases, limits, sizing, solver and report.
#include "swaybound/spec/loader.hpp"

#include <cmath>
#include <numbers>
#include <fstream>
#include <sstream>
#include <sys/stat.h>

#include <fmt/format.h>
#include <yaml-cpp/depthguard.h>  // YAML::DeepRecursion
#include <yaml-cpp/eventhandler.h>
#include <yaml-cpp/parser.h>

#include "loader_parts.hpp"
#include "names.hpp"

namespace swaybound {

using namespace spec_detail;
namespace u = units;

int Spec::link_index(const std::string& link_name) const {
  for (std::size_t i = 0; i < links.size(); ++i)
    if (links[i].name == link_name) return static_cast<int>(i);
  // Names that differ only in what cannot be seen (spec_detail::name_key) are one name; the loader
  // refuses two such link names, so this match is unique.
  const std::string key = spec_detail::name_key(link_name);
  for (std::size_t i = 0; i < links.size(); ++i)
    if (spec_detail::name_key(links[i].name) == key) return static_cast<int>(i);
  return -1;
}

namespace spec_detail {

int read_link_ref(Context& ctx, const YAML::Node& node, const std::string& path, const Spec& spec) {
  auto name = read_string(ctx, node, path);
  if (!name) return -1;
  const int index = spec.link_index(*name);
  if (index >= 0) return index;
  std::vector<std::string_view> names;
  for (const auto& l : spec.links) names.emplace_back(l.name);
  const std::string guess = nearest(*name, names);
  std::string all;
  for (auto n : names) all += (all.empty() ? "" : ", ") + std::string(n);
  ctx.error(node, path, fmt::format("no link is named '{}'", *name),
            guess.empty() ? "name one of the links: " + all
                          : fmt::format("did you mean '{}'? links: {}", guess, all));
  return -1;
}

}  // namespace spec_detail

namespace {

/// Reports `name` (of a `what` at `path`) when it is unusable (names.hpp) or names the same thing as
/// one of `earlier`, the names before it in the list `list`; returns false after reporting.
bool check_name(Context& ctx, const YAML::Node& node, const std::string& path, std::string_view what,
                const std::string& name, const std::vector<std::string>& earlier, std::string_view list,
                std::string_view unique_fix) {
  const NameProblem problem = name_problem(name, what);
  if (!problem.message.empty()) {
    ctx.error(node, path, problem.message, problem.fix);
    return false;
  }
  const std::string key = name_key(name);
  for (std::size_t i = 0; i < earlier.size(); ++i) {
    if (name_key(earlier[i]) != key) continue;
    if (earlier[i] == name)
      ctx.error(node, path, fmt::format("{} name '{}' is already used by {}[{}]", what, name, list, i),
                std::string(unique_fix));
    else
      ctx.error(node, path,
                fmt::format("{} name '{}' is the same name as {}[{}] '{}'", what, name, list, i, earlier[i]),
                fmt::format("the two differ only in spaces at their ends, invisible characters or how an accented "
                            "letter is encoded (one character or letter + combining accent), so they read alike: "
                            "{}",
                            unique_fix));
    return false;
  }
  return true;
}

void read_friction(const MapView& pivot, LinkSpec& link) {
  if (!pivot.has("friction")) return;
  MapView m(pivot.ctx(), pivot.get("friction"), pivot.path("friction"),
            {"torque", "pin_radius", "mu", "transition_rate"});
  if (!m.ok()) return;
  FrictionSpec f;
  read_optional(m, "torque", f.torque, u::torque, Bounds::non_negative());
  read_optional(m, "pin_radius", f.pin_radius, u::length, Bounds::non_negative());
  read_optional(m, "mu", f.mu, u::dimensionless, Bounds{0, 2, false, false});
  read_optional(m, "transition_rate", f.transition_rate, u::angular_rate, Bounds::positive());
  if (m.has("mu") != m.has("pin_radius"))
    m.ctx().error(m.mark(), m.path(), "pin friction needs both 'mu' and 'pin_radius'",
                  "give both (torque = mu * pin_radius * |pivot reaction|) or neither");
  link.pivot.friction = f;
}

/// One damper map at `path` (`motion` decides which `axis` values it takes).
void read_one_damper(Context& ctx, const YAML::Node& node, const std::string& path, Motion motion, LinkSpec& link) {
  MapView m(ctx, node, path, {"coefficient", "exponent", "max_torque", "linear_below", "axis"});
  if (!m.ok()) return;
  DamperSpec d;
  if (m.require("coefficient", "the damping coefficient, e.g. '4 kN m s/rad'")) {
    if (auto v = read_quantity(m.ctx(), m.get("coefficient"), m.path("coefficient"),
                               u::rotary_damping, Bounds::non_negative()))
      d.coefficient = *v;
  }
  read_optional(m, "exponent", d.exponent, u::dimensionless, Bounds{0, 2, true, false});
  read_optional(m, "max_torque", d.max_torque, u::torque, Bounds::positive());
  read_optional(m, "linear_below", d.linear_below, u::angular_rate, Bounds::positive());
  if (m.has("axis")) d.axis = read_damper_axis(ctx, m.get("axis"), m.path("axis"), motion);
  link.pivot.dampers.push_back(d);
}

/// `damper: {...}` (one) or `dampers: [{...}, ...]` (several, side by side: their torques add).
void read_damper(const MapView& pivot, Motion motion, LinkSpec& link) {
  Context& ctx = pivot.ctx();
  if (pivot.has("damper") && pivot.has("dampers")) {
    ctx.error(pivot.key_mark("dampers"), pivot.path("dampers"), "both 'damper' and 'dampers' are given",
              "put every damper of the pivot in the 'dampers' list, or keep one under 'damper'");
    return;
  }
  if (pivot.has("damper")) read_one_damper(ctx, pivot.get("damper"), pivot.path("damper"), motion, link);
  if (!pivot.has("dampers")) return;
  const YAML::Node list = pivot.get("dampers");
  if (!expect_sequence(ctx, list, pivot.path("dampers"), "a list of dampers")) return;
  if (list.size() == 0)
    ctx.error(list, pivot.path("dampers"), "the list of dampers is empty", "give at least one damper, or remove the key");
  for (std::size_t k = 0; k < list.size(); ++k)
    read_one_damper(ctx, list[k], fmt::format("{}[{}]", pivot.path("dampers"), k), motion, link);
}

void read_link(Context& ctx, const YAML::Node& node, const std::string& path, Spec& spec) {
  MapView m(ctx, node, path,
            {"name", "kind", "length", "mass", "com", "inertia", "pivot", "parts_of_line", "elastic"});
  if (!m.ok()) return;
  LinkSpec link;
  link.mark = m.mark();
  if (m.require("name", "a unique name for the link")) {
    if (auto s = read_string(ctx, m.get("name"), m.path("name"))) {
      link.name = *s;
      std::vector<std::string> earlier;
      for (const auto& other : spec.links) earlier.push_back(other.name);
      check_name(ctx, m.get("name"), m.path("name"), "link", link.name, earlier, "links",
                 "give every link a unique name");
    }
  }
  bool kind_read = true;
  if (m.has("kind")) {
    if (auto k = read_choice(ctx, m.get("kind"), m.path("kind"), {"rigid", "rope"}))
      link.kind = *k == "rope" ? LinkKind::rope : LinkKind::rigid;
    else
      kind_read = false;
  } else {
    ctx.defaults_filled.push_back(m.path("kind"));
  }
  bool have_length = false, have_mass = false;
  if (m.require("length", "the pivot-to-pivot length, e.g. '6 m'")) {
    if (auto v = read_quantity(ctx, m.get("length"), m.path("length"), u::length,
                               Bounds{0, kMaxLinkLength, true, false, "the tool takes links up to 10 km long"})) {
      link.length = *v;
      have_length = true;
    }
  }
  if (m.require("mass", "the link's mass, e.g. '35 kg'")) {
    if (auto v = read_quantity(ctx, m.get("mass"), m.path("mass"), u::mass,
                               Bounds{0, kMaxLinkMass, true, false, "the tool takes links up to 100 000 t"})) {
      link.mass = *v;
      have_mass = true;
    }
  }
  if (m.has("com")) {
    if (auto v = read_quantity(ctx, m.get("com"), m.path("com"), u::length, Bounds::non_negative())) {
      link.com = *v;
      link.com_given = true;
      if (have_length && link.com > link.length)
        ctx.error(m.get("com"), m.path("com"),
                  fmt::format("centre of mass {} lies beyond the link's length {}",
                              u::format_si(link.com, u::length), u::format_si(link.length, u::length)),
                  "give 0 <= com <= length (measured from the upper pivot along the link)");
    }
  } else {
    link.com = link.length / 2;
    ctx.defaults_filled.push_back(m.path("com"));
  }
  if (m.has("inertia")) {
    if (auto v = read_quantity(ctx, m.get("inertia"), m.path("inertia"), u::moment_of_inertia,
                               Bounds::non_negative())) {
      link.inertia = *v;
      link.inertia_given = true;
    }
  } else {
    link.inertia = have_mass && have_length ? link.mass * link.length * link.length / 12.0 : 0.0;
    ctx.defaults_filled.push_back(m.path("inertia"));
  }
  read_rope_keys(m, kind_read, link);
  if (m.has("pivot")) {
    MapView p(ctx, m.get("pivot"), m.path("pivot"), {"friction", "damper", "dampers"});
    if (p.ok()) {
      read_friction(p, link);
      read_damper(p, spec.motion, link);
    }
  }
  spec.links.push_back(std::move(link));
}

void read_attachment(Context& ctx, const YAML::Node& node, const std::string& path, const Spec& spec,
                     AttachmentSpec& out) {
  MapView m(ctx, node, path, {"link", "at", "base"});
  if (!m.ok()) return;
  if (m.has("base") == m.has("link")) {
    ctx.error(m.mark(), path, "an attachment names either a link or the base",
              "write {link: NAME, at: DISTANCE} or {base: [X, Y]}");
    return;
  }
  if (m.has("base")) {
    out.link = -1;
    const YAML::Node b = m.get("base");
    if (!b.IsSequence() || b.size() != 2) {
      ctx.error(b, m.path("base"), "expected [x, y], the offset on the base from the top pivot",
                "write e.g. base: [0.5 m, -0.2 m] (x right, y up)");
      return;
    }
    if (auto v = read_quantity(ctx, b[0], m.path("base") + "[0]", u::length)) out.base_x = *v;
    if (auto v = read_quantity(ctx, b[1], m.path("base") + "[1]", u::length)) out.base_y = *v;
    return;
  }
  out.link = read_link_ref(ctx, m.get("link"), m.path("link"), spec);
  if (m.require("at", "the distance along the link from its upper pivot")) {
    if (auto v = read_quantity(ctx, m.get("at"), m.path("at"), u::length, Bounds::non_negative())) {
      out.at = *v;
      if (out.link >= 0 && out.at > spec.links[static_cast<std::size_t>(out.link)].length)
        ctx.error(m.get("at"), m.path("at"), "the point lies beyond the end of the link",
                  fmt::format("give 0 <= at <= {}",
                              u::format_si(spec.links[static_cast<std::size_t>(out.link)].length, u::length)));
    }
  }
}

/// Position of an attachment with the chain hanging at rest from the top pivot at (0, 0), y up.
std::pair<double, double> rest_position(const AttachmentSpec& a, const Spec& spec) {
  if (a.link < 0) return {a.base_x, a.base_y};
  double depth = a.at;
  for (int i = 0; i < a.link; ++i) depth += spec.links[static_cast<std::size_t>(i)].length;
  return {0.0, -depth};
}

void read_dashpots(Context& ctx, const YAML::Node& node, Spec& spec) {
  if (!expect_sequence(ctx, node, "dashpots", "dashpots")) return;
  for (std::size_t i = 0; i < node.size(); ++i) {
    const std::string path = fmt::format("dashpots[{}]", i);
    MapView m(ctx, node[i], path, {"name", "from", "to", "coefficient"});
    if (!m.ok()) continue;
    DashpotSpec d;
    d.mark = m.mark();
    const std::size_t diagnostics_before = ctx.diagnostics.size();
    d.name = fmt::format("dashpot {}", i + 1);
    if (m.has("name"))
      if (auto s = read_string(ctx, m.get("name"), m.path("name"))) {
        d.name = *s;
        std::vector<std::string> earlier;
        for (const auto& other : spec.dashpots) earlier.push_back(other.name);
        check_name(ctx, m.get("name"), m.path("name"), "dashpot", d.name, earlier, "dashpots",
                   "give every dashpot a unique name (sizing paths address dashpots by name)");
      }
    if (m.require("from", "an attachment {link: NAME, at: DISTANCE}"))
      read_attachment(ctx, m.get("from"), m.path("from"), spec, d.from);
    if (m.require("to", "an attachment {link: NAME, at: DISTANCE} or {base: [X, Y]}"))
      read_attachment(ctx, m.get("to"), m.path("to"), spec, d.to);
    if (m.require("coefficient", "the damping coefficient, e.g. '2 kN s/m'"))
      if (auto v = read_quantity(ctx, m.get("coefficient"), m.path("coefficient"), u::linear_damping,
                                 Bounds::non_negative()))
        d.coefficient = *v;
    if (m.has("from") && m.has("to") && d.from.link < 0 && d.to.link < 0) {
      ctx.error(m.mark(), path, "both ends are on the base, so the dashpot does nothing",
                "attach at least one end to a link");
    } else if (m.has("from") && m.has("to") && diagnostics_before == ctx.diagnostics.size()) {
      // Its force acts along the line between the ends: at zero length that line has no direction.
      const auto [ax, ay] = rest_position(d.from, spec);
      const auto [bx, by] = rest_position(d.to, spec);
      const double length = std::hypot(ax - bx, ay - by);
      if (!(length >= kMinDashpotLength))
        ctx.error(m.key_mark("to"), m.path("to"),
                  fmt::format("the dashpot has zero length: with the chain hanging at rest both ends are at "
                              "x = {:.4g} m, y = {:.4g} m{}",
                              ax, ay, length > 0 ? fmt::format(" (within {:.2g} m)", length) : std::string()),
                  "move one end: a dashpot acts along the line between its ends, so they must be at least 1 mm "
                  "apart at rest");
    }
    spec.dashpots.push_back(d);
  }
}

void read_wind_one(Context& ctx, const YAML::Node& node, const std::string& path, Spec& spec) {
  MapView m(ctx, node, path,
            {"speed", "link", "at", "drag_area", "drag_coefficient", "air_density", "gust", "direction"});
  if (!m.ok()) return;
  WindSpec w;
  w.mark = m.mark();
  w.link = -1;  // no link until one is read: WindSpec's default 0 made a wind without 'link' read links[0] of an empty chain
  if (m.require("link", "the link the wind acts on")) w.link = read_link_ref(ctx, m.get("link"), m.path("link"), spec);
  if (m.require("speed", "the steady wind speed, e.g. '12 m/s'"))
    if (auto v = read_quantity(ctx, m.get("speed"), m.path("speed"), u::speed)) w.speed = *v;
  if (m.require("drag_area", "the projected area, e.g. '3.2 m^2'"))
    if (auto v = read_quantity(ctx, m.get("drag_area"), m.path("drag_area"), u::area, Bounds::non_negative()))
      w.drag_area = *v;
  if (m.require("drag_coefficient", "the drag coefficient Cd, e.g. 1.2"))
    if (auto v = read_quantity(ctx, m.get("drag_coefficient"), m.path("drag_coefficient"), u::dimensionless,
                               Bounds::non_negative()))
      w.drag_coefficient = *v;
  read_optional(m, "air_density", w.air_density, u::density, Bounds::positive());
  if (m.has("direction") && require_spatial(m, "direction", spec, "a wind direction in the horizontal plane"))
    if (auto v = read_quantity(ctx, m.get("direction"), m.path("direction"), u::angle)) w.direction = *v;
  if (m.has("at")) {
    if (auto v = read_quantity(ctx, m.get("at"), m.path("at"), u::length, Bounds::non_negative())) {
      w.at = *v;
      w.at_given = true;
      if (w.link >= 0 && w.at > spec.links[static_cast<std::size_t>(w.link)].length)
        ctx.error(m.get("at"), m.path("at"), "the point lies beyond the end of the link",
                  "give a distance from the link's upper pivot no larger than its length");
    }
  } else if (w.link >= 0) {
    w.at = spec.links[static_cast<std::size_t>(w.link)].com;
    ctx.defaults_filled.push_back(m.path("at"));
  }
  if (m.has("gust")) {
    MapView g(ctx, m.get("gust"), m.path("gust"), {"start", "for", "speed"});
    if (g.ok()) {
      WindSpec::Gust gust;
      if (g.require("start", "when the gust starts, e.g. '5 s'"))
        if (auto v = read_quantity(ctx, g.get("start"), g.path("start"), u::duration, Bounds::non_negative()))
          gust.start = *v;
      if (g.require("for", "how long the gust lasts, e.g. '3 s'"))
        if (auto v = read_quantity(ctx, g.get("for"), g.path("for"), u::duration, Bounds::positive()))
          gust.duration = *v;
      if (g.require("speed", "the extra wind speed during the gust, e.g. '8 m/s'"))
        if (auto v = read_quantity(ctx, g.get("speed"), g.path("speed"), u::speed)) gust.speed = *v;
      w.gust = gust;
    }
  }
  spec.wind.push_back(w);
}

void read_wind(Context& ctx, const YAML::Node& node, Spec& spec) {
  if (node.IsSequence()) {
    for (std::size_t i = 0; i < node.size(); ++i) read_wind_one(ctx, node[i], fmt::format("wind[{}]", i), spec);
  } else {
    read_wind_one(ctx, node, "wind", spec);
  }
}

/// Reads {x, y, z} (z across the travel: spatial chains only).
void read_xyz(Context& ctx, const YAML::Node& node, const std::string& path, const u::Dim& dim, const Spec& spec,
              double& x, double& y, double& z) {
  MapView m(ctx, node, path, {"x", "y", "z"});
  if (!m.ok()) return;
  if (m.has("x")) if (auto v = read_quantity(ctx, m.get("x"), m.path("x"), dim)) x = *v;
  if (m.has("y")) if (auto v = read_quantity(ctx, m.get("y"), m.path("y"), dim)) y = *v;
  if (m.has("z") && require_spatial(m, "z", spec, "a motion across the travel"))
    if (auto v = read_quantity(ctx, m.get("z"), m.path("z"), dim)) z = *v;
}

void read_base(Context& ctx, const YAML::Node& node, Spec& spec) {
  MapView m(ctx, node, "base", {"scenarios"});
  if (!m.ok() || !m.require("scenarios", "a list of base-motion scenarios")) return;
  const YAML::Node list = m.get("scenarios");
  if (!expect_sequence(ctx, list, "base.scenarios", "scenarios")) return;
  if (list.size() == 0)
    ctx.error(list, "base.scenarios", "the list of scenarios is empty",
              "give at least one scenario, or leave 'base' out for a fixed top pivot");
  for (std::size_t i = 0; i < list.size(); ++i) {
    const std::string path = fmt::format("base.scenarios[{}]", i);
    MapView s(ctx, list[i], path, {"name", "initial_velocity", "accel", "travel", "cross_travel", "slew", "hoist", "lift_off", "uncertain"});
    if (!s.ok()) continue;
    ScenarioSpec sc;
    sc.mark = s.mark();
    if (s.require("name", "a name for the scenario, used in case ids"))
      if (auto n = read_string(ctx, s.get("name"), s.path("name"))) {
        sc.name = *n;
        std::vector<std::string> earlier;
        for (const auto& other : spec.scenarios) earlier.push_back(other.name);
        check_name(ctx, s.get("name"), s.path("name"), "scenario", sc.name, earlier, "base.scenarios",
                   "give every scenario a unique name");
      }
    if (s.has("initial_velocity"))
      read_xyz(ctx, s.get("initial_velocity"), s.path("initial_velocity"), u::speed, spec, sc.initial_vx, sc.initial_vy,
               sc.initial_vz);
    if (s.has("accel") && expect_sequence(ctx, s.get("accel"), s.path("accel"), "segments {for, x, y}")) {
      const YAML::Node segs = s.get("accel");
      for (std::size_t k = 0; k < segs.size(); ++k) {
        const std::string sp = fmt::format("{}.accel[{}]", path, k);
        MapView g(ctx, segs[k], sp, {"for", "x", "y", "z"});
        if (!g.ok()) continue;
        AccelSegment seg;
        if (g.require("for", "the segment's duration, e.g. '1.5 s'"))
          if (auto v = read_quantity(ctx, g.get("for"), g.path("for"), u::duration, Bounds::positive()))
            seg.duration = *v;
        if (g.has("x")) if (auto v = read_quantity(ctx, g.get("x"), g.path("x"), u::acceleration)) seg.ax = *v;
        if (g.has("y")) if (auto v = read_quantity(ctx, g.get("y"), g.path("y"), u::acceleration)) seg.ay = *v;
        if (g.has("z") && require_spatial(g, "z", spec, "a motion across the travel"))
          if (auto v = read_quantity(ctx, g.get("z"), g.path("z"), u::acceleration)) seg.az = *v;
        sc.accel.push_back(seg);
      }
    }
    read_scenario_rope_keys(s, spec, sc);
    if (s.has("travel")) {
      read_travel(s, sc);
      read_travel_controller(s, spec, sc);
    }
    if (s.has("slew")) read_slew(s, spec, sc);
    if (s.has("cross_travel")) read_cross_travel(s, spec, sc);
    spec.scenarios.push_back(std::move(sc));
  }
  read_uncertain(ctx, list, spec);
}

/// Checks what the chain's inputs imply, link by link from the bottom, with the links below each
/// pivot lumped at the link's lower end: the inertia about the pivot J = m c^2 + I + L^2 M_below
/// (> 0, or the mass matrix is singular) and the period of the link swinging on its own,
/// 2 pi sqrt(J / (g h)) with h = m c + L M_below, within [1 ms, 1 day] when h > 0; a huge or
/// infinite J (an inertia of 1e300 kg m^2) fails the period. The ranges of gravity, length, mass
/// and the link count keep the rest finite: m c^2 + L^2 M_below <= 1e8 x 1e8 x 101 kg m^2 and the
/// static load at a pivot, g (m + M_below), <= 100 x 1e8 x 100 N.
void check_chain(Context& ctx, const YAML::Node& links_node, const Spec& spec) {
  double mass_below = 0;
  for (std::size_t k = spec.links.size(); k-- > 0;) {
    const LinkSpec& l = spec.links[k];
    const double own = l.mass * l.com * l.com + l.length * l.length * mass_below;  // J without I
    const double inertia = own + l.inertia;
    const double moment = l.mass * l.com + l.length * mass_below;
    const std::string path = fmt::format("links[{}]", k);
    if (l.mass > 0 && l.length > 0 && !(inertia > 0)) {
      ctx.error(links_node[k], path,
                "the link has no rotational inertia about its pivot (com = 0, inertia = 0, nothing below)",
                "give a centre of mass below the pivot (com > 0) or an inertia > 0");
    } else if (moment > 0) {
      const double period = 2 * std::numbers::pi * std::sqrt(inertia / (spec.gravity * moment));
      if (!(period >= kMinPendulumPeriod && period <= kMaxPendulumPeriod)) {
        // The key to look at: a given inertia that makes most of J, else a given com, else the length.
        const bool blame_inertia = l.inertia_given && l.inertia > own;
        const char* key = blame_inertia ? "inertia" : l.com_given ? "com" : "length";
        const std::string fix =
            blame_inertia ? fmt::format("check the inertia: it is about the link's centre of mass, in kg m^2 "
                                        "(a uniform rod of this mass and length has {})",
                                        u::format_si(l.mass * l.length * l.length / 12, u::moment_of_inertia))
            : l.com_given ? "check com: the distance of the centre of mass below the pivot, along the link"
                          : "check the link's length and mass";
        ctx.error(links_node[k][key], path + "." + key,
                  fmt::format("link '{}' would swing on its own with a period of {:.3g} s (2 pi sqrt(J / (g h)), "
                              "J = {:.4g} kg m^2 about its pivot, h = {:.4g} kg m), outside the 1 ms to 1 day a "
                              "sway check can follow",
                              l.name, period, inertia, moment),
                  fix);
      }
    }
    mass_below += l.mass;
  }
}

std::string read_file(const std::string& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0)
    throw SpecError(path, {{{}, "", "cannot open the spec file: it does not exist",
                            "check the path; give the YAML design spec to read"}});
  if (S_ISDIR(st.st_mode))
    throw SpecError(path, {{{}, "", "this is a folder, not a spec file", "give the path of a .yaml spec file"}});
  if (static_cast<std::size_t>(st.st_size) > kMaxSpecBytes)
    throw SpecError(path, {{{}, "",
                            fmt::format("the file is {} bytes, larger than the {} byte limit for a spec",
                                        st.st_size, kMaxSpecBytes),
                            "a design spec is a few kilobytes; check that this is the right file"}});
  std::ifstream in(path, std::ios::binary);
  if (!in)
    throw SpecError(path, {{{}, "", "cannot read the spec file (permission denied or not a regular file)",
                            "check the file's permissions"}});
  std::ostringstream buffer;
  buffer << in.rdbuf();
  return buffer.str();
}

/// First invalid UTF-8 byte, as a 1-based line and column; line 0 when the text is valid. The column
/// counts bytes, as the positions yaml-cpp reports for every other diagnostic do.
Mark first_invalid_utf8(std::string_view s) {
  int line = 1, col = 1;
  for (std::size_t i = 0; i < s.size();) {
    const auto c = static_cast<unsigned char>(s[i]);
    std::size_t len = c < 0x80 ? 1 : (c >> 5) == 0x6 ? 2 : (c >> 4) == 0xE ? 3 : (c >> 3) == 0x1E ? 4 : 0;
    if (len == 0 || i + len > s.size()) return {line, col};
    for (std::size_t k = 1; k < len; ++k)
      if ((static_cast<unsigned char>(s[i + k]) >> 6) != 0x2) return {line, col};
    if (c == '\n') {
      ++line;
      col = 1;
    } else {
      col += static_cast<int>(len);
    }
    i += len;
  }
  return {};
}

/// The last line at or before `line` (1-based) whose indentation holds a tab, and the tab's column;
/// line 0 when there is none. Blank lines and comment lines are skipped: a tab there harms nothing.
Mark tab_in_indentation(std::string_view text, int line) {
  Mark found;
  int current = 1;
  for (std::size_t start = 0; start <= text.size() && current <= line; ++current) {
    const std::size_t end = std::min(text.find('\n', start), text.size());
    const std::string_view row = text.substr(start, end - start);
    const std::size_t first = row.find_first_not_of(" \t");
    const std::size_t tab = row.find('\t');
    if (first != std::string_view::npos && row[first] != '#' && row[first] != '\r' && tab < first)
      found = {current, static_cast<int>(tab) + 1};
    start = end + 1;
  }
  return found;
}

/// yaml-cpp 0.7's LoadAll never returns on a token that its document parser does not consume, such
/// as a ',' outside brackets (",", "[1],", "a: 1\n,"): it appends empty documents forever while
/// memory grows (jbeder/yaml-cpp#1040; fixed upstream by PR #1319, after Debian 12's 0.7). Found
/// by fuzzing (tests/fuzz). This first pass walks the documents with an event handler that keeps
/// nothing and stops when a document starts where the previous one did, which a parse that makes
/// progress never does; it returns that position (line 0 when the stream is fine) and the character
/// there. It throws the same YAML exceptions as LoadAll.
std::pair<Mark, char> stuck_yaml_document(const std::string& text) {
  struct Probe : YAML::EventHandler {
    YAML::Mark start;
    void OnDocumentStart(const YAML::Mark& mark) override { start = mark; }
    void OnDocumentEnd() override {}
    void OnNull(const YAML::Mark&, YAML::anchor_t) override {}
    void OnAlias(const YAML::Mark&, YAML::anchor_t) override {}
    void OnScalar(const YAML::Mark&, const std::string&, YAML::anchor_t, const std::string&) override {}
    void OnSequenceStart(const YAML::Mark&, const std::string&, YAML::anchor_t, YAML::EmitterStyle::value) override {}
    void OnSequenceEnd() override {}
    void OnMapStart(const YAML::Mark&, const std::string&, YAML::anchor_t, YAML::EmitterStyle::value) override {}
    void OnMapEnd() override {}
  } probe;
  std::istringstream in(text);
  YAML::Parser parser(in);
  int previous = -1;
  // Every document that makes progress starts at a later byte, so there are at most size + 1.
  for (std::size_t documents = 0; parser.HandleNextDocument(probe); ++documents) {
    if (probe.start.pos == previous || documents > text.size()) {
      const auto at = static_cast<std::size_t>(probe.start.pos);
      return {Mark{probe.start.line + 1, probe.start.column + 1}, at < text.size() ? text[at] : ' '};
    }
    previous = probe.start.pos;
  }
  return {};
}

}  // namespace

Spec load_spec(const std::string& path, const LoadOptions& options) {
  return load_spec_text(read_file(path), path, options);
}

Spec load_spec_text(std::string_view text, const std::string& file_label, const LoadOptions& options) {
  if (text.size() > kMaxSpecBytes)
    throw SpecError(file_label, {{{}, "", "the spec is larger than the 4 MiB limit", "check that this is the right file"}});
  if (const Mark bad = first_invalid_utf8(text); bad.line > 0)
    throw SpecError(file_label, {{bad, "", "the file is not valid UTF-8 text",
                                  "save the spec as UTF-8; remove or retype the character at this position"}});
  // Every document is parsed: YAML::Load would read the first and silently drop anything after a
  // '---' or '...' line, even text that is not YAML.
  std::vector<YAML::Node> documents;
  try {
    const std::string whole(text);
    if (const auto [stuck, token] = stuck_yaml_document(whole); stuck.line > 0)
      throw SpecError(file_label, {{stuck, "", fmt::format("not valid YAML: unexpected '{}' outside a list or map", token),
                                    "a ',' separates items only inside [...] or {...}; remove it, or quote the "
                                    "value that contains it"}});
    documents = YAML::LoadAll(whole);
  } catch (const YAML::DeepRecursion& e) {
    // yaml-cpp's depth guard: its message is "bad file" and its position is wherever the scanner had
    // read ahead to (often the end of the file), so neither helps; report it for the whole file.
    throw SpecError(file_label, {{{}, "",
                                  fmt::format("lists and maps are nested too deeply (the YAML reader "
                                              "stops at {} levels)", e.depth()),
                                  "a design spec nests a few levels; look for unclosed '[' or '{'"}});
  } catch (const YAML::Exception& e) {
    const Mark at = e.mark.is_null() ? Mark{} : Mark{e.mark.line + 1, e.mark.column + 1};
    // YAML indents with spaces only; yaml-cpp's words for a tab there vary ("illegal block entry",
    // "illegal tab when looking for indentation", ...), and some point past the tab.
    if (const Mark tab = tab_in_indentation(text, at.line); at.line > 0 && tab.line > 0)
      throw SpecError(file_label, {{tab, "", "a tab is used for indentation; YAML indents with spaces only",
                                    "replace the tab at the start of this line with spaces (line up the key "
                                    "under the one it belongs with)"}});
    throw SpecError(file_label, {{at, "", "not valid YAML: " + e.msg,
                                  "fix the YAML syntax at this position (indentation, quotes, brackets)"}});
  }
  YAML::Node root;
  for (const YAML::Node& document : documents) {
    if (document.IsNull()) continue;  // an empty document, e.g. after a trailing '---'
    if (root.IsDefined() && !root.IsNull())
      throw SpecError(file_label, {{mark_of(document), "", "a second YAML document follows the spec",
                                    "keep one spec per file: remove the '---' line and what follows it"}});
    root = document;
  }
  if (!root.IsDefined() || root.IsNull())
    throw SpecError(file_label, {{{}, "", "the spec is empty", "start from one of the demo specs in specs/"}});

  Context ctx;
  ctx.file = file_label;
  Spec spec;
  spec.source_file = file_label;
  spec.source_text = std::string(text);
  MapView top(ctx, root, "",
              {"swaybound", "name", "motion", "gravity", "links", "dashpots", "wind", "base", "cases", "limits",
               "chaos", "sizing", "solver", "report"});
  if (!top.ok()) throw SpecError(file_label, ctx.diagnostics);

  if (top.require("swaybound", fmt::format("the spec format version ({})", kSpecFormatVersion))) {
    if (auto v = read_integer(ctx, top.get("swaybound"), "swaybound", 0, 1'000'000)) {
      if (*v != kSpecFormatVersion)
        ctx.error(top.get("swaybound"), "swaybound",
                  fmt::format("spec format version {} is not supported by this tool", *v),
                  fmt::format("this tool reads format version {}", kSpecFormatVersion));
    }
  }
  if (top.require("name", "a name for the mechanism"))
    if (auto s = read_string(ctx, top.get("name"), "name")) spec.name = *s;
  read_motion(top, spec);
  read_optional(top, "gravity", spec.gravity, u::acceleration,
                Bounds{kMinGravity, kMaxGravity, false, false,
                       "the tool takes gravity from 0.1 to 100 m/s^2 (Earth 9.81 m/s^2, the Moon 1.62 m/s^2)"});

  if (top.require("links", "the list of links, top to bottom")) {
    const YAML::Node links = top.get("links");
    if (expect_sequence(ctx, links, "links", "links (top to bottom)")) {
      if (links.size() == 0)
        ctx.error(links, "links", "the list of links is empty", "give at least one link");
      else if (links.size() > static_cast<std::size_t>(kMaxLinks))
        ctx.error(links, "links", fmt::format("{} links is more than the limit of {}", links.size(), kMaxLinks),
                  "model the chain with fewer links");
      else
        for (std::size_t i = 0; i < links.size(); ++i) read_link(ctx, links[i], fmt::format("links[{}]", i), spec);
      if (ctx.diagnostics.empty()) {
        check_chain(ctx, links, spec);
        check_elastic_ropes(ctx, links, spec);
      }
    }
  }
  if (top.has("dashpots")) read_dashpots(ctx, top.get("dashpots"), spec);
  if (top.has("wind")) read_wind(ctx, top.get("wind"), spec);
  if (top.has("base")) read_base(ctx, top.get("base"), spec);
  if (ctx.diagnostics.empty()) check_mode_shapers(ctx, spec);
  if (spec.scenarios.empty() && !top.has("base")) {
    ScenarioSpec still;
    still.name = "still";
    spec.scenarios.push_back(still);
    ctx.defaults_filled.push_back("base.scenarios");
  }
  read_cases(top, spec, options);
  check_hoisted_lengths(ctx, spec);
  check_luffing(ctx, spec);
  read_limits(top, spec);
  read_chaos(top, spec);
  read_sizing(top, spec);
  if (ctx.diagnostics.empty()) check_sized_ropes(ctx, top.get("links"), spec);
  refuse_ftle_with_elastic_ropes(ctx, spec);
  refuse_with_spatial(ctx, spec);
  read_solver_and_report(top, spec);

  if (!ctx.diagnostics.empty()) throw SpecError(file_label, ctx.diagnostics);
  spec.defaults_filled = std::move(ctx.defaults_filled);
  return spec;
}

}  // namespace swaybound
