// Reason it stays one file: the named stages of one right-hand side (kinematics with slewing and luffing,
// forces, the solve, reactions, both energy audits) share its private helpers and the derivation below.
//
// Equations of motion of a spatial chain: N links on spherical pivots, hung from a base that moves
// in x (travel), y (up) and z (across the travel). Each link is a straight axisymmetric body along
// its unit vector e_i; its spin about its own axis is not modelled (its angular velocity is
// w_i = e_i x e_i', perpendicular to e_i), so it has two degrees of freedom, the tangent rates.
//
// Coordinates: the unit vectors e_i themselves (no angles, so no orientation is singular). At each
// evaluation an orthonormal basis t_i1, t_i2 of the plane perpendicular to e_i (t_i1 x t_i2 = e_i)
// is built; e_i' = T_i u_i with u_i = T_i^T e_i' the tangent rates, and since |e_i| = 1,
//   e_i'' = T_i u_i' - |e_i'|^2 e_i.
// The basis is used only inside one evaluation (the state holds e_i, e_i'), so it may jump from
// one evaluation to the next without harm.
//
// With the centre of mass r_k = p_base + sum_{j<k} L_j e_j + c_k e_k (a_kj = L_j for j < k, c_k for
// j = k) and the constants mu_jl, h_j of model.hpp, Kane's equations for the tangent rates read,
// for link j and direction a = 1, 2,
//   sum_l mu_jl (t_ja . t_lb) u_lb' = t_ja . [ -h_j (a_base + g y) + sum_{l != j} mu_jl |e_l'|^2 e_l ] + Q_ja,
// the spatial form of the planar equations of chain.hpp (with T_i = n_i they are the same: the
// travel-plane block equals the planar mass matrix, and a planar motion stays planar exactly).
// Generalised forces: a point force F at distance s on link k adds lever_j t_ja . F for j <= k
// (lever L_j above k, s on k); a pivot torque tau_i (on link i, -tau_i on link i-1) adds
// tau_i . dw_i/du_ia: dw/du_1 = e x t_1 = t_2, dw/du_2 = e x t_2 = -t_1. The part of a torque along a
// link's own axis does no work on the constrained motion (no twist) and drops out.
//
// Pivot torques are isotropic in the swing: the planar laws of forces.hpp applied to the magnitude
// of the relative angular velocity w_rel = w_i - w_{i-1} (w_{-1} = 0), acting against it:
//   tau_i = tau(|w_rel|) w_rel / |w_rel|   (tau(s) <= 0 the planar torque at rate s >= 0),
// pin friction with |R_i| the magnitude of the 3-D pivot reaction. A directional damper (spec
// `axis`) acts about its shaft a only, with the planar law of the rate about it:
//   tau_i += tau_d(w_rel . a) a,
// a horizontal and fixed in the trolley frame, turning with a slewing boom (a = a_x e_r + a_z e_t),
// at every pivot: exact at the top pivot, whose upper side is the trolley or boom; at a lower pivot
// it reads the upper link as not turning about the vertical relative to the trolley (twist is not
// modelled, so a link has no frame of its own). Its part along a link's axis drops out as above.
#include <cmath>

#include "swaybound/dynamics/chain.hpp"
#include "swaybound/dynamics/forces.hpp"
#include "chain_stages.hpp"

namespace swaybound {

namespace {

struct Vec3 {
  double x = 0, y = 0, z = 0;
};
inline Vec3 operator+(Vec3 a, Vec3 b) { return {a.x + b.x, a.y + b.y, a.z + b.z}; }
inline Vec3 operator-(Vec3 a, Vec3 b) { return {a.x - b.x, a.y - b.y, a.z - b.z}; }
inline Vec3 operator*(double s, Vec3 a) { return {s * a.x, s * a.y, s * a.z}; }
inline double dot(Vec3 a, Vec3 b) { return a.x * b.x + a.y * b.y + a.z * b.z; }
inline Vec3 cross(Vec3 a, Vec3 b) { return {a.y * b.z - a.z * b.y, a.z * b.x - a.x * b.z, a.x * b.y - a.y * b.x}; }
inline double norm(Vec3 a) { return std::sqrt(dot(a, a)); }

inline Vec3 load(const std::vector<double>& v, int i) {
  const auto k = static_cast<std::size_t>(3 * i);
  return {v[k], v[k + 1], v[k + 2]};
}
inline void store(std::vector<double>& v, int i, Vec3 a) {
  const auto k = static_cast<std::size_t>(3 * i);
  v[k] = a.x;
  v[k + 1] = a.y;
  v[k + 2] = a.z;
}
inline Vec3 tangent(const Workspace& ws, int i, int a) {
  const auto k = static_cast<std::size_t>(6 * i + 3 * a);
  return {ws.tangent[k], ws.tangent[k + 1], ws.tangent[k + 2]};
}

Vec3 base_velocity(const Workspace& ws) { return {ws.base_vx, ws.base_vy, ws.base_vz}; }

/// Position and velocity of a point of the chain (after spatial_kinematics).
void point_state_3d(const Model& model, const Workspace& ws, const PointRef& p, Vec3& pos, Vec3& vel) {
  pos = {ws.base_x, ws.base_y, ws.base_z};
  vel = base_velocity(ws);
  if (p.link < 0) {
    pos = pos + Vec3{p.base_x, p.base_y, p.base_z};
    return;
  }
  for (int j = 0; j <= p.link; ++j) {
    // A point on a rope of variable length keeps its fraction of the length (as in the planar chain).
    const double scale = j < p.link ? 1.0 : p.at / model.length[j];
    const double r = j < p.link ? ws.len[j] : model.length_coordinate[j] < 0 ? p.at : ws.len[j] * scale;
    pos = pos + r * load(ws.dir, j);
    vel = vel + r * load(ws.dir_rate, j) + (ws.len_rate[j] * scale) * load(ws.dir, j);
  }
}

/// Adds a point force F on link k at distance s (at the link's length in the spec) to the
/// generalised forces q (2 per link, then the lengths' speeds) and ws.force_*.
void apply_point_force_3d(const Model& model, Workspace& ws, int k, double s, Vec3 f, Eigen::VectorXd& q) {
  ws.force_x[k] += f.x;
  ws.force_y[k] += f.y;
  ws.force_z[k] += f.z;
  for (int j = 0; j <= k; ++j) {
    const double scale = j < k ? 1.0 : s / model.length[j];
    const int c = model.length_coordinate[j];
    const double lever = j < k ? ws.len[j] : c < 0 ? s : ws.len[j] * scale;
    q(2 * j) += lever * dot(tangent(ws, j, 0), f);
    q(2 * j + 1) += lever * dot(tangent(ws, j, 1), f);
    if (c >= 0) q(model.speed_index(c)) += scale * dot(load(ws.dir, j), f);
  }
}

/// Wind and dashpot forces into ws.force_* and q; their powers into ws.
void spatial_external_forces(const Model& model, Workspace& ws, const Phase& phase, Eigen::VectorXd& q) {
  for (int k = 0; k < model.n; ++k) ws.force_x[k] = ws.force_y[k] = ws.force_z[k] = 0.0;
  for (std::size_t w = 0; w < model.wind.size(); ++w) {
    double force[3], velocity[3];
    spatial_wind_force(model, ws, phase, w, force, velocity);
    const Vec3 f{force[0], force[1], force[2]};
    apply_point_force_3d(model, ws, model.wind[w].point.link, model.wind[w].point.at, f, q);
    ws.input_power += dot(f, Vec3{velocity[0], velocity[1], velocity[2]});
  }
  for (const DashpotModel& d : model.dashpots) {
    Vec3 pa, va, pb, vb;
    point_state_3d(model, ws, d.a, pa, va);
    point_state_3d(model, ws, d.b, pb, vb);
    const double length = norm(pa - pb);
    if (length <= 0) continue;  // coincident ends: no defined axis (validated against at rest)
    const Vec3 axis = (1.0 / length) * (pa - pb);
    const double stretch_rate = dot(axis, va - vb);
    const Vec3 f = (-d.coefficient * stretch_rate) * axis;  // on end a; end b gets -f
    if (d.a.link >= 0) apply_point_force_3d(model, ws, d.a.link, d.a.at, f, q);
    else ws.input_power -= dot(f, va);
    if (d.b.link >= 0) apply_point_force_3d(model, ws, d.b.link, d.b.at, -1.0 * f, q);
    else ws.input_power += dot(f, vb);
    ws.dissipated_power += d.coefficient * stretch_rate * stretch_rate;
  }
}

/// The relative angular velocity at pivot i: w_i - w_{i-1}. At pivot 0 the base's: w_0 when the
/// base does not turn; on a slewing boom (angular velocity W y) the swing relative to the boom,
/// w_0 - W y without its part along e_0 (turning about its own axis relative to the boom is free:
/// no twist), so a load swung out steadily with the boom meets no damper torque.
Vec3 relative_spin(const Workspace& ws, int i) {
  if (i > 0) return load(ws.spin, i) - load(ws.spin, i - 1);
  if (ws.base_spin == 0.0) return load(ws.spin, 0);
  const Vec3 e = load(ws.dir, 0), w = load(ws.spin, 0) - Vec3{0.0, ws.base_spin, 0.0};
  return w - dot(w, e) * e;
}

/// The torque of pivot p's directional dampers at relative angular velocity w: sum of
/// tau_d(w . a) a over them, each shaft a turned with the boom (heading psi) [N m].
Vec3 directional_damper_torque(const PivotModel& p, const Workspace& ws, Vec3 w) {
  Vec3 tau;
  for (const DamperLaw& d : p.dampers) {
    if (!d.directional) continue;
    const Vec3 a{d.axis_x * ws.heading_cos - d.axis_z * ws.heading_sin, 0.0,
                 d.axis_x * ws.heading_sin + d.axis_z * ws.heading_cos};
    tau = tau + damper_torque(d, dot(w, a)) * a;
  }
  return tau;
}

/// Pivot torque vectors into ws.torque: with reaction == nullptr the dampers and constant friction
/// (the isotropic part's magnitude in ws.tau_fixed, the directional dampers' vector in
/// ws.torque_fixed, the sliding factor in ws.slide), else those plus pin friction at the reaction
/// magnitudes [N].
void spatial_pivot_torques(const Model& model, Workspace& ws, const double* reaction) {
  for (int i = 0; i < model.n; ++i) {
    const PivotModel& p = model.pivots[i];
    const Vec3 w = relative_spin(ws, i);
    const double s = norm(w);
    const bool directional = p.has_directional_damper();
    if (reaction == nullptr) {
      ws.slide[i] = friction_slide(p, s);
      ws.tau_fixed[i] = isotropic_damper_torque(p, s) + constant_friction_torque(p, ws.slide[i]);
      ws.tau_pin[i] = 0.0;
      if (directional) {
        // At the top pivot only its part across link 0 (the rest would twist the link, which is not
        // modelled), so that ws.torque holds the torque on the link, whose power W y . tau a slewing
        // boom puts in (an isotropic torque lies across the link already).
        Vec3 d = directional_damper_torque(p, ws, w);
        if (i == 0) d = d - dot(d, load(ws.dir, 0)) * load(ws.dir, 0);
        store(ws.torque_fixed, i, d);
      }
    } else {
      ws.tau_pin[i] = pin_friction_torque(p, ws.slide[i], reaction[i]);
    }
    ws.tau[i] = ws.tau_fixed[i] + ws.tau_pin[i];  // the isotropic laws' magnitude along w_rel (<= 0)
    const Vec3 isotropic = s > 0 ? (ws.tau[i] / s) * w : Vec3{};
    store(ws.torque, i, directional ? isotropic + load(ws.torque_fixed, i) : isotropic);
  }
}

/// The pivot torques' generalised forces added to q.
void add_spatial_pivot_torques(const Model& model, Workspace& ws, const double* reaction, Eigen::VectorXd& q) {
  if (!model.any_pivot_torque) return;
  spatial_pivot_torques(model, ws, reaction);
  for (int i = 0; i < model.n; ++i) {
    const Vec3 tau = load(ws.torque, i);
    q(2 * i) += dot(tau, tangent(ws, i, 1));
    q(2 * i + 1) -= dot(tau, tangent(ws, i, 0));
    if (i > 0) {
      q(2 * (i - 1)) -= dot(tau, tangent(ws, i - 1, 1));
      q(2 * (i - 1) + 1) += dot(tau, tangent(ws, i - 1, 0));
    }
  }
}

/// The boom frame's angular velocity (W y, W = ws.base_spin) and the position of a point relative
/// to the slewing axis, rho = point - (axis_x, 0, 0) (its height does not matter: W x rho and
/// (rho x v)_y do not read it).
Vec3 frame_spin(const Workspace& ws) { return {0.0, ws.base_spin, 0.0}; }
Vec3 from_axis(const Workspace& ws, Vec3 point) { return point - Vec3{ws.axis_x, 0.0, 0.0}; }

/// The powers of the boom-frame energy audit (see boom_frame_energy) into `frame` (the work rate
/// of the base's force through the pivot's luffing velocity relative to the boom, and of the wind
/// through its point's velocity relative to the boom, F . (v - W x rho)) and `euler` (-W' H_y, H
/// the angular momentum about the axis: the work rate of the Euler forces -m W' x rho with the
/// change of the centrifugal potential as W changes). Dissipation is the same in both frames (the
/// pivot-0 torque acts against the swing relative to the boom), Coriolis forces do no work.
/// A pivot torque tau between links i-1 and i acts on each link only across its axis (its part
/// along the axis would twist the link, which is not modelled): on link i tau - (tau . e_i) e_i,
/// on link i-1 -(tau - (tau . e_(i-1)) e_(i-1)). The pair does the work of its dissipation in any
/// frame plus, relative to the boom, -W . m with m = (tau . e_(i-1)) e_(i-1) - (tau . e_i) e_i its
/// net moment, which `frame` includes.
void boom_frame_powers(const Model& model, const Workspace& ws, const Phase& phase, bool moving, double& frame,
                       double& euler) {
  frame = 0.0;
  if (moving)
    frame += dot(Vec3{ws.reaction_x[0], ws.reaction_y[0], ws.reaction_z[0]}, Vec3{ws.luff_vx, ws.luff_vy, ws.luff_vz});
  const Vec3 w = frame_spin(ws);
  for (std::size_t k = 0; k < model.wind.size(); ++k) {
    double force[3], velocity[3];
    spatial_wind_force(model, ws, phase, k, force, velocity);
    Vec3 pos, vel;
    point_state_3d(model, ws, model.wind[k].point, pos, vel);
    frame += dot(Vec3{force[0], force[1], force[2]}, vel - cross(w, from_axis(ws, pos)));
  }
  if (model.any_pivot_torque && ws.base_spin != 0.0)
    for (int i = 1; i < model.n; ++i) {
      const Vec3 tau = load(ws.torque, i), upper = load(ws.dir, i - 1), lower = load(ws.dir, i);
      frame -= dot(w, dot(tau, upper) * upper - dot(tau, lower) * lower);
    }
  euler = ws.base_spin_rate == 0.0 ? 0.0 : -ws.base_spin_rate * axis_momentum(model, ws);
}

/// e_i'' from the tangent accelerations u'.
Vec3 direction_accel(const Workspace& ws, int i, const Eigen::VectorXd& u_rate) {
  return u_rate(2 * i) * tangent(ws, i, 0) + u_rate(2 * i + 1) * tangent(ws, i, 1) - ws.omega[i] * load(ws.dir, i);
}

}  // namespace

void spatial_kinematics(const Model& model, Workspace& ws, const Phase& p, const double* x, double t) {
  const double dt = t - p.t0;
  ws.base_ax = p.ax + p.jx * dt;
  ws.base_ay = p.ay;
  ws.base_az = p.az + p.jz * dt;
  ws.base_vx = p.vx0 + (p.ax + 0.5 * p.jx * dt) * dt;
  ws.base_vy = p.vy0 + p.ay * dt;
  ws.base_vz = p.vz0 + (p.az + 0.5 * p.jz * dt) * dt;
  ws.base_x = p.x0 + (p.vx0 + (0.5 * p.ax + p.jx * dt / 6.0) * dt) * dt;
  ws.base_y = p.y0 + p.vy0 * dt + 0.5 * p.ay * dt * dt;
  ws.base_z = p.z0 + (p.vz0 + (0.5 * p.az + p.jz * dt / 6.0) * dt) * dt;
  if (p.slew_radius > 0) {
    // Slewing: the pivot at radius r(t) from the vertical axis through (-R, y, 0) (R = r(0)), at
    // slewing angle psi(t) (a cubic within the phase), and h(t) above its start (boom luffing).
    // With the radial and tangential unit vectors e_r = (cos psi, 0, sin psi), e_t = (-sin psi, 0,
    // cos psi) (e_r' = psi' e_t, e_t' = -psi' e_r):
    //   p   = r e_r - (R, 0, 0) + h y,
    //   p'  = r' e_r + r psi' e_t + h' y,
    //   p'' = (r'' - r psi'^2) e_r + (r psi'' + 2 r' psi') e_t + h'' y.
    // In the boom frame (turning at W = -psi' y, the axis fixed) p'' is the relative acceleration
    // r'' e_r + h'' y plus the frame's terms: centripetal W x (W x p) = -r psi'^2 e_r, Euler
    // W' x p = r psi'' e_t and Coriolis 2 W x (r' e_r) = 2 r' psi' e_t (y x e_r = -e_t).
    // Radial luffing: r = R + s(t), s the luffing profile's position (a cubic within the phase),
    // h = 0. Boom luffing: a boom of length b at angle beta(t) = beta0 + s(t) above the horizontal,
    // its foot at radius R - b cos beta0 and at the tip's start height - b sin beta0:
    //   r = R + b (cos beta - cos beta0),  r' = -b sin(beta) beta',  r'' = -b (cos(beta) beta'^2 + sin(beta) beta''),
    //   h = b (sin beta - sin beta0),      h' =  b cos(beta) beta',  h'' =  b (cos(beta) beta'' - sin(beta) beta'^2),
    // exact at every instant from beta, beta', beta'' (the differences of cosines and sines written
    // as products so that a small turn keeps its digits).
    const double r0 = p.slew_radius;
    const double psi = p.slew_angle0 + (p.slew_rate0 + (0.5 * p.slew_accel0 + p.slew_jerk * dt / 6.0) * dt) * dt;
    const double rate = p.slew_rate0 + (p.slew_accel0 + 0.5 * p.slew_jerk * dt) * dt;
    const double accel = p.slew_accel0 + p.slew_jerk * dt;
    const double luff = p.luff_s0 + (p.luff_v0 + (0.5 * p.luff_a0 + p.luff_jerk * dt / 6.0) * dt) * dt;
    const double luff_rate = p.luff_v0 + (p.luff_a0 + 0.5 * p.luff_jerk * dt) * dt;
    const double luff_accel = p.luff_a0 + p.luff_jerk * dt;
    double d = luff, d1 = luff_rate, d2 = luff_accel, h = 0, h1 = 0, h2 = 0;  // r - R and h, with their rates
    if (p.luff_boom > 0) {
      const double b = p.luff_boom, beta = p.luff_angle0 + luff, cb = std::cos(beta), sb = std::sin(beta);
      const double half_sum = 0.5 * (beta + p.luff_angle0), half_turn = std::sin(0.5 * luff);
      d = -2.0 * b * std::sin(half_sum) * half_turn;
      h = 2.0 * b * std::cos(half_sum) * half_turn;
      d1 = -b * sb * luff_rate;
      d2 = -b * (cb * luff_rate * luff_rate + sb * luff_accel);
      h1 = b * cb * luff_rate;
      h2 = b * (cb * luff_accel - sb * luff_rate * luff_rate);
    }
    const double r = r0 + d;
    const double c = std::cos(psi), s = std::sin(psi);
    ws.base_x = r0 * (c - 1.0) + d * c;
    ws.base_z = r * s;
    ws.base_y += h;
    ws.base_vx = -r * rate * s + d1 * c;
    ws.base_vz = r * rate * c + d1 * s;
    ws.base_vy += h1;
    ws.base_ax = -r * accel * s - r * rate * rate * c + (d2 * c - 2.0 * d1 * rate * s);
    ws.base_az = r * accel * c - r * rate * rate * s + (d2 * s + 2.0 * d1 * rate * c);
    ws.base_ay += h2;
    ws.base_spin = -rate;  // turning from +x towards +z is a rotation about -y
    ws.base_spin_rate = -accel;
    ws.axis_x = -r0;
    ws.heading_cos = c;
    ws.heading_sin = s;
    ws.luff_vx = d1 * c;
    ws.luff_vy = h1;
    ws.luff_vz = d1 * s;
  } else {
    if (p.control.active) {
      // The profile above is the drive's reference; the base follows the controller (controller.hpp),
      // which measures the link's angle in the travel plane (x-y), theta = atan2(e_x, -e_y).
      const auto d = static_cast<std::size_t>(model.drive_state());
      const auto m = static_cast<std::size_t>(p.control.measure);
      const Vec3 raw{x[3 * m], x[3 * m + 1], x[3 * m + 2]};
      const Vec3 e = (1.0 / norm(raw)) * raw, v{x[model.dof + 3 * m], x[model.dof + 3 * m + 1], x[model.dof + 3 * m + 2]};
      const Vec3 r = v - dot(e, v) * e;
      const double angle = std::atan2(e.x, -e.y), rate = (e.x * r.y - e.y * r.x) / (e.x * e.x + e.y * e.y);
      const double a_ref = ws.base_ax, v_ref = ws.base_vx;
      ws.base_x = x[d];
      ws.base_vx = x[d + 1];
      ws.base_ax = drive_acceleration(p.control, a_ref, v_ref, ws.base_vx, angle, rate);
    }
    ws.base_spin = ws.base_spin_rate = 0.0;
    ws.axis_x = 0.0;
    ws.heading_cos = 1.0;
    ws.heading_sin = 0.0;
    ws.luff_vx = ws.base_vx;
    ws.luff_vy = ws.base_vy;
    ws.luff_vz = ws.base_vz;
  }
  for (int i = 0; i < model.n; ++i) {
    const Vec3 raw{x[3 * i], x[3 * i + 1], x[3 * i + 2]};
    const Vec3 e = (1.0 / norm(raw)) * raw;
    const Vec3 r_raw{x[model.dof + 3 * i], x[model.dof + 3 * i + 1], x[model.dof + 3 * i + 2]};
    const Vec3 r = r_raw - dot(e, r_raw) * e;
    store(ws.dir, i, e);
    store(ws.dir_rate, i, r);
    store(ws.spin, i, cross(e, r));
    // t1 = z x e (the planar engine's n_i for a link in the travel plane), or x x e where e is
    // within about 18 degrees of the z axis; t2 = e x t1.
    Vec3 t1 = e.x * e.x + e.y * e.y > 0.1 ? Vec3{-e.y, e.x, 0.0} : Vec3{0.0, -e.z, e.y};
    t1 = (1.0 / norm(t1)) * t1;
    const Vec3 t2 = cross(e, t1);
    const auto k = static_cast<std::size_t>(6 * i);
    for (const auto& [offset, v] : {std::pair{0, t1}, std::pair{3, t2}}) {
      ws.tangent[k + offset] = v.x;
      ws.tangent[k + offset + 1] = v.y;
      ws.tangent[k + offset + 2] = v.z;
    }
    ws.omega[i] = dot(r, r);  // the swing rate squared |e_i'|^2 [1/s^2] (the velocity-product terms read it)
  }
  if (model.variable_length()) rope_kinematics(model, ws, p, x, t);
}

void spatial_reactions(const Model& model, Workspace& ws) {
  // Forward: centre-of-mass accelerations; backward: Newton's second law for each sub-chain.
  if (model.variable_length()) {
    for (int k = 0; k < model.n; ++k) {
      ws.acc_x[k] = ws.acc0_x[k] + ws.jac_x.row(k).dot(ws.accel_x);
      ws.acc_y[k] = ws.acc0_y[k] + ws.jac_y.row(k).dot(ws.accel_x);
      ws.acc_z[k] = ws.acc0_z[k] + ws.jac_z.row(k).dot(ws.accel_x);
    }
  } else {
    Vec3 pivot{ws.base_ax, ws.base_ay, ws.base_az};
    for (int k = 0; k < model.n; ++k) {
      const Vec3 a = direction_accel(ws, k, ws.accel_s);
      const Vec3 com = pivot + model.com[k] * a;
      ws.acc_x[k] = com.x;
      ws.acc_y[k] = com.y;
      ws.acc_z[k] = com.z;
      pivot = pivot + model.length[k] * a;
    }
  }
  Vec3 f;
  for (int k = model.n - 1; k >= 0; --k) {
    f = f + Vec3{model.mass[k] * ws.acc_x[k] - ws.force_x[k], model.mass[k] * (ws.acc_y[k] + model.gravity) - ws.force_y[k],
                 model.mass[k] * ws.acc_z[k] - ws.force_z[k]};
    ws.reaction_x[k] = f.x;
    ws.reaction_y[k] = f.y;
    ws.reaction_z[k] = f.z;
    ws.reaction[k] = norm(f);
  }
}

namespace {

/// Mass matrix: blocks mu_jl T_j^T T_l (T_j^T T_j = identity on the diagonal), into `m`.
template <class Matrix>
void fill_mass(const Model& model, const Workspace& ws, Matrix& m) {
  // A fixed-size matrix holds model.n links; saying so bounds the loops for the compiler, which
  // otherwise warns of indices past a 2 x 2 matrix on a path that never runs.
  constexpr int kFixed = Matrix::RowsAtCompileTime;
  const int n = kFixed > 0 ? std::min(model.n, kFixed / 2) : model.n;
  for (int j = 0; j < n; ++j) {
    m(2 * j, 2 * j) = m(2 * j + 1, 2 * j + 1) = model.mu(j, j);
    m(2 * j, 2 * j + 1) = m(2 * j + 1, 2 * j) = 0.0;
    const Vec3 tj[2] = {tangent(ws, j, 0), tangent(ws, j, 1)};
    for (int l = j + 1; l < n; ++l) {
      const Vec3 tl[2] = {tangent(ws, l, 0), tangent(ws, l, 1)};
      const double mu = model.mu(j, l);
      for (int a = 0; a < 2; ++a)
        for (int b = 0; b < 2; ++b) m(2 * j + a, 2 * l + b) = m(2 * l + b, 2 * j + a) = mu * dot(tj[a], tl[b]);
    }
  }
}

/// Solves the mass-matrix system with a fixed-size Cholesky factor (2, 4, 6 tangent rates for
/// N = 1, 2, 3: no heap, unrolled), or with the workspace's dynamic one.
template <int M>
struct FixedFactor {
  Eigen::LLT<Eigen::Matrix<double, M, M>> llt;
  FixedFactor(const Model& model, Workspace& ws) {
    Eigen::Matrix<double, M, M> m;
    fill_mass(model, ws, m);
    llt.compute(m);
  }
  void solve(const Eigen::VectorXd& rhs, Eigen::VectorXd& out) const {
    // Solved in place in a fixed-size vector (the unrolled triangular solves), then copied out.
    Eigen::Matrix<double, M, 1> v = rhs;
    llt.solveInPlace(v);
    out = v;
  }
};
struct DynamicFactor {
  Workspace* ws;
  DynamicFactor(const Model& model, Workspace& w) : ws(&w) {
    fill_mass(model, w, w.mass_s);
    w.llt_s.compute(w.mass_s);
  }
  void solve(const Eigen::VectorXd& rhs, Eigen::VectorXd& out) const { out = ws->llt_s.solve(rhs); }
};

template <class Factor>
void evaluate_spatial_with(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt);
void evaluate_spatial_ropes(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt);

}  // namespace

void evaluate_spatial(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt) {
  if (model.variable_length()) {
    evaluate_spatial_ropes(model, ws, phase, x, t, dxdt);
    return;
  }
  switch (model.n) {
    case 1: evaluate_spatial_with<FixedFactor<2>>(model, ws, phase, x, t, dxdt); break;
    case 2: evaluate_spatial_with<FixedFactor<4>>(model, ws, phase, x, t, dxdt); break;
    case 3: evaluate_spatial_with<FixedFactor<6>>(model, ws, phase, x, t, dxdt); break;
    default: evaluate_spatial_with<DynamicFactor>(model, ws, phase, x, t, dxdt); break;
  }
}

namespace {

/// The end of every spatial right-hand side: the powers of the pivot torques and of the moving base
/// into ws, the boom frame's powers (boom_frame_powers, with `drum` the drums' power, the same in
/// every frame), and dx/dt from the state x and the generalised accelerations `accel` (the tangent
/// accelerations 2 per link, then the lengths').
void spatial_powers_and_rates(const Model& model, Workspace& ws, const Phase& phase, const double* x,
                              const Eigen::VectorXd& accel, double drum, double* dxdt) {
  const int n = model.n, f = model.dof;
  const Vec3 base_v = base_velocity(ws);
  const bool moving = base_v.x != 0.0 || base_v.y != 0.0 || base_v.z != 0.0;
  if (model.any_pivot_torque) {
    for (int i = 0; i < n; ++i) ws.dissipated_power -= dot(load(ws.torque, i), relative_spin(ws, i));
    // A slewing boom turns the upper side of pivot 0: the work its torque does on the chain.
    ws.input_power += ws.base_spin * ws.torque[1];
  }
  if (moving) ws.input_power += dot(Vec3{ws.reaction_x[0], ws.reaction_y[0], ws.reaction_z[0]}, base_v);
  if (model.boom_frame) {
    double frame = 0, euler = 0;
    boom_frame_powers(model, ws, phase, moving, frame, euler);
    dxdt[2 * f + 2] = frame + drum;
    dxdt[2 * f + 3] = euler;
  }
  for (int i = 0; i < n; ++i) {
    const Vec3 r = load(ws.dir_rate, i), a = direction_accel(ws, i, accel);
    dxdt[3 * i] = r.x;
    dxdt[3 * i + 1] = r.y;
    dxdt[3 * i + 2] = r.z;
    dxdt[f + 3 * i] = a.x;
    dxdt[f + 3 * i + 1] = a.y;
    dxdt[f + 3 * i + 2] = a.z;
    ws.alpha[i] = std::sqrt(accel(2 * i) * accel(2 * i) + accel(2 * i + 1) * accel(2 * i + 1));
  }
  for (const int link : model.elastic_links) {
    const int c = model.length_coordinate[static_cast<std::size_t>(link)];
    dxdt[c] = x[f + c];
    dxdt[f + c] = accel(model.speed_index(c));
  }
  dxdt[2 * f] = ws.dissipated_power;
  dxdt[2 * f + 1] = ws.input_power;
}

template <class Factor>
void evaluate_spatial_with(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt) {
  const int n = model.n;
  ++ws.evaluations;
  ws.dissipated_power = 0;
  ws.input_power = 0;
  spatial_kinematics(model, ws, phase, x, t);

  const Factor factor(model, ws);

  // Gravity, base inertia and velocity products, then external point forces.
  const Vec3 g_eff{ws.base_ax, ws.base_ay + model.gravity, ws.base_az};
  for (int j = 0; j < n; ++j) {
    Vec3 v = -model.h[j] * g_eff;
    for (int l = 0; l < n; ++l)
      if (l != j) v = v + (model.mu(j, l) * ws.omega[l]) * load(ws.dir, l);
    ws.bias_s(2 * j) = dot(tangent(ws, j, 0), v);
    ws.bias_s(2 * j + 1) = dot(tangent(ws, j, 1), v);
  }
  if (!model.wind.empty() || !model.dashpots.empty()) spatial_external_forces(model, ws, phase, ws.bias_s);

  const Vec3 base_v = base_velocity(ws);
  const bool moving = base_v.x != 0.0 || base_v.y != 0.0 || base_v.z != 0.0;
  const bool need_reactions = !ws.lazy_reactions || model.any_pin_friction || moving;
  const auto solve = [&](const double* reaction) {
    ws.rhs_s = ws.bias_s;
    add_spatial_pivot_torques(model, ws, reaction, ws.rhs_s);
    factor.solve(ws.rhs_s, ws.accel_s);
    if (need_reactions) spatial_reactions(model, ws);
  };
  solve(nullptr);
  ws.reactions_current = need_reactions;
  pin_friction_fixed_point(model, ws, solve);

  spatial_powers_and_rates(model, ws, phase, x, ws.accel_s, 0.0, dxdt);
}

// Ropes of variable length (the spatial form of chain_general.cpp): generalised speeds u (2 per
// link), then the elastic lengths' rates, then the prescribed lengths'. With J_k = dr_k/d(speeds)
// (columns l_j t_ja for links j above k, c_k t_ka for k itself, e_j for a length above, phi_k e_k
// for k's own) and a0_k the centre of mass's acceleration at zero generalised accelerations,
//   a0_k = a_base + sum_{j<k} (2 l_j' e_j' - l_j |e_j'|^2 e_j) + 2 c_k' e_k' - c_k |e_k'|^2 e_k,
// Kane's equations read sum_k m_k J_k^T (J_k u' + a0_k + g y) + rotational terms = Q. A rope's
// inertia about its centre of mass I_k(l_k) acts across its axis: d/dt (I_k w_k) . dw_k/du_ka =
// I_k u_ka' + I_k' u_ka, and the rotational energy 1/2 I_k(l_k) |e_k'|^2 adds -I_k |e_k'|^2 / l_k
// to the length's row (on the left), as in the planar chain.

/// Stage 2 with ropes: ws.jac_*, ws.acc0_*, the mass matrix ws.mass_x and the bias ws.bias_x.
void spatial_rope_mass_matrix(const Model& model, Workspace& ws) {
  const int n = model.n;
  const Eigen::Index speeds = model.speeds();
  ws.jac_x.setZero();
  ws.jac_y.setZero();
  ws.jac_z.setZero();
  const auto column = [&ws](int k, Eigen::Index c, Vec3 v) {
    ws.jac_x(k, c) = v.x;
    ws.jac_y(k, c) = v.y;
    ws.jac_z(k, c) = v.z;
  };
  Vec3 pivot_a{ws.base_ax, ws.base_ay, ws.base_az};
  for (int k = 0; k < n; ++k) {
    for (int j = 0; j <= k; ++j) {
      const double lever = j < k ? ws.len[j] : ws.com_now[k];
      column(k, 2 * j, lever * tangent(ws, j, 0));
      column(k, 2 * j + 1, lever * tangent(ws, j, 1));
      if (const int c = model.length_coordinate[j]; c >= 0)
        column(k, model.speed_index(c), (j < k ? 1.0 : model.com[k] / model.length[k]) * load(ws.dir, j));
    }
    const Vec3 e = load(ws.dir, k), r = load(ws.dir_rate, k);
    const Vec3 com = pivot_a + (-ws.com_now[k] * ws.omega[k]) * e + (2.0 * ws.com_rate[k]) * r;
    ws.acc0_x[k] = com.x;
    ws.acc0_y[k] = com.y;
    ws.acc0_z[k] = com.z;
    pivot_a = pivot_a + (-ws.len[k] * ws.omega[k]) * e + (2.0 * ws.len_rate[k]) * r;
  }
  for (Eigen::Index a = 0; a < speeds; ++a) {
    double b = 0;
    for (int k = 0; k < n; ++k)
      b -= model.mass[k] * (ws.jac_x(k, a) * ws.acc0_x[k] + ws.jac_y(k, a) * (ws.acc0_y[k] + model.gravity) +
                            ws.jac_z(k, a) * ws.acc0_z[k]);
    ws.bias_x(a) = b;
    for (Eigen::Index c = 0; c <= a; ++c) {
      double m = 0;
      for (int k = 0; k < n; ++k)
        m += model.mass[k] * (ws.jac_x(k, a) * ws.jac_x(k, c) + ws.jac_y(k, a) * ws.jac_y(k, c) +
                              ws.jac_z(k, a) * ws.jac_z(k, c));
      ws.mass_x(a, c) = m;
      ws.mass_x(c, a) = m;
    }
  }
  for (int k = 0; k < n; ++k) {
    const Vec3 r = load(ws.dir_rate, k);
    for (int a = 0; a < 2; ++a) {
      ws.mass_x(2 * k + a, 2 * k + a) += ws.inertia_now[k];
      ws.bias_x(2 * k + a) -= ws.inertia_rate[k] * dot(tangent(ws, k, a), r);
    }
    if (const int c = model.length_coordinate[k]; c >= 0)
      ws.bias_x(model.speed_index(c)) += ws.inertia_now[k] * ws.omega[k] / ws.len[k];
  }
}

/// Accelerations of a grounded chain (lift-off: the links below rope link 0 held at rest on the
/// ground, the rope's lower end still) into ws.accel_x, and the ground's force into ws.ground_*.
/// From d = p_1 - p_base = l_0 e_0 with d'' = -a_base:
///   l_0'' = l_0 |e_0'|^2 - a_base . e_0,   u_0a' = -(a_base . t_0a + 2 l_0' u_0a) / l_0,
/// and the ground's force lambda on the held links from the residuals of the rows of u_0a (l_0 t_0a
/// . lambda) and l_0 (e_0 . lambda).
void spatial_grounded_accelerations(const Model& model, Workspace& ws) {
  ws.accel_x.setZero();
  const Vec3 e = load(ws.dir, 0), r = load(ws.dir_rate, 0), a_base{ws.base_ax, ws.base_ay, ws.base_az};
  const double l = ws.len[0], l_rate = ws.len_rate[0];
  const Eigen::Index c0 = model.speed_index(model.length_coordinate[0]);
  for (int a = 0; a < 2; ++a) {
    const Vec3 t = tangent(ws, 0, a);
    ws.accel_x(a) = -(dot(a_base, t) + 2.0 * l_rate * dot(t, r)) / l;
  }
  ws.accel_x(c0) = l * ws.omega[0] - dot(a_base, e);
  for (int i = 0; i < model.n; ++i)
    if (const int c = model.length_coordinate[i]; c >= model.dof) ws.accel_x(model.speed_index(c)) = ws.len_accel[i];
  const auto residual = [&](Eigen::Index row) { return ws.mass_x.row(row).dot(ws.accel_x) - ws.rhs_x(row); };
  const Vec3 ground = residual(c0) * e + (residual(0) / l) * tangent(ws, 0, 0) + (residual(1) / l) * tangent(ws, 0, 1);
  ws.ground_x = ground.x;
  ws.ground_y = ground.y;
  ws.ground_z = ground.z;
}

void evaluate_spatial_ropes(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t,
                            double* dxdt) {
  const int n = model.n;
  const Eigen::Index speeds = model.speeds(), free = model.free_speeds();
  ++ws.evaluations;
  ws.dissipated_power = 0;
  ws.input_power = 0;
  spatial_kinematics(model, ws, phase, x, t);
  spatial_rope_mass_matrix(model, ws);
  for (int k = 0; k < n; ++k) ws.force_x[k] = ws.force_y[k] = ws.force_z[k] = 0.0;
  if (!model.wind.empty() || !model.dashpots.empty()) spatial_external_forces(model, ws, phase, ws.bias_x);
  const double input_before = ws.input_power;
  rope_forces(model, ws, ws.bias_x.data());
  double drum = ws.input_power - input_before;  // rope_forces adds only the drums' power to it
  if (!ws.grounded) {
    ws.mass_f = ws.mass_x.topLeftCorner(free, free);
    ws.llt_f.compute(ws.mass_f);
  }

  const Vec3 base_v = base_velocity(ws);
  const bool moving = base_v.x != 0.0 || base_v.y != 0.0 || base_v.z != 0.0;
  const bool need_reactions = !ws.lazy_reactions || model.any_pin_friction || moving || ws.grounded || free < speeds;
  Vec3 ground_applied;  // the ground's share of ws.force_*[1]
  const auto solve = [&](const double* reaction) {
    ws.rhs_x = ws.bias_x;
    add_spatial_pivot_torques(model, ws, reaction, ws.rhs_x);
    if (ws.grounded) {
      spatial_grounded_accelerations(model, ws);
      // The ground's force acts on the held links below the rope (their resultant, at link 1).
      const Vec3 ground{ws.ground_x, ws.ground_y, ws.ground_z};
      ws.force_x[1] += ground.x - ground_applied.x;
      ws.force_y[1] += ground.y - ground_applied.y;
      ws.force_z[1] += ground.z - ground_applied.z;
      ground_applied = ground;
    } else {
      free_block_accelerations(model, ws);
    }
    if (need_reactions) spatial_reactions(model, ws);
  };
  solve(nullptr);
  ws.reactions_current = need_reactions;
  pin_friction_fixed_point(model, ws, solve);

  drum += drum_forces(model, ws);
  spatial_powers_and_rates(model, ws, phase, x, ws.accel_x, drum, dxdt);
}

}  // namespace

namespace {

/// Calls visit(k, com, com_v, e, e') for every link: its centre of mass and that point's velocity,
/// with the links' lengths of the last kinematics (a rope of variable length at its current one).
template <class Visit>
void each_centre_of_mass(const Model& model, const Workspace& ws, Visit&& visit) {
  Vec3 pivot{ws.base_x, ws.base_y, ws.base_z}, v = base_velocity(ws);
  for (int k = 0; k < model.n; ++k) {
    const Vec3 e = load(ws.dir, k), r = load(ws.dir_rate, k);
    visit(k, pivot + ws.com_now[k] * e, v + ws.com_now[k] * r + ws.com_rate[k] * e, e, r);
    pivot = pivot + ws.len[k] * e;
    v = v + ws.len[k] * r + ws.len_rate[k] * e;
  }
}

}  // namespace

double spatial_energy(const Model& model, const Workspace& ws) {
  double energy = ws.strain_energy;
  each_centre_of_mass(model, ws, [&](int k, Vec3 com, Vec3 com_v, Vec3, Vec3 r) {
    energy += 0.5 * model.mass[k] * dot(com_v, com_v) + 0.5 * ws.inertia_now[k] * dot(r, r) +
              model.mass[k] * model.gravity * com.y;
  });
  return energy;
}

double boom_frame_energy(const Model& model, const Workspace& ws) {
  if (!model.spatial) return mechanical_energy(model, ws);
  // Per link: 1/2 m |v - W x rho|^2 + 1/2 I |e' - W x e|^2 + m g y - 1/2 m |W x rho|^2 - 1/2 I |W x e|^2
  // (a link's inertia I about its centre of mass acts across its axis only: no twist).
  const Vec3 w = frame_spin(ws);
  double energy = ws.strain_energy;
  each_centre_of_mass(model, ws, [&](int k, Vec3 com, Vec3 com_v, Vec3 e, Vec3 r) {
    const Vec3 carried = cross(w, from_axis(ws, com)), turned = cross(w, e);
    const Vec3 v_rel = com_v - carried, r_rel = r - turned;
    energy += 0.5 * model.mass[k] * (dot(v_rel, v_rel) - dot(carried, carried)) +
              0.5 * ws.inertia_now[k] * (dot(r_rel, r_rel) - dot(turned, turned)) + model.mass[k] * model.gravity * com.y;
  });
  return energy;
}

double axis_momentum(const Model& model, const Workspace& ws) {
  if (!model.spatial) return 0.0;
  // sum_k m_k (rho_k x v_k)_y + I_k (e_k x e_k')_y; (a x b)_y = a_z b_x - a_x b_z.
  double momentum = 0;
  each_centre_of_mass(model, ws, [&](int k, Vec3 com, Vec3 com_v, Vec3 e, Vec3 r) {
    momentum += model.mass[k] * cross(from_axis(ws, com), com_v).y + ws.inertia_now[k] * cross(e, r).y;
  });
  return momentum;
}

void spatial_link_tension(const Model& model, const Workspace& ws, int i, double& top, double& bottom) {
  const Vec3 e = load(ws.dir, i);
  top = -dot(Vec3{ws.reaction_x[i], ws.reaction_y[i], ws.reaction_z[i]}, e);
  bottom = i + 1 < model.n ? -dot(Vec3{ws.reaction_x[i + 1], ws.reaction_y[i + 1], ws.reaction_z[i + 1]}, e) : 0.0;
}

void spatial_wind_force(const Model& model, const Workspace& ws, const Phase& phase, std::size_t w, double* force,
                        double* velocity) {
  const WindModel& wind = model.wind[w];
  Vec3 pos, vel;
  point_state_3d(model, ws, wind.point, pos, vel);
  const double u = phase.wind_speed[w];
  const Vec3 rel = Vec3{u * wind.dir_x, 0.0, u * wind.dir_z} - vel;
  const Vec3 f = (wind.drag_factor * norm(rel)) * rel;
  force[0] = f.x;
  force[1] = f.y;
  force[2] = f.z;
  velocity[0] = vel.x;
  velocity[1] = vel.y;
  velocity[2] = vel.z;
}

void spatial_point_state(const Model& model, const Workspace& ws, const PointRef& p, double* position, double* velocity) {
  Vec3 pos, vel;
  point_state_3d(model, ws, p, pos, vel);
  position[0] = pos.x;
  position[1] = pos.y;
  position[2] = pos.z;
  velocity[0] = vel.x;
  velocity[1] = vel.y;
  velocity[2] = vel.z;
}

}  // namespace swaybound
