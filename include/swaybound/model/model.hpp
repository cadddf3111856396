#pragma once
// The immutable mechanical model of a chain, built once from a Spec and shared by all threads.
//
// Generalised coordinates: absolute link angles theta_i from the downward vertical (i = 0 at the
// top). With link unit vectors e_i = (sin theta_i, -cos theta_i) and n_i = de_i/dtheta_i =
// (cos theta_i, sin theta_i), the centre of mass of link k is
//   r_k = p_base(t) + sum_{j<k} L_j e_j + c_k e_k,
// so dr_k/dtheta_i = a_ki n_i with a_ki = L_i (i < k), c_k (i = k), 0 (i > k). The constants
//   mu_ij = sum_k m_k a_ki a_kj + delta_ij I_i      [kg m^2]   (mass matrix: M_ij = mu_ij cos(theta_i - theta_j))
//   h_i   = m_i c_i + L_i sum_{k>i} m_k             [kg m]     (first moment about pivot i)
// depend only on the geometry and are computed here once.
#include <cstdint>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// One power-law rotary damper, in SI (see forces.hpp).
struct DamperLaw {
  double c = 0;                 ///< coefficient [N m s/rad]
  double alpha = 1;             ///< exponent [-]
  double max_torque = 0;        ///< saturation torque [N m], infinity for none
  double linear_below = 1e-3;   ///< [rad/s]
};

/// Per pivot (the upper end of each link): friction and damper laws, in SI.
struct PivotModel {
  double coulomb_torque = 0;    ///< constant friction torque [N m]
  double pin_friction = 0;      ///< mu * pin radius [m]: torque = pin_friction * |reaction|
  double transition_rate = 0.01;///< friction regularisation rate [rad/s]
  std::vector<DamperLaw> dampers;  ///< side by side at the pivot: their torques add
  bool has_friction() const { return coulomb_torque > 0 || pin_friction > 0; }
  bool has_damper() const {
    for (const auto& d : dampers)
      if (d.c > 0) return true;
    return false;
  }
};

/// A point of the chain: on link `link` at distance `at` from its upper pivot, or on the base
/// (link = -1) at offset (base_x, base_y) from the top pivot.
struct PointRef {
  int link = -1;
  double at = 0;
  double base_x = 0, base_y = 0;
};

struct DashpotModel {
  std::string name;
  PointRef a, b;
  double coefficient = 0;  ///< [N s/m]
};

struct WindModel {
  PointRef point;
  double drag_factor = 0;  ///< 1/2 rho Cd A [kg/m]
};

/// A time interval in which the base acceleration and the wind speeds are constant.
struct Phase {
  double t0 = 0, t1 = 0;            ///< [s]; the last phase ends at infinity
  double ax = 0, ay = 0;            ///< base acceleration [m/s^2]
  double x0 = 0, y0 = 0, vx0 = 0, vy0 = 0;  ///< base position [m] and velocity [m/s] at t0
  std::vector<double> wind_speed;   ///< per wind load [m/s]
};

struct ScenarioModel {
  std::string name;
  std::vector<Phase> phases;  ///< contiguous from t = 0
  /// Index of the phase containing t (t in [t0, t1)); the last phase for t beyond every boundary.
  int phase_at(double t) const;
};

struct Model {
  std::uint64_t id = 0;            ///< unique per build_model call in this process (copies share it): a Workspace records it
  int n = 0;                       ///< number of links
  double gravity = 0;              ///< [m/s^2]
  std::vector<std::string> names;  ///< link names
  std::vector<LinkKind> kind;
  std::vector<double> mass, length, com, inertia;  ///< [kg], [m], [m], [kg m^2] about the com
  Eigen::MatrixXd mu;              ///< mass-matrix constants mu_ij [kg m^2]
  std::vector<double> h;           ///< first moments h_i [kg m]
  std::vector<double> mass_below;  ///< sum_{k>=i} m_k [kg]
  std::vector<PivotModel> pivots;  ///< pivot at the upper end of each link
  std::vector<DashpotModel> dashpots;
  std::vector<WindModel> wind;
  std::vector<ScenarioModel> scenarios;
  bool any_pin_friction = false;
  bool any_pivot_torque = false;   ///< some pivot has friction or a damper
  double energy_scale = 0;         ///< g sum_k m_k depth_k at rest [J]: scale for audit residuals

  int state_size() const { return 2 * n + 2; }
};

/// Builds the model. com/inertia not given in the spec follow the link's (possibly sized) length
/// and mass as a uniform rod (c = L/2, I = m L^2 / 12).
Model build_model(const Spec& spec);

}  // namespace swaybound
