#include "swaybound/dynamics/posture.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "swaybound/core/error.hpp"

namespace swaybound {

namespace {

/// Link i's direction and rate from a spatial state: e normalised, e' without its part along e.
void direction_at(const Model& model, const double* x, int i, double* e, double* r) {
  const double* q = x + 3 * i;
  const double length = std::sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2]);
  for (int c = 0; c < 3; ++c) e[c] = q[c] / length;
  if (r == nullptr) return;
  const double* v = x + model.dof + 3 * i;
  const double along = e[0] * v[0] + e[1] * v[1] + e[2] * v[2];
  for (int c = 0; c < 3; ++c) r[c] = v[c] - along * e[c];
}

/// The angle between unit vectors a and b, atan2(|a x b|, a . b) (accurate near 0 and pi).
double angle_between(const double* a, const double* b) {
  const double cx = a[1] * b[2] - a[2] * b[1], cy = a[2] * b[0] - a[0] * b[2], cz = a[0] * b[1] - a[1] * b[0];
  return std::atan2(std::sqrt(cx * cx + cy * cy + cz * cz), a[0] * b[0] + a[1] * b[1] + a[2] * b[2]);
}

}  // namespace

void direction_from_angles(double theta, double phi, double theta_rate, double phi_rate, double* e, double* e_rate) {
  const double st = std::sin(theta), ct = std::cos(theta), sp = std::sin(phi), cp = std::cos(phi);
  e[0] = st * cp;
  e[1] = -ct * cp;
  e[2] = sp;
  e_rate[0] = ct * cp * theta_rate - st * sp * phi_rate;
  e_rate[1] = st * cp * theta_rate + ct * sp * phi_rate;
  e_rate[2] = cp * phi_rate;
}

double swing_angle(const Model& model, const double* x, int i) {
  if (!model.spatial) return std::fabs(x[i]);
  double e[3];
  direction_at(model, x, i, e, nullptr);
  return std::atan2(std::hypot(e[0], e[2]), -e[1]);
}

double relative_swing(const Model& model, const double* x, int i) {
  if (!model.spatial) return std::fabs(x[i] - (i > 0 ? x[i - 1] : 0.0));
  double e[3], above[3] = {0.0, -1.0, 0.0};
  direction_at(model, x, i, e, nullptr);
  if (i > 0) direction_at(model, x, i - 1, above, nullptr);
  return angle_between(e, above);
}

double swing_rate(const Model& model, const double* x, int i) {
  if (!model.spatial) return std::fabs(x[model.dof + i]);
  double e[3], r[3];
  direction_at(model, x, i, e, r);
  return std::sqrt(r[0] * r[0] + r[1] * r[1] + r[2] * r[2]);
}

double travel_plane_angle(const Model& model, const double* x, int i) {
  if (!model.spatial) return x[i];
  double e[3];
  direction_at(model, x, i, e, nullptr);
  return std::atan2(e[0], -e[1]);
}

double cross_plane_angle(const Model& model, const double* x, int i) {
  if (!model.spatial) return 0.0;
  double e[3];
  direction_at(model, x, i, e, nullptr);
  return std::atan2(e[2], -e[1]);
}

BoomFrame boom_frame(const Phase& phase, const Workspace& ws) {
  BoomFrame f;
  if (phase.slew_radius <= 0) return f;
  // The pivot at (R (cos psi - 1), ., R sin psi) (chain_spatial.cpp): the radial axis is (cos psi, sin psi).
  const double c = 1.0 + ws.base_x / phase.slew_radius, s = ws.base_z / phase.slew_radius;
  const double length = std::hypot(c, s);
  f.radial_x = c / length;
  f.radial_z = s / length;
  f.tangential_x = -f.radial_z;
  f.tangential_z = f.radial_x;
  return f;
}

double in_plane_sway(const Model& model, const double* x, int i, const BoomFrame& frame) {
  if (!model.spatial) return x[i];
  double e[3];
  direction_at(model, x, i, e, nullptr);
  return std::atan2(e[0] * frame.radial_x + e[2] * frame.radial_z, -e[1]);
}

double out_of_plane_sway(const Model& model, const double* x, int i, const BoomFrame& frame) {
  if (!model.spatial) return 0.0;
  double e[3];
  direction_at(model, x, i, e, nullptr);
  return std::atan2(e[0] * frame.tangential_x + e[2] * frame.tangential_z, -e[1]);
}

LoadComponents pivot_load_components(const Model& model, const Workspace& ws, int i, const BoomFrame& frame) {
  const auto k = static_cast<std::size_t>(i);
  LoadComponents c;
  c.x = ws.reaction_x[k];
  c.vertical = ws.reaction_y[k];
  c.z = model.spatial ? ws.reaction_z[k] : 0.0;
  c.radial = c.x * frame.radial_x + c.z * frame.radial_z;
  c.tangential = c.x * frame.tangential_x + c.z * frame.tangential_z;
  return c;
}

void write_start(const Model& model, const InitialState& start, std::vector<double>& x) {
  const auto n = static_cast<std::size_t>(model.n);
  SWAYBOUND_REQUIRE(start.theta.size() <= n && start.omega.size() <= n && start.phi.size() <= n &&
                        start.phi_rate.size() <= n,
                    "initial state has {} angles, {} rates, {} out-of-plane angles and {} rates for {} links",
                    start.theta.size(), start.omega.size(), start.phi.size(), start.phi_rate.size(), model.n);
  SWAYBOUND_REQUIRE(x.size() == static_cast<std::size_t>(model.state_size()), "state has {} entries, the model {}",
                    x.size(), model.state_size());
  if (!model.spatial) {
    SWAYBOUND_REQUIRE(start.phi.empty() && start.phi_rate.empty(),
                      "a planar chain has no out-of-plane angles (got {} and {} rates)", start.phi.size(),
                      start.phi_rate.size());
    std::copy(start.theta.begin(), start.theta.end(), x.begin());
    std::copy(start.omega.begin(), start.omega.end(), x.begin() + model.dof);
    return;
  }
  const auto at = [](const std::vector<double>& v, std::size_t i) { return i < v.size() ? v[i] : 0.0; };
  for (std::size_t i = 0; i < n; ++i)
    direction_from_angles(at(start.theta, i), at(start.phi, i), at(start.omega, i), at(start.phi_rate, i), &x[3 * i],
                          &x[static_cast<std::size_t>(model.dof) + 3 * i]);
}

}  // namespace swaybound
