// Spec loader, speed moves: the reader of one speed move {at, to, accel, jerk} shared by a hoist
// drum (loader_rope.cpp) and a travel drive, the travel drive itself, and the split of a speed
// profile's error into message and fix.
#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/model/profile.hpp"

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
                    bool drum) {
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
       drum ? "the drum speed the move reaches, e.g. '0.5 m/s' (+ hauls in, - pays out)"
            : "the travel speed the move reaches, e.g. '1.2 m/s' (+ towards +x)",
       u::speed, Bounds::any(), move.to);
  read("accel", drum ? "the drum's acceleration limit, e.g. '0.4 m/s^2'" : "the drive's acceleration limit, e.g. '0.3 m/s^2'",
       u::acceleration, Bounds::positive(), move.accel);
  if (m.has("jerk")) {
    if (auto v = read_quantity(ctx, m.get("jerk"), m.path("jerk"), u::jerk, Bounds::non_negative()))
      move.jerk = *v;
    else
      ok = false;
  } else {
    ctx.defaults_filled.push_back(m.path("jerk"));
  }
  return ok;
}

void read_travel(const MapView& scenario, ScenarioSpec& sc) {
  Context& ctx = scenario.ctx();
  for (const char* other : {"accel", "initial_velocity"})
    if (scenario.has(other))
      ctx.error(scenario.key_mark(other), scenario.path(other),
                fmt::format("'{}' and 'travel' both set the base's motion", other),
                "give the motion either as a travel drive (travel: {speed, moves}) or as acceleration segments "
                "(accel, initial_velocity), not both");
  MapView t(ctx, scenario.get("travel"), scenario.path("travel"), {"speed", "moves"});
  if (!t.ok()) return;
  ScenarioSpec::Travel travel;
  travel.mark = scenario.key_mark("travel");
  read_optional(t, "speed", travel.initial_speed, u::speed);
  bool moves_ok = true;
  if (t.has("moves") && expect_sequence(ctx, t.get("moves"), t.path("moves"), "drive moves {at, to, accel, jerk}")) {
    const YAML::Node list = t.get("moves");
    for (std::size_t k = 0; k < list.size(); ++k) {
      DrumMoveSpec move;
      moves_ok &= read_drum_move(ctx, list[k], fmt::format("{}[{}]", t.path("moves"), k), move, false);
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
    }
  }
  sc.initial_vx = travel.initial_speed;
  sc.travel = travel;
}

}  // namespace swaybound::spec_detail
