#pragma once
// Force-element laws, each a pure function of the relative motion it acts on. Sign convention:
// the returned torque acts on the lower link, opposite in sign to the relative rate w (the
// upper link or base receives the reaction).
#include <cmath>

#include "swaybound/model/model.hpp"

namespace swaybound {

/// Power-law rotary damper: tau = -C w_ref (|w| / w_ref)^alpha sign(w), w_ref = 1 rad/s, capped at
/// max_torque. For alpha < 1 the law's slope is infinite at w = 0, which makes an explicit stepper
/// crawl through every reversal; below |w| = w0 (linear_below) it is replaced by the secant line
/// tau = -C w0^(alpha - 1) w, which meets the power law at |w| = w0 (continuous torque, finite slope).
/// alpha >= 1 uses the power law down to 0. Inputs: w [rad/s]; output [N m].
inline double damper_torque(const DamperLaw& d, double w) {
  if (d.c <= 0) return 0.0;
  const double aw = std::fabs(w);
  double magnitude;
  if (d.alpha == 1.0)
    magnitude = d.c * aw;
  else if (d.alpha < 1.0 && aw < d.linear_below)
    magnitude = d.c * std::pow(d.linear_below, d.alpha - 1.0) * aw;
  else
    magnitude = d.c * std::pow(aw, d.alpha);
  magnitude = std::fmin(magnitude, d.max_torque);
  return w >= 0 ? -magnitude : magnitude;
}

/// The torque of the dampers at a pivot that act in the travel plane, at the relative rate w in it:
/// they act side by side, so their torques add [N m]. A planar chain's dampers all do (they have no
/// `axis` or `across`); of a spatial chain's, one along the travel does not act in the plane, and
/// one with an oblique shaft is left out, as the modes, which linearise each plane, leave it out.
inline double damper_torque(const PivotModel& p, double w) {
  double tau = 0;
  for (const DamperLaw& d : p.dampers)
    if (!d.directional || d.axis_z == 1.0) tau += damper_torque(d, w);
  return tau;
}

/// The torque of a pivot's dampers without an `axis`, which a spatial chain applies to the magnitude
/// of the relative swing rate (the directional ones act about their shafts: chain_spatial.cpp) [N m].
inline double isotropic_damper_torque(const PivotModel& p, double w) {
  double tau = 0;
  for (const DamperLaw& d : p.dampers)
    if (!d.directional) tau += damper_torque(d, w);
  return tau;
}

/// Sliding factor of the regularised Coulomb friction at pivot p, tanh(w / w_t) [-] (0 for a
/// pivot without friction). w [rad/s] is the rate of the lower link relative to the upper one.
inline double friction_slide(const PivotModel& p, double w) {
  return p.has_friction() ? std::tanh(w / p.transition_rate) : 0.0;
}

/// The constant part of the friction torque at sliding factor `slide`: -T0 slide [N m].
inline double constant_friction_torque(const PivotModel& p, double slide) { return -p.coulomb_torque * slide; }

/// The load-dependent (pin) part of the friction torque at sliding factor `slide` and pivot
/// reaction |R| = `reaction` [N]: -mu r |R| slide [N m].
inline double pin_friction_torque(const PivotModel& p, double slide, double reaction) {
  return -p.pin_friction * reaction * slide;
}

/// Regularised Coulomb friction: tau = -(T0 + mu r |R|) tanh(w / w_t), with T0 the constant
/// torque, mu r the pin friction factor, |R| the pivot reaction [N] and w_t the transition rate.
/// tanh keeps the law smooth; its slope at w = 0 is (T0 + mu r |R|) / w_t, so a small w_t makes
/// the equations stiff for an explicit stepper (see DEVELOPERS.md, "Friction"). The sum of its
/// two parts above, evaluated as the dynamics does (the pin-friction fixed point re-evaluates only
/// the pin part, reusing the sliding factor).
inline double friction_torque(const PivotModel& p, double w, double reaction) {
  const double slide = friction_slide(p, w);
  return constant_friction_torque(p, slide) + pin_friction_torque(p, slide, reaction);
}

/// The state of an elastic rope's law at stretch delta = l - ell [m] and rate delta' [m/s].
struct RopeState {
  double tension = 0;          ///< force of the fall [N]
  double taut_margin = 0;      ///< min(k delta, k delta + c delta') [N]: > 0 exactly when the law pulls
  double strain_energy = 0;    ///< 1/2 k delta^2 while stretched [J]
  double dissipated_power = 0; ///< by the rope's damping [W] (>= 0)
  double drum_power = 0;       ///< by the drum that changes ell [W]
};

/// Elastic rope (Kelvin-Voigt element that can only pull): k = EA n / ell, tension
///   T = k delta + c delta'  while taut (delta > 0 and k delta + c delta' > 0), else 0,
/// so the damper never pulls a slack rope. `slack` selects the law's branch (the caller holds it
/// fixed between located transitions, so the right-hand side stays smooth within a step); the
/// taut branch is evaluated as written even beyond the transition. Energy: strain energy
/// U = 1/2 k delta^2 while delta > 0 (in the slack branch too: a rope that went slack while still
/// stretched, because it shortens faster than its damper lets it relax, keeps its stretch), so
/// with k' = -k ell'/ell (ell_rate_over_ell = ell'/ell [1/s]) and T the tension:
///   d(E_chain + U)/dt = -T l' + k delta delta' + 1/2 k' delta^2
///                     = -(T - k delta) delta' - T ell' + 1/2 k' delta^2,
/// the first term being the damper's dissipation ((T - k delta) delta' = c delta'^2 taut, and
/// -k delta delta' >= 0 slack and stretched), the rest the drum's power (rope wound on or paid
/// out carries its strain energy with it). Inputs: k [N/m], c [N s/m], ell [m], ell' [m/s].
inline RopeState rope_law_state(double k, double c, double delta, double delta_rate, bool slack, double ell,
                                double ell_rate) {
  RopeState s;
  const double elastic = k * delta, viscous = c * delta_rate;
  s.taut_margin = std::fmin(elastic, elastic + viscous);
  const bool stretched = slack ? delta > 0 : true;
  s.tension = slack ? 0.0 : elastic + viscous;
  if (!stretched) return s;
  const double k_rate = -k * ell_rate / ell;
  s.strain_energy = 0.5 * elastic * delta;
  s.dissipated_power = (s.tension - elastic) * delta_rate;
  s.drum_power = -s.tension * ell_rate + 0.5 * k_rate * delta * delta;
  return s;
}

/// Quadratic drag of a point moving at velocity (vx, vy) in a horizontal wind u:
/// F = k |u - v| (u - v), k = 1/2 rho Cd A [kg/m]. Output in fx, fy [N].
inline void drag_force(double k, double u, double vx, double vy, double& fx, double& fy) {
  const double rx = u - vx, ry = -vy;
  const double speed = std::sqrt(rx * rx + ry * ry);
  fx = k * speed * rx;
  fy = k * speed * ry;
}

}  // namespace swaybound
