// Speed profiles: pieces of constant jerk built from speed moves (model/profile.hpp).
// Closed forms:
//  - constant acceleration a from speed v0 (rectilinear kinematics, e.g. Meriam & Kraige, Engineering
//    Mechanics: Dynamics, rectilinear motion): v = v0 + a t, s = v0 t + a t^2 / 2; a change dv takes
//    |dv| / a and covers (v0 + v1) / 2 times that.
//  - the jerk-limited S-curve (from memory; it is the usual motion-control ramp): a change dv at
//    acceleration limit A and jerk limit J lasts |dv| / A + A / J when |dv| >= A^2 / J (a ramp A/J, a
//    constant part, a ramp A/J); below that the acceleration is a triangle of peak sqrt(|dv| J) and the
//    move lasts 2 sqrt(|dv| / J). The acceleration is symmetric in time, so the distance is
//    (v0 + v1) / 2 times the duration. On the first ramp from rest, v = J t^2 / 2 and s = J t^3 / 6.
// Independently of the closed forms, the position is checked against Gauss-Legendre quadrature of the
// speed (Boost.Math) and the speed against quadrature of the acceleration.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include <boost/math/quadrature/gauss.hpp>

#include "../support/close_to.hpp"
#include "swaybound/model/profile.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();

/// The left limits at the end t1 of piece q, from the piece's own polynomial (ProfilePiece's comment).
double left_position(const ProfilePiece& q) {
  const double d = q.t1 - q.t0;
  return q.p0 + q.v0 * d + q.a0 * d * d / 2 + q.j * d * d * d / 6;
}
double left_speed(const ProfilePiece& q) {
  const double d = q.t1 - q.t0;
  return q.v0 + q.a0 * d + q.j * d * d / 2;
}
double left_accel(const ProfilePiece& q) {
  return q.a0 + q.j * (q.t1 - q.t0);
}

/// integral_0^t f, split at the profile's breakpoints; a 10-point Gauss-Legendre rule is exact for the
/// polynomials of degree <= 19, so for each piece's cubic position, quadratic speed, linear acceleration.
template <class F>
double integral(const SpeedProfile& profile, F f, double t) {
  double total = 0, from = 0;
  for (double b : profile.breakpoints()) {
    if (b >= t) break;
    total += boost::math::quadrature::gauss<double, 10>::integrate(f, from, b);
    from = b;
  }
  return total + boost::math::quadrature::gauss<double, 10>::integrate(f, from, t);
}

/// Accelerate (S-curve), cruise, brake (S-curve), reverse (trapezoid), cruise, brake (S-curve) and a
/// small S-curve change that stays below the acceleration limit (triangular).
const std::vector<SpeedMove> kSeveral = {
    {0, 3, 1, 2},     // 0 -> 3 m/s: 3 >= 1^2/2, lasts 3/1 + 1/2 = 3.5 s, covers 1.5 * 3.5 = 5.25 m
    {6, 0, 1.5, 3},   // cruise 2.5 s at 3 m/s = 7.5 m; 3 -> 0: 3/1.5 + 1.5/3 = 2.5 s, 3.75 m
    {9, -1.5, 1, 0},  // 0.5 s at rest; 0 -> -1.5 trapezoid: 1.5 s, -1.125 m
    {12, 0, 2, 8},    // cruise 1.5 s at -1.5 = -2.25 m; -1.5 -> 0: 1.5 >= 2^2/8, 0.75 + 0.25 = 1 s, -0.75 m
    {13, 0.1, 2, 8},  // 0 -> 0.1: 0.1 < 0.5, triangular, 2 sqrt(0.1/8) s, 0.05 m/s times that
};

/// Every check that holds for any profile: contiguous pieces of positive duration from 0 to +infinity,
/// breakpoints at the piece starts, p and v continuous there (1e-12 relative, with an absolute part of
/// 1e-12 times the profile's scale for values near zero), a right-continuous acceleration, and at
/// every breakpoint a jump in the acceleration or the jerk.
void check_structure(const SpeedProfile& profile) {
  const auto& pieces = profile.pieces();
  REQUIRE(!pieces.empty());
  CHECK(pieces.front().t0 == 0);
  CHECK(pieces.front().p0 == 0);
  CHECK(pieces.back().t1 == kInfinity);
  double speed_scale = 0, position_scale = 0;
  for (const auto& q : pieces) {
    CHECK(q.t1 > q.t0);  // no zero-duration piece
    speed_scale = std::max(speed_scale, std::fabs(q.v0));
    position_scale = std::max(position_scale, std::fabs(q.p0));
  }
  const std::vector<double> breaks = profile.breakpoints();
  REQUIRE(breaks.size() == pieces.size() - 1);
  for (std::size_t k = 1; k < pieces.size(); ++k) {
    const ProfilePiece &before = pieces[k - 1], &after = pieces[k];
    INFO("breakpoint " << k << " at t = " << after.t0);
    CHECK(before.t1 == after.t0);  // contiguous
    CHECK(breaks[k - 1] == after.t0);
    CHECK(breaks[k - 1] > 0);
    if (k > 1) CHECK(breaks[k - 1] > breaks[k - 2]);
    CHECK_THAT(left_position(before), IsCloseTo(profile.position(after.t0), 1e-12 * position_scale, 1e-12));
    CHECK_THAT(left_speed(before), IsCloseTo(profile.speed(after.t0), 1e-12 * speed_scale, 1e-12));
    CHECK(profile.accel(after.t0) == after.a0);  // right-continuous
    const double accel_jump = std::fabs(left_accel(before) - after.a0);
    CHECK((before.j != after.j || accel_jump > 1e-9 * std::max(1.0, std::fabs(after.a0))));
  }
}

/// Position against the quadrature of speed, speed against the quadrature of acceleration, on a grid
/// of times that falls both on and between breakpoints.
void check_against_quadrature(const SpeedProfile& profile, double until) {
  const auto speed = [&](double t) { return profile.speed(t); };
  const auto accel = [&](double t) { return profile.accel(t); };
  const double v0 = profile.speed(0);
  for (double t = 0.05; t <= until; t += 0.173) {
    INFO("t = " << t);
    CHECK_THAT(profile.position(t), IsCloseTo(integral(profile, speed, t), 1e-10, 1e-10));
    CHECK_THAT(profile.speed(t), IsCloseTo(v0 + integral(profile, accel, t), 1e-10, 1e-10));
  }
  for (double b : profile.breakpoints()) {
    INFO("breakpoint t = " << b);
    CHECK_THAT(profile.position(b), IsCloseTo(integral(profile, speed, b), 1e-10, 1e-10));
  }
}

}  // namespace

TEST_CASE("a default profile stands still, and one without moves keeps its initial speed", "[profile]") {
  const SpeedProfile still;
  REQUIRE(still.pieces().size() == 1);
  CHECK(still.pieces()[0].t1 == kInfinity);
  CHECK(still.position(7.5) == 0);
  CHECK(still.speed(7.5) == 0);
  CHECK(still.accel(7.5) == 0);
  CHECK(still.breakpoints().empty());
  CHECK(still.end_of_moves() == 0);

  const SpeedProfile steady = SpeedProfile::build(2.5, {});
  REQUIRE(steady.pieces().size() == 1);
  CHECK_THAT(steady.position(4), IsCloseTo(10, 0, 1e-15));
  CHECK(steady.speed(1e6) == 2.5);
  CHECK(steady.end_of_moves() == 0);
  // Before t = 0 the initial speed is held (position 0 at t = 0).
  CHECK_THAT(steady.position(-2), IsCloseTo(-5, 0, 1e-15));
  CHECK(steady.speed(-2) == 2.5);
  check_structure(steady);
}

TEST_CASE("a trapezoidal move follows constant-acceleration kinematics", "[profile]") {
  // From 1 m/s at t = 2 s to 4 m/s at 0.5 m/s^2: 6 s, v = 1 + 0.5 (t - 2), s = 2 + (t - 2) + 0.25 (t - 2)^2.
  const SpeedProfile p = SpeedProfile::build(1, {{2, 4, 0.5, 0}});
  CHECK(p.end_of_moves() == 8);
  CHECK(p.breakpoints() == std::vector<double>{2, 8});
  CHECK_THAT(p.position(2), IsCloseTo(2, 0, 1e-14));
  CHECK_THAT(p.position(5), IsCloseTo(2 + 3 + 0.25 * 9, 0, 1e-14));
  CHECK_THAT(p.speed(5), IsCloseTo(2.5, 0, 1e-14));
  CHECK_THAT(p.position(8), IsCloseTo(2 + (1 + 4) / 2.0 * 6, 0, 1e-14));  // (v0 + v1)/2 * duration
  CHECK_THAT(p.position(10), IsCloseTo(17 + 4 * 2, 0, 1e-14));
  CHECK(p.speed(8) == 4);

  // The acceleration steps exactly at the breakpoints: the old value up to the last double before, the
  // new value at the breakpoint (right-continuous).
  CHECK(p.accel(std::nextafter(2.0, 0.0)) == 0);
  CHECK(p.accel(2) == 0.5);
  CHECK(p.accel(std::nextafter(8.0, 0.0)) == 0.5);
  CHECK(p.accel(8) == 0);

  // Braking moves the other way.
  const SpeedProfile brake = SpeedProfile::build(4, {{0, 1, 2, 0}});
  CHECK(brake.accel(0) == -2);
  CHECK(brake.end_of_moves() == 1.5);
  CHECK_THAT(brake.position(1.5), IsCloseTo((4 + 1) / 2.0 * 1.5, 0, 1e-14));
  check_structure(p);
  check_structure(brake);
  check_against_quadrature(p, 12);
}

TEST_CASE("an S-curve move that reaches its acceleration limit", "[profile]") {
  // 0 -> 2 m/s from t = 1 s, A = 1 m/s^2, J = 2 m/s^3: 2 >= A^2/J = 0.5, so ramps of A/J = 0.5 s and a
  // constant part of 2/1 - 0.5 = 1.5 s; the move lasts dv/A + A/J = 2.5 s.
  const SpeedProfile p = SpeedProfile::build(0, {{1, 2, 1, 2}});
  CHECK_THAT(p.end_of_moves(), IsCloseTo(3.5, 0, 1e-15));
  const std::vector<double> breaks = p.breakpoints();
  REQUIRE(breaks.size() == 4);
  CHECK_THAT(breaks[0], IsCloseTo(1, 0, 1e-15));
  CHECK_THAT(breaks[1], IsCloseTo(1.5, 0, 1e-15));
  CHECK_THAT(breaks[2], IsCloseTo(3, 0, 1e-15));
  CHECK_THAT(breaks[3], IsCloseTo(3.5, 0, 1e-15));
  // End of the first ramp (0.5 s from rest): v = J t^2/2 = 0.25, s = J t^3/6 = 1/24, a = A.
  CHECK_THAT(p.speed(1.5), IsCloseTo(0.25, 0, 1e-14));
  CHECK_THAT(p.position(1.5), IsCloseTo(1.0 / 24, 0, 1e-14));
  CHECK(p.accel(1.5) == 1);
  // In the constant part, constant-acceleration kinematics from that state: at t = 3 (1.5 s on),
  // v = 0.25 + 1.5 = 1.75, s = 1/24 + 0.25 * 1.5 + 1.5^2 / 2.
  CHECK_THAT(p.speed(3), IsCloseTo(1.75, 0, 1e-14));
  CHECK_THAT(p.position(3), IsCloseTo(1.0 / 24 + 0.375 + 1.125, 0, 1e-14));
  // By symmetry the speed halfway through the move is the mean speed.
  CHECK_THAT(p.speed(2.25), IsCloseTo(1, 0, 1e-14));
  // Distance covered: (v0 + v1)/2 * (dv/A + A/J).
  CHECK_THAT(p.position(3.5), IsCloseTo(1.0 * 2.5, 0, 1e-14));
  CHECK(p.speed(3.5) == 2);
  CHECK(p.accel(3.5) == 0);
  // The acceleration is continuous (the jerk jumps): its left limits at the breakpoints.
  const auto& pieces = p.pieces();
  for (std::size_t k = 1; k < pieces.size(); ++k)
    CHECK_THAT(left_accel(pieces[k - 1]), IsCloseTo(pieces[k].a0, 1e-15, 0));
  check_structure(p);
  check_against_quadrature(p, 5);
}

TEST_CASE("an S-curve move too small for its acceleration limit has a triangular acceleration", "[profile]") {
  // 1 -> 1.2 m/s at t = 0, A = 1, J = 2: 0.2 < A^2/J = 0.5, peak sqrt(0.2 * 2) < A, lasting 2 sqrt(0.2 / 2).
  const double peak = std::sqrt(0.4), duration = 2 * std::sqrt(0.1);
  const SpeedProfile p = SpeedProfile::build(1, {{0, 1.2, 1, 2}});
  REQUIRE(p.pieces().size() == 3);  // up, down, then constant speed (no cruise before a move at 0)
  CHECK(p.pieces()[0].j == 2);
  CHECK(p.pieces()[1].j == -2);
  CHECK_THAT(p.end_of_moves(), IsCloseTo(duration, 0, 1e-15));
  CHECK_THAT(p.accel(duration / 2), IsCloseTo(peak, 0, 1e-14));
  double largest = 0;
  for (double t = 0; t < duration; t += duration / 97) largest = std::max(largest, std::fabs(p.accel(t)));
  CHECK(largest <= peak * (1 + 1e-14));
  CHECK(largest < 1);  // never reaches the limit
  CHECK_THAT(p.position(duration), IsCloseTo((1 + 1.2) / 2 * duration, 0, 1e-14));
  CHECK_THAT(p.speed(duration), IsCloseTo(1.2, 0, 1e-15));
  // Braking the same amount mirrors it.
  const SpeedProfile down = SpeedProfile::build(1.2, {{0, 1, 1, 2}});
  CHECK_THAT(down.accel(duration / 2), IsCloseTo(-peak, 0, 1e-14));
  CHECK_THAT(down.position(duration), IsCloseTo((1 + 1.2) / 2 * duration, 0, 1e-14));
  check_structure(p);
  check_structure(down);
  check_against_quadrature(p, 1);
}

TEST_CASE("several moves: accelerate, cruise, brake, reverse, brake", "[profile]") {
  const SpeedProfile p = SpeedProfile::build(0, kSeveral);
  const double last = 2 * std::sqrt(0.1 / 8);  // the triangular move at the end
  CHECK_THAT(p.end_of_moves(), IsCloseTo(13 + last, 0, 1e-15));
  CHECK_THAT(p.speed(5), IsCloseTo(3, 0, 1e-15));  // cruising
  CHECK(p.accel(5) == 0);
  CHECK_THAT(p.speed(8.75), IsCloseTo(0, 1e-15, 0));   // at rest between the brake and the reversal
  CHECK_THAT(p.speed(11), IsCloseTo(-1.5, 0, 1e-15));  // reversed
  CHECK(p.accel(9) == -1);                             // the trapezoid's step
  CHECK(p.accel(12) == 0);                             // an S-curve starts at zero acceleration
  // Distance: sum of the moves' (v0 + v1)/2 * duration and the cruises' speed * time (kSeveral's notes).
  CHECK_THAT(p.position(3.5), IsCloseTo(5.25, 0, 1e-14));
  CHECK_THAT(p.position(6), IsCloseTo(5.25 + 7.5, 0, 1e-14));
  CHECK_THAT(p.position(9), IsCloseTo(5.25 + 7.5 + 3.75, 0, 1e-14));
  CHECK_THAT(p.position(13), IsCloseTo(5.25 + 7.5 + 3.75 - 1.125 - 2.25 - 0.75, 0, 1e-14));
  CHECK_THAT(p.position(20), IsCloseTo(12.375 + 0.05 * last + 0.1 * (20 - 13 - last), 0, 1e-14));
  // Pieces: 3 + cruise + 3 + rest + 1 + cruise + 3 + 2 + the last constant speed; the move at 13 starts
  // when the one before ends, so there is no cruise between them.
  CHECK(p.pieces().size() == 16);
  check_structure(p);
  check_against_quadrature(p, 16);
}

TEST_CASE("a boundary where neither the acceleration nor the jerk changes is no breakpoint", "[profile]") {
  // Two trapezoids back to back at the same acceleration: one piece of constant acceleration.
  const SpeedProfile ramp = SpeedProfile::build(0, {{0, 5, 1, 0}, {5, 10, 1, 0}});
  CHECK(ramp.breakpoints() == std::vector<double>{10});
  CHECK_THAT(ramp.position(10), IsCloseTo(10.0 / 2 * 10, 0, 1e-14));
  // The same at another acceleration: the acceleration steps at 5 s.
  const SpeedProfile steps = SpeedProfile::build(0, {{0, 5, 1, 0}, {5, 10, 2, 0}});
  CHECK(steps.breakpoints() == std::vector<double>{5, 7.5});
  // An S-curve up followed at once by an S-curve down: the jerk -J of the first one's last ramp carries
  // on into the second one's first ramp, so the two ramps are one piece.
  const SpeedProfile peak = SpeedProfile::build(0, {{0, 2, 1, 2}, {2.5, 0, 1, 2}});
  REQUIRE(peak.breakpoints().size() == 5);  // 0.5, 2, 3 (after the ramp through a = 0), 4.5, 5
  CHECK_THAT(peak.breakpoints()[2], IsCloseTo(3, 0, 1e-15));
  CHECK_THAT(peak.position(5), IsCloseTo(2.5 + 2.5, 0, 1e-14));
  check_structure(ramp);
  check_structure(steps);
  check_structure(peak);
  check_against_quadrature(peak, 6);
}

TEST_CASE("a move to the speed the profile already has adds no pieces", "[profile]") {
  const SpeedProfile plain = SpeedProfile::build(2, {{1, 4, 1, 0}});
  const SpeedProfile with_noop = SpeedProfile::build(2, {{0.5, 2, 1, 1}, {1, 4, 1, 0}, {4, 4, 3, 0}});
  REQUIRE(with_noop.pieces().size() == plain.pieces().size());
  for (std::size_t k = 0; k < plain.pieces().size(); ++k) {
    CHECK(with_noop.pieces()[k].t0 == plain.pieces()[k].t0);
    CHECK(with_noop.pieces()[k].v0 == plain.pieces()[k].v0);
  }
  CHECK(plain.end_of_moves() == 3);
  CHECK(with_noop.end_of_moves() == 4);  // the last move reaches its speed at once
  const SpeedProfile only_noop = SpeedProfile::build(1, {{2, 1, 1, 0}});
  CHECK(only_noop.pieces().size() == 1);
}

TEST_CASE("a move starts as the previous one reaches its speed, not before", "[profile]") {
  // Back to back is fine (the trapezoid 0 -> 2 at 1 m/s^2 ends at 2 s) ...
  CHECK_NOTHROW(SpeedProfile::build(0, {{0, 2, 1, 0}, {2, 0, 1, 0}}));
  // ... a start before that names the move.
  try {
    SpeedProfile::build(0, {{0, 1, 1, 0}, {1, 3, 1, 0}, {2.5, 0, 1, 0}});
    FAIL("expected a ProfileError");
  } catch (const ProfileError& e) {
    CHECK(e.move_index() == 2);
    const std::string what = e.what();
    CHECK_THAT(what, Catch::Contains("moves[2]"));
    CHECK_THAT(what, Catch::Contains("moves[1] reaches its speed at 3 s"));
    CHECK_THAT(what, Catch::Contains("start it at 3 s or later"));
  }
  // An S-curve's own ramps count: 0 -> 2, A = 1, J = 2 lasts 2.5 s.
  try {
    SpeedProfile::build(0, {{0, 2, 1, 2}, {2.4, 0, 1, 0}});
    FAIL("expected a ProfileError");
  } catch (const ProfileError& e) {
    CHECK(e.move_index() == 1);
  }
  // Moves out of time order, even one that changes nothing.
  try {
    SpeedProfile::build(0, {{5, 0, 1, 0}, {4, 1, 1, 0}});
    FAIL("expected a ProfileError");
  } catch (const ProfileError& e) {
    CHECK(e.move_index() == 1);
  }
}

TEST_CASE("bad move values are a ProfileError naming the move", "[profile]") {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  struct Bad {
    SpeedMove move;
    std::string says;
  };
  const std::vector<Bad> bad = {
      {{-0.5, 1, 1, 0}, "before t = 0"},
      {{1, 1, 0, 0}, "accel is 0"},
      {{1, 1, -1, 0}, "accel is -1"},
      {{1, 1, 1, -2}, "jerk is -2"},
      {{nan, 1, 1, 0}, "not finite"},
      {{1, kInfinity, 1, 0}, "not finite"},
      {{1, 1, kInfinity, 0}, "not finite"},
      {{1, 1, 1, nan}, "not finite"},
      {{1, 1e308, 1e-300, 0}, "ends at a time that is not finite"},
  };
  // (after a move that reaches its speed at 0.5 s; the bad move starts at 1 s)
  for (const auto& b : bad) {
    INFO(b.says);
    try {
      SpeedProfile::build(0, {{0, 0.5, 1, 0}, b.move});
      FAIL("expected a ProfileError");
    } catch (const ProfileError& e) {
      CHECK(e.move_index() == 1);
      const std::string what = e.what();
      CHECK_THAT(what, Catch::StartsWith("moves[1]: "));
      CHECK_THAT(what, Catch::Contains(b.says));
    }
  }
  // A ProfileError is a swaybound::Error.
  CHECK_THROWS_AS(SpeedProfile::build(0, {{0, 1, 0, 0}}), Error);
  CHECK_THROWS_AS(SpeedProfile::build(nan, {}), ArgumentError);
}
