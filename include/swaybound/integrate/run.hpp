#pragma once
// One case: integrate a chain from an initial state over a duration with Boost.Odeint, restarting
// the stepper at every phase boundary (a jump in base acceleration or wind), watching for numerical
// trouble, and reporting each accepted step and each output sample to observers.
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
};
std::string_view status_name(RunStatus status);

struct InitialState {
  std::vector<double> theta;  ///< absolute link angles [rad]; missing links start at 0
  std::vector<double> omega;  ///< angular rates [rad/s]; missing links start at 0
};

struct RunSettings {
  double duration = 0;        ///< [s]
  Stepper method = Stepper::dopri5;
  double rtol = 1e-8, atol = 1e-10;
  long max_steps = 2'000'000;
  double min_step = 1e-12;    ///< [s]
  double max_seconds = 60;    ///< wall clock [s]
  double output_rate = 0;     ///< samples per second for `on_sample`; 0 = none
  static RunSettings from_spec(const Spec& spec);
};

/// What an observer sees: the time, the state, and the workspace evaluated at exactly this state
/// (reactions, torques, powers), plus the energy audit.
struct StepView {
  double t = 0;
  const double* x = nullptr;     ///< state, layout as in chain.hpp
  const Workspace* ws = nullptr;
  double energy = 0;             ///< mechanical energy [J]
  double audit_residual = 0;     ///< E + dissipated - work in - E(0) [J]
};

using Observer = std::function<void(const StepView&)>;

struct RunOutcome {
  RunStatus status = RunStatus::ok;
  std::string reason;             ///< empty when ok
  double t_reached = 0;           ///< [s]
  long steps = 0, rejected = 0;   ///< accepted and rejected steps
  long evaluations = 0;           ///< right-hand-side evaluations
  double energy0 = 0;             ///< [J]
  double max_audit_residual = 0;  ///< largest |audit residual| over the accepted steps [J]
  double audit_scale = 0;         ///< energy scale the residual is judged against [J]
};

/// Integrates one case. `on_step` (optional) sees t = 0 and every accepted step; `on_sample`
/// (optional) sees t = k / output_rate from dense output. Never throws for numerical trouble:
/// the outcome carries the status and the reason.
RunOutcome simulate_case(const Model& model, Workspace& ws, int scenario, const InitialState& start,
                         const RunSettings& settings, const Observer& on_step = {},
                         const Observer& on_sample = {});

}  // namespace swaybound
