// Spec loader, speed moves: the reader of one speed move {at, to, accel, jerk} shared by a hoist
// drum (loader_rope.cpp) and a travel drive, the travel drive itself (with its input shaper and
// stop), and the split of a speed profile's error into message and fix.
#include <cmath>
#include <cstdlib>

#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/model/profile.hpp"
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
  const bool drum = of == MoveOf::drum, slew = of == MoveOf::slew;
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
       slew   ? "the slewing speed the move reaches, e.g. '0.1 rad/s' (+ turns the pivot from +x towards +z)"
       : drum ? "the drum speed the move reaches, e.g. '0.5 m/s' (+ hauls in, - pays out)"
              : "the travel speed the move reaches, e.g. '1.2 m/s' (+ towards +x)",
       slew ? u::angular_rate : u::speed, Bounds::any(), move.to);
  read("accel",
       slew   ? "the slewing acceleration limit, e.g. '0.02 rad/s^2'"
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

/// base.scenarios[i].travel.shaper: {kind, frequency | period, damping_ratio, vibration_tolerance}.
std::optional<ScenarioSpec::Travel::Shaper> read_shaper(const MapView& travel) {
  Context& ctx = travel.ctx();
  MapView m(ctx, travel.get("shaper"), travel.path("shaper"),
            {"kind", "frequency", "period", "damping_ratio", "vibration_tolerance"});
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
  if (m.has("frequency") && m.has("period")) {
    ctx.error(m.key_mark("period"), m.path("period"), "both 'frequency' and 'period' are given",
              "give the mode's natural frequency (e.g. '0.3 Hz') or its period (e.g. '3.3 s'), not both");
    ok = false;
  } else if (m.has("period")) {
    if (auto v = read_quantity(ctx, m.get("period"), m.path("period"), u::duration, Bounds::positive()))
      shaper.frequency = 1 / *v;
    else
      ok = false;
  } else if (m.require("frequency", "the natural frequency of the mode to shape for, e.g. '0.3 Hz' (or 'period')")) {
    if (auto v = read_quantity(ctx, m.get("frequency"), m.path("frequency"), u::rate, Bounds::positive()))
      shaper.frequency = *v;
    else
      ok = false;
  } else {
    ok = false;
  }
  if (m.has("damping_ratio")) {
    if (auto v = read_quantity(ctx, m.get("damping_ratio"), m.path("damping_ratio"), u::dimensionless,
                               Bounds{0, 1, false, true, "an underdamped mode"}))
      shaper.damping_ratio = *v;
    else
      ok = false;
  } else {
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
  if (ok) {
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

/// base.scenarios[i].travel.stop: {at, decel, jerk}.
std::optional<ScenarioSpec::Travel::Stop> read_stop(const MapView& travel) {
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
  if (m.require("decel", "the stop's deceleration, e.g. '0.8 m/s^2'")) {
    if (auto v = read_quantity(ctx, m.get("decel"), m.path("decel"), u::acceleration, Bounds::positive()))
      stop.decel = *v;
    else
      ok = false;
  } else {
    ok = false;
  }
  if (m.has("jerk")) {
    if (auto v = read_quantity(ctx, m.get("jerk"), m.path("jerk"), u::jerk, Bounds::non_negative()))
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
  read_optional(t, "speed", travel.initial_speed, u::speed);
  bool moves_ok = true;
  if (t.has("moves") && expect_sequence(ctx, t.get("moves"), t.path("moves"), "drive moves {at, to, accel, jerk}")) {
    const YAML::Node list = t.get("moves");
    for (std::size_t k = 0; k < list.size(); ++k) {
      DrumMoveSpec move;
      moves_ok &= read_drum_move(ctx, list[k], fmt::format("{}[{}]", t.path("moves"), k), move, MoveOf::travel);
      travel.moves.push_back(move);
    }
  } else if (t.has("moves")) {
    moves_ok = false;
  }
  if (moves_ok) {
    std::vector<SpeedMove> moves;
    for (const DrumMoveSpec& m : travel.moves) moves.push_back(SpeedMove{m.at, m.to, m.accel, m.jerk});
    try {
      (void)SpeedProfile::build(travel.initial_speed, moves);
    } catch (const ProfileError& e) {
      const auto [message, fix] = split_profile_error(e);
      const std::size_t k = e.move_index();
      ctx.error(travel.moves[k].mark, fmt::format("{}[{}]", t.path("moves"), k), message, fix);
      moves_ok = false;
    }
  }
  bool rest_ok = true;
  if (t.has("shaper")) {
    travel.shaper = read_shaper(t);
    rest_ok &= travel.shaper.has_value();
  }
  if (t.has("stop")) {
    travel.stop = read_stop(t);
    rest_ok &= travel.stop.has_value();
  }
  if (moves_ok && rest_ok && travel.stop) {
    try {
      (void)travel_drive_profile(travel);
    } catch (const ArgumentError& e) {
      ctx.error(travel.stop->mark, t.path("stop"), fmt::format("the stop cannot be built: {}", requirement_text(e)),
                "give a larger deceleration");
    }
  }
  sc.initial_vx = travel.initial_speed;
  sc.travel = travel;
}

}  // namespace swaybound::spec_detail
