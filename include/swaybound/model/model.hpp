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

#include "swaybound/model/controller.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// One power-law rotary damper, in SI (see forces.hpp).
struct DamperLaw {
  double c = 0;                 ///< coefficient [N m s/rad]
  double alpha = 1;             ///< exponent [-]
  double max_torque = 0;        ///< saturation torque [N m], infinity for none
  double linear_below = 1e-3;   ///< [rad/s]
  /// A directional damper (spec `axis`): the shaft's unit vector in the horizontal plane of the
  /// trolley (boom) frame, (axis_x, 0, axis_z); isotropic when false (forces.hpp).
  bool directional = false;
  double axis_x = 0, axis_z = 0;
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
  bool has_directional_damper() const {
    for (const auto& d : dampers)
      if (d.c > 0 && d.directional) return true;
    return false;
  }
};

/// A point of the chain: on link `link` at distance `at` from its upper pivot, or on the base
/// (link = -1) at offset (base_x, base_y) from the top pivot.
struct PointRef {
  int link = -1;
  double at = 0;
  double base_x = 0, base_y = 0;
  double base_z = 0;  ///< across the travel (spatial chains)
};

struct DashpotModel {
  std::string name;
  PointRef a, b;
  double coefficient = 0;  ///< [N s/m]
};

struct WindModel {
  PointRef point;
  double drag_factor = 0;  ///< 1/2 rho Cd A [kg/m]
  double dir_x = 1, dir_z = 0;  ///< horizontal unit vector the wind blows towards (spatial chains; planar: +x)
};

/// A time interval in which the base acceleration, the wind speeds and the drum's jerk are
/// constant (the drum's acceleration is continuous or jumps only at a phase boundary).
struct Phase {
  double t0 = 0, t1 = 0;            ///< [s]; the last phase ends at infinity
  double ax = 0, ay = 0;            ///< base acceleration at t0 [m/s^2]
  double jx = 0;                    ///< base jerk along x within the phase (a travel drive's S-curve) [m/s^3]
  double x0 = 0, y0 = 0, vx0 = 0, vy0 = 0;  ///< base position [m] and velocity [m/s] at t0
  double az = 0, z0 = 0, vz0 = 0;   ///< across the travel (spatial chains): acceleration, position, velocity at t0
  double jz = 0;                    ///< base jerk along z within the phase (a cross-travel drive's S-curve) [m/s^3]
  std::vector<double> wind_speed;   ///< per wind load [m/s]
  /// Rope hauled in at the drum since t = 0 [m], its speed [m/s], acceleration [m/s^2] at t0 and
  /// the jerk [m/s^3] within the phase (all 0 without a hoist).
  double drum_s0 = 0, drum_v0 = 0, drum_a0 = 0, drum_jerk = 0;
  int drum_link = -1;               ///< the rope link the drum winds, -1 for none
  /// Slewing (spatial chains; 0 radius for none): the top pivot at `slew_radius` from a vertical axis
  /// through (x0 - radius, ., z0) at t = 0 ... see chain_spatial.cpp; the slewing angle [rad], speed
  /// [rad/s] and acceleration [rad/s^2] at t0 and the jerk [rad/s^3] within the phase.
  double slew_radius = 0, slew_angle0 = 0, slew_rate0 = 0, slew_accel0 = 0, slew_jerk = 0;
  /// A travel drive's controller (model/controller.hpp): when active, the fields above give the
  /// drive's reference (speed command) and the base's x and its speed are states of the run.
  DriveControl control;
  /// Luffing (with slewing; all 0 without): the luffing profile's position, speed and acceleration
  /// at t0 and its jerk within the phase; radial luffing (luff_boom = 0): the radius is
  /// slew_radius + position [m]; boom luffing: the boom angle is luff_angle0 + position [rad] for a
  /// boom of length luff_boom [m] (see chain_spatial.cpp).
  double luff_boom = 0, luff_angle0 = 0, luff_s0 = 0, luff_v0 = 0, luff_a0 = 0, luff_jerk = 0;
};

struct ScenarioModel {
  std::string name;
  int hoist_link = -1;        ///< the rope link the drum winds, -1 for none
  bool lift_off = false;      ///< the load starts on the ground (see dynamics/rope.hpp)
  double lift_off_slack = 0;  ///< rope slack at t = 0 [m]
  std::vector<Phase> phases;  ///< contiguous from t = 0
  /// Index of the phase containing t (t in [t0, t1)); the last phase for t beyond every boundary.
  int phase_at(double t) const;
};

/// How a link's length behaves: fixed (rigid links, ropes no drum winds), prescribed (an
/// inextensible rope some scenario hoists: its length follows the drum), elastic (a rope whose
/// length is a coordinate of the state, pulled by its elastic law towards the drum's length).
enum class LengthKind { fixed, prescribed, elastic };

/// The axial law of an elastic rope link (dynamics/rope.hpp).
struct RopeLaw {
  double ea = 0;       ///< parts of line x EA of one part [N]: the fall's stiffness is ea / ell [N/m]
  double damping = 0;  ///< axial damping coefficient of the fall [N s/m]
};

struct Model {
  std::uint64_t id = 0;            ///< unique per build_model call in this process (copies share it): a Workspace records it
  int n = 0;                       ///< number of links
  double gravity = 0;              ///< [m/s^2]
  std::vector<std::string> names;  ///< link names
  std::vector<LinkKind> kind;
  std::vector<double> mass, length, com, inertia;  ///< [kg], [m], [m], [kg m^2] about the com
  // Ropes of variable length. A rope whose length changes keeps its centre of mass at the same
  // fraction of its length and its inertia about the centre of mass scales with the length squared.
  std::vector<LengthKind> length_kind;  ///< per link
  std::vector<int> parts;               ///< parts of line per link (1 for rigid links)
  std::vector<RopeLaw> rope_law;        ///< per link (used by elastic links only)
  /// Per link: index of its length among the extended coordinates (angles 0..n-1, then elastic
  /// lengths n..dof-1, then prescribed lengths dof..extended-1; for a spatial chain the link
  /// directions take 3 places each, so the lengths start at 3n), or -1 for a fixed length.
  std::vector<int> length_coordinate;
  std::vector<int> elastic_links;       ///< links with an elastic length, in link order
  int dof = 0;                          ///< coordinates in the state: n angles (3n direction entries) + elastic lengths
  int extended = 0;                     ///< dof + prescribed lengths
  bool variable_length() const { return !elastic_links.empty() || extended > dof; }
  /// Spatial chain (chain_spatial.cpp): the coordinates are the link directions e_i (3 per link),
  /// then the elastic rope lengths; their rates follow.
  bool spatial = false;
  /// The first length coordinate: n (planar) or 3n (spatial); elastic rope r's length is at
  /// length_start() + r.
  int length_start() const { return spatial ? 3 * n : n; }
  /// The index of extended coordinate `c` among the generalised speeds, which are what the mass
  /// matrix and generalised forces are written in: the same for a planar chain; for a spatial one
  /// the two tangent rates of each link come first (2n), then the lengths' rates.
  int speed_index(int c) const { return spatial && c >= 3 * n ? c - n : c; }
  /// The number of generalised speeds (all: `speeds`; without the prescribed lengths: `free_speeds`).
  int speeds() const { return spatial ? extended - n : extended; }
  int free_speeds() const { return spatial ? dof - n : dof; }
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

  /// A spatial chain some scenario slews: the state carries the boom-frame energy audit's two
  /// works after the inertial audit's (chain_spatial.cpp, boom_frame_energy).
  bool boom_frame = false;
  /// Some scenario's travel drive has a controller: the state ends with the base's x [m] and its
  /// speed [m/s] (at drive_state(), drive_state() + 1), integrated in every scenario of the model.
  bool drive_states = false;

  /// State layout: coordinates q[0..dof) (angles, then elastic rope lengths [m]; for a spatial
  /// chain the unit vectors e_0, e_1, ... [-]), their rates
  /// [dof..2 dof), dissipated energy [J], work done on the chain by the base, the wind and the drum [J];
  /// with boom_frame then the boom frame's work of the base (luffing) and the wind, and the work of
  /// the slewing's angular acceleration [J]; with drive_states then the base's x [m] and speed [m/s].
  int state_size() const { return 2 * dof + 2 + (boom_frame ? 2 : 0) + (drive_states ? 2 : 0); }
  int drive_state() const { return 2 * dof + 2 + (boom_frame ? 2 : 0); }
};

/// Builds the model. com/inertia not given in the spec follow the link's (possibly sized) length
/// and mass as a uniform rod (c = L/2, I = m L^2 / 12).
Model build_model(const Spec& spec);

/// The phases of scenario `s` under the wind loads `wind` (as build_model makes them): a model
/// whose scenario inputs change (an uncertain value, checks/worst_search.hpp) rebuilds only these.
ScenarioModel build_scenario(const ScenarioSpec& s, const std::vector<WindSpec>& wind);

}  // namespace swaybound
