#pragma once
// The static equilibrium of a planar chain under steady inputs: the angles at which, with every
// rate zero, no link accelerates under the base acceleration and wind speeds of a phase. Found by
// Newton's method on the engine's own right-hand side (`evaluate`): the residual is the vector of
// angular accelerations, its Jacobian is taken by central differences, and each step is halved
// until the residual falls (a damped Newton method, e.g. Dennis & Schnabel, Numerical Methods for
// Unconstrained Optimization and Nonlinear Equations, ch. 6). When the direct iteration fails the
// load is applied in steps (continuation), each solve starting from the last.
//
// Without wind, every link of a chain on a base accelerating at (ax, ay) hangs along the effective
// gravity of the base's frame, (-ax, -g - ay): theta = atan2(-ax, g + ay) for all links (each
// sub-chain's centre of mass then lies on the line of its pivot along that field), which is the
// first guess. The equilibrium found must be a hanging one: every eigenvalue of d(alpha)/d(theta)
// must have a negative real part (a restoring stiffness); an inverted posture is refused.
#include <string>
#include <vector>

#include "swaybound/dynamics/chain.hpp"

namespace swaybound {

struct EquilibriumOptions {
  int max_iterations = 60;  ///< Newton iterations per solve
  /// Converged when max |alpha_i| <= tolerance x g / (total length of the chain) [-].
  double tolerance = 1e-12;
  int continuation_steps = 8;  ///< load steps of the fallback
};

struct EquilibriumResult {
  bool converged = false;
  std::vector<double> theta;  ///< link angles [rad], each in (-pi, pi]
  int iterations = 0;         ///< Newton iterations in all
  double residual = 0;        ///< max |alpha_i| / (g / total length) at theta [-]
  std::string reason;         ///< why it failed, when it did
};

/// The equilibrium under the inputs of `phase` at its start time t0 (rates zero; base velocity
/// that of `phase`, which the wind drag sees). Planar chains without elastic ropes; throws
/// ArgumentError for others. Never throws for a failure to converge: see `converged` and `reason`.
EquilibriumResult static_equilibrium(const Model& model, Workspace& ws, const Phase& phase,
                                     const EquilibriumOptions& options = {});

}  // namespace swaybound
