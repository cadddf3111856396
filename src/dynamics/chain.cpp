#include "swaybound/dynamics/chain.hpp"

#include <cmath>

#include "swaybound/dynamics/forces.hpp"
#include "chain_stages.hpp"

namespace swaybound {

template <int N>
void Scratch<N>::resize(int n) {
  if constexpr (N == Eigen::Dynamic) {
    M.resize(n, n);
    M_inverse.resize(0, 0);
    // Sizes the factor by factoring the identity. Not `llt = LLT<Matrix>(n)`: Eigen 3.4's LLT(Index)
    // leaves m_info uninitialised and the move assignment reads it (UBSan: invalid enum value).
    llt.compute(Matrix::Identity(n, n));
    bias.resize(n);
    rhs.resize(n);
    alpha.resize(n);
  }
  M.setZero();
  bias.setZero();
  rhs.setZero();
  alpha.setZero();
}

Workspace::Workspace(const Model& model) : model_id(model.id), links(model.n) {
  const auto n = static_cast<std::size_t>(model.n);
  for (auto* v : {&alpha, &slide, &tau_fixed, &sin_t, &cos_t, &omega, &force_x, &force_y, &tau, &tau_pin, &reaction_x, &reaction_y, &reaction, &reaction_prev,
                  &acc_x, &acc_y, &len_rate, &len_accel, &com_rate, &inertia_rate, &drum_force, &acc0_x, &acc0_y})
    v->assign(n, 0.0);
  len = model.length;
  com_now = model.com;
  inertia_now = model.inertia;
  const std::size_t ropes = model.elastic_links.size();
  rope_slack.assign(ropes, 0);
  for (auto* v : {&unstretched, &unstretched_rate, &stiffness, &stretch, &stretch_rate, &rope_force, &taut_margin})
    v->assign(ropes, 0.0);
  s1.resize(1);
  s2.resize(2);
  s3.resize(3);
  sn.resize(model.n);
  if (model.spatial) {
    for (auto* v : {&dir, &dir_rate, &spin, &torque, &torque_fixed}) v->assign(3 * n, 0.0);
    tangent.assign(6 * n, 0.0);
    for (auto* v : {&force_z, &acc_z, &reaction_z}) v->assign(n, 0.0);
    const auto m2 = static_cast<Eigen::Index>(2 * n);
    mass_s = Eigen::MatrixXd::Identity(m2, m2);
    bias_s = rhs_s = accel_s = Eigen::VectorXd::Zero(m2);
    llt_s.compute(mass_s);  // sizes the factor (see Scratch::resize)
  }
  if (model.variable_length()) {
    const auto e = static_cast<Eigen::Index>(model.speeds()), f = static_cast<Eigen::Index>(model.free_speeds());
    mass_x = Eigen::MatrixXd::Zero(e, e);
    bias_x = rhs_x = accel_x = Eigen::VectorXd::Zero(e);
    mass_f = Eigen::MatrixXd::Identity(f, f);
    rhs_f = accel_f = Eigen::VectorXd::Zero(f);
    llt_f.compute(mass_f);  // sizes the factor (see Scratch::resize)
    jac_x = jac_y = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(n), e);
    if (model.spatial) {
      jac_z = jac_x;
      acc0_z.assign(n, 0.0);
    }
  }
}

void require_built_for(const Model& model, const Workspace& ws) {
  SWAYBOUND_REQUIRE(ws.model_id == model.id && ws.links == model.n,
                    "the workspace was built for another model (model id {}, {} links) than the one it is used with "
                    "(model id {}, {} links); build one Workspace per model",
                    ws.model_id, ws.links, model.id, model.n);
}

void kinematics(const Model& model, Workspace& ws, const Phase& p, const double* x, double t) {
  if (model.spatial) {
    spatial_kinematics(model, ws, p, x, t);
    return;
  }
  const int n = model.n;
  for (int i = 0; i < n; ++i) {
    ws.sin_t[i] = std::sin(x[i]);
    ws.cos_t[i] = std::cos(x[i]);
    ws.omega[i] = x[model.dof + i];
  }
  const double dt = t - p.t0;
  ws.base_ax = p.ax + p.jx * dt;
  ws.base_ay = p.ay;
  ws.base_vx = p.vx0 + (p.ax + 0.5 * p.jx * dt) * dt;
  ws.base_vy = p.vy0 + p.ay * dt;
  ws.base_x = p.x0 + (p.vx0 + (0.5 * p.ax + p.jx * dt / 6.0) * dt) * dt;
  ws.base_y = p.y0 + p.vy0 * dt + 0.5 * p.ay * dt * dt;
  if (p.control.active) {
    // The profile above is the drive's reference; the base follows the controller (controller.hpp).
    const auto d = static_cast<std::size_t>(model.drive_state());
    const auto m = static_cast<std::size_t>(p.control.measure);
    const double a_ref = ws.base_ax, v_ref = ws.base_vx;
    ws.base_x = x[d];
    ws.base_vx = x[d + 1];
    ws.base_ax = drive_acceleration(p.control, a_ref, v_ref, ws.base_vx, x[m], x[static_cast<std::size_t>(model.dof) + m]);
  }
  if (model.variable_length()) rope_kinematics(model, ws, p, x, t);
}

void point_state(const Model& model, const Workspace& ws, const PointRef& p, double& px, double& py, double& vx, double& vy) {
  if (model.spatial) {
    double pos[3], vel[3];
    spatial_point_state(model, ws, p, pos, vel);
    px = pos[0];
    py = pos[1];
    vx = vel[0];
    vy = vel[1];
    return;
  }
  px = ws.base_x;
  py = ws.base_y;
  vx = ws.base_vx;
  vy = ws.base_vy;
  if (p.link < 0) {
    px += p.base_x;
    py += p.base_y;
    return;
  }
  for (int j = 0; j <= p.link; ++j) {
    // A point on a rope of variable length keeps its fraction of the length.
    const double scale = j < p.link ? 1.0 : p.at / model.length[j];
    const bool fixed = model.length_coordinate[j] < 0 && ws.len_rate[j] == 0.0;
    const double r = j < p.link ? ws.len[j] : fixed ? p.at : ws.len[j] * scale, r_rate = ws.len_rate[j] * scale;
    px += r * ws.sin_t[j];
    py -= r * ws.cos_t[j];
    vx += r * ws.omega[j] * ws.cos_t[j] + r_rate * ws.sin_t[j];
    vy += r * ws.omega[j] * ws.sin_t[j] - r_rate * ws.cos_t[j];
  }
}

namespace {

/// Adds a point force (fx, fy) on link k at distance s (at the link's length in the spec) to the
/// generalised forces q (extended coordinates) and ws.force_*.
void apply_point_force(const Model& model, Workspace& ws, int k, double s, double fx, double fy, double* q) {
  ws.force_x[k] += fx;
  ws.force_y[k] += fy;
  for (int i = 0; i <= k; ++i) {
    const double scale = i < k ? 1.0 : s / model.length[i];
    const double lever = i < k ? ws.len[i] : model.length_coordinate[i] < 0 ? s : ws.len[i] * scale;
    q[i] += (fx * ws.cos_t[i] + fy * ws.sin_t[i]) * lever;
    if (const int c = model.length_coordinate[i]; c >= 0) q[c] += (fx * ws.sin_t[i] - fy * ws.cos_t[i]) * scale;
  }
}

}  // namespace

void wind_load_force(const Model& model, const Workspace& ws, const Phase& phase, std::size_t w, double& fx,
                     double& fy, double& vx, double& vy) {
  if (model.spatial) {
    double force[3], velocity[3];
    spatial_wind_force(model, ws, phase, w, force, velocity);
    fx = force[0];
    fy = force[1];
    vx = velocity[0];
    vy = velocity[1];
    return;
  }
  double px, py;
  point_state(model, ws, model.wind[w].point, px, py, vx, vy);
  drag_force(model.wind[w].drag_factor, phase.wind_speed[w], vx, vy, fx, fy);
}

double wind_load_force_z(const Model& model, const Workspace& ws, const Phase& phase, std::size_t w) {
  if (!model.spatial) return 0.0;
  double force[3], velocity[3];
  spatial_wind_force(model, ws, phase, w, force, velocity);
  return force[2];
}

void external_forces(const Model& model, Workspace& ws, const Phase& phase, double* q) {
  for (int k = 0; k < model.n; ++k) ws.force_x[k] = ws.force_y[k] = 0.0;
  for (std::size_t w = 0; w < model.wind.size(); ++w) {
    const WindModel& wind = model.wind[w];
    double vx, vy, fx, fy;
    wind_load_force(model, ws, phase, w, fx, fy, vx, vy);
    apply_point_force(model, ws, wind.point.link, wind.point.at, fx, fy, q);
    ws.input_power += fx * vx + fy * vy;
  }
  for (const DashpotModel& d : model.dashpots) {
    double ax, ay, avx, avy, bx, by, bvx, bvy;
    point_state(model, ws, d.a, ax, ay, avx, avy);
    point_state(model, ws, d.b, bx, by, bvx, bvy);
    const double dx = ax - bx, dy = ay - by;
    const double length = std::sqrt(dx * dx + dy * dy);
    if (length <= 0) continue;  // coincident ends: no defined axis (validated against at rest)
    const double ux = dx / length, uy = dy / length;
    const double stretch_rate = ux * (avx - bvx) + uy * (avy - bvy);
    const double f = -d.coefficient * stretch_rate;  // force on end a along u; end b gets -f
    // Power of the forces on the chain = -c s^2 (dissipated) + (force on the link end) . (base velocity)
    // when one end is on the moving base: that share is work done by the base.
    if (d.a.link >= 0) apply_point_force(model, ws, d.a.link, d.a.at, f * ux, f * uy, q);
    else ws.input_power -= f * (ux * avx + uy * avy);
    if (d.b.link >= 0) apply_point_force(model, ws, d.b.link, d.b.at, -f * ux, -f * uy, q);
    else ws.input_power += f * (ux * bvx + uy * bvy);
    ws.dissipated_power += d.coefficient * stretch_rate * stretch_rate;
  }
}

void pivot_torques(const Model& model, Workspace& ws, const double* reaction) {
  if (reaction == nullptr) {
    // The parts that do not depend on the reaction: dampers, constant friction, and the sliding
    // factor that pin friction reuses in every fixed-point iteration.
    for (int i = 0; i < model.n; ++i) {
      const PivotModel& p = model.pivots[i];
      const double w = ws.omega[i] - (i > 0 ? ws.omega[i - 1] : 0.0);
      ws.slide[i] = friction_slide(p, w);
      ws.tau_fixed[i] = damper_torque(p, w) + constant_friction_torque(p, ws.slide[i]);
      ws.tau_pin[i] = 0.0;
      ws.tau[i] = ws.tau_fixed[i];
    }
    return;
  }
  // Pin friction at the given reactions, the load-dependent part of friction_torque().
  for (int i = 0; i < model.n; ++i) {
    ws.tau_pin[i] = pin_friction_torque(model.pivots[i], ws.slide[i], reaction[i]);
    ws.tau[i] = ws.tau_fixed[i] + ws.tau_pin[i];
  }
}

void pivot_reactions(const Model& model, Workspace& ws, const double* alpha) {
  const int n = model.n;
  // Forward: acceleration of pivot k relative to the base, then of each centre of mass.
  double px = 0, py = 0;
  for (int k = 0; k < n; ++k) {
    const double tx = alpha[k] * ws.cos_t[k] - ws.omega[k] * ws.omega[k] * ws.sin_t[k];   // (alpha n - w^2 e).x
    const double ty = alpha[k] * ws.sin_t[k] + ws.omega[k] * ws.omega[k] * ws.cos_t[k];   // (alpha n - w^2 e).y
    ws.acc_x[k] = ws.base_ax + px + model.com[k] * tx;
    ws.acc_y[k] = ws.base_ay + py + model.com[k] * ty;
    px += model.length[k] * tx;
    py += model.length[k] * ty;
  }
  sub_chain_reactions(model, ws);
}

void sub_chain_reactions(const Model& model, Workspace& ws) {
  // Backward: Newton's second law for the sub-chain below each pivot.
  double fx = 0, fy = 0;
  for (int k = model.n - 1; k >= 0; --k) {
    fx += model.mass[k] * ws.acc_x[k] - ws.force_x[k];
    fy += model.mass[k] * (ws.acc_y[k] + model.gravity) - ws.force_y[k];
    ws.reaction_x[k] = fx;
    ws.reaction_y[k] = fy;
    ws.reaction[k] = std::sqrt(fx * fx + fy * fy);
  }
}

namespace {

template <int N>
void evaluate_impl(const Model& model, Workspace& ws, Scratch<N>& sc, const Phase& phase, const double* x, double t,
                   double* dxdt) {
  const int n = model.n;
  ++ws.evaluations;
  ws.dissipated_power = 0;
  ws.input_power = 0;
  kinematics(model, ws, phase, x, t);

  // Stage 2: mass matrix M_ij = mu_ij cos(theta_i - theta_j).
  for (int i = 0; i < n; ++i) {
    sc.M(i, i) = model.mu(i, i);
    for (int j = i + 1; j < n; ++j) {
      const double v = model.mu(i, j) * (ws.cos_t[i] * ws.cos_t[j] + ws.sin_t[i] * ws.sin_t[j]);
      sc.M(i, j) = v;
      sc.M(j, i) = v;
    }
  }
  if constexpr (N == Eigen::Dynamic)
    sc.llt.compute(sc.M);
  else
    sc.M_inverse = sc.M.inverse();

  // Stage 3: velocity-product, gravity and base-inertia terms, then external point forces.
  const double gy = model.gravity + ws.base_ay;
  for (int i = 0; i < n; ++i) {
    double b = -model.h[i] * (ws.base_ax * ws.cos_t[i] + gy * ws.sin_t[i]);
    for (int j = 0; j < n; ++j) {
      if (j == i) continue;
      const double sin_ij = ws.sin_t[i] * ws.cos_t[j] - ws.cos_t[i] * ws.sin_t[j];
      b -= model.mu(i, j) * sin_ij * ws.omega[j] * ws.omega[j];
    }
    sc.bias(i) = b;
  }
  if (!model.wind.empty() || !model.dashpots.empty()) external_forces(model, ws, phase, sc.bias.data());

  // Stage 4: pivot torques and accelerations; pin friction iterated to a consistent reaction.
  const bool need_reactions =
      !ws.lazy_reactions || model.any_pin_friction || ws.base_vx != 0.0 || ws.base_vy != 0.0;
  const auto solve = [&](const double* reaction) {
    sc.rhs = sc.bias;
    add_pivot_torques(model, ws, reaction, sc.rhs.data());
    if constexpr (N == Eigen::Dynamic)
      sc.alpha = sc.llt.solve(sc.rhs);
    else
      sc.alpha.noalias() = sc.M_inverse * sc.rhs;
    if (need_reactions) pivot_reactions(model, ws, sc.alpha.data());
  };
  solve(nullptr);
  ws.reactions_current = need_reactions;
  pin_friction_fixed_point(model, ws, solve);

  // Powers: pivot torques dissipate tau * relative rate; the base does work through pivot 0.
  if (model.any_pivot_torque)
    for (int i = 0; i < n; ++i) {
      const double w = ws.omega[i] - (i > 0 ? ws.omega[i - 1] : 0.0);
      ws.dissipated_power -= ws.tau[i] * w;
    }
  if (ws.base_vx != 0.0 || ws.base_vy != 0.0)
    ws.input_power += ws.reaction_x[0] * ws.base_vx + ws.reaction_y[0] * ws.base_vy;

  for (int i = 0; i < n; ++i) {
    dxdt[i] = x[n + i];  // a model of fixed lengths: dof = n
    dxdt[n + i] = sc.alpha(i);
    ws.alpha[i] = sc.alpha(i);
  }
  dxdt[2 * n] = ws.dissipated_power;
  dxdt[2 * n + 1] = ws.input_power;
}

}  // namespace

void evaluate(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt) {
  require_built_for(model, ws);
  if (model.spatial) {
    evaluate_spatial(model, ws, phase, x, t, dxdt);
  } else if (model.variable_length()) {
    evaluate_general(model, ws, phase, x, t, dxdt);
  } else {
    switch (model.n) {
      case 1: evaluate_impl(model, ws, ws.s1, phase, x, t, dxdt); break;
      case 2: evaluate_impl(model, ws, ws.s2, phase, x, t, dxdt); break;
      case 3: evaluate_impl(model, ws, ws.s3, phase, x, t, dxdt); break;
      default: evaluate_impl(model, ws, ws.sn, phase, x, t, dxdt); break;
    }
  }
  if (model.drive_states) {
    // The base's x and speed (a scenario without a controller integrates its own profile).
    const auto d = static_cast<std::size_t>(model.drive_state());
    dxdt[d] = ws.base_vx;
    dxdt[d + 1] = ws.base_ax;
  }
}

void drive_start(const Model& model, const Phase& phase, std::vector<double>& x) {
  if (!model.drive_states) return;
  const auto d = static_cast<std::size_t>(model.drive_state());
  x[d] = phase.x0;
  x[d + 1] = phase.vx0;
}

void finish_reactions(const Model& model, Workspace& ws) {
  if (ws.reactions_current) return;
  if (model.spatial)
    spatial_reactions(model, ws);
  else if (model.variable_length())
    general_reactions(model, ws);
  else
    pivot_reactions(model, ws, ws.alpha.data());
  ws.reactions_current = true;
}

double mechanical_energy(const Model& model, const Workspace& ws) {
  if (model.spatial) return spatial_energy(model, ws);
  double energy = ws.strain_energy;
  double py = ws.base_y, vx = ws.base_vx, vy = ws.base_vy;  // x positions do not enter the energy
  for (int k = 0; k < model.n; ++k) {
    const double c = ws.com_now[k], c_rate = ws.com_rate[k];
    const double cy = py - c * ws.cos_t[k];
    const double cvx = vx + c * ws.omega[k] * ws.cos_t[k] + c_rate * ws.sin_t[k];
    const double cvy = vy + c * ws.omega[k] * ws.sin_t[k] - c_rate * ws.cos_t[k];
    energy += 0.5 * model.mass[k] * (cvx * cvx + cvy * cvy) + 0.5 * ws.inertia_now[k] * ws.omega[k] * ws.omega[k] +
              model.mass[k] * model.gravity * cy;
    const double l = ws.len[k], l_rate = ws.len_rate[k];
    py -= l * ws.cos_t[k];
    vx += l * ws.omega[k] * ws.cos_t[k] + l_rate * ws.sin_t[k];
    vy += l * ws.omega[k] * ws.sin_t[k] - l_rate * ws.cos_t[k];
  }
  return energy;
}

void link_tension(const Model& model, const Workspace& ws, int i, double& top, double& bottom) {
  if (model.spatial) {
    spatial_link_tension(model, ws, i, top, bottom);
    return;
  }
  const double ex = ws.sin_t[i], ey = -ws.cos_t[i];
  top = -(ws.reaction_x[i] * ex + ws.reaction_y[i] * ey);
  bottom = i + 1 < model.n ? -(ws.reaction_x[i + 1] * ex + ws.reaction_y[i + 1] * ey) : 0.0;
}

ChainSystem::ChainSystem(const Model& model, Workspace& ws, int scenario)
    : model_(&model), ws_(&ws), scenario_(nullptr), phase_(nullptr), last_t_(std::nan("")),
      last_x_(static_cast<std::size_t>(model.state_size())) {
  SWAYBOUND_REQUIRE(scenario >= 0 && scenario < static_cast<int>(model.scenarios.size()),
                    "scenario index {} out of range (model has {})", scenario, model.scenarios.size());
  require_built_for(model, ws);
  scenario_ = &model.scenarios[static_cast<std::size_t>(scenario)];
  enter_phase(0);
}

void ChainSystem::enter_phase(std::size_t k) {
  SWAYBOUND_REQUIRE(k < scenario_->phases.size(), "phase {} out of range (scenario has {})", k,
                    scenario_->phases.size());
  phase_ = &scenario_->phases[k];
  last_t_ = std::nan("");
}

template struct Scratch<1>;
template struct Scratch<2>;
template struct Scratch<3>;
template struct Scratch<Eigen::Dynamic>;

}  // namespace swaybound
