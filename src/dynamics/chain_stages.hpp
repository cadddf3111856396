#pragma once
// Stages shared by the two right-hand sides of chain.cpp (links of fixed length, with fixed-size
// matrices) and chain_general.cpp (ropes of variable length, extended coordinates). Private to
// src/dynamics.
#include <cmath>

#include "swaybound/dynamics/chain.hpp"

namespace swaybound {

/// Lengths, centres of mass and inertias of ropes of variable length at (x, t), the drum's
/// motion under `phase`, and the unstretched length of every elastic rope (ws.len* etc.).
void rope_kinematics(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t);

/// Stage 3c: the law of every elastic rope (dynamics/rope.hpp) at the state of the last
/// kinematics: its tension into ws.rope_force and -tension into the generalised force q (by speed index) of its
/// length; strain energy, the damper's dissipation and the drum's power into ws.
void rope_forces(const Model& model, Workspace& ws, double* q);

/// The right-hand side of a model with ropes of variable length (see chain_general.cpp).
void evaluate_general(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt);

/// The free block's accelerations (angles or tangent rates, elastic lengths) into ws.accel_x from
/// ws.rhs_x and the factor ws.llt_f, with the prescribed lengths' known accelerations moved to
/// the right: M_ff a_f = rhs_f - M_fp a_p (in generalised speeds, Model::speed_index).
void free_block_accelerations(const Model& model, Workspace& ws);

/// The axial force each drum holds on a prescribed rope (minus the constraint force along its
/// length) into ws.drum_force; the drums' power into ws.input_power, and returned [W].
double drum_forces(const Model& model, Workspace& ws);

/// Pivot reactions of the last general evaluation from its accelerations ws.accel_x.
void general_reactions(const Model& model, Workspace& ws);

/// Stage 5, backward half: pivot reactions from the centre-of-mass accelerations ws.acc_* and the
/// external forces ws.force_* (Newton's second law for the sub-chain below each pivot).
void sub_chain_reactions(const Model& model, Workspace& ws);

// Spatial chains (chain_spatial.cpp): the stages of chain.cpp for model.spatial.
void spatial_kinematics(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t);
void evaluate_spatial(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt);
/// Pivot reactions (3-D) from the tangent accelerations ws.accel_s.
void spatial_reactions(const Model& model, Workspace& ws);
double spatial_energy(const Model& model, const Workspace& ws);
void spatial_point_state(const Model& model, const Workspace& ws, const PointRef& p, double* position, double* velocity);
/// Quadratic drag of wind load w, F = k |u - v| (u - v) with u the wind's (horizontal) velocity
/// along its direction and v its point's velocity; F and v into force[3], velocity[3].
void spatial_wind_force(const Model& model, const Workspace& ws, const Phase& phase, std::size_t w, double* force,
                        double* velocity);
void spatial_link_tension(const Model& model, const Workspace& ws, int i, double& top, double& bottom);

/// Stage 3b into generalised forces: the pivot torques at the reactions (nullptr: without pin
/// friction) added to q: tau_p on link p, its reaction -tau_p on link p-1.
inline void add_pivot_torques(const Model& model, Workspace& ws, const double* reaction, double* q) {
  if (!model.any_pivot_torque) return;
  pivot_torques(model, ws, reaction);
  for (int i = 0; i < model.n; ++i) {
    q[i] += ws.tau[i];
    if (i > 0) q[i - 1] -= ws.tau[i];
  }
}

inline constexpr int kMaxFrictionIterations = 50;

/// Load-dependent pin friction: the fixed point R = reactions(accelerations(tau_pin(R))), started
/// from the reactions without pin friction (`solve(nullptr)` has run). `solve(reaction)` solves the
/// accelerations with pin friction at those reactions and recomputes ws.reaction. The map contracts
/// by about mu * r_pin / (link length) per iteration (small for real pins), so a few iterations
/// reach the tolerance; an evaluation that does not converge is counted in ws.friction_unconverged.
template <class Solve>
void pin_friction_fixed_point(const Model& model, Workspace& ws, Solve&& solve) {
  ws.friction_iterations = 0;
  if (!model.any_pin_friction) return;
  bool converged = false;
  for (int it = 0; it < kMaxFrictionIterations && !converged; ++it) {
    ws.reaction_prev = ws.reaction;
    solve(ws.reaction_prev.data());
    double change = 0, scale = 0;
    for (int i = 0; i < model.n; ++i) {
      change = std::fmax(change, std::fabs(ws.reaction[i] - ws.reaction_prev[i]));
      scale = std::fmax(scale, ws.reaction[i]);
    }
    ws.friction_iterations = it + 1;
    converged = change <= 1e-13 * scale;
  }
  if (!converged) ++ws.friction_unconverged;
}

}  // namespace swaybound
