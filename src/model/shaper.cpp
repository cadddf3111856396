#include "swaybound/model/shaper.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <complex>
#include <limits>
#include <numbers>

#include <Eigen/Dense>
#include <fmt/format.h>

namespace swaybound {

namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();
constexpr double kPi = std::numbers::pi;
/// Shifted breakpoints closer than this are one corner of the shaped profile [s].
constexpr double kSameCorner = 1e-9;

void check_design(double frequency_hz, double damping_ratio) {
  SWAYBOUND_REQUIRE(std::isfinite(frequency_hz) && frequency_hz > 0, "design frequency {} Hz", frequency_hz);
  SWAYBOUND_REQUIRE(damping_ratio >= 0 && damping_ratio < 1, "design damping ratio {}", damping_ratio);
}

/// The residual vector of impulses `times`, `amplitudes` on a mode of natural frequency w [rad/s]:
/// sum A_i exp(zeta w (t_i - t_n)) exp(i w_d t_i), whose modulus is V; and its derivative in w.
struct Residual {
  std::complex<double> value, slope;
};
template <class Times, class Amplitudes>
Residual residual_vector(const Times& times, const Amplitudes& amplitudes, std::size_t count, double w, double zeta) {
  const double root = std::sqrt(1 - zeta * zeta), last = times[count - 1];
  Residual r;
  for (std::size_t i = 0; i < count; ++i) {
    const std::complex<double> rate(zeta * (times[i] - last), root * times[i]);
    const std::complex<double> term = amplitudes[i] * std::exp(rate * w);
    r.value += term;
    r.slope += rate * term;
  }
  return r;
}

/// EI design for a mode of natural frequency 1 rad/s (the caller scales the times). Unknowns
/// x = (a1, a2, a3, t2, t3, w_low, w_high); equations: sum A = 1, |R(1)| = Vtol, d|R|/dw (1) = 0,
/// R(w_low) = 0, R(w_high) = 0 (real and imaginary parts), R the residual vector above.
using EiVector = Eigen::Matrix<double, 7, 1>;
EiVector ei_equations(const EiVector& x, double zeta, double tolerance) {
  const std::array<double, 3> times{0, x[3], x[4]}, amplitudes{x[0], x[1], x[2]};
  const Residual at_design = residual_vector(times, amplitudes, 3, 1.0, zeta);
  const Residual low = residual_vector(times, amplitudes, 3, x[5], zeta);
  const Residual high = residual_vector(times, amplitudes, 3, x[6], zeta);
  const double size = std::abs(at_design.value);
  EiVector f;
  f << x[0] + x[1] + x[2] - 1, size - tolerance,
      (std::conj(at_design.value) * at_design.slope).real() / size, low.value.real(), low.value.imag(),
      high.value.real(), high.value.imag();
  return f;
}

/// Newton's method on ei_equations from `x`; true when it converged (x holds the solution).
bool solve_ei(EiVector& x, double zeta, double tolerance) {
  for (int iteration = 0; iteration < 40; ++iteration) {
    const EiVector f = ei_equations(x, zeta, tolerance);
    if (!f.allFinite()) return false;
    if (f.cwiseAbs().maxCoeff() < 1e-14) return true;
    Eigen::Matrix<double, 7, 7> jacobian;
    for (int k = 0; k < 7; ++k) {
      const double h = 1e-7 * std::max(1.0, std::fabs(x[k]));
      EiVector up = x, down = x;
      up[k] += h;
      down[k] -= h;
      jacobian.col(k) = (ei_equations(up, zeta, tolerance) - ei_equations(down, zeta, tolerance)) / (2 * h);
    }
    const EiVector step = jacobian.fullPivLu().solve(-f);
    if (!step.allFinite()) return false;
    x += step;
    if (step.cwiseAbs().maxCoeff() < 1e-15) return ei_equations(x, zeta, tolerance).cwiseAbs().maxCoeff() < 1e-10;
  }
  return false;
}

std::vector<Impulse> ei_impulses(double zeta, double tolerance) {
  // Undamped closed form at w = 1 rad/s (T = 2 pi): the zeros of
  // R = a + b e^{i pi w} + a e^{2 i pi w} = e^{i pi w} (b + 2 a cos(pi w)) are at cos(pi w) = -b / (2a).
  const double a = (1 + tolerance) / 4, b = (1 - tolerance) / 2;
  const double low = std::acos(-b / (2 * a)) / kPi;
  EiVector x;
  x << a, b, a, kPi, 2 * kPi, low, 2 - low;
  if (zeta > 0) {
    // Continue in zeta from the undamped design, steps of at most 0.01.
    const int steps = static_cast<int>(std::ceil(zeta / 0.01));
    for (int k = 1; k <= steps; ++k) {
      const double z = zeta * k / steps;
      if (!solve_ei(x, z, tolerance) || !(x[3] > 0 && x[4] > x[3]) || x[0] <= 0 || x[1] <= 0 || x[2] <= 0)
        throw ArgumentError(fmt::format(
            "no extra-insensitive shaper found for damping ratio {:g} with vibration tolerance {:g} "
            "(Newton's method on its conditions stopped at damping ratio {:g})",
            zeta, tolerance, z));
    }
  }
  return {{0, x[0]}, {x[3], x[1]}, {x[4], x[2]}};
}

}  // namespace

InputShaper design_shaper(ShaperKind kind, double frequency_hz, double damping_ratio, double vibration_tolerance) {
  check_design(frequency_hz, damping_ratio);
  InputShaper s;
  s.kind = kind;
  s.frequency_hz = frequency_hz;
  s.damping_ratio = damping_ratio;
  const double root = std::sqrt(1 - damping_ratio * damping_ratio);
  const double w = 2 * kPi * frequency_hz, damped_period = 2 * kPi / (w * root);
  const double k = std::exp(-damping_ratio * kPi / root);
  switch (kind) {
    case ShaperKind::zv:
      s.impulses = {{0, 1 / (1 + k)}, {damped_period / 2, k / (1 + k)}};
      break;
    case ShaperKind::zvd: {
      const double sum = (1 + k) * (1 + k);
      s.impulses = {{0, 1 / sum}, {damped_period / 2, 2 * k / sum}, {damped_period, k * k / sum}};
      break;
    }
    case ShaperKind::ei: {
      SWAYBOUND_REQUIRE(vibration_tolerance > 0 && vibration_tolerance < 1, "vibration tolerance {}",
                        vibration_tolerance);
      s.vibration_tolerance = vibration_tolerance;
      s.impulses = ei_impulses(damping_ratio, vibration_tolerance);
      for (Impulse& i : s.impulses) i.time /= w;  // designed for 1 rad/s
      break;
    }
  }
  SWAYBOUND_REQUIRE(std::isfinite(s.duration()), "the shaper for {} Hz lasts {} s", frequency_hz, s.duration());
  return s;
}

double residual_vibration(const InputShaper& shaper, double frequency_hz, double damping_ratio) {
  SWAYBOUND_REQUIRE(!shaper.impulses.empty(), "a shaper without impulses");
  SWAYBOUND_REQUIRE(std::isfinite(frequency_hz) && frequency_hz >= 0, "frequency {} Hz", frequency_hz);
  SWAYBOUND_REQUIRE(damping_ratio >= 0 && damping_ratio < 1, "damping ratio {}", damping_ratio);
  std::vector<double> times, amplitudes;
  for (const Impulse& i : shaper.impulses) {
    times.push_back(i.time);
    amplitudes.push_back(i.amplitude);
  }
  return std::abs(residual_vector(times, amplitudes, times.size(), 2 * kPi * frequency_hz, damping_ratio).value);
}

std::vector<SensitivityPoint> sensitivity_curve(const InputShaper& shaper, double damping_ratio, double ratio_low,
                                                double ratio_high, std::size_t count) {
  SWAYBOUND_REQUIRE(count >= 2 && ratio_low > 0 && ratio_high > ratio_low, "{} ratios from {} to {}", count,
                    ratio_low, ratio_high);
  std::vector<SensitivityPoint> curve;
  for (std::size_t k = 0; k < count; ++k) {
    const double ratio = ratio_low + (ratio_high - ratio_low) * static_cast<double>(k) / static_cast<double>(count - 1);
    curve.push_back({ratio, residual_vibration(shaper, ratio * shaper.frequency_hz, damping_ratio)});
  }
  return curve;
}

namespace {

/// Position, speed, acceleration of piece q at d = t - q.t0 (d may be slightly outside the piece).
struct State {
  double p = 0, v = 0, a = 0, j = 0;
};
State piece_state(const ProfilePiece& q, double d) {
  return {q.p0 + d * (q.v0 + d * (q.a0 / 2 + d * q.j / 6)), q.v0 + d * (q.a0 + d * q.j / 2), q.a0 + d * q.j, q.j};
}

/// The polynomial of `profile` that holds `inside` (before 0: constant initial speed), evaluated at `at`.
State state_of_piece_holding(const SpeedProfile& profile, double inside, double at) {
  const auto& pieces = profile.pieces();
  if (inside < 0) return {pieces.front().v0 * at, pieces.front().v0, 0, 0};
  const auto after = std::upper_bound(pieces.begin(), pieces.end(), inside,
                                      [](double time, const ProfilePiece& q) { return time < q.t0; });
  const ProfilePiece& q = *std::prev(after);
  return piece_state(q, at - q.t0);
}

}  // namespace

SpeedProfile shape_profile(const SpeedProfile& command, const InputShaper& shaper) {
  SWAYBOUND_REQUIRE(!shaper.impulses.empty() && shaper.impulses.front().time == 0, "a shaper must start at 0");
  const ProfilePiece& first = command.pieces().front();
  std::vector<double> corners{0.0};
  for (const Impulse& i : shaper.impulses) {
    if (first.a0 != 0 || first.j != 0) corners.push_back(i.time);  // a move at t = 0
    for (double b : command.breakpoints()) corners.push_back(b + i.time);
  }
  std::sort(corners.begin(), corners.end());
  std::vector<double> cuts;
  for (double t : corners)
    if (cuts.empty() || t - cuts.back() >= kSameCorner) cuts.push_back(t);

  // Position 0 at t = 0: sum A_i p(-t_i) = -v0 sum A_i t_i is taken off.
  double offset = 0;
  for (const Impulse& i : shaper.impulses) offset += i.amplitude * first.v0 * i.time;
  std::vector<ProfilePiece> pieces;
  for (std::size_t k = 0; k < cuts.size(); ++k) {
    const double t0 = cuts[k], t1 = k + 1 < cuts.size() ? cuts[k + 1] : kInfinity;
    const double middle = std::isfinite(t1) ? (t0 + t1) / 2 : t0 + 1;
    ProfilePiece q{t0, t1, offset, 0, 0, 0};
    for (const Impulse& i : shaper.impulses) {
      const State s = state_of_piece_holding(command, middle - i.time, t0 - i.time);
      q.p0 += i.amplitude * s.p;
      q.v0 += i.amplitude * s.v;
      q.a0 += i.amplitude * s.a;
      q.j += i.amplitude * s.j;
    }
    pieces.push_back(q);
  }
  pieces.front().p0 = 0;
  const double end = command.pieces().size() > 1 ? command.end_of_moves() + shaper.duration() : 0.0;
  return SpeedProfile::from_pieces(std::move(pieces), end);
}

SpeedProfile stop_profile(const SpeedProfile& command, double at, double decel, double jerk) {
  SWAYBOUND_REQUIRE(std::isfinite(at) && at >= 0, "stop at {} s", at);
  SWAYBOUND_REQUIRE(std::isfinite(decel) && decel > 0, "stop deceleration {} m/s^2", decel);
  SWAYBOUND_REQUIRE(std::isfinite(jerk) && jerk >= 0, "stop jerk {} m/s^3", jerk);
  std::vector<ProfilePiece> pieces;
  for (const ProfilePiece& q : command.pieces())
    if (q.t0 < at) pieces.push_back(q);
  // The command's state at `at` from the left (the command's acceleration just before the stop).
  State now{0, command.pieces().front().v0, 0, 0};
  if (!pieces.empty()) {
    pieces.back().t1 = at;
    now = piece_state(pieces.back(), at - pieces.back().t0);
  }
  double time = at;
  const auto append = [&](double duration, double a0, double j) {
    if (!(duration > 0)) return;
    const ProfilePiece q{time, time + duration, now.p, now.v, a0, j};
    pieces.push_back(q);
    now = piece_state(q, duration);
    time += duration;
  };
  if (jerk == 0) {
    if (now.v != 0) append(std::fabs(now.v) / decel, now.v > 0 ? -decel : decel, 0);
  } else {
    // In the frame of sign s the plan decelerates: ramp from a to -P, hold -P, ramp from -P to 0.
    const double left = now.v + now.a * std::fabs(now.a) / (2 * jerk);
    const double sign = left >= 0 ? 1.0 : -1.0, v = sign * now.v, a = sign * now.a;
    const double plateau = std::min(decel, std::sqrt(jerk * (v + a * a / (2 * jerk))));
    const double ramp_in = std::fabs(-plateau - a) / jerk, ramp_out = plateau / jerk;
    const double change_in = (a - plateau) / 2 * ramp_in, change_out = -plateau * plateau / (2 * jerk);
    const double hold = plateau > 0 ? std::max(0.0, (v + change_in + change_out) / plateau) : 0.0;
    append(ramp_in, now.a, sign * (-plateau < a ? -jerk : jerk));
    append(hold, -sign * plateau, 0);
    append(ramp_out, -sign * plateau, sign * jerk);
  }
  SWAYBOUND_REQUIRE(std::isfinite(time), "a stop at {} s at {} m/s^2 ends at a time that is not finite", at, decel);
  pieces.push_back(ProfilePiece{time, kInfinity, now.p, 0, 0, 0});
  return SpeedProfile::from_pieces(std::move(pieces), time);
}

SpeedProfile drive_axis_profile(double initial_speed, const std::vector<DrumMoveSpec>& moves,
                                const std::optional<ScenarioSpec::Travel::Shaper>& shaper,
                                const std::optional<ScenarioSpec::Travel::Stop>& stop) {
  std::vector<SpeedMove> speed_moves;
  for (const DrumMoveSpec& m : moves) speed_moves.push_back(SpeedMove{m.at, m.to, m.accel, m.jerk});
  SpeedProfile profile = SpeedProfile::build(initial_speed, speed_moves);
  if (const auto& s = shaper) {
    SWAYBOUND_REQUIRE(s->frequency > 0, "the shaper's design frequency {} Hz (mode {} not resolved)", s->frequency,
                      s->mode);
    profile = shape_profile(profile, design_shaper(s->kind, s->frequency, s->damping_ratio, s->vibration_tolerance));
  }
  if (const auto& st = stop) profile = stop_profile(profile, st->at, st->decel, st->jerk);
  return profile;
}

SpeedProfile travel_drive_profile(const ScenarioSpec::Travel& travel) {
  return drive_axis_profile(travel.initial_speed, travel.moves, travel.shaper, travel.stop);
}

SpeedProfile slew_drive_profile(const ScenarioSpec::Slew& slew) {
  return drive_axis_profile(slew.initial_rate, slew.moves, slew.shaper, slew.stop);
}

}  // namespace swaybound
