// Spec loader, speed moves: the reader of one speed move {at, to, accel, jerk} shared by a hoist
// drum (loader_rope.cpp) and the drive axes, the keys of a drive axis (travel, cross travel,
// slewing: speed, moves, input shaper and stop), the shapers designed from a mode, and the split of
// a speed profile's error into message and fix.
#include <cmath>
#include <cstdlib>

#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/model/profile.hpp"
#include "swaybound/modal/shaper_modes.hpp"
#include "swaybound/model/shaper.hpp"

namespace swaybound::spec_detail {

namespace u = units;

/// ProfileError's text is "moves[INDEX]: MESSAGE; FIX": the message and the fix.
std::pair<std::string, std::string> split_profile_error(const ProfileError& e) {
  std::string text = e.what();
  if (const auto colon = text.find(": "); colon != std::string::npos) text = text.substr(colon + 2);
  const auto semicolon = text.find("; ");
  if (semicolon == std::string::npos) return {text, "see specs/README.md, 'hoist'"};
  return {text.substr(0, semicolon), text.substr(semicolon + 2)};
}

/// base.scenarios[i].hoist.moves[k] or travel.moves[k] (`drum` picks the words of the messages);
/// false when the move could not be read.
bool read_drum_move(Context& ctx, const YAML::Node& node, const std::string& path, DrumMoveSpec& move,
                    MoveOf of) {
  const bool drum = of == MoveOf::drum, cross = of == MoveOf::cross_travel;
  const bool radial = of == MoveOf::luff_radial, boom = of == MoveOf::luff_boom;
  const bool slew = of == MoveOf::slew || boom;  // in rad/s
  MapView m(ctx, node, path, {"at", "to", "accel", "jerk"});
  if (!m.ok()) return false;
  move.mark = m.mark();
  bool ok = true;
  const auto read = [&](std::string_view key, const char* what, const u::Dim& dim, const Bounds& bounds,
                        double& out) {
    if (!m.require(key, what)) {
      ok = false;
      return;
    }
    if (auto v = read_quantity(ctx, m.get(key), m.path(key), dim, bounds))
      out = *v;
    else
      ok = false;
  };
  read("at", "when the move starts, e.g. '2 s'", u::duration, Bounds::non_negative(), move.at);
  read("to",
       boom     ? "the boom angle's rate the move reaches, e.g. '0.02 rad/s' (+ raises the boom)"
       : radial ? "the radial speed the move reaches, e.g. '-0.5 m/s' (+ outwards, - in)"
       : slew   ? "the slewing speed the move reaches, e.g. '0.1 rad/s' (+ turns the pivot from +x towards +z)"
       : drum ? "the drum speed the move reaches, e.g. '0.5 m/s' (+ hauls in, - pays out)"
       : cross ? "the cross-travel speed the move reaches, e.g. '0.6 m/s' (+ towards +z)"
              : "the travel speed the move reaches, e.g. '1.2 m/s' (+ towards +x)",
       slew ? u::angular_rate : u::speed, Bounds::any(), move.to);
  read("accel",
       boom     ? "the luffing acceleration limit of the boom angle, e.g. '0.01 rad/s^2'"
       : radial ? "the luffing acceleration limit, e.g. '0.2 m/s^2'"
       : slew   ? "the slewing acceleration limit, e.g. '0.02 rad/s^2'"
       : drum ? "the drum's acceleration limit, e.g. '0.4 m/s^2'"
              : "the drive's acceleration limit, e.g. '0.3 m/s^2'",
       slew ? u::angular_acceleration : u::acceleration, Bounds::positive(), move.accel);
  if (m.has("jerk")) {
    if (auto v = read_quantity(ctx, m.get("jerk"), m.path("jerk"), slew ? u::angular_jerk : u::jerk,
                               Bounds::non_negative()))
      move.jerk = *v;
    else
      ok = false;
  } else {
    ctx.defaults_filled.push_back(m.path("jerk"));
  }
  return ok;
}

namespace {

/// What an ArgumentError of the model says, without the source location SWAYBOUND_REQUIRE puts first.
std::string requirement_text(const ArgumentError& e) {
  const std::string text = e.what(), cut = "failed: ";
  const auto at = text.find(cut);
  return at == std::string::npos ? text : text.substr(at + cut.size());
}

/// A fraction in the open interval (0, 1), as a plain number (0.05) or a percentage ('5 %').
std::optional<double> read_fraction(Context& ctx, const YAML::Node& node, const std::string& path) {
  const Bounds bounds{0, 1, true, true, "a fraction of the unshaped vibration"};
  if (!node.IsScalar() || node.Scalar().empty() || node.Scalar().back() != '%')
    return read_quantity(ctx, node, path, u::dimensionless, bounds);
  const std::string text = node.Scalar().substr(0, node.Scalar().size() - 1);
  std::string why;
  const auto q = u::parse_quantity(text, why);
  if (!q || q->has_unit || !(q->value > 0 && q->value < 100)) {
    ctx.error(node, path, fmt::format("'{}' is not a percentage between 0 and 100 % (both excluded)", node.Scalar()),
              "give e.g. '5 %' or 0.05");
    return std::nullopt;
  }
  return q->value / 100;
}

/// A shaper's design_for: {link, length, mass} (the link is looked up when the mode is resolved).
std::optional<ScenarioSpec::Travel::Shaper::DesignFor> read_design_for(const MapView& shaper) {
  Context& ctx = shaper.ctx();
  MapView d(ctx, shaper.get("design_for"), shaper.path("design_for"), {"link", "length", "mass"});
  if (!d.ok()) return std::nullopt;
  ScenarioSpec::Travel::Shaper::DesignFor out;
  out.mark = shaper.key_mark("design_for");
  bool ok = true;
  if (d.require("link", "the link whose length or mass the design takes, e.g. 'hoist rope'")) {
    out.link_mark = d.key_mark("link");
    if (auto name = read_string(ctx, d.get("link"), d.path("link")))
      out.link = *name;
    else
      ok = false;
  } else {
    ok = false;
  }
  if (d.has("length")) {
    if (auto v = read_quantity(ctx, d.get("length"), d.path("length"), u::length, Bounds::positive()))
      out.length = *v;
    else
      ok = false;
  }
  if (d.has("mass")) {
    if (auto v = read_quantity(ctx, d.get("mass"), d.path("mass"), u::mass, Bounds::positive()))
      out.mass = *v;
    else
      ok = false;
  }
  if (ok && !out.length && !out.mass) {
    ctx.error(out.mark, d.path(), "design_for gives neither a length nor a mass, so it changes nothing",
              "give the link's length or mass (or both) to design the shaper for, e.g. length: '24 m', or remove "
              "design_for");
    ok = false;
  }
  if (!ok) return std::nullopt;
  return out;
}

/// base.scenarios[i].{travel, cross_travel, slew}.shaper: {kind, frequency | period | mode,
/// damping_ratio, vibration_tolerance, design_for}.
std::optional<ScenarioSpec::Travel::Shaper> read_shaper(const MapView& travel) {
  Context& ctx = travel.ctx();
  MapView m(ctx, travel.get("shaper"), travel.path("shaper"),
            {"kind", "frequency", "period", "mode", "damping_ratio", "vibration_tolerance", "design_for"});
  if (!m.ok()) return std::nullopt;
  ScenarioSpec::Travel::Shaper shaper;
  shaper.mark = travel.key_mark("shaper");
  bool ok = true;
  if (m.require("kind", "the shaper: zv, zvd or ei")) {
    if (const auto kind = read_choice(ctx, m.get("kind"), m.path("kind"), {"zv", "zvd", "ei"}))
      shaper.kind = *kind == "zv" ? ShaperKind::zv : *kind == "zvd" ? ShaperKind::zvd : ShaperKind::ei;
    else
      ok = false;
  } else {
    ok = false;
  }
  if (m.has("mode")) {
    shaper.mode_mark = m.key_mark("mode");
    for (const char* other : {"frequency", "period"})
      if (m.has(other)) {
        ctx.error(m.key_mark(other), m.path(other), fmt::format("both 'mode' and '{}' are given", other),
                  "give mode: K to design from the K-th mode that `swaybound modes` lists (its frequency and damping "
                  "ratio), or the frequency (or period), not both");
        ok = false;
      }
    const YAML::Node node = m.get("mode");
    if (node.IsScalar() && (node.Scalar() == "0" || node.Scalar().rfind('-', 0) == 0)) {
      ctx.error(node, m.path("mode"), fmt::format("mode {} does not exist: modes are numbered from 1", node.Scalar()),
                "give 1 for the lowest mode, 2 for the next (as `swaybound modes` lists them)");
      ok = false;
    } else if (auto v = read_integer(ctx, node, m.path("mode"), 1, 10000)) {
      shaper.mode = static_cast<int>(*v);
    } else {
      ok = false;
    }
  } else if (m.has("frequency") && m.has("period")) {
    ctx.error(m.key_mark("period"), m.path("period"), "both 'frequency' and 'period' are given",
              "give the mode's natural frequency (e.g. '0.3 Hz') or its period (e.g. '3.3 s'), not both");
    ok = false;
  } else if (m.has("period")) {
    if (auto v = read_quantity(ctx, m.get("period"), m.path("period"), u::duration, Bounds::positive()))
      shaper.frequency = 1 / *v;
    else
      ok = false;
  } else if (m.require("frequency", "the natural frequency of the mode to shape for, e.g. '0.3 Hz' (or 'period', "
                                    "or 'mode: 1' for the lowest mode of the chain)")) {
    if (auto v = read_quantity(ctx, m.get("frequency"), m.path("frequency"), u::rate, Bounds::positive()))
      shaper.frequency = *v;
    else
      ok = false;
  } else {
    ok = false;
  }
  if (m.has("design_for")) {
    if (!m.has("mode")) {
      ctx.error(m.key_mark("design_for"), m.path("design_for"),
                "'design_for' is given for a shaper whose frequency is given, not designed from a mode",
                "give mode: K instead of the frequency, or remove design_for");
      ok = false;
    } else if (auto d = read_design_for(m)) {
      shaper.design_for = std::move(d);
    } else {
      ok = false;
    }
  }
  shaper.damping_given = m.has("damping_ratio");
  if (m.has("damping_ratio")) {
    if (auto v = read_quantity(ctx, m.get("damping_ratio"), m.path("damping_ratio"), u::dimensionless,
                               Bounds{0, 1, false, true, "an underdamped mode"}))
      shaper.damping_ratio = *v;
    else
      ok = false;
  } else if (shaper.mode == 0) {
    ctx.defaults_filled.push_back(m.path("damping_ratio"));
  }
  if (m.has("vibration_tolerance")) {
    if (ok && shaper.kind != ShaperKind::ei) {
      ctx.error(m.key_mark("vibration_tolerance"), m.path("vibration_tolerance"),
                "'vibration_tolerance' is given for a shaper that is not 'ei'",
                "leave it out (zv and zvd leave no vibration at their frequency) or use kind: ei");
      ok = false;
    } else if (auto v = read_fraction(ctx, m.get("vibration_tolerance"), m.path("vibration_tolerance"))) {
      shaper.vibration_tolerance = *v;
    } else {
      ok = false;
    }
  } else if (shaper.kind == ShaperKind::ei) {
    ctx.defaults_filled.push_back(m.path("vibration_tolerance"));
  }
  if (ok && shaper.mode == 0) {  // a shaper from a mode is checked once the mode is resolved
    try {
      (void)design_shaper(shaper.kind, shaper.frequency, shaper.damping_ratio, shaper.vibration_tolerance);
    } catch (const ArgumentError& e) {
      ctx.error(m.has("damping_ratio") ? m.key_mark("damping_ratio") : m.mark(), m.path("damping_ratio"),
                requirement_text(e),
                "lower the damping ratio or raise the vibration tolerance, or use kind: zvd");
      ok = false;
    }
  }
  if (!ok) return std::nullopt;
  return shaper;
}

/// base.scenarios[i].{travel, cross_travel, slew}.stop: {at, decel, jerk} (a slewing drive's in rad/s^2, rad/s^3).
std::optional<ScenarioSpec::Travel::Stop> read_stop(const MapView& travel, MoveOf of) {
  const bool slew = of == MoveOf::slew;
  Context& ctx = travel.ctx();
  MapView m(ctx, travel.get("stop"), travel.path("stop"), {"at", "decel", "jerk"});
  if (!m.ok()) return std::nullopt;
  ScenarioSpec::Travel::Stop stop;
  stop.mark = travel.key_mark("stop");
  bool ok = true;
  if (m.require("at", "when the stop begins, e.g. '6 s'")) {
    if (auto v = read_quantity(ctx, m.get("at"), m.path("at"), u::duration, Bounds::non_negative()))
      stop.at = *v;
    else
      ok = false;
  } else {
    ok = false;
  }
  if (m.require("decel", slew ? "the stop's deceleration, e.g. '0.05 rad/s^2'" : "the stop's deceleration, e.g. '0.8 m/s^2'")) {
    if (auto v = read_quantity(ctx, m.get("decel"), m.path("decel"), slew ? u::angular_acceleration : u::acceleration,
                               Bounds::positive()))
      stop.decel = *v;
    else
      ok = false;
  } else {
    ok = false;
  }
  if (m.has("jerk")) {
    if (auto v = read_quantity(ctx, m.get("jerk"), m.path("jerk"), slew ? u::angular_jerk : u::jerk,
                               Bounds::non_negative()))
      stop.jerk = *v;
    else
      ok = false;
  } else {
    ctx.defaults_filled.push_back(m.path("jerk"));
  }
  if (!ok) return std::nullopt;
  return stop;
}

}  // namespace

bool read_speed_moves(const MapView& m, MoveOf of, std::string_view speed_key, std::string_view what,
                      double& initial_speed, std::vector<DrumMoveSpec>& moves) {
  Context& ctx = m.ctx();
  const bool angular = of == MoveOf::slew || of == MoveOf::luff_boom;
  read_optional(m, speed_key, initial_speed, angular ? u::angular_rate : u::speed);
  bool ok = true;
  if (m.has("moves") && expect_sequence(ctx, m.get("moves"), m.path("moves"), fmt::format("{} {{at, to, accel, jerk}}", what))) {
    const YAML::Node list = m.get("moves");
    for (std::size_t k = 0; k < list.size(); ++k) {
      DrumMoveSpec move;
      ok &= read_drum_move(ctx, list[k], fmt::format("{}[{}]", m.path("moves"), k), move, of);
      moves.push_back(move);
    }
  } else if (m.has("moves")) {
    ok = false;
  }
  if (!ok) return false;
  std::vector<SpeedMove> speed_moves;
  for (const DrumMoveSpec& d : moves) speed_moves.push_back(SpeedMove{d.at, d.to, d.accel, d.jerk});
  try {
    (void)SpeedProfile::build(initial_speed, speed_moves);
  } catch (const ProfileError& e) {
    const auto [message, fix] = split_profile_error(e);
    const std::size_t k = e.move_index();
    ctx.error(moves[k].mark, fmt::format("{}[{}]", m.path("moves"), k), message, fix);
    return false;
  }
  return true;
}

bool read_drive_keys(const MapView& t, MoveOf of, double& initial_speed, std::vector<DrumMoveSpec>& moves,
                     std::optional<ScenarioSpec::Travel::Shaper>& shaper,
                     std::optional<ScenarioSpec::Travel::Stop>& stop) {
  Context& ctx = t.ctx();
  const bool moves_ok = read_speed_moves(t, of, "speed", "drive moves", initial_speed, moves);
  bool rest_ok = true;
  if (t.has("shaper")) {
    shaper = read_shaper(t);
    rest_ok &= shaper.has_value();
  }
  if (t.has("stop")) {
    stop = read_stop(t, of);
    rest_ok &= stop.has_value();
  }
  // A shaper from a mode has no frequency yet: check_mode_shapers builds its drive once it has.
  if (moves_ok && rest_ok && stop && !(shaper && shaper->mode > 0)) {
    try {
      (void)drive_axis_profile(initial_speed, moves, shaper, stop);
    } catch (const ArgumentError& e) {
      ctx.error(stop->mark, t.path("stop"), fmt::format("the stop cannot be built: {}", requirement_text(e)),
                "give a larger deceleration");
      rest_ok = false;
    }
  }
  return moves_ok && rest_ok;
}

void read_travel(const MapView& scenario, ScenarioSpec& sc) {
  Context& ctx = scenario.ctx();
  for (const char* other : {"accel", "initial_velocity"})
    if (scenario.has(other))
      ctx.error(scenario.key_mark(other), scenario.path(other),
                fmt::format("'{}' and 'travel' both set the base's motion", other),
                "give the motion either as a travel drive (travel: {speed, moves}) or as acceleration segments "
                "(accel, initial_velocity), not both");
  MapView t(ctx, scenario.get("travel"), scenario.path("travel"), {"speed", "moves", "shaper", "stop", "controller"});
  if (!t.ok()) return;
  ScenarioSpec::Travel travel;
  travel.mark = scenario.key_mark("travel");
  (void)read_drive_keys(t, MoveOf::travel, travel.initial_speed, travel.moves, travel.shaper, travel.stop);
  sc.initial_vx = travel.initial_speed;
  sc.travel = travel;
}

void read_cross_travel(const MapView& scenario, const Spec& spec, ScenarioSpec& sc) {
  Context& ctx = scenario.ctx();
  if (!require_spatial(scenario, "cross_travel", spec, "a drive across the travel (along z)")) return;
  const char* fix =
      "give the motion across the travel either as a cross-travel drive (cross_travel: {speed, moves}) or as the "
      "z parts of accel and initial_velocity, not both";
  if (scenario.has("slew"))
    ctx.error(scenario.key_mark("slew"), scenario.path("slew"), "'slew' and 'cross_travel' both set the base's motion",
              "give the motion either as slewing or as travel and cross travel, not both");
  if (scenario.has("initial_velocity") && scenario.get("initial_velocity").IsMap() &&
      scenario.get("initial_velocity")["z"])
    ctx.error(scenario.get("initial_velocity")["z"], scenario.path("initial_velocity") + ".z",
              "'initial_velocity.z' and 'cross_travel' both set the base's speed across the travel", fix);
  if (scenario.has("accel") && scenario.get("accel").IsSequence()) {
    const YAML::Node segments = scenario.get("accel");
    for (std::size_t k = 0; k < segments.size(); ++k)
      if (segments[k].IsMap() && segments[k]["z"])
        ctx.error(segments[k]["z"], fmt::format("{}[{}].z", scenario.path("accel"), k),
                  "'accel[].z' and 'cross_travel' both set the base's acceleration across the travel", fix);
  }
  MapView t(ctx, scenario.get("cross_travel"), scenario.path("cross_travel"), {"speed", "moves", "shaper", "stop"});
  if (!t.ok()) return;
  ScenarioSpec::Travel cross;
  cross.mark = scenario.key_mark("cross_travel");
  (void)read_drive_keys(t, MoveOf::cross_travel, cross.initial_speed, cross.moves, cross.shaper, cross.stop);
  sc.initial_vz = cross.initial_speed;
  sc.cross_travel = cross;
}

void check_mode_shapers(Context& ctx, Spec& spec) {
  bool any = false;
  for (const ScenarioSpec& s : spec.scenarios)
    for (const auto* shaper : {s.travel ? &s.travel->shaper : nullptr, s.cross_travel ? &s.cross_travel->shaper : nullptr,
                               s.slew ? &s.slew->shaper : nullptr})
      any = any || (shaper && *shaper && (*shaper)->mode > 0);
  if (!any) return;
  for (Diagnostic& d : resolve_shaper_modes(spec)) ctx.error(d.mark, d.path, d.message, d.fix);
  // The drives whose shaper is now designed: the checks read_drive_keys left for later.
  const auto check = [&](const std::string& path, double initial_speed, const std::vector<DrumMoveSpec>& moves,
                         const std::optional<ScenarioSpec::Travel::Shaper>& shaper,
                         const std::optional<ScenarioSpec::Travel::Stop>& stop) {
    if (!shaper || shaper->mode == 0 || !(shaper->frequency > 0)) return;
    try {
      (void)design_shaper(shaper->kind, shaper->frequency, shaper->damping_ratio, shaper->vibration_tolerance);
    } catch (const ArgumentError& e) {
      ctx.error(shaper->mode_mark, path + ".shaper.mode",
                fmt::format("mode {} ({:.6g} Hz, damping ratio {:.4g}): {}", shaper->mode, shaper->frequency,
                            shaper->damping_ratio, requirement_text(e)),
                "give a damping_ratio to design for, or use kind: zvd");
      return;
    }
    if (!stop) return;
    try {
      (void)drive_axis_profile(initial_speed, moves, shaper, stop);
    } catch (const Error& e) {
      ctx.error(stop->mark, path + ".stop", fmt::format("the stop cannot be built: {}", e.what()),
                "give a larger deceleration");
    }
  };
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i) {
    const ScenarioSpec& s = spec.scenarios[i];
    const std::string path = fmt::format("base.scenarios[{}]", i);
    if (s.travel) check(path + ".travel", s.travel->initial_speed, s.travel->moves, s.travel->shaper, s.travel->stop);
    if (s.cross_travel)
      check(path + ".cross_travel", s.cross_travel->initial_speed, s.cross_travel->moves, s.cross_travel->shaper,
            s.cross_travel->stop);
    if (s.slew) check(path + ".slew", s.slew->initial_rate, s.slew->moves, s.slew->shaper, s.slew->stop);
  }
}

}  // namespace swaybound::spec_detail
