// Input shapers and the drive's stop (model/shaper.hpp).
// Sources of the reference values:
//  - ZV and ZVD impulses: Singer & Seering, "Preshaping command inputs to reduce system vibration",
//    ASME J. Dyn. Sys. Meas. Control 112 (1990) 76-82; ZV is Smith's posicast (1957). With
//    K = exp(-zeta pi / sqrt(1 - zeta^2)) and Td the damped period: ZV [1, K] / (1 + K) at [0, Td/2],
//    ZVD [1, 2K, K^2] / (1 + K)^2 at [0, Td/2, Td].
//  - EI, undamped: Singhose, Seering & Singer (1994/1997): [(1+V)/4, (1-V)/2, (1+V)/4] at [0, T/2, T].
//  - The percentage vibration V (Singer & Seering 1990, as in shaper.hpp). Derived here for the
//    undamped closed forms at frequency ratio r = f / f_design (w t = pi r at t = T/2):
//      ZV:  |1/2 + 1/2 e^{i pi r}| = |cos(pi r / 2)|;
//      ZVD: |1/4 + 1/2 e^{i pi r} + 1/4 e^{2 i pi r}| = |(1 + e^{i pi r}) / 2|^2 = cos^2(pi r / 2);
//      EI:  |a + b e^{i pi r} + a e^{2 i pi r}| = |b + 2 a cos(pi r)|.
//  - Shaping is a convolution with impulses summing to 1: the shaped acceleration, speed and position
//    are the weighted sums of the shifted ones (linearity), the distance of a rest-to-rest move is
//    unchanged, and the moves end later by the last impulse's time.
//  - Stop, trapezoid: constant deceleration D from v: lasts |v| / D, covers v |v| / (2 D)
//    (rectilinear kinematics, e.g. Meriam & Kraige). S-curve from cruise: the usual jerk-limited ramp
//    (from memory, as in test_profile.cpp): |v| / D + D / J, covering v / 2 times that.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <random>
#include <vector>

#include "../support/close_to.hpp"
#include "swaybound/model/shaper.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kPi = std::numbers::pi;

/// The left limit of piece q's acceleration at its end (its own polynomial).
double left_accel(const ProfilePiece& q) { return q.a0 + q.j * (q.t1 - q.t0); }
double left_speed(const ProfilePiece& q) {
  const double d = q.t1 - q.t0;
  return q.v0 + q.a0 * d + q.j * d * d / 2;
}
double left_position(const ProfilePiece& q) {
  const double d = q.t1 - q.t0;
  return q.p0 + q.v0 * d + q.a0 * d * d / 2 + q.j * d * d * d / 6;
}

/// Pieces contiguous from 0 to infinity, position and speed continuous at every corner.
void check_continuous(const SpeedProfile& p) {
  const auto& pieces = p.pieces();
  CHECK(pieces.front().t0 == 0);
  CHECK(pieces.front().p0 == 0);
  CHECK(std::isinf(pieces.back().t1));
  for (std::size_t k = 1; k < pieces.size(); ++k) {
    INFO("corner at " << pieces[k].t0);
    CHECK(pieces[k].t0 == pieces[k - 1].t1);
    CHECK(pieces[k].t1 > pieces[k].t0);
    CHECK_THAT(left_speed(pieces[k - 1]), IsCloseTo(pieces[k].v0, 1e-12, 1e-12));
    CHECK_THAT(left_position(pieces[k - 1]), IsCloseTo(pieces[k].p0, 1e-11, 1e-12));
  }
}

}  // namespace

TEST_CASE("ZV and ZVD impulses for a damped mode follow the published formulas", "[shaper]") {
  const double f = 0.4, zeta = 0.12;
  const double root = std::sqrt(1 - zeta * zeta), k = std::exp(-zeta * kPi / root), td = 1 / (f * root);
  const InputShaper zv = design_shaper(ShaperKind::zv, f, zeta);
  REQUIRE(zv.impulses.size() == 2);
  CHECK(zv.impulses[0].time == 0);
  CHECK_THAT(zv.impulses[1].time, IsCloseTo(td / 2, 0, 1e-15));
  CHECK_THAT(zv.impulses[0].amplitude, IsCloseTo(1 / (1 + k), 0, 1e-15));
  CHECK_THAT(zv.impulses[1].amplitude, IsCloseTo(k / (1 + k), 0, 1e-15));
  CHECK_THAT(zv.duration(), IsCloseTo(td / 2, 0, 1e-15));

  const InputShaper zvd = design_shaper(ShaperKind::zvd, f, zeta);
  REQUIRE(zvd.impulses.size() == 3);
  const double sum = (1 + k) * (1 + k);
  CHECK_THAT(zvd.impulses[1].time, IsCloseTo(td / 2, 0, 1e-15));
  CHECK_THAT(zvd.impulses[2].time, IsCloseTo(td, 0, 1e-15));
  CHECK_THAT(zvd.impulses[0].amplitude, IsCloseTo(1 / sum, 0, 1e-15));
  CHECK_THAT(zvd.impulses[1].amplitude, IsCloseTo(2 * k / sum, 0, 1e-15));
  CHECK_THAT(zvd.impulses[2].amplitude, IsCloseTo(k * k / sum, 0, 1e-15));
  // Both leave no vibration on the mode they were designed for.
  CHECK(residual_vibration(zv, f, zeta) < 1e-15);
  CHECK(residual_vibration(zvd, f, zeta) < 1e-15);

  // Undamped: K = 1, the halves of a posicast and the binomial 1/4, 1/2, 1/4.
  const InputShaper posicast = design_shaper(ShaperKind::zv, 0.5, 0);
  CHECK(posicast.impulses[0].amplitude == 0.5);
  CHECK(posicast.impulses[1].time == 1);
  CHECK(design_shaper(ShaperKind::zvd, 0.5, 0).impulses[1].amplitude == 0.5);

  CHECK_THROWS_AS(design_shaper(ShaperKind::zv, 0, 0), ArgumentError);
  CHECK_THROWS_AS(design_shaper(ShaperKind::zvd, 0.3, 1), ArgumentError);
  CHECK_THROWS_AS(design_shaper(ShaperKind::ei, 0.3, 0, 1), ArgumentError);
}

TEST_CASE("the percentage vibration matches its hand-derived forms for undamped modes", "[shaper]") {
  const double f = 0.25, tolerance = 0.05;
  const InputShaper zv = design_shaper(ShaperKind::zv, f, 0);
  const InputShaper zvd = design_shaper(ShaperKind::zvd, f, 0);
  const InputShaper ei = design_shaper(ShaperKind::ei, f, 0, tolerance);
  REQUIRE(ei.impulses.size() == 3);
  CHECK_THAT(ei.impulses[0].amplitude, IsCloseTo((1 + tolerance) / 4, 0, 1e-15));
  CHECK_THAT(ei.impulses[1].amplitude, IsCloseTo((1 - tolerance) / 2, 0, 1e-15));
  CHECK_THAT(ei.impulses[2].time, IsCloseTo(1 / f, 0, 1e-15));
  const double a = (1 + tolerance) / 4, b = (1 - tolerance) / 2;
  for (double r : {0.5, 0.8, 0.9, 1.0, 1.1, 1.2, 1.7}) {
    INFO("ratio " << r);
    CHECK_THAT(residual_vibration(zv, r * f, 0), IsCloseTo(std::fabs(std::cos(kPi * r / 2)), 1e-15, 1e-13));
    CHECK_THAT(residual_vibration(zvd, r * f, 0), IsCloseTo(std::pow(std::cos(kPi * r / 2), 2), 1e-15, 1e-13));
    CHECK_THAT(residual_vibration(ei, r * f, 0), IsCloseTo(std::fabs(b + 2 * a * std::cos(kPi * r)), 1e-15, 1e-13));
  }
  CHECK_THAT(residual_vibration(ei, f, 0), IsCloseTo(tolerance, 1e-15, 0));
  // The sensitivity curve is V at evenly spaced ratios.
  const auto curve = sensitivity_curve(zvd, 0, 0.5, 1.5, 11);
  REQUIRE(curve.size() == 11);
  CHECK(curve.front().frequency_ratio == 0.5);
  CHECK(curve.back().frequency_ratio == 1.5);
  CHECK_THAT(curve[3].frequency_ratio, IsCloseTo(0.8, 1e-15, 0));
  for (const auto& point : curve)
    CHECK_THAT(point.vibration, IsCloseTo(std::pow(std::cos(kPi * point.frequency_ratio / 2), 2), 1e-14, 1e-12));
  CHECK_THROWS_AS(sensitivity_curve(zvd, 0, 1, 1, 3), ArgumentError);
}

TEST_CASE("a damped EI shaper meets the EI conditions exactly", "[shaper]") {
  // The conditions (shaper.hpp): V = Vtol at the design frequency with zero slope there, and V = 0 at
  // one frequency below and one above; amplitudes summing to 1. Checked here with residual_vibration
  // (the published expression), independently of the design's equations.
  for (const double zeta : {0.0, 0.05, 0.15, 0.3}) {
    for (const double tolerance : {0.03, 0.05, 0.1}) {
      INFO("zeta " << zeta << ", Vtol " << tolerance);
      const double f = 0.3;
      const InputShaper ei = design_shaper(ShaperKind::ei, f, zeta, tolerance);
      REQUIRE(ei.impulses.size() == 3);
      double sum = 0;
      for (const Impulse& i : ei.impulses) {
        CHECK(i.amplitude > 0);
        sum += i.amplitude;
      }
      CHECK_THAT(sum, IsCloseTo(1, 1e-14, 0));
      CHECK(ei.impulses[1].time > 0);
      CHECK(ei.impulses[2].time > ei.impulses[1].time);
      CHECK_THAT(residual_vibration(ei, f, zeta), IsCloseTo(tolerance, 1e-12, 0));
      const double h = 1e-5 * f;
      const double slope = (residual_vibration(ei, f + h, zeta) - residual_vibration(ei, f - h, zeta)) / (2 * h);
      CHECK(std::fabs(slope * f) < 1e-7);  // dV / d(ln f)
      // The least V on each side, by a fine scan then golden-section refinement.
      for (const auto& [lo, hi] : {std::pair{0.6, 1.0}, std::pair{1.0, 1.6}}) {
        double a = lo * f, b = hi * f;
        const double g = (std::sqrt(5.0) - 1) / 2;
        double best = a;
        for (int k = 0; k <= 400; ++k) {
          const double x = a + (b - a) * k / 400;
          if (residual_vibration(ei, x, zeta) < residual_vibration(ei, best, zeta)) best = x;
        }
        a = best - (b - a) / 400;
        b = best + (hi * f - lo * f) / 400;
        for (int k = 0; k < 80; ++k) {
          const double c = b - g * (b - a), d = a + g * (b - a);
          if (residual_vibration(ei, c, zeta) < residual_vibration(ei, d, zeta))
            b = d;
          else
            a = c;
        }
        CHECK(residual_vibration(ei, (a + b) / 2, zeta) < 1e-7);
      }
    }
  }
  // The damped design tends to the closed form as zeta -> 0.
  const InputShaper slight = design_shaper(ShaperKind::ei, 1, 1e-4, 0.05);
  CHECK_THAT(slight.impulses[0].amplitude, IsCloseTo(1.05 / 4, 1e-3, 0));
  CHECK_THAT(slight.impulses[2].time, IsCloseTo(1, 1e-3, 0));
}

TEST_CASE("a shaped profile is the weighted sum of the shifted command", "[shaper][profile]") {
  // Rest to rest: accelerate (S-curve), cruise, brake (trapezoid); and a second command that starts
  // moving at t = 0 from a non-zero speed.
  const SpeedProfile rest_to_rest = SpeedProfile::build(0, {{1, 1.2, 0.3, 0.6}, {9, 0, 0.4, 0}});
  const SpeedProfile moving = SpeedProfile::build(0.5, {{0, 1.5, 0.25, 0}});
  std::mt19937 random(20261205);
  for (const SpeedProfile* command : {&rest_to_rest, &moving}) {
    for (const ShaperKind kind : {ShaperKind::zv, ShaperKind::zvd, ShaperKind::ei}) {
      const InputShaper shaper = design_shaper(kind, 0.35, 0.08, 0.05);
      const SpeedProfile shaped = shape_profile(*command, shaper);
      INFO("kind " << static_cast<int>(kind) << ", initial speed " << command->speed(0));
      check_continuous(shaped);
      CHECK_THAT(shaped.end_of_moves(), IsCloseTo(command->end_of_moves() + shaper.duration(), 0, 1e-15));
      // sum A_i f(t - t_i) at random times (position relative to t = 0).
      std::uniform_real_distribution<double> time(0, shaped.end_of_moves() + 2);
      double offset = 0;
      for (const Impulse& i : shaper.impulses) offset += i.amplitude * command->position(-i.time);
      for (int n = 0; n < 200; ++n) {
        const double t = time(random);
        double p = -offset, v = 0, a = 0;
        for (const Impulse& i : shaper.impulses) {
          p += i.amplitude * command->position(t - i.time);
          v += i.amplitude * command->speed(t - i.time);
          a += i.amplitude * command->accel(t - i.time);
        }
        INFO("t = " << t);
        CHECK_THAT(shaped.accel(t), IsCloseTo(a, 1e-13, 1e-12));
        CHECK_THAT(shaped.speed(t), IsCloseTo(v, 1e-13, 1e-12));
        CHECK_THAT(shaped.position(t), IsCloseTo(p, 1e-12, 1e-12));
      }
      // Every corner of the shaped profile is a shifted corner of the command.
      for (double c : shaped.breakpoints()) {
        bool found = false;
        for (const Impulse& i : shaper.impulses) {
          found |= std::fabs(c - i.time) < 1e-12;
          for (double b : command->breakpoints()) found |= std::fabs(c - b - i.time) < 1e-12;
        }
        CHECK(found);
      }
      // The speed is reached exactly when the shaped moves end, not before.
      const double end = shaped.end_of_moves(), last = command->speed(1e6);
      CHECK_THAT(shaped.speed(end), IsCloseTo(last, 1e-14, 0));
      CHECK(std::fabs(shaped.speed(end - 0.05) - last) > 1e-6);
      CHECK(shaped.accel(end) == 0);
    }
  }
  // Rest to rest: the same distance; the shaped move ends later by the shaper's duration.
  const InputShaper zvd = design_shaper(ShaperKind::zvd, 0.35, 0.08);
  const SpeedProfile shaped = shape_profile(rest_to_rest, zvd);
  const double distance = 1.2 / 2 * (1.2 / 0.3 + 0.3 / 0.6) + 1.2 * (9 - 1 - 1.2 / 0.3 - 0.3 / 0.6) + 1.2 * 1.2 / (2 * 0.4);
  CHECK_THAT(rest_to_rest.position(20), IsCloseTo(distance, 0, 1e-13));
  CHECK_THAT(shaped.position(20), IsCloseTo(distance, 0, 1e-13));
  CHECK_THAT(shaped.end_of_moves(), IsCloseTo(9 + 1.2 / 0.4 + zvd.duration(), 0, 1e-15));
  // A command without moves is unchanged.
  const SpeedProfile steady = shape_profile(SpeedProfile::build(2, {}), zvd);
  CHECK(steady.pieces().size() == 1);
  CHECK(steady.end_of_moves() == 0);
  CHECK_THAT(steady.position(3), IsCloseTo(6, 0, 1e-15));
}

TEST_CASE("a stop brings the speed to zero at its deceleration", "[shaper][profile]") {
  // Cruise at 1.2 m/s from 4 s on; stop at 8 s at 0.5 m/s^2: 0 at 8 + 1.2 / 0.5 s, 1.2^2 / 1 m on.
  const SpeedProfile command = SpeedProfile::build(0, {{0, 1.2, 0.3, 0}});
  const SpeedProfile stopped = stop_profile(command, 8, 0.5);
  check_continuous(stopped);
  const double end = 8 + 1.2 / 0.5;
  CHECK_THAT(stopped.end_of_moves(), IsCloseTo(end, 0, 1e-15));
  CHECK(stopped.speed(end) == 0);
  CHECK(stopped.speed(end + 50) == 0);
  CHECK(stopped.accel(8) == -0.5);
  CHECK_THAT(stopped.speed(end - 1), IsCloseTo(0.5, 1e-14, 0));
  CHECK_THAT(stopped.position(end + 3), IsCloseTo(command.position(8) + 1.2 * 1.2 / (2 * 0.5), 0, 1e-14));
  CHECK(stopped.breakpoints() == std::vector<double>{4, 8, end});

  // Jerk-limited from cruise: |v| / D + D / J, covering v / 2 times that.
  const SpeedProfile s_curve = stop_profile(command, 8, 0.5, 0.25);
  check_continuous(s_curve);
  const double s_end = 8 + 1.2 / 0.5 + 0.5 / 0.25;
  CHECK_THAT(s_curve.end_of_moves(), IsCloseTo(s_end, 0, 1e-14));
  CHECK_THAT(s_curve.position(s_end + 1), IsCloseTo(command.position(8) + 1.2 / 2 * (s_end - 8), 0, 1e-13));
  CHECK(s_curve.speed(s_end + 1) == 0);

  // During the command's acceleration (a = 0.3 at 2 s, v = 0.6): without a jerk limit the
  // acceleration steps to -D; with one, it ramps from +0.3 down, and speed and acceleration reach 0
  // together, within the limits.
  const SpeedProfile step = stop_profile(command, 2, 0.5);
  CHECK(step.accel(std::nextafter(2.0, 0.0)) == 0.3);
  CHECK(step.accel(2) == -0.5);
  CHECK_THAT(step.end_of_moves(), IsCloseTo(2 + 0.6 / 0.5, 0, 1e-15));
  for (const double jerk : {0.25, 5.0}) {
    INFO("jerk " << jerk);
    const SpeedProfile ramp = stop_profile(command, 2, 0.5, jerk);
    check_continuous(ramp);
    const double stop_end = ramp.end_of_moves();
    CHECK(ramp.accel(2) == 0.3);  // continuous: the ramp starts from the command's acceleration
    for (const ProfilePiece& q : ramp.pieces()) {
      CHECK(std::fabs(q.j) <= jerk * (1 + 1e-15));
      CHECK(std::fabs(q.a0) <= 0.5 + 1e-15);
    }
    // The acceleration is continuous from the stop on (only the jerk jumps).
    for (std::size_t k = 1; k < ramp.pieces().size(); ++k)
      if (ramp.pieces()[k].t0 > 2) CHECK_THAT(left_accel(ramp.pieces()[k - 1]), IsCloseTo(ramp.pieces()[k].a0, 1e-14, 0));
    CHECK_THAT(left_accel(ramp.pieces()[ramp.pieces().size() - 2]), IsCloseTo(0, 1e-14, 0));
    CHECK_THAT(left_speed(ramp.pieces()[ramp.pieces().size() - 2]), IsCloseTo(0, 1e-14, 0));
    for (double t = 2; t < stop_end; t += 0.01) CHECK(ramp.speed(t) >= -1e-15);  // no reversal here
  }
  // A command decelerating harder than a jerk-limited stop can ramp out (a = -2 m/s^2 at 0.1 m/s,
  // J = 1: ramping out alone takes 0.1 - 2^2/2 m/s): the speed passes through 0 and comes back.
  const SpeedProfile hard = SpeedProfile::build(1, {{0, 0, 2, 0}});
  const SpeedProfile reversal = stop_profile(hard, 0.45, 3, 1);
  check_continuous(reversal);
  CHECK(reversal.speed(reversal.end_of_moves() + 1) == 0);
  CHECK_THAT(left_accel(reversal.pieces()[reversal.pieces().size() - 2]), IsCloseTo(0, 1e-13, 0));
  CHECK_THAT(left_speed(reversal.pieces()[reversal.pieces().size() - 2]), IsCloseTo(0, 1e-13, 0));

  // A stop at 0 from a standing start is immediate; a bad stop is refused.
  CHECK(stop_profile(SpeedProfile::build(0, {{1, 1, 1, 0}}), 0, 1).end_of_moves() == 0);
  CHECK_THROWS_AS(stop_profile(command, -1, 1), ArgumentError);
  CHECK_THROWS_AS(stop_profile(command, 1, 0), ArgumentError);
}
