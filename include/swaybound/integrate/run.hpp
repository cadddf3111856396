#pragma once
// One case: integrate a chain from an initial state over a duration with Boost.Odeint, restarting
// the stepper at every phase boundary (a jump in base acceleration or wind), watching for numerical
// trouble, and reporting each accepted step and each output sample to observers.
#include <chrono>
#include <functional>
#include <string>
#include <string_view>
#include <vector>

#include "swaybound/dynamics/chain.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

enum class RunStatus {
  ok,
  non_finite,            ///< the state became NaN or infinite
  step_collapse,         ///< the step size fell below the minimum, or no step could be accepted
  step_budget,           ///< more than max_steps steps
  time_budget,           ///< the wall-clock budget per case ran out
  friction_unconverged,  ///< the pin-friction fixed point did not converge at some evaluation
  rope_slack,            ///< a rope link's tension went below zero: the rigid-rope model broke down
  touch_down,            ///< a lifted load came down to the ground again (setting down is not modelled)
  mode_chatter,          ///< a rope or the ground switched branches more often than the run allows
  // The last status: checks/case_wire.cpp reads statuses up to mode_chatter.
};
std::string_view status_name(RunStatus status);

/// The budgets of one integration and the checks of every step against them, shared by the case
/// driver and the FTLE: a non-finite state, a step below the minimum (or no step accepted after
/// 500 tries), more than the step budget, the wall-clock budget (checked every 256 steps, with
/// cancellation: a long run stops promptly on SIGINT/SIGTERM by throwing Interrupted). The first
/// failure is kept with its reason; later ones do not overwrite it.
class StepGuard {
 public:
  StepGuard(long max_steps, double min_step, double max_seconds);

  /// Checks an accepted step of length dt [s] that ended at (x, t); a short step that only closes
  /// an interval (`closing`) is not a collapse. False when the run must stop. When the state
  /// became non-finite and `*unconverged` (if set) counts pin-friction evaluations that did not
  /// converge, the cause reported is friction_unconverged, not the non-finite symptom.
  bool accept(const std::vector<double>& x, double t, double dt, bool closing);
  /// Checks a rejected step whose retry is `dt` [s] at t. False when the run must stop.
  bool reject(double t, double dt);
  /// Records a failure (no-op after the first).
  void fail(RunStatus status, std::string reason);

  bool ok() const { return status_ == RunStatus::ok; }
  RunStatus status() const { return status_; }
  const std::string& reason() const { return reason_; }
  long steps() const { return steps_; }
  long rejected() const { return rejected_; }
  /// Optional: the counter of unconverged pin-friction evaluations (Workspace::friction_unconverged).
  const long* unconverged = nullptr;

 private:
  long max_steps_;
  double min_step_, max_seconds_;
  std::chrono::steady_clock::time_point started_;
  RunStatus status_ = RunStatus::ok;
  std::string reason_;
  long steps_ = 0, rejected_ = 0;
  int rejected_in_a_row_ = 0;
};

struct InitialState {
  std::vector<double> theta;  ///< absolute link angles [rad]; missing links start at 0
  std::vector<double> omega;  ///< angular rates [rad/s]; missing links start at 0
  /// Spatial chains: each link's angle out of the travel plane after theta in it (dynamics/posture.hpp)
  /// [rad] and its rate [rad/s]; missing links start at 0. Empty for planar chains.
  std::vector<double> phi{}, phi_rate{};
  /// Elastic ropes (model.elastic_links order): their length [m] and its rate [m/s] at t = 0. Empty:
  /// each starts at the quasi-static stretch (rope_start).
  std::vector<double> rope_length{}, rope_rate{};
  /// A start not given as angles: the values its set gave it, which the angles and rates above
  /// were derived from (cases/case_space.hpp, start_quantities): per mode the amplitude, then per
  /// mode the phase [rad] (modal), or the steady base acceleration [m/s^2] and wind speed [m/s]
  /// (equilibrium; NaN: each wind load's own speed). For reports only; the run does not read it.
  std::vector<double> quantities{};
};

struct RunSettings {
  double duration = 0;        ///< [s]
  Stepper method = Stepper::dopri5;
  double rtol = 1e-8, atol = 1e-10;
  long max_steps = 2'000'000;
  double min_step = 1e-12;    ///< [s]
  double max_seconds = 60;    ///< wall clock [s]
  double output_rate = 0;     ///< samples per second for `on_sample`; 0 = none
  long max_switches = 100'000;  ///< switches of contact laws per case before mode_chatter
  static RunSettings from_spec(const Spec& spec);
};

class DenseProbe;

enum class ModeEventKind { slack, taut, lift_off, touch_down };
std::string_view event_name(ModeEventKind kind);

/// A located switch of a contact law: an elastic rope going slack or taut again, a load leaving
/// the ground or touching it again.
struct ModeEvent {
  double time = 0;   ///< [s]
  int link = -1;     ///< the rope link
  ModeEventKind kind = ModeEventKind::slack;
  double value = 0;  ///< slack/taut: the rope's stretch [m]; lift_off: its tension [N]; touch_down: ground height [m]
};

/// What an observer sees: the time, the state, and the workspace evaluated at exactly this state
/// (reactions, torques, powers), plus the energy audit.
///
/// A run is cut into segments at every jump of an input (phase boundaries of base acceleration and
/// wind). `on_step` sees each segment's first state evaluated under the segment's own inputs
/// (`segment_start`: the right-hand limit at a jump, and t = 0), every accepted step, and the
/// segment's last state under the old inputs (`segment_end`: the left-hand limit), so both sides of
/// every jump are observed at the same t.
struct StepView {
  double t = 0;
  const double* x = nullptr;     ///< state, layout as in chain.hpp
  const Workspace* ws = nullptr;
  const Phase* phase = nullptr;  ///< the inputs (base motion, wind) ws was evaluated under
  double energy = 0;             ///< mechanical energy [J]
  double audit_residual = 0;     ///< E + dissipated - work in - E(0) [J]
  /// The same in the boom frame (model.boom_frame; 0 otherwise): E_boom + dissipated - the boom
  /// frame's work of the base and wind - the work of the slewing's angular acceleration - E_boom(0),
  /// E_boom as dynamics/chain.hpp's boom_frame_energy [J].
  double boom_audit_residual = 0;
  bool segment_start = false;    ///< first state of a segment (t = 0 or just after a jump)
  bool segment_end = false;      ///< last state of a segment (just before a jump, or the end of the run)
  /// Evaluates the run between accepted steps (on_step views of accepted steps only; null at a
  /// segment start and for samples).
  DenseProbe* probe = nullptr;
};

/// The run between accepted steps, from the stepper's dense output (Dormand-Prince: its
/// continuous extension; RKF78: one uncontrolled step from the start of the step holding t). It
/// covers the previous and the current accepted step of the segment, [from, to]. Each `at` call
/// re-evaluates the workspace at the interpolated state, so read everything needed from a view
/// before probing: an earlier view's `ws` no longer describes it.
class DenseProbe {
 public:
  double from = 0, to = 0;  ///< the span `at` accepts [s]
  /// The view at time t (clamped to [from, to]); valid until the next call.
  virtual StepView at(double t) = 0;

 protected:
  ~DenseProbe() = default;
};

using Observer = std::function<void(const StepView&)>;

struct RunOutcome {
  RunStatus status = RunStatus::ok;
  std::string reason;             ///< empty when ok
  double t_reached = 0;           ///< [s]; for rope_slack: when the tension reached zero
  std::vector<double> x_reached;  ///< the state at t_reached (layout as in chain.hpp)
  long steps = 0, rejected = 0;   ///< accepted and rejected steps
  long evaluations = 0;           ///< right-hand-side evaluations
  double energy0 = 0;             ///< [J]
  double max_audit_residual = 0;  ///< largest |audit residual| over the accepted steps [J]
  double audit_scale = 0;         ///< energy scale the residual is judged against [J]
  double boom_energy0 = 0;        ///< boom frame (model.boom_frame) [J]
  double max_boom_audit_residual = 0;  ///< largest |boom_audit_residual| over the accepted steps [J]
  long switches = 0;              ///< located switches of contact laws (ropes slack/taut, ground)
  std::vector<ModeEvent> events;  ///< the first kMaxRecordedEvents of them, in time order
  static constexpr std::size_t kMaxRecordedEvents = 1000;
};

/// Integrates one case. `on_step` (optional) sees every segment start, every accepted step and
/// every segment end (see StepView); `on_sample` (optional) sees t = k / output_rate from dense
/// output. A sample that falls on a jump is right-continuous: it is taken under the new phase,
/// except at the end of the run.
///
/// A rope link is a rigid bar that may only pull: when the axial tension at either end of any rope
/// link goes below zero (strictly; a tolerance of 0) the run ends with rope_slack. The tension is
/// watched as the case's extremes are (integrate/extremes.hpp: at every accepted step, on both sides
/// of every jump, and inside steps on the dense output), and the time it reached zero is located
/// on the dense output to the solver's accuracy; t_reached and x_reached are that time and state
/// (a tension already negative at t = 0 or just after a jump fails at that instant). Observers may
/// have seen the step in which it happened. Never throws for numerical trouble:
/// the outcome carries the status and the reason. Throws ArgumentError for a bad scenario, start
/// or duration, or a workspace built for another model.
RunOutcome simulate_case(const Model& model, Workspace& ws, int scenario, const InitialState& start,
                         const RunSettings& settings, const Observer& on_step = {},
                         const Observer& on_sample = {});

}  // namespace swaybound
