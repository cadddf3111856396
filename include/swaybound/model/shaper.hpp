#pragma once
// Input shaping and the emergency stop of a travel drive (specs/README.md, "Travel drive").
//
// An input shaper is a train of impulses A_i at times t_i (t_1 = 0, sum A_i = 1). Convolving a
// command with it, v_s(t) = sum_i A_i v(t - t_i), leaves a lightly damped mode of natural frequency
// w = 2 pi f and damping ratio zeta with the residual vibration of the unshaped command times the
// percentage vibration (Singer & Seering, "Preshaping command inputs to reduce system vibration",
// ASME J. Dyn. Sys. Meas. Control 112, 1990)
//   V(w, zeta) = exp(-zeta w t_n) sqrt( (sum A_i exp(zeta w t_i) cos(w_d t_i))^2
//                                     + (sum A_i exp(zeta w t_i) sin(w_d t_i))^2 ),  w_d = w sqrt(1 - zeta^2).
// With K = exp(-zeta pi / sqrt(1 - zeta^2)) and Td = 2 pi / w_d the damped period of the design mode:
//   ZV  (zero vibration; Smith's posicast, 1957; Singer & Seering 1990):
//        A = [1, K] / (1 + K)                     at t = [0, Td/2]
//   ZVD (zero vibration and derivative, Singer & Seering 1990):
//        A = [1, 2K, K^2] / (1 + K)^2             at t = [0, Td/2, Td]
//   EI  (extra-insensitive, Singhose, Seering & Singer 1994/1997), tolerable vibration Vtol:
//        undamped: A = [(1+Vtol)/4, (1-Vtol)/2, (1+Vtol)/4] at t = [0, T/2, T].
//        Its conditions (as we state them; the published papers phrase them with vector diagrams):
//        V = Vtol at the design frequency with dV/dw = 0 there (the middle hump of the curve), and
//        V = 0 at one frequency below and one above. For zeta > 0 this design solves those seven
//        equations (a1, a2, a3, t2, t3 and the two zero frequencies, with sum A = 1) exactly, by
//        Newton's method continued in zeta from the undamped closed form; it is not a curve fit.
#include <cstddef>
#include <optional>
#include <vector>

#include "swaybound/model/profile.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// One impulse of a shaper: at `time` [s] with weight `amplitude` [-].
struct Impulse {
  double time = 0, amplitude = 0;
};

/// A designed shaper: its design values and its impulses (times increasing from 0, amplitudes
/// summing to 1).
struct InputShaper {
  ShaperKind kind = ShaperKind::zv;
  double frequency_hz = 0;         ///< design natural frequency [Hz]
  double damping_ratio = 0;        ///< design damping ratio [-]
  double vibration_tolerance = 0;  ///< EI only: Vtol [-]
  std::vector<Impulse> impulses;
  /// Time of the last impulse [s]: how much later a shaped move ends.
  double duration() const { return impulses.empty() ? 0.0 : impulses.back().time; }
};

/// The shaper `kind` for a mode of natural frequency `frequency_hz` > 0 and damping ratio in
/// [0, 1) (see the top of this file); `vibration_tolerance` in (0, 1) is read by EI only. Throws
/// ArgumentError for values out of range and when the damped EI design does not converge.
InputShaper design_shaper(ShaperKind kind, double frequency_hz, double damping_ratio,
                          double vibration_tolerance = 0.05);

/// The percentage vibration V (a fraction: 1 is the unshaped command's residual) that `shaper`
/// leaves on a mode of natural frequency `frequency_hz` and damping ratio `damping_ratio` (< 1).
double residual_vibration(const InputShaper& shaper, double frequency_hz, double damping_ratio);

/// One point of a sensitivity curve: the actual frequency over the design frequency, and V there.
struct SensitivityPoint {
  double frequency_ratio = 0, vibration = 0;
};
/// V against f_actual / f_design at `count` >= 2 evenly spaced ratios from `ratio_low` to
/// `ratio_high` (> 0), for a mode of damping ratio `damping_ratio`.
std::vector<SensitivityPoint> sensitivity_curve(const InputShaper& shaper, double damping_ratio, double ratio_low,
                                                double ratio_high, std::size_t count);

/// The speed command `command` convolved with the shaper: v_s(t) = sum A_i v(t - t_i), with
/// v(t) = the initial speed for t < 0, and its position 0 at t = 0. Every piece of the result is a
/// piece of constant jerk between two of the shifted breakpoints b + t_i (their union; two shifted
/// breakpoints closer than 1 ns are one), so its acceleration is exact at every corner. The moves
/// end `shaper.duration()` later (end_of_moves), unless the command has no moves.
SpeedProfile shape_profile(const SpeedProfile& command, const InputShaper& shaper);

/// An emergency or service stop: at time `at` >= 0 the drive leaves `command` and brings the speed
/// from its value v(at) to 0 at deceleration `decel` > 0.
///  - jerk = 0: the acceleration steps at `at` from whatever the command had to -sign(v) decel and
///    holds it for |v| / decel (a step, as a drive without a jerk limit gives); then the speed is 0.
///  - jerk > 0: the acceleration ramps at +-jerk from the command's a(at) to a plateau of
///    -sign(u) x at most decel and back to 0, reaching speed 0 and acceleration 0 together, where
///    u = v + a |a| / (2 jerk) is the speed left if the acceleration were ramped straight to 0. A
///    plateau above decel is never used; when the command already decelerates harder than `decel`
///    the first ramp brings it back to decel. When u and v have opposite signs (the command's
///    deceleration at `at` is so large that even ramping it out overshoots), the speed passes
///    through 0 and returns to it: the drive reverses briefly, as a jerk-limited drive must.
/// The stop bypasses any shaper (give it the shaped command). The result ends its moves when the
/// speed reaches 0. Throws ArgumentError on a negative or non-finite at, decel <= 0, jerk < 0, or a
/// stop that would end at a time that is not finite.
SpeedProfile stop_profile(const SpeedProfile& command, double at, double decel, double jerk = 0);

/// One drive axis's profile (travel along x, cross travel along z, slewing in rad/s): the speed
/// moves from `initial_speed`, shaped when `shaper` is given, stopped when `stop` is. Throws
/// ProfileError for moves that cannot be built and ArgumentError for a shaper or stop that cannot
/// (a shaper designed from a mode whose frequency is not resolved yet, frequency 0, is one).
SpeedProfile drive_axis_profile(double initial_speed, const std::vector<DrumMoveSpec>& moves,
                                const std::optional<ScenarioSpec::Travel::Shaper>& shaper,
                                const std::optional<ScenarioSpec::Travel::Stop>& stop);

/// The travel (or cross-travel) drive's profile of a spec: drive_axis_profile of its keys.
SpeedProfile travel_drive_profile(const ScenarioSpec::Travel& travel);

/// The slewing drive's profile [rad, rad/s, rad/s^2]: drive_axis_profile of its keys.
SpeedProfile slew_drive_profile(const ScenarioSpec::Slew& slew);

}  // namespace swaybound
