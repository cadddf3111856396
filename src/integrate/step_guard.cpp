// The run's vocabulary and budgets: status and event names, settings from a spec, and the
// StepGuard that checks every step of a case or of the FTLE against its budgets.
#include <algorithm>
#include <chrono>
#include <cmath>

#include <fmt/format.h>

#include "swaybound/core/cancel.hpp"
#include "swaybound/integrate/run.hpp"

namespace swaybound {

std::string_view status_name(RunStatus status) {
  switch (status) {
    case RunStatus::ok: return "ok";
    case RunStatus::non_finite: return "non_finite";
    case RunStatus::step_collapse: return "step_collapse";
    case RunStatus::step_budget: return "step_budget";
    case RunStatus::time_budget: return "time_budget";
    case RunStatus::friction_unconverged: return "friction_unconverged";
    case RunStatus::rope_slack: return "rope_slack";
    case RunStatus::touch_down: return "touch_down";
    case RunStatus::mode_chatter: return "mode_chatter";
  }
  return "unknown";
}

std::string_view event_name(ModeEventKind kind) {
  switch (kind) {
    case ModeEventKind::slack: return "slack";
    case ModeEventKind::taut: return "taut";
    case ModeEventKind::lift_off: return "lift_off";
    case ModeEventKind::touch_down: return "touch_down";
  }
  return "unknown";
}

RunSettings RunSettings::from_spec(const Spec& spec) {
  RunSettings s;
  s.duration = spec.cases.duration;
  s.method = spec.solver.method;
  s.rtol = spec.solver.rtol;
  s.atol = spec.solver.atol;
  s.max_steps = spec.solver.max_steps;
  s.min_step = spec.solver.min_step;
  s.max_seconds = spec.solver.max_seconds;
  s.output_rate = spec.cases.output_rate;
  return s;
}

StepGuard::StepGuard(long max_steps, double min_step, double max_seconds)
    : max_steps_(max_steps), min_step_(min_step), max_seconds_(max_seconds),
      started_(std::chrono::steady_clock::now()) {}

void StepGuard::fail(RunStatus status, std::string reason) {
  if (!ok()) return;
  status_ = status;
  reason_ = std::move(reason);
}

bool StepGuard::accept(const std::vector<double>& x, double t, double dt, bool closing) {
  ++steps_;
  rejected_in_a_row_ = 0;
  if (!std::all_of(x.begin(), x.end(), [](double v) { return std::isfinite(v); })) {
    if (unconverged != nullptr && *unconverged > 0)  // the cause, not the symptom: a pin-friction iteration that diverged
      fail(RunStatus::friction_unconverged,
           fmt::format("pin friction did not converge in {} evaluations; the state became non-finite at t = {:.6g} s",
                       *unconverged, t));
    fail(RunStatus::non_finite, fmt::format("the state became non-finite at t = {:.6g} s", t));
    return false;
  }
  if (dt < min_step_ && !closing) {
    fail(RunStatus::step_collapse,
         fmt::format("the step size fell to {:.3g} s (< {:.3g} s) at t = {:.6g} s", dt, min_step_, t));
    return false;
  }
  if (steps_ > max_steps_) {
    fail(RunStatus::step_budget, fmt::format("more than {} steps by t = {:.6g} s", max_steps_, t));
    return false;
  }
  if ((steps_ & 255) == 0) {
    throw_if_cancelled();
    const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - started_).count();
    if (elapsed > max_seconds_) {
      fail(RunStatus::time_budget,
           fmt::format("the wall-clock budget of {:.3g} s ran out at t = {:.6g} s", max_seconds_, t));
      return false;
    }
  }
  return true;
}

bool StepGuard::reject(double t, double dt) {
  ++rejected_;
  if (dt < min_step_ || ++rejected_in_a_row_ > 500 || !(dt > 0) || !std::isfinite(dt)) {
    fail(RunStatus::step_collapse, fmt::format("no step could be accepted at t = {:.6g} s (step {:.3g} s)", t, dt));
    return false;
  }
  return true;
}

}  // namespace swaybound
