// The right-hand side of a chain with ropes of variable length: elastic ropes (their length is a
// coordinate of the state) and inextensible ropes wound by a drum (their length is prescribed).
//
// Extended coordinates q = (theta_0..theta_{n-1}, elastic lengths, prescribed lengths); link k has
// length l_k (constant, a coordinate, or prescribed), unit vectors e_k = (sin theta_k, -cos theta_k)
// and n_k = (cos theta_k, sin theta_k), and its centre of mass at
//   r_k = p_base(t) + sum_{j<k} l_j e_j + c_k e_k,   c_k = phi_k l_k for a rope, constant otherwise,
// so dr_k/dq has the columns l_j n_j (theta_j, j < k), c_k n_k (theta_k), e_j (l_j, j < k) and
// phi_k e_k (l_k). With J_k = dr_k/dq, Lagrange's equations in Kane's form (Kane & Levinson,
// Dynamics: Theory and Applications, 1985, ch. 6) read
//   sum_k m_k J_k^T (J_k q'' + a0_k + g y) + rotational terms = Q,
//   a0_k = a_base + sum_{j<k} (2 l_j' theta_j' n_j - l_j theta_j'^2 e_j) + 2 c_k' theta_k' n_k - c_k theta_k'^2 e_k,
// the acceleration at q'' = 0: every changing length is a coordinate, so its l_j'' enters through
// J_k q'' (an elastic one's unknown, a prescribed one's the drum's, known). A rope's inertia about its centre of mass scales as I_k = I0_k (l_k / L_k)^2, so
// T_rot = 1/2 I_k(l_k) theta_k'^2 adds I_k' theta_k' to the theta_k equation and -1/2 dI_k/dl_k
// theta_k'^2 to the l_k equation. The free coordinates (angles, elastic lengths) are solved from
// their block of the mass matrix with the prescribed accelerations moved to the right; the rows of
// the prescribed lengths then give the axial force each drum holds.
//
// Lift-off (ws.grounded): the links below rope link 0 are held at rest on the ground and the rope's
// lower end with them, so every acceleration is prescribed: theta_k'' = 0 below the rope and, from
// d = p_1 - p_base with d'' = -a_base in polar form, l_0'' = l_0 theta_0'^2 - a_base . e_0 and
// theta_0'' = -(a_base . n_0 + 2 l_0' theta_0') / l_0. The force lambda of the ground at the rope's
// lower end follows from the rows of theta_0 and l_0: l_0 n_0 . lambda and e_0 . lambda equal the
// residuals of those rows.
#include <algorithm>
#include <cmath>

#include "chain_stages.hpp"
#include "swaybound/dynamics/forces.hpp"

namespace swaybound {

void rope_kinematics(const Model& model, Workspace& ws, const Phase& p, const double* x, double t) {
  const double dt = t - p.t0;
  ws.drum_a = p.drum_a0 + p.drum_jerk * dt;
  ws.drum_v = p.drum_v0 + (p.drum_a0 + 0.5 * p.drum_jerk * dt) * dt;
  ws.drum_s = p.drum_s0 + (p.drum_v0 + (0.5 * p.drum_a0 + p.drum_jerk * dt / 6.0) * dt) * dt;
  std::size_t r = 0;
  for (int i = 0; i < model.n; ++i) {
    const LengthKind kind = model.length_kind[i];
    if (kind == LengthKind::fixed) continue;  // len, com_now, inertia_now keep the model's values
    const bool wound = p.drum_link == i;
    const double parts = model.parts[i];
    const double ell = model.length[i] - (wound ? ws.drum_s / parts : 0.0);
    const double ell_rate = wound ? -ws.drum_v / parts : 0.0;
    if (kind == LengthKind::prescribed) {
      ws.len[i] = ell;
      ws.len_rate[i] = ell_rate;
      ws.len_accel[i] = wound ? -ws.drum_a / parts : 0.0;
    } else {
      const int c = model.length_coordinate[i];
      ws.len[i] = x[c];
      ws.len_rate[i] = x[model.dof + c];
      ws.len_accel[i] = 0.0;  // unknown: part of q''
      ws.unstretched[r] = ell;
      ws.unstretched_rate[r] = ell_rate;
      ++r;
    }
    const double phi = model.com[i] / model.length[i], scale = ws.len[i] / model.length[i];
    ws.com_now[i] = phi * ws.len[i];
    ws.com_rate[i] = phi * ws.len_rate[i];
    ws.inertia_now[i] = model.inertia[i] * scale * scale;
    ws.inertia_rate[i] = 2.0 * model.inertia[i] * scale * ws.len_rate[i] / model.length[i];
  }
}

void rope_forces(const Model& model, Workspace& ws, double* q) {
  ws.strain_energy = 0;
  for (std::size_t r = 0; r < model.elastic_links.size(); ++r) {
    const auto i = static_cast<std::size_t>(model.elastic_links[r]);
    const RopeLaw& law = model.rope_law[i];
    const double ell = ws.unstretched[r], ell_rate = ws.unstretched_rate[r];
    const double k = law.ea / ell;
    const double delta = ws.len[i] - ell, delta_rate = ws.len_rate[i] - ell_rate;
    const RopeState s = rope_law_state(k, law.damping, delta, delta_rate, ws.rope_slack[r] != 0, ell, ell_rate);
    ws.stiffness[r] = k;
    ws.stretch[r] = delta;
    ws.stretch_rate[r] = delta_rate;
    ws.taut_margin[r] = s.taut_margin;
    ws.rope_force[r] = s.tension;
    q[model.speed_index(model.length_coordinate[i])] -= s.tension;
    ws.strain_energy += s.strain_energy;
    ws.dissipated_power += s.dissipated_power;
    ws.input_power += s.drum_power;
  }
}

namespace {

/// Stage 2: centre-of-mass Jacobians (ws.jac_*), their known accelerations (ws.acc0_*) and the
/// extended mass matrix and velocity/gravity/base terms (ws.mass_x, ws.bias_x).
void extended_mass_matrix(const Model& model, Workspace& ws) {
  const int n = model.n;
  const Eigen::Index e = model.extended;
  ws.jac_x.setZero();
  ws.jac_y.setZero();
  double pivot_ax = ws.base_ax, pivot_ay = ws.base_ay;  // known acceleration of pivot k [m/s^2]
  for (int k = 0; k < n; ++k) {
    const double s = ws.sin_t[k], c = ws.cos_t[k], w = ws.omega[k];
    // Columns of the links above, shared by pivot k and the centre of mass of k.
    for (int j = 0; j < k; ++j) {
      ws.jac_x(k, j) = ws.len[j] * ws.cos_t[j];
      ws.jac_y(k, j) = ws.len[j] * ws.sin_t[j];
      if (const int cj = model.length_coordinate[j]; cj >= 0) {
        ws.jac_x(k, cj) = ws.sin_t[j];
        ws.jac_y(k, cj) = -ws.cos_t[j];
      }
    }
    ws.jac_x(k, k) = ws.com_now[k] * c;
    ws.jac_y(k, k) = ws.com_now[k] * s;
    const double phi = model.com[k] / model.length[k];
    if (const int ck = model.length_coordinate[k]; ck >= 0) {
      ws.jac_x(k, ck) = phi * s;
      ws.jac_y(k, ck) = -phi * c;
    }
    // a0 of the centre of mass, then of the next pivot: -l w^2 e + 2 l' w n. Every length that
    // changes is a coordinate (its l'' enters through J q'', the prescribed ones' with their known
    // values), so a0 holds no l''.
    const double ce = -ws.com_now[k] * w * w, cn = 2.0 * ws.com_rate[k] * w;
    ws.acc0_x[k] = pivot_ax + ce * s + cn * c;
    ws.acc0_y[k] = pivot_ay - ce * c + cn * s;
    const double le = -ws.len[k] * w * w, ln = 2.0 * ws.len_rate[k] * w;
    pivot_ax += le * s + ln * c;
    pivot_ay += -le * c + ln * s;
  }
  for (Eigen::Index a = 0; a < e; ++a) {
    double b = 0;
    for (int k = 0; k < n; ++k)
      b -= model.mass[k] * (ws.jac_x(k, a) * ws.acc0_x[k] + ws.jac_y(k, a) * (ws.acc0_y[k] + model.gravity));
    ws.bias_x(a) = b;
    for (Eigen::Index bcol = 0; bcol <= a; ++bcol) {
      double m = 0;
      for (int k = 0; k < n; ++k)
        m += model.mass[k] * (ws.jac_x(k, a) * ws.jac_x(k, bcol) + ws.jac_y(k, a) * ws.jac_y(k, bcol));
      ws.mass_x(a, bcol) = m;
      ws.mass_x(bcol, a) = m;
    }
  }
  for (int k = 0; k < n; ++k) {
    ws.mass_x(k, k) += ws.inertia_now[k];
    ws.bias_x(k) -= ws.inertia_rate[k] * ws.omega[k];
    // -1/2 dI/dl w^2 on the left of the l_k equation: I0 l / L^2 w^2 = I w^2 / l on the right.
    if (const int ck = model.length_coordinate[k]; ck >= 0)
      ws.bias_x(ck) += ws.inertia_now[k] * ws.omega[k] * ws.omega[k] / ws.len[k];
  }
}

/// Accelerations of a grounded chain (see the file comment) into ws.accel_x, and the ground's force.
void grounded_accelerations(const Model& model, Workspace& ws) {
  const Eigen::Index e = model.extended;
  ws.accel_x.setZero();
  for (Eigen::Index a = model.dof; a < e; ++a) ws.accel_x(a) = 0;
  const double s = ws.sin_t[0], c = ws.cos_t[0], w = ws.omega[0];
  const double l = ws.len[0], l_rate = ws.len_rate[0];
  const double a_e = ws.base_ax * s - ws.base_ay * c, a_n = ws.base_ax * c + ws.base_ay * s;
  const int c0 = model.length_coordinate[0];
  ws.accel_x(0) = -(a_n + 2.0 * l_rate * w) / l;
  ws.accel_x(c0) = l * w * w - a_e;
  for (int i = 0; i < model.n; ++i)
    if (const int ci = model.length_coordinate[i]; ci >= model.dof) ws.accel_x(ci) = ws.len_accel[i];
  const auto residual = [&](Eigen::Index row) { return ws.mass_x.row(row).dot(ws.accel_x) - ws.rhs_x(row); };
  const double along_n = residual(0) / l, along_e = residual(c0);
  ws.ground_x = along_e * s + along_n * c;
  ws.ground_y = -along_e * c + along_n * s;
}

}  // namespace

void free_block_accelerations(const Model& model, Workspace& ws) {
  const Eigen::Index f = model.free_speeds(), e = model.speeds();
  for (Eigen::Index a = f; a < e; ++a) ws.accel_x(a) = 0;
  for (int i = 0; i < model.n; ++i)
    if (const int c = model.length_coordinate[i]; c >= model.dof) ws.accel_x(model.speed_index(c)) = ws.len_accel[i];
  for (Eigen::Index a = 0; a < f; ++a) {
    double r = ws.rhs_x(a);
    for (Eigen::Index b = f; b < e; ++b) r -= ws.mass_x(a, b) * ws.accel_x(b);
    ws.rhs_f(a) = r;
  }
  ws.accel_f = ws.llt_f.solve(ws.rhs_f);
  ws.accel_x.head(f) = ws.accel_f;
}

double drum_forces(const Model& model, Workspace& ws) {
  double power = 0;
  for (int i = 0; i < model.n; ++i) {
    const int c = model.length_coordinate[i];
    if (c < model.dof) continue;
    const Eigen::Index row = model.speed_index(c);
    const double lambda = ws.mass_x.row(row).dot(ws.accel_x) - ws.rhs_x(row);
    ws.drum_force[i] = -lambda;
    power += lambda * ws.len_rate[i];
  }
  ws.input_power += power;
  return power;
}

void general_reactions(const Model& model, Workspace& ws) {
  for (int k = 0; k < model.n; ++k) {
    ws.acc_x[k] = ws.acc0_x[k] + ws.jac_x.row(k).dot(ws.accel_x);
    ws.acc_y[k] = ws.acc0_y[k] + ws.jac_y.row(k).dot(ws.accel_x);
  }
  sub_chain_reactions(model, ws);
  ws.reactions_current = true;
}

void evaluate_general(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt) {
  const int n = model.n, f = model.dof, e = model.extended;
  ++ws.evaluations;
  ws.dissipated_power = 0;
  ws.input_power = 0;
  kinematics(model, ws, phase, x, t);
  extended_mass_matrix(model, ws);
  for (int k = 0; k < n; ++k) ws.force_x[k] = ws.force_y[k] = 0.0;
  if (!model.wind.empty() || !model.dashpots.empty()) external_forces(model, ws, phase, ws.bias_x.data());
  rope_forces(model, ws, ws.bias_x.data());
  if (!ws.grounded) {
    ws.mass_f = ws.mass_x.topLeftCorner(f, f);
    ws.llt_f.compute(ws.mass_f);
  }

  double ground_applied_x = 0, ground_applied_y = 0;  // the ground's share of ws.force_*[1]
  const bool need_reactions = !ws.lazy_reactions || model.any_pin_friction || ws.base_vx != 0.0 ||
                              ws.base_vy != 0.0 || ws.grounded || f < e;
  const auto solve = [&](const double* reaction) {
    ws.rhs_x = ws.bias_x;
    add_pivot_torques(model, ws, reaction, ws.rhs_x.data());
    if (ws.grounded) {
      grounded_accelerations(model, ws);
      // The ground's force acts on the held links below the rope (their resultant, at link 1).
      ws.force_x[1] += ws.ground_x - ground_applied_x;
      ws.force_y[1] += ws.ground_y - ground_applied_y;
      ground_applied_x = ws.ground_x;
      ground_applied_y = ws.ground_y;
    } else {
      free_block_accelerations(model, ws);
    }
    if (need_reactions) general_reactions(model, ws);
  };
  solve(nullptr);
  ws.reactions_current = need_reactions;
  pin_friction_fixed_point(model, ws, solve);

  drum_forces(model, ws);
  if (model.any_pivot_torque)
    for (int i = 0; i < n; ++i) ws.dissipated_power -= ws.tau[i] * (ws.omega[i] - (i > 0 ? ws.omega[i - 1] : 0.0));
  if (ws.base_vx != 0.0 || ws.base_vy != 0.0)
    ws.input_power += ws.reaction_x[0] * ws.base_vx + ws.reaction_y[0] * ws.base_vy;

  for (int a = 0; a < f; ++a) {
    dxdt[a] = x[f + a];
    dxdt[f + a] = ws.accel_x(a);
  }
  for (int i = 0; i < n; ++i) ws.alpha[i] = ws.accel_x(i);
  dxdt[2 * f] = ws.dissipated_power;
  dxdt[2 * f + 1] = ws.input_power;
}

}  // namespace swaybound

namespace swaybound {

void rope_start(const Model& model, Workspace& ws, const Phase& phase, bool lift_off, double lift_off_slack,
                std::vector<double>& x) {
  require_built_for(model, ws);
  const int f = model.dof;
  const std::size_t ropes = model.elastic_links.size();
  if (ropes == 0) return;
  std::vector<double> dxdt(x.size());
  // Unstretched lengths and rates at t = 0 (the lengths read from x are overwritten below).
  for (std::size_t r = 0; r < ropes; ++r) {
    const int c = model.length_coordinate[static_cast<std::size_t>(model.elastic_links[r])];
    x[static_cast<std::size_t>(c)] = model.length[static_cast<std::size_t>(model.elastic_links[r])];
  }
  kinematics(model, ws, phase, x.data(), 0.0);
  for (std::size_t r = 0; r < ropes; ++r) {
    const auto c = static_cast<std::size_t>(model.length_coordinate[static_cast<std::size_t>(model.elastic_links[r])]);
    x[c] = ws.unstretched[r];
    x[static_cast<std::size_t>(f) + c] = ws.unstretched_rate[r];
  }
  if (lift_off) {
    // Rope 0 spans its unstretched length less the slack; the links below rest on the ground, so
    // the rope's lower end is still: its rates follow from the base velocity (d' = -v_base).
    const auto c = static_cast<std::size_t>(model.length_coordinate[0]);
    x[c] -= lift_off_slack;
    if (model.spatial) {
      // d = l e: l' = -v . e and e' = -(v - (v . e) e) / l.
      for (int k = 3; k < 3 * model.n; ++k) x[static_cast<std::size_t>(f + k)] = 0.0;
      const double v[3] = {ws.base_vx, ws.base_vy, ws.base_vz};
      const double norm = std::sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);
      double e[3], along = 0;
      for (std::size_t k = 0; k < 3; ++k) along += v[k] * (e[k] = x[k] / norm);
      x[static_cast<std::size_t>(f) + c] = -along;
      for (std::size_t k = 0; k < 3; ++k) x[static_cast<std::size_t>(f) + k] = -(v[k] - along * e[k]) / x[c];
    } else {
      for (int k = 1; k < model.n; ++k) x[static_cast<std::size_t>(f + k)] = 0.0;
      const double s = std::sin(x[0]), co = std::cos(x[0]);
      x[static_cast<std::size_t>(f) + c] = -(phase.vx0 * s - phase.vy0 * co);
      x[static_cast<std::size_t>(f)] = -(phase.vx0 * co + phase.vy0 * s) / x[c];
    }
    std::fill(ws.rope_slack.begin(), ws.rope_slack.end(), 0);
    ws.grounded = true;
    evaluate(model, ws, phase, x.data(), 0.0, dxdt.data());
    // A rope that starts just taut (slack 0) counts as taut unless it is already shortening.
    for (std::size_t r = 0; r < ropes; ++r) ws.rope_slack[r] = ws.taut_margin[r] >= 0 ? 0 : 1;
    return;
  }
  ws.grounded = false;
  // Quasi-static stretch: the tensions T at which no rope length accelerates at t = 0 (with the
  // rope rates equal to the drum's, no damping force). q'' is affine in T (-T is the generalised
  // force of length r), so r'' = r''(0) - A T with A = (M_ff^-1) restricted to the rope lengths;
  // two Newton steps absorb pin friction's weak dependence on T.
  std::fill(ws.rope_slack.begin(), ws.rope_slack.end(), 1);
  evaluate(model, ws, phase, x.data(), 0.0, dxdt.data());
  Eigen::MatrixXd a(static_cast<Eigen::Index>(ropes), static_cast<Eigen::Index>(ropes));
  const auto speed = [&model](std::size_t r) {
    return model.speed_index(model.length_coordinate[static_cast<std::size_t>(model.elastic_links[r])]);
  };
  for (std::size_t r = 0; r < ropes; ++r) {
    Eigen::VectorXd unit = Eigen::VectorXd::Zero(model.free_speeds());
    unit(speed(r)) = 1.0;
    const Eigen::VectorXd column = ws.llt_f.solve(unit);
    for (std::size_t s = 0; s < ropes; ++s) a(static_cast<Eigen::Index>(s), static_cast<Eigen::Index>(r)) = column(speed(s));
  }
  const Eigen::PartialPivLU<Eigen::MatrixXd> lu(a);
  Eigen::VectorXd tension = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(ropes));
  for (int iteration = 0; iteration < 3; ++iteration) {
    Eigen::VectorXd accel(static_cast<Eigen::Index>(ropes));
    for (std::size_t r = 0; r < ropes; ++r)
      accel(static_cast<Eigen::Index>(r)) =
          dxdt[static_cast<std::size_t>(f + model.length_coordinate[static_cast<std::size_t>(model.elastic_links[r])])];
    tension += lu.solve(accel);
    for (std::size_t r = 0; r < ropes; ++r) {
      const auto c = static_cast<std::size_t>(model.length_coordinate[static_cast<std::size_t>(model.elastic_links[r])]);
      const double t = std::max(tension(static_cast<Eigen::Index>(r)), 0.0);
      x[c] = ws.unstretched[r] + t / ws.stiffness[r];
      ws.rope_slack[r] = t > 0 ? 0 : 1;
    }
    evaluate(model, ws, phase, x.data(), 0.0, dxdt.data());
  }
}

}  // namespace swaybound
