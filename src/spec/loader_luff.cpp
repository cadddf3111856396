// Spec loader, luffing: a slewing scenario's `slew.luff` (specs/README.md, "Slewing and luffing"),
// the radius of the boom tip (radial luffing, a speed profile in m/s) or the angle of a boom of
// given length (boom luffing, a speed profile in rad/s) changing during the scenario, and the check
// after cases.duration is read that the radius stays positive and the boom angle within
// (-90, 90) deg over the run.
#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/model/profile.hpp"

namespace swaybound::spec_detail {

namespace u = units;

namespace {

constexpr double kQuarterTurn = std::numbers::pi / 2;

SpeedProfile luff_speed_profile(const ScenarioSpec::Slew::Luff& luff) {
  std::vector<SpeedMove> moves;
  for (const DrumMoveSpec& d : luff.moves) moves.push_back(SpeedMove{d.at, d.to, d.accel, d.jerk});
  return SpeedProfile::build(luff.initial_speed, moves);
}

}  // namespace

void read_luff(const MapView& slew_map, ScenarioSpec::Slew& slew) {
  Context& ctx = slew_map.ctx();
  MapView m(ctx, slew_map.get("luff"), slew_map.path("luff"), {"speed", "moves", "boom", "angle"});
  if (!m.ok()) return;
  ScenarioSpec::Slew::Luff luff;
  luff.mark = slew_map.key_mark("luff");
  luff.speed_mark = m.has("speed") ? m.key_mark("speed") : luff.mark;
  bool ok = true;
  const bool boom = m.has("boom");
  if (boom) {
    if (auto v = read_quantity(ctx, m.get("boom"), m.path("boom"), u::length, Bounds::positive()))
      luff.boom = *v;
    else
      ok = false;
    if (m.require("angle", "the boom's angle above the horizontal at t = 0, e.g. '60 deg'")) {
      if (auto v = read_quantity(ctx, m.get("angle"), m.path("angle"), u::angle,
                                 Bounds{-kQuarterTurn, kQuarterTurn, true, true, "the boom's angle above the horizontal, short of straight up or down"}))
        luff.angle = *v;
      else
        ok = false;
    } else {
      ok = false;
    }
    // The foot on the slewing arm: radius - boom cos(angle) from the axis, not behind it.
    if (ok && slew.radius > 0 && slew.radius - luff.boom * std::cos(luff.angle) < 0)
      ctx.error(m.get("boom"), m.path("boom"),
                fmt::format("a boom of {} at {:.4g} deg reaches {} out from its foot, beyond the tip's radius {}: "
                            "the foot would be behind the slewing axis",
                            u::format_si(luff.boom, u::length), luff.angle * 180 / std::numbers::pi,
                            u::format_si(luff.boom * std::cos(luff.angle), u::length),
                            u::format_si(slew.radius, u::length)),
                "give the boom's length and its angle at t = 0 so that boom cos(angle) <= slew.radius (the tip's "
                "radius at t = 0)");
  } else if (m.has("angle")) {
    ctx.error(m.key_mark("angle"), m.path("angle"), "'angle' is the boom's angle, and no boom length is given",
              "add 'boom: LENGTH' (boom luffing), or remove 'angle' (radial luffing: speed and moves in m/s)");
    ok = false;
  }
  ok &= read_speed_moves(m, boom ? MoveOf::luff_boom : MoveOf::luff_radial, "speed", "luffing moves",
                         luff.initial_speed, luff.moves);
  slew.luff = luff;
}

void check_luffing(Context& ctx, const Spec& spec) {
  const double duration = spec.cases.duration;
  if (!(duration > 0)) return;
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i) {
    const ScenarioSpec& sc = spec.scenarios[i];
    if (!sc.slew || !sc.slew->luff) continue;
    const ScenarioSpec::Slew::Luff& luff = *sc.slew->luff;
    SpeedProfile profile;
    try {
      profile = luff_speed_profile(luff);
    } catch (const Error&) {
      continue;  // reported at the move
    }
    const bool boom = luff.boom > 0;
    // Radial: the radius R + s(t) stays above 0. Boom: the angle stays within (-90, 90) deg (then
    // the radius, foot + boom cos(beta) with the foot not behind the axis, stays above 0).
    const auto outside = [&](double t) {
      const double s = profile.position(t);
      return boom ? !(std::fabs(luff.angle + s) < kQuarterTurn) : !(sc.slew->radius + s > 0);
    };
    const std::vector<double> times = profile_check_times(profile, duration);
    std::size_t k = 0;
    while (k < times.size() && !outside(times[k])) ++k;
    if (k == times.size()) continue;
    double lo = k > 0 ? times[k - 1] : 0.0, hi = times[k];
    for (int step = 0; step < 200 && lo < hi; ++step) {
      const double mid = lo + (hi - lo) / 2;
      if (mid <= lo || mid >= hi) break;
      (outside(mid) ? hi : lo) = mid;
    }
    // The move under way at that time (the last one started by then), else the initial speed.
    const std::string base = fmt::format("base.scenarios[{}].slew.luff", i);
    std::string path = base + ".speed";
    Mark mark = luff.speed_mark;
    for (std::size_t j = 0; j < luff.moves.size(); ++j)
      if (luff.moves[j].at <= hi) {
        path = fmt::format("{}.moves[{}]", base, j);
        mark = luff.moves[j].mark;
      }
    const std::string when = fmt::format("at t = {:.6g} s, within cases.duration ({})", hi,
                                         u::format_si(duration, u::duration));
    if (boom)
      ctx.error(mark, path,
                fmt::format("the boom angle would leave (-90, 90) deg {}: it starts at {:.4g} deg and the luffing "
                            "turns it by {:.4g} deg by then",
                            when, luff.angle * 180 / std::numbers::pi, profile.position(hi) * 180 / std::numbers::pi),
                "luff less: a lower boom-angle rate or an earlier move back to 0 rad/s");
    else
      ctx.error(mark, path,
                fmt::format("the luffing would bring the radius to {} {} (it starts at {}): the pivot would "
                            "reach the slewing axis",
                            u::format_si(sc.slew->radius + profile.position(hi), u::length), when,
                            u::format_si(sc.slew->radius, u::length)),
                "luff in less: a lower radial speed or an earlier move back to 0 m/s");
  }
}

}  // namespace swaybound::spec_detail
