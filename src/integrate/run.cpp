#include "swaybound/integrate/run.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <optional>

#include <boost/math/tools/toms748_solve.hpp>
#include <boost/numeric/odeint.hpp>

#include "swaybound/core/cancel.hpp"
#include "swaybound/integrate/extremes.hpp"
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
    case RunStatus::rope_slack: return "rope_slack";
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

namespace {

/// Dormand-Prince 5(4) with its continuous extension (Odeint's dense-output stepper), as the
/// driver's loop uses a method: `step` takes one accepted step towards t_end, `interpolate` serves
/// the previous and the current accepted step, `sample` the current one.
class Dopri5Method {
 public:
  Dopri5Method(const RunSettings& s, const State& x, double t, double dt)
      : stepper_(odeint::make_dense_output(s.atol, s.rtol, odeint::runge_kutta_dopri5<State>())) {
    stepper_.initialize(x, t, dt);
    // Copy-assigned each step: no allocation after this one.
    previous_ = stepper_;
  }
  /// One accepted step, shortened to end on t_end. Odeint retries rejected trial steps itself and
  /// throws when none can be accepted. Returns true (the guard is not consulted on rejections).
  bool step(ChainSystem& system, double t_end, StepGuard&) {
    const double remaining = t_end - stepper_.current_time();
    if (stepped_) {
      previous_ = stepper_;  // the previous step's interpolant, for extremes near a step boundary
      have_previous_ = true;
    }
    if (stepper_.current_time_step() > remaining)
      stepper_.initialize(stepper_.current_state(), stepper_.current_time(), remaining);
    start_ = stepper_.do_step(std::ref(system)).first;
    stepped_ = true;
    return true;
  }
  double time() const { return stepper_.current_time(); }
  const State& state() const { return stepper_.current_state(); }
  double step_start() const { return start_; }
  double span_start() const { return have_previous_ ? previous_.previous_time() : start_; }
  void interpolate(double ts, State& out) {
    if (have_previous_ && ts < stepper_.previous_time())
      previous_.calc_state(ts, out);
    else
      stepper_.calc_state(ts, out);
  }
  void sample(double ts, State& out) { stepper_.calc_state(ts, out); }
  void close(double) {}
  double next_step() const { return std::max(stepper_.current_time_step(), 1e-6); }

 private:
  using DenseStepper = decltype(odeint::make_dense_output(1.0, 1.0, odeint::runge_kutta_dopri5<State>()));
  DenseStepper stepper_, previous_;
  bool stepped_ = false, have_previous_ = false;
  double start_ = 0;
};

/// Runge-Kutta-Fehlberg 7(8) under Odeint's step-size control. Odeint has no dense output for it:
/// a state inside an accepted step is computed by one uncontrolled RKF78 step from the step's
/// start to that time (shorter than the accepted step, so at least as accurate), which keeps it at
/// the stepper's own order.
class Rkf78Method {
 public:
  Rkf78Method(const RunSettings& s, const State& x, double t, double dt, ChainSystem& system)
      : stepper_(odeint::make_controlled(s.atol, s.rtol, odeint::runge_kutta_fehlberg78<State>())), system_(system),
        x_(x), x_old_(x), x_older_(x), t_(t), t_old_(t), t_older_(t), dt_(dt) {}
  /// One accepted step towards t_end; rejected trials go to the guard. False when it stops the run.
  bool step(ChainSystem& system, double t_end, StepGuard& guard) {
    if (stepped_) {
      x_older_ = x_old_;
      t_older_ = t_old_;
      have_older_ = true;
    }
    t_old_ = t_;
    x_old_ = x_;
    for (;;) {
      dt_ = std::min(dt_, t_end - t_);
      if (stepper_.try_step(std::ref(system), x_, t_, dt_) != odeint::fail) break;
      if (!guard.reject(t_, dt_)) return false;
    }
    stepped_ = true;
    return true;
  }
  double time() const { return t_; }
  const State& state() const { return x_; }
  double step_start() const { return t_old_; }
  double span_start() const { return have_older_ ? t_older_ : t_old_; }
  void interpolate(double ts, State& out) {
    if (have_older_ && ts < t_old_)
      from_start(x_older_, t_older_, ts, out);
    else
      from_start(x_old_, t_old_, ts, out);
  }
  void sample(double ts, State& out) { from_start(x_old_, t_old_, ts, out); }
  /// A step that closed the segment lands exactly on its end.
  void close(double t_end) { t_ = t_end; }
  double next_step() const { return std::max(dt_, 1e-6); }

 private:
  void from_start(const State& start, double t_start, double ts, State& out) {
    out = start;
    if (ts > t_start) sampler_.do_step(std::ref(system_), out, t_start, ts - t_start);
  }
  decltype(odeint::make_controlled(1.0, 1.0, odeint::runge_kutta_fehlberg78<State>())) stepper_;
  odeint::runge_kutta_fehlberg78<State> sampler_;
  ChainSystem& system_;
  State x_, x_old_, x_older_;
  double t_, t_old_, t_older_, dt_;
  bool stepped_ = false, have_older_ = false;
};

/// The ends of rope links whose tension must stay >= 0: the top end of every rope link, and its
/// bottom end when a link hangs below it (the bottom end of the last link is free).
struct RopeEnd {
  int link;
  bool top;
};

std::vector<RopeEnd> rope_ends(const Model& model) {
  std::vector<RopeEnd> ends;
  for (int i = 0; i < model.n; ++i) {
    if (model.kind[static_cast<std::size_t>(i)] != LinkKind::rope) continue;
    ends.push_back({i, true});
    if (i + 1 < model.n) ends.push_back({i, false});
  }
  return ends;
}

/// The axial tension at a rope end [N] after `evaluate` and `finish_reactions`.
double end_tension(const Model& model, const Workspace& ws, const RopeEnd& end) {
  double top = 0, bottom = 0;
  link_tension(model, ws, end.link, top, bottom);
  return end.top ? top : bottom;
}

class Driver final : public DenseProbe {
 public:
  Driver(const Model& model, Workspace& ws, int scenario, const RunSettings& settings, const Observer& on_step,
         const Observer& on_sample)
      : model_(model), ws_(ws), settings_(settings), on_step_(on_step), on_sample_(on_sample),
        system_(model, ws, scenario), guard_(settings.max_steps, settings.min_step, settings.max_seconds),
        scratch_(static_cast<std::size_t>(model.state_size())),
        sample_(static_cast<std::size_t>(model.state_size())), probe_state_(static_cast<std::size_t>(model.state_size())),
        ends_(rope_ends(model)) {
    guard_.unconverged = &ws.friction_unconverged;
    if (!ends_.empty()) {
      slack_state_.resize(static_cast<std::size_t>(model.state_size()));
      slack_.emplace(static_cast<int>(ends_.size()), [this](const StepView& v, double* q) {
        for (std::size_t e = 0; e < ends_.size(); ++e) q[e] = -end_tension(model_, *v.ws, ends_[e]);
      });
    }
  }

  RunOutcome run(State x) {
    const ScenarioModel& scenario = system_.scenario();
    ws_.friction_unconverged = 0;
    ws_.lazy_reactions = true;
    const long evaluations_before = ws_.evaluations;
    outcome_.audit_scale = model_.energy_scale;
    next_sample_ = 0;
    double t = 0;
    bool first = true;
    for (std::size_t k = 0; k < scenario.phases.size() && t < settings_.duration && guard_.ok(); ++k) {
      const Phase& phase = scenario.phases[k];
      if (phase.t1 <= t) continue;
      system_.enter_phase(k);
      // The segment's first state under its own inputs: the right-hand limit at the jump.
      system_.ensure(x, t, scratch_);
      if (first) outcome_.energy0 = mechanical_energy(model_, ws_);
      first = false;
      observe(x, t, on_step_, true, Segment::start);
      if (!guard_.ok()) break;  // a rope already slack at t = 0 or just after the jump
      emit_samples_up_to(t, true, [&](double, State& out) { out = x; });
      const double t_end = std::min(phase.t1, settings_.duration);
      final_segment_ = t_end >= settings_.duration;
      const double dt = std::min(initial_step_, t_end - t);
      if (settings_.method == Stepper::dopri5) {
        Dopri5Method method(settings_, x, t, dt);
        integrate_segment(method, x, t, t_end);
      } else {
        Rkf78Method method(settings_, x, t, dt, system_);
        integrate_segment(method, x, t, t_end);
      }
    }
    ws_.lazy_reactions = false;
    outcome_.t_reached = t;
    outcome_.x_reached = x;
    if (guard_.status() == RunStatus::rope_slack) {
      outcome_.t_reached = slack_time_;
      outcome_.x_reached = slack_state_;
    }
    outcome_.evaluations = ws_.evaluations - evaluations_before;
    if (guard_.ok() && ws_.friction_unconverged > 0)
      guard_.fail(RunStatus::friction_unconverged,
                  fmt::format("pin friction did not converge in {} evaluations", ws_.friction_unconverged));
    outcome_.status = guard_.status();
    outcome_.reason = guard_.reason();
    outcome_.steps = guard_.steps();
    outcome_.rejected = guard_.rejected();
    return outcome_;
  }

  StepView at(double t) override {
    t = std::clamp(t, from, to);
    interpolate_(t, probe_state_);
    system_(probe_state_, scratch_, t);
    return view(probe_state_, t);
  }

 private:
  enum class Segment { inside, start, end };

  /// The view of ws evaluated at (x, t) with the energy audit.
  StepView view(const State& x, double t) {
    finish_reactions(model_, ws_);
    const double energy = mechanical_energy(model_, ws_);
    const auto n = static_cast<std::size_t>(model_.n);
    const double residual = energy + x[2 * n] - x[2 * n + 1] - outcome_.energy0;
    StepView v{t, x.data(), &ws_, &system_.phase(), energy, residual};
    return v;
  }

  /// Calls `observer` with ws evaluated at (x, t); `audit` folds the residual into the outcome.
  /// The view of an accepted step inside a segment carries this driver as its dense probe.
  /// An observed accepted step (`audit`) is also checked for a slack rope, first: its probes
  /// re-evaluate the workspace, which is then evaluated at (x, t) again for the observer. The
  /// observer does not see a step in which a rope went slack.
  void observe(const State& x, double t, const Observer& observer, bool audit, Segment segment = Segment::inside) {
    StepView v = view(x, t);
    if (audit) outcome_.max_audit_residual = std::max(outcome_.max_audit_residual, std::fabs(v.audit_residual));
    v.segment_start = segment == Segment::start;
    v.segment_end = segment == Segment::end;
    if (segment != Segment::start && interpolate_) v.probe = this;
    if (audit && slack_) {
      const long probes = slack_->probes();
      watch_slack(v);
      if (!guard_.ok()) return;
      if (slack_->probes() != probes) {
        system_(x, scratch_, t);
        finish_reactions(model_, ws_);
      }
    }
    if (!observer) return;
    observer(v);
  }

  /// The least rope-end tension at time t on the dense output [N].
  double least_tension(double t) {
    const StepView v = at(t);
    double least = std::numeric_limits<double>::infinity();
    for (const auto& e : ends_) least = std::min(least, end_tension(model_, *v.ws, e));
    return least;
  }

  /// Feeds the slack watch; when some rope end's tension went below zero, locates the time it
  /// reached zero (the instant itself at a segment start, else on the dense output between the
  /// last time it was known positive and the negative value found) and ends the run there.
  void watch_slack(const StepView& v) {
    slack_->observe(v);
    int worst = -1;
    for (int e = 0; e < static_cast<int>(ends_.size()); ++e)
      if (slack_->max(e).value > 0 && (worst < 0 || slack_->max(e).time < slack_->max(worst).time)) worst = e;
    if (worst < 0) return;
    double crossing = slack_->max(worst).time;
    if (v.probe != nullptr) {
      // Every sample before this step's span was offered to the watch and found taut (>= 0), so
      // the zero lies between the span's start and the negative value found: locate it there.
      const double a = from, b = crossing;
      const double ta = least_tension(a), tb = least_tension(b);
      if (ta <= 0) {
        crossing = a;
      } else if (tb < 0) {
        const double tol = 1e-13 * std::max(1.0, std::fabs(b));
        std::uintmax_t iterations = 100;
        const auto found = boost::math::tools::toms748_solve(
            [this](double ts) { return least_tension(ts); }, a, b, ta, tb,
            [tol](double lo, double hi) { return std::fabs(hi - lo) <= tol; }, iterations);
        crossing = found.second;  // the upper end: the tension is <= 0 there
      }
      interpolate_(crossing, slack_state_);
    } else {
      slack_state_.assign(v.x, v.x + model_.state_size());  // slack at a segment start: that instant
    }
    slack_time_ = crossing;
    const RopeEnd& end = ends_[static_cast<std::size_t>(worst)];
    guard_.fail(RunStatus::rope_slack,
                fmt::format("rope '{}' went slack at t = {:.9g} s (its tension at the {} end reached zero): the "
                            "rigid-rope model does not hold after that, so the case has no valid values past it; an "
                            "elastic rope that can go slack is not modelled yet",
                            model_.names[static_cast<std::size_t>(end.link)], crossing, end.top ? "top" : "bottom"));
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

  /// The one integration loop of a segment [t, t_end), for either method: step, check against
  /// the guard, observe, sample; a step that reaches t_end closes the segment.
  template <class Method>
  void integrate_segment(Method& method, State& x, double& t, double t_end) {
    interpolate_ = [&](double ts, State& out) { method.interpolate(ts, out); };
    try {
      while (method.time() < t_end) {
        if (!method.step(system_, t_end, guard_)) break;
        const double t1 = method.time();
        const bool phase_end = t1 >= t_end - 1e-14 * std::max(1.0, t_end);
        system_.ensure(method.state(), t1, scratch_);
        if (!guard_.accept(method.state(), t1, t1 - method.step_start(), phase_end)) break;
        from = method.span_start();
        to = t1;
        observe(method.state(), t1, on_step_, true, phase_end ? Segment::end : Segment::inside);
        if (!guard_.ok()) break;  // a rope went slack
        emit_samples_up_to(t1, !phase_end || final_segment_, [&](double ts, State& out) { method.sample(ts, out); });
        if (phase_end) {
          method.close(t_end);
          break;
        }
      }
    } catch (const Interrupted&) {
      throw;
    } catch (const std::exception& e) {
      const bool finite = std::all_of(method.state().begin(), method.state().end(), [](double v) { return std::isfinite(v); });
      guard_.fail(finite ? RunStatus::step_collapse : RunStatus::non_finite,
                  fmt::format("no step could be accepted near t = {:.6g} s ({})", method.time(), e.what()));
    }
    interpolate_ = nullptr;
    x = method.state();
    t = method.time();
    initial_step_ = method.next_step();
  }

  const Model& model_;
  Workspace& ws_;
  const RunSettings& settings_;
  const Observer& on_step_;
  const Observer& on_sample_;
  ChainSystem system_;
  StepGuard guard_;
  State scratch_, sample_;
  State probe_state_;                              ///< state at a probe time [as x]
  std::function<void(double, State&)> interpolate_;  ///< the current segment's dense output
  bool final_segment_ = false;                     ///< this segment ends the run
  RunOutcome outcome_;
  std::vector<RopeEnd> ends_;                      ///< rope ends watched for slack
  std::optional<ExtremeFinder> slack_;             ///< max of -tension per rope end; empty without ropes
  double slack_time_ = 0;                          ///< when a rope's tension reached zero [s]
  State slack_state_;                              ///< the state then
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
  require_built_for(model, ws);
  State x(static_cast<std::size_t>(model.state_size()), 0.0);
  std::copy(start.theta.begin(), start.theta.end(), x.begin());
  std::copy(start.omega.begin(), start.omega.end(), x.begin() + model.n);
  Driver driver(model, ws, scenario, settings, on_step, on_sample);
  return driver.run(std::move(x));
}

}  // namespace swaybound
