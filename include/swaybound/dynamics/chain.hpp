#pragma once
// Equations of motion of a planar chain of N links on a moving base, in named stages:
//   kinematics -> mass matrix -> force elements -> accelerations -> pivot loads.
//
// Lagrange's equations with the absolute angles theta_i (see model.hpp for mu_ij and h_i) give,
// for i = 0..N-1 (e.g. Greenwood, Principles of Dynamics, 2nd ed., ch. 6; the N-link pendulum form):
//   sum_j mu_ij [cos(theta_i - theta_j) alpha_j + sin(theta_i - theta_j) omega_j^2]
//     + h_i [a_x cos theta_i + (g + a_y) sin theta_i] = Q_i
// where (a_x, a_y) is the base (top pivot) acceleration and Q_i the generalised force of
//   - pivot torques tau_p acting on link p from above (reaction on link p-1): Q_p += tau_p, Q_{p-1} -= tau_p;
//   - point forces F at distance s along link k: Q_i += F . n_i * (L_i for i < k, s for i = k).
// The pivot reaction F_i (force on link i from above) follows from Newton's second law for the
// sub-chain below pivot i:  F_i = sum_{k>=i} m_k (a_k - g) - sum_{k>=i} F_ext,k,  with a_k the
// centre-of-mass accelerations computed from the solved alpha (Newton-Euler pass).
//
// Load-dependent pin friction makes tau depend on |F_i|, which depends on alpha: the coupling is
// solved by fixed-point iteration on the pin-friction torques within every evaluation (see
// `evaluate`), not lagged from the previous step.
//
// State layout x (size 2N+2): theta[0..N) [rad], omega[0..N) [rad/s], dissipated energy [J],
// work done on the chain by the base and the wind [J]; with a travel drive's controller
// (model/controller.hpp) then the base's x [m] and speed [m/s] (Model::drive_state).
#include <algorithm>
#include <cstdint>
#include <vector>

#include <Eigen/Cholesky>
#include <Eigen/Dense>

#include "swaybound/model/model.hpp"

namespace swaybound {

/// Fixed-size scratch for small chains (N = 1..3) and a dynamic one for the general case.
template <int N>
struct Scratch {
  using Matrix = Eigen::Matrix<double, N, N>;
  using Vector = Eigen::Matrix<double, N, 1>;
  Matrix M;                    ///< mass matrix [kg m^2] (N x N)
  Matrix M_inverse;            ///< its inverse by cofactors, for fixed N <= 3 [1/(kg m^2)]
  Eigen::LLT<Matrix> llt;      ///< its Cholesky factor, for the dynamic size
  Vector bias;                 ///< generalised forces without pivot torques [N m] (N)
  Vector rhs;                  ///< bias plus pivot-torque terms [N m] (N)
  Vector alpha;                ///< angular accelerations [rad/s^2] (N)
  void resize(int n);
};

/// Per-thread scratch of the dynamics; sized once for a model, never reallocated by `evaluate`.
/// Fields are grouped by the stage that writes them; sizes are N = model.n unless noted. The
/// inputs of the current phase (base motion, wind speeds) are not kept here: every stage that
/// needs them takes the Phase as an argument.
struct Workspace {
  explicit Workspace(const Model& model);

  // The model this workspace was sized for (see `require_built_for`).
  std::uint64_t model_id = 0;        ///< Model::id of that model
  int links = 0;                     ///< its number of links N

  // Caller's choice, read by `evaluate`.
  bool lazy_reactions = false;       ///< skip reactions when the right-hand side does not need them

  // Stage 1, kinematics (`kinematics`).
  std::vector<double> sin_t, cos_t;  ///< sin, cos of theta_i [-] (N)
  std::vector<double> omega;         ///< omega_i [rad/s] (N)
  double base_x = 0, base_y = 0;     ///< base position [m]
  double base_vx = 0, base_vy = 0;   ///< base velocity [m/s]
  double base_ax = 0, base_ay = 0;   ///< base acceleration [m/s^2]

  // Stage 3, force elements (`external_forces`, `pivot_torques`).
  std::vector<double> force_x, force_y;  ///< external point forces summed per link [N] (N)
  std::vector<double> tau;           ///< pivot torque on link i from above [N m] (N)
  std::vector<double> tau_pin;       ///< of which load-dependent pin friction [N m] (N)
  std::vector<double> tau_fixed;     ///< of which dampers and constant friction [N m] (N)
  std::vector<double> slide;         ///< friction sliding factor tanh(w / w_t) per pivot [-] (N)

  // Stage 4, dynamics solve (`evaluate`: mass matrix, accelerations, pin-friction fixed point).
  std::vector<double> alpha;         ///< angular accelerations of the last evaluation [rad/s^2] (N)
  int friction_iterations = 0;       ///< iterations of the last pin-friction solve
  long friction_unconverged = 0;     ///< evaluations whose pin-friction iteration did not converge
  long evaluations = 0;              ///< right-hand-side evaluations
  Scratch<1> s1;                     ///< matrices for N = 1
  Scratch<2> s2;                     ///< matrices for N = 2
  Scratch<3> s3;                     ///< matrices for N = 3
  Scratch<Eigen::Dynamic> sn;        ///< matrices for N > 3

  // Stage 5, reactions (`pivot_reactions`, `finish_reactions`).
  std::vector<double> acc_x, acc_y;  ///< centre-of-mass accelerations [m/s^2] (N)
  std::vector<double> reaction_x, reaction_y;  ///< pivot force on link i from above [N] (N)
  std::vector<double> reaction;      ///< its magnitude [N] (N)
  std::vector<double> reaction_prev; ///< previous pin-friction iterate of `reaction` [N] (N)
  bool reactions_current = false;    ///< reaction_* belong to the last evaluation

  // Ropes of variable length (`kinematics`, `rope_forces`; models with model.variable_length()).
  // For a link of fixed length len = its length, com_now = its com, inertia_now = its inertia and
  // the rates are 0, so kinematics and energy read these for every model.
  std::vector<double> len, len_rate;     ///< link length [m] and its rate [m/s] (N)
  std::vector<double> len_accel;         ///< its acceleration where known (fixed, prescribed) [m/s^2] (N)
  std::vector<double> com_now, com_rate; ///< centre of mass from the upper pivot [m], its rate [m/s] (N)
  std::vector<double> inertia_now, inertia_rate;  ///< about the centre of mass [kg m^2], rate [kg m^2/s] (N)
  double drum_s = 0, drum_v = 0, drum_a = 0;  ///< rope hauled in at the drum [m], speed [m/s], acceleration [m/s^2]
  // Per elastic rope r (model.elastic_links[r]); R = their number.
  std::vector<char> rope_slack;          ///< caller's choice: rope r is evaluated with the slack law (no force) (R)
  std::vector<double> unstretched, unstretched_rate;  ///< ell [m], d ell/dt [m/s] (R)
  std::vector<double> stiffness;         ///< k = EA n / ell [N/m] (R)
  std::vector<double> stretch, stretch_rate;  ///< delta = length - ell [m], its rate [m/s] (R)
  std::vector<double> rope_force;        ///< tension of the fall by the rope law [N] (R)
  std::vector<double> taut_margin;       ///< min(k delta, k delta + c delta') [N]: > 0 exactly when the law pulls (R)
  double strain_energy = 0;              ///< sum of 1/2 k delta^2 over stretched ropes [J]
  // Per link: axial force a drum holds on a prescribed-length rope [N] (0 for other links) (N).
  std::vector<double> drum_force;
  // Lift-off: caller's choice `grounded` holds the links below rope link 0 on the ground; the
  // ground's force on them [N] (x, y up) after `evaluate`.
  bool grounded = false;
  double ground_x = 0, ground_y = 0;
  // Extended-coordinate dynamics (chain_general.cpp), sized model.extended once.
  Eigen::MatrixXd mass_x;                ///< mass matrix of the extended coordinates
  Eigen::VectorXd bias_x, rhs_x, accel_x;///< generalised forces and accelerations (extended)
  Eigen::MatrixXd mass_f;                ///< its free block (dof x dof)
  Eigen::VectorXd rhs_f, accel_f;        ///< (dof)
  Eigen::LLT<Eigen::MatrixXd> llt_f;     ///< Cholesky factor of the free block
  // For a spatial chain these are written in its generalised speeds (Model::speed_index; sizes
  // Model::speeds and Model::free_speeds for `extended` and `dof`), with the z components below.
  Eigen::MatrixXd jac_x, jac_y;          ///< com Jacobians d r_k / d q, per link row (N x extended)
  std::vector<double> acc0_x, acc0_y;    ///< com accelerations at q'' = 0 [m/s^2] (N)
  Eigen::MatrixXd jac_z;                 ///< spatial chains: z components of the com Jacobians (N x speeds)
  std::vector<double> acc0_z;            ///< spatial chains: z components of acc0 [m/s^2] (N)
  double ground_z = 0;                   ///< spatial chains: the ground's force across the travel [N]

  // Spatial chains (chain_spatial.cpp; model.spatial). Vectors of 3 per link are stored x, y, z
  // link after link; for these models sin_t/cos_t are not used and omega holds |e_i'|^2 [1/s^2].
  std::vector<double> dir;            ///< unit vector e_i along link i, from the state normalised [-] (3N)
  std::vector<double> dir_rate;       ///< e_i', the part perpendicular to e_i [1/s] (3N)
  std::vector<double> tangent;        ///< basis t_i1, t_i2 of the plane perpendicular to e_i, t_i1 x t_i2 = e_i [-] (6N)
  std::vector<double> spin;           ///< angular velocity w_i = e_i x e_i' [rad/s] (3N)
  std::vector<double> torque;         ///< pivot torque vector on link i from above [N m] (3N)
  std::vector<double> torque_fixed;   ///< of which the directional dampers' [N m] (3N)
  std::vector<double> force_z, acc_z, reaction_z;  ///< across the travel, as force_x etc. (N)
  double base_z = 0, base_vz = 0, base_az = 0;     ///< base across the travel [m], [m/s], [m/s^2]
  double base_spin = 0;                            ///< slewing: the boom's angular velocity about +y [rad/s] (-psi')
  double base_spin_rate = 0;                       ///< its rate [rad/s^2] (-psi'')
  double axis_x = 0;                               ///< slewing: the axis is the vertical through (axis_x, ., 0) [m]
  double heading_cos = 1, heading_sin = 0;         ///< slewing: cos and sin of the boom's angle psi (directional dampers turn with it)
  double luff_vx = 0, luff_vy = 0, luff_vz = 0;    ///< the pivot's velocity relative to the boom (luffing; the base's without slewing) [m/s]
  Eigen::MatrixXd mass_s;             ///< mass matrix of the tangent rates (2N x 2N) [kg m^2]
  Eigen::VectorXd bias_s, rhs_s, accel_s;  ///< generalised forces [N m] and tangent accelerations [1/s^2] (2N)
  Eigen::LLT<Eigen::MatrixXd> llt_s;  ///< Cholesky factor of mass_s

  // Energy audit (`external_forces`, `evaluate`): the last two components of dx/dt.
  double dissipated_power = 0;       ///< by dampers, friction, dashpots [W] (>= 0)
  double input_power = 0;            ///< into the chain by the base and the wind [W]
};

/// Throws ArgumentError unless `ws` was built for `model` (the same Model::id and link count):
/// a workspace sized for another chain would be read out of bounds.
void require_built_for(const Model& model, const Workspace& ws);

/// Stage 1: sin/cos of the angles, rates, and the base state at time t within `phase`.
void kinematics(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t);

/// Position [m] and velocity [m/s] of a point of the chain (after `kinematics`); for a spatial
/// chain their x and y components.
void point_state(const Model& model, const Workspace& ws, const PointRef& p, double& px, double& py,
                 double& vx, double& vy);

/// Drag force of wind load w [N] (x horizontal, y up) at the state of the last `kinematics`, with
/// the wind speed of `phase`; also its point's velocity (vx, vy) [m/s]. For a spatial chain the x
/// and y components of the 3-D force and velocity.
void wind_load_force(const Model& model, const Workspace& ws, const Phase& phase, std::size_t w, double& fx,
                     double& fy, double& vx, double& vy);

/// The z component (across the travel) of wind load w's drag force [N], as `wind_load_force`; 0 for
/// a planar chain.
double wind_load_force_z(const Model& model, const Workspace& ws, const Phase& phase, std::size_t w);

/// Stage 3a: wind (at the speeds of `phase`) and dashpot forces into ws.force_x/y and the
/// generalised force Q (added to q), and their dissipated and input power into ws.
void external_forces(const Model& model, Workspace& ws, const Phase& phase, double* q);

/// Stage 3b: pivot torques into ws.tau. With reaction == nullptr: dampers and constant friction
/// (pin friction 0); then with the reactions [N]: the same plus pin friction, reusing the first
/// call's reaction-independent parts (the pin-friction fixed point calls it repeatedly). The
/// friction laws are those of forces.hpp.
void pivot_torques(const Model& model, Workspace& ws, const double* reaction);

/// Stage 5: pivot reactions from the angular accelerations alpha (Newton-Euler over sub-chains).
void pivot_reactions(const Model& model, Workspace& ws, const double* alpha);

/// The whole right-hand side under the inputs of `phase`: dxdt = f(x, t). Uses fixed-size
/// matrices for N <= 3. With ws.lazy_reactions the pivot reactions are computed only when the
/// right-hand side needs them (pin friction, or a moving base whose work is audited);
/// `finish_reactions` completes them. Throws ArgumentError when ws was built for another model.
void evaluate(const Model& model, Workspace& ws, const Phase& phase, const double* x, double t, double* dxdt);

/// Completes a start state x whose angles and angular rates are set, for a model with elastic
/// ropes (no-op without): each rope length starts at its unstretched length under the drum at
/// t = 0 plus the quasi-static stretch, the stretch at which no rope length accelerates at t = 0
/// (with the rope's rate equal to the drum's, so its damper is idle), and ws.rope_slack is set
/// to each rope's branch there (slack where no pulling tension holds it). For a lift-off
/// (`lift_off`), rope link 0 instead spans its unstretched length less `slack` [m], the links below
/// it are at rest and ws.grounded is set.
void rope_start(const Model& model, Workspace& ws, const Phase& phase, bool lift_off, double slack,
                std::vector<double>& x);

/// Sets the base's x and speed in a start state x at t = 0 (`phase` the scenario's first) for a
/// model whose state holds them (Model::drive_states; no-op otherwise).
void drive_start(const Model& model, const Phase& phase, std::vector<double>& x);

/// Makes ws.reaction* belong to the last evaluation (no-op when they already do).
void finish_reactions(const Model& model, Workspace& ws);

/// Mechanical energy (kinetic + potential, potential zero at the base's y = 0, plus the strain
/// energy of elastic ropes) [J] after `evaluate` at the same state.
double mechanical_energy(const Model& model, const Workspace& ws);

/// The energy of a spatial chain in the boom frame (turning with the slewing about its axis) after
/// `evaluate`: relative kinetic energy + gravity potential - centrifugal potential
/// (1/2 m W^2 r_perp^2, with the links' own share) [J]; without slewing the mechanical energy.
double boom_frame_energy(const Model& model, const Workspace& ws);

/// The angular momentum of a spatial chain about the slewing axis (about the vertical through the
/// pivot's start without slewing), its component along +y [kg m^2/s], after `evaluate`.
double axis_momentum(const Model& model, const Workspace& ws);

/// Axial tension of link i at its upper and lower ends [N] after `evaluate` (positive = pulling;
/// the lower end of the last link is free, tension 0).
void link_tension(const Model& model, const Workspace& ws, int i, double& top, double& bottom);

/// The right-hand side of one case (a model under one scenario) as the Odeint system
/// (x, dxdt, t), evaluated under the phase selected by `enter_phase`. It remembers its last
/// evaluation, so `ensure` at the same point reuses it. The one system functor of the engine:
/// the case driver and the FTLE both integrate it. Pass it with std::ref so Odeint does not copy it.
class ChainSystem {
 public:
  using State = std::vector<double>;
  /// Checks the scenario index and that ws was built for model (ArgumentError otherwise); selects phase 0.
  ChainSystem(const Model& model, Workspace& ws, int scenario);

  /// dxdt = f(x, t) under the current phase.
  void operator()(const State& x, State& dxdt, double t) {
    evaluate(*model_, *ws_, *phase_, x.data(), t, dxdt.data());
    last_t_ = t;
    std::copy(x.begin(), x.end(), last_x_.begin());
  }
  /// Selects phase k of the scenario; forgets the last evaluation (the inputs jump while (x, t) stay).
  void enter_phase(std::size_t k);
  /// Makes the workspace hold the evaluation at (x, t), evaluating into `scratch` if needed.
  void ensure(const State& x, double t, State& scratch) {
    if (t == last_t_ && std::equal(x.begin(), x.end(), last_x_.begin())) return;
    (*this)(x, scratch, t);
  }
  const ScenarioModel& scenario() const { return *scenario_; }
  const Phase& phase() const { return *phase_; }
  const Model& model() const { return *model_; }
  Workspace& workspace() const { return *ws_; }

 private:
  const Model* model_;
  Workspace* ws_;
  const ScenarioModel* scenario_;
  const Phase* phase_;
  double last_t_;
  State last_x_;
};

}  // namespace swaybound
