#include "swaybound/integrate/run.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>

#include <boost/numeric/odeint.hpp>

#include "swaybound/core/cancel.hpp"
#include <fmt/format.h>

namespace swaybound {

namespace odeint = boost::numeric::odeint;
using State = std::vector<double>;

std::string_view status_name(RunStatus status) {
  switch (status) {
    case RunStatus::ok: return "ok";
    case RunStatus::non_finite: return "non_finite";
    case RunStatus::step_collapse: return "step_collapse";
    case RunStatus::step_budget: return "step_budget";
    case RunStatus::time_budget: return "time_budget";
    case RunStatus::friction_unconverged: return "friction_unconverged";
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

namespace {

/// The system functor handed to Odeint (by std::ref), remembering its last evaluation so an
/// observer at the same point reuses it instead of evaluating again.
struct System {
  const Model* model;
  Workspace* ws;
  double last_t = std::nan("");
  State last_x;
  void operator()(const State& x, State& dxdt, double t) {
    evaluate(*model, *ws, x.data(), t, dxdt.data());
    last_t = t;
    std::copy(x.begin(), x.end(), last_x.begin());
  }
  /// Forgets the last evaluation: the inputs change at a jump while (x, t) stay the same.
  void invalidate() { last_t = std::nan(""); }
  /// Makes ws hold the evaluation at (x, t).
  void ensure(const State& x, double t, State& scratch) {
    if (t == last_t && std::equal(x.begin(), x.end(), last_x.begin())) return;
    (*this)(x, scratch, t);
  }
};

bool finite(const State& x) {
  return std::all_of(x.begin(), x.end(), [](double v) { return std::isfinite(v); });
}

class Driver final : public DenseProbe {
 public:
  Driver(const Model& model, Workspace& ws, const RunSettings& settings, const Observer& on_step,
         const Observer& on_sample)
      : model_(model), ws_(ws), settings_(settings), on_step_(on_step), on_sample_(on_sample),
        system_{&model, &ws, std::nan(""), State(static_cast<std::size_t>(model.state_size()))},
        scratch_(static_cast<std::size_t>(model.state_size())),
        sample_(static_cast<std::size_t>(model.state_size())), probe_state_(static_cast<std::size_t>(model.state_size())),
        started_(std::chrono::steady_clock::now()) {}

  RunOutcome run(State x) {
    const ScenarioModel& scenario = model_.scenarios[static_cast<std::size_t>(ws_.scenario)];
    ws_.phase = 0;
    ws_.friction_unconverged = 0;
    ws_.lazy_reactions = true;
    const long evaluations_before = ws_.evaluations;
    outcome_.audit_scale = model_.energy_scale;
    next_sample_ = 0;
    double t = 0;
    bool first = true;
    for (std::size_t k = 0; k < scenario.phases.size() && t < settings_.duration && ok(); ++k) {
      const Phase& phase = scenario.phases[k];
      if (phase.t1 <= t) continue;
      ws_.phase = static_cast<int>(k);
      // The segment's first state under its own inputs: the right-hand limit at the jump.
      system_.invalidate();
      system_.ensure(x, t, scratch_);
      if (first) outcome_.energy0 = mechanical_energy(model_, ws_);
      first = false;
      observe(x, t, on_step_, true, Segment::start);
      emit_samples_up_to(t, true, [&](double, State& out) { out = x; });
      const double t_end = std::min(phase.t1, settings_.duration);
      final_segment_ = t_end >= settings_.duration;
      if (settings_.method == Stepper::dopri5)
        integrate_dopri5(x, t, t_end);
      else
        integrate_rkf78(x, t, t_end);
    }
    ws_.lazy_reactions = false;
    outcome_.t_reached = t;
    outcome_.evaluations = ws_.evaluations - evaluations_before;
    if (ok() && ws_.friction_unconverged > 0)
      fail(RunStatus::friction_unconverged,
           fmt::format("pin friction did not converge in {} evaluations", ws_.friction_unconverged));
    return outcome_;
  }

 private:
  bool ok() const { return outcome_.status == RunStatus::ok; }
  void fail(RunStatus status, std::string reason) {
    if (!ok()) return;
    outcome_.status = status;
    outcome_.reason = std::move(reason);
  }

  enum class Segment { inside, start, end };

  /// The view of ws evaluated at (x, t) with the energy audit.
  StepView view(const State& x, double t) {
    finish_reactions(model_, ws_);
    const double energy = mechanical_energy(model_, ws_);
    const auto n = static_cast<std::size_t>(model_.n);
    const double residual = energy + x[2 * n] - x[2 * n + 1] - outcome_.energy0;
    return StepView{t, x.data(), &ws_, energy, residual};
  }

  /// Calls `observer` with ws evaluated at (x, t); `audit` folds the residual into the outcome.
  /// The view of an accepted step inside a segment carries this driver as its dense probe.
  void observe(const State& x, double t, const Observer& observer, bool audit, Segment segment = Segment::inside) {
    StepView v = view(x, t);
    if (audit) outcome_.max_audit_residual = std::max(outcome_.max_audit_residual, std::fabs(v.audit_residual));
    if (!observer) return;
    v.segment_start = segment == Segment::start;
    v.segment_end = segment == Segment::end;
    if (segment != Segment::start && interpolate_) v.probe = this;
    observer(v);
  }

  /// Emits every output sample with time <= t (or < t when `include_t` is false: a sample on a
  /// jump belongs to the next phase), getting each state from `interpolate`.
  template <class Interpolate>
  void emit_samples_up_to(double t, bool include_t, Interpolate&& interpolate) {
    if (!on_sample_ || settings_.output_rate <= 0) return;
    const double slack = 1e-12 * std::max(1.0, t);
    for (;;) {
      const double ts = static_cast<double>(next_sample_) / settings_.output_rate;
      if (include_t ? ts > t + slack : ts >= t - slack) return;
      if (ts > settings_.duration * (1 + 1e-12)) return;
      interpolate(ts, sample_);
      system_(sample_, scratch_, ts);
      observe(sample_, ts, on_sample_, false);
      ++next_sample_;
    }
  }

 public:
  StepView at(double t) override {
    t = std::clamp(t, from, to);
    interpolate_(t, probe_state_);
    system_(probe_state_, scratch_, t);
    return view(probe_state_, t);
  }

 private:

  /// Checks after an accepted step; false when the run must stop. A short step that only closes
  /// a phase (`phase_end`) is not a collapse.
  bool after_step(const State& x, double t, double dt_taken, bool phase_end) {
    ++outcome_.steps;
    if (!finite(x)) {
      if (ws_.friction_unconverged > 0)  // the cause, not the symptom: a pin-friction iteration that diverged
        fail(RunStatus::friction_unconverged,
             fmt::format("pin friction did not converge in {} evaluations; the state became non-finite at t = {:.6g} s",
                         ws_.friction_unconverged, t));
      fail(RunStatus::non_finite, fmt::format("the state became non-finite at t = {:.6g} s", t));
      return false;
    }
    if (dt_taken < settings_.min_step && !phase_end) {
      fail(RunStatus::step_collapse,
           fmt::format("the step size fell to {:.3g} s (< {:.3g} s) at t = {:.6g} s", dt_taken, settings_.min_step, t));
      return false;
    }
    if (outcome_.steps > settings_.max_steps) {
      fail(RunStatus::step_budget, fmt::format("more than {} steps by t = {:.6g} s", settings_.max_steps, t));
      return false;
    }
    if ((outcome_.steps & 255) == 0) {
      throw_if_cancelled();  // a long case stops promptly on SIGINT/SIGTERM
      const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - started_).count();
      if (elapsed > settings_.max_seconds) {
        fail(RunStatus::time_budget,
             fmt::format("the wall-clock budget of {:.3g} s ran out at t = {:.6g} s", settings_.max_seconds, t));
        return false;
      }
    }
    return true;
  }

  void integrate_dopri5(State& x, double& t, double t_end) {
    auto stepper = odeint::make_dense_output(settings_.atol, settings_.rtol, odeint::runge_kutta_dopri5<State>());
    double dt = std::min(initial_step_, t_end - t);
    stepper.initialize(x, t, dt);
    // The previous accepted step's interpolant, kept so that an extreme near a step boundary can be
    // located on both sides of it (copy-assigned each step: no allocation after the first).
    auto previous = stepper;
    bool have_previous = false;
    interpolate_ = [&](double ts, State& out) {
      if (have_previous && ts < stepper.previous_time())
        previous.calc_state(ts, out);
      else
        stepper.calc_state(ts, out);
    };
    try {
      while (stepper.current_time() < t_end) {
        const double remaining = t_end - stepper.current_time();
        if (have_steps_) {
          previous = stepper;
          have_previous = true;
        }
        if (stepper.current_time_step() > remaining)
          stepper.initialize(stepper.current_state(), stepper.current_time(), remaining);
        const auto [t0, t1] = stepper.do_step(std::ref(system_));
        have_steps_ = true;
        const bool phase_end = t1 >= t_end - 1e-14 * std::max(1.0, t_end);
        system_.ensure(stepper.current_state(), t1, scratch_);
        if (!after_step(stepper.current_state(), t1, t1 - t0, phase_end)) break;
        from = have_previous ? previous.previous_time() : t0;
        to = t1;
        observe(stepper.current_state(), t1, on_step_, true, phase_end ? Segment::end : Segment::inside);
        emit_samples_up_to(t1, !phase_end || final_segment_, [&](double ts, State& out) { stepper.calc_state(ts, out); });
        if (phase_end) break;
      }
    } catch (const Interrupted&) {
      throw;
    } catch (const std::exception& e) {
      fail(finite(stepper.current_state()) ? RunStatus::step_collapse : RunStatus::non_finite,
           fmt::format("no step could be accepted near t = {:.6g} s ({})", stepper.current_time(), e.what()));
    }
    interpolate_ = nullptr;
    have_steps_ = false;
    x = stepper.current_state();
    t = stepper.current_time();
    initial_step_ = std::max(stepper.current_time_step(), 1e-6);
  }

  void integrate_rkf78(State& x, double& t, double t_end) {
    auto stepper = odeint::make_controlled(settings_.atol, settings_.rtol, odeint::runge_kutta_fehlberg78<State>());
    double dt = std::min(initial_step_, t_end - t);
    // Odeint has no dense output for RKF78: a sample inside an accepted step is computed by one
    // uncontrolled RKF78 step from the step's start to the sample time (shorter than the accepted
    // step, so at least as accurate), which keeps the sample at the stepper's own order.
    odeint::runge_kutta_fehlberg78<State> sampler;
    State x_old(x.size()), x_older(x.size());
    double t_old = t, t_older = t;
    bool have_older = false;
    const auto from_start = [&](const State& start, double t_start, double ts, State& out) {
      out = start;
      if (ts > t_start) sampler.do_step(std::ref(system_), out, t_start, ts - t_start);
    };
    interpolate_ = [&](double ts, State& out) {
      if (have_older && ts < t_old)
        from_start(x_older, t_older, ts, out);
      else
        from_start(x_old, t_old, ts, out);
    };
    int failures = 0;
    bool stepped = false;
    while (t < t_end) {
      dt = std::min(dt, t_end - t);
      if (stepped) {
        x_older = x_old;
        t_older = t_old;
        have_older = true;
      }
      t_old = t;
      x_old = x;
      if (stepper.try_step(std::ref(system_), x, t, dt) == odeint::fail) {
        ++outcome_.rejected;
        if (dt < settings_.min_step || ++failures > 500) {
          fail(RunStatus::step_collapse,
               fmt::format("no step could be accepted at t = {:.6g} s (step {:.3g} s)", t, dt));
          break;
        }
        continue;
      }
      failures = 0;
      stepped = true;
      const bool phase_end = t >= t_end - 1e-14 * std::max(1.0, t_end);
      system_.ensure(x, t, scratch_);
      if (!after_step(x, t, t - t_old, phase_end)) break;
      from = have_older ? t_older : t_old;
      to = t;
      observe(x, t, on_step_, true, phase_end ? Segment::end : Segment::inside);
      emit_samples_up_to(t, !phase_end || final_segment_,
                         [&](double ts, State& out) { from_start(x_old, t_old, ts, out); });
      if (phase_end) {
        t = t_end;
        break;
      }
    }
    interpolate_ = nullptr;
    initial_step_ = std::max(dt, 1e-6);
  }

  const Model& model_;
  Workspace& ws_;
  const RunSettings& settings_;
  const Observer& on_step_;
  const Observer& on_sample_;
  System system_;
  State scratch_, sample_;
  State probe_state_;                              ///< state at a probe time [as x]
  std::function<void(double, State&)> interpolate_;  ///< the current segment's dense output
  bool have_steps_ = false;                        ///< an accepted step exists in this segment (dopri5)
  bool final_segment_ = false;                     ///< this segment ends the run
  std::chrono::steady_clock::time_point started_;
  RunOutcome outcome_;
  long next_sample_ = 0;
  double initial_step_ = 1e-3;
};

}  // namespace

RunOutcome simulate_case(const Model& model, Workspace& ws, int scenario, const InitialState& start,
                         const RunSettings& settings, const Observer& on_step, const Observer& on_sample) {
  SWAYBOUND_REQUIRE(scenario >= 0 && scenario < static_cast<int>(model.scenarios.size()),
                    "scenario index {} out of range (model has {})", scenario, model.scenarios.size());
  SWAYBOUND_REQUIRE(start.theta.size() <= static_cast<std::size_t>(model.n) &&
                        start.omega.size() <= static_cast<std::size_t>(model.n),
                    "initial state has {} angles and {} rates for {} links", start.theta.size(), start.omega.size(),
                    model.n);
  SWAYBOUND_REQUIRE(settings.duration > 0, "duration must be > 0, got {}", settings.duration);
  State x(static_cast<std::size_t>(model.state_size()), 0.0);
  std::copy(start.theta.begin(), start.theta.end(), x.begin());
  std::copy(start.omega.begin(), start.omega.end(), x.begin() + model.n);
  ws.scenario = scenario;
  Driver driver(model, ws, settings, on_step, on_sample);
  return driver.run(std::move(x));
}

}  // namespace swaybound
