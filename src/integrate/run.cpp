#include "swaybound/integrate/run.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <optional>

#include <boost/math/tools/toms748_solve.hpp>
#include <boost/numeric/odeint.hpp>

#include "swaybound/core/cancel.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/integrate/extremes.hpp"
#include "methods.hpp"
#include "mode_watch.hpp"
#include <fmt/format.h>

namespace swaybound {

namespace odeint = boost::numeric::odeint;
using State = std::vector<double>;

namespace {

using integrate_detail::Dopri5Method;
using integrate_detail::ModeWatch;
using integrate_detail::Rkf78Method;

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
    if (model.length_kind[static_cast<std::size_t>(i)] == LengthKind::elastic) continue;  // has its own law
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
        ends_(rope_ends(model)), watch_(model, model.scenarios[static_cast<std::size_t>(scenario)].lift_off) {
    guard_.unconverged = &ws.friction_unconverged;
    h_start_.resize(static_cast<std::size_t>(watch_.count()));
    h_mid_.resize(h_start_.size());
    h_end_.resize(h_start_.size());
    h_probe_.resize(h_start_.size());
    switch_state_.resize(static_cast<std::size_t>(model.state_size()));
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
      const double t_end = std::min(phase.t1, settings_.duration);
      // Segments of the phase: cut again wherever a contact law switches.
      while (t < t_end && guard_.ok()) {
        system_.enter_phase(k);
        // The segment's first state under its own inputs: the right-hand limit at the jump.
        system_.ensure(x, t, scratch_);
        if (first) outcome_.energy0 = mechanical_energy(model_, ws_);
        if (first && model_.boom_frame) outcome_.boom_energy0 = boom_frame_energy(model_, ws_);
        first = false;
        if (watch_.active()) watch_.indicators(ws_, h_start_.data());
        observe(x, t, on_step_, true, Segment::start);
        if (!guard_.ok()) break;  // a rigid rope already slack at t = 0 or just after the jump
        emit_samples_up_to(t, true, [&](double, State& out) { out = x; });
        final_segment_ = t_end >= settings_.duration;
        const double dt = std::min(initial_step_, t_end - t);
        if (settings_.method == Stepper::dopri5) {
          Dopri5Method method(settings_, x, t, dt);
          integrate_segment(method, x, t, t_end);
        } else {
          Rkf78Method method(settings_, x, t, dt, system_);
          integrate_segment(method, x, t, t_end);
        }
        if (switching_ >= 0) switch_branch(t);
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
    const auto dof = static_cast<std::size_t>(model_.dof);
    const double residual = energy + x[2 * dof] - x[2 * dof + 1] - outcome_.energy0;
    StepView v{t, x.data(), &ws_, &system_.phase(), energy, residual};
    if (model_.boom_frame)
      v.boom_audit_residual =
          boom_frame_energy(model_, ws_) + x[2 * dof] - x[2 * dof + 2] - x[2 * dof + 3] - outcome_.boom_energy0;
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
    if (audit) outcome_.max_boom_audit_residual = std::max(outcome_.max_boom_audit_residual, std::fabs(v.boom_audit_residual));
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

  /// Looks for a switch of a contact law within the accepted step [t0, t1] (ws evaluated at t1):
  /// an indicator negative at t1, at the step's midpoint, or at the vertex of the parabola through
  /// the three when that vertex dips below zero. The earliest switch is located on the dense output
  /// (TOMS 748) and kept in switch_time_ (the end of the final bracket, where the indicator is <= 0),
  /// switch_state_ and switching_; ws is left evaluated at t1 when there is none.
  bool find_switch(double t0, double t1, const State& x1) {
    const int count = watch_.count();
    watch_.indicators(ws_, h_end_.data());
    const double tm = 0.5 * (t0 + t1);
    indicators_at(tm, h_mid_.data());
    double best = std::numeric_limits<double>::infinity();
    int best_j = -1;
    for (int j = 0; j < count; ++j) {
      const auto u = static_cast<std::size_t>(j);
      double a = t0, b = t1, ha = h_start_[u], hb = h_end_[u];
      if (ha <= 0 && (h_mid_[u] < 0 || hb < 0)) {
        b = t0;  // violated at once: the branch entered at t0 does not hold (a graze)
      } else if (h_mid_[u] < 0) {
        b = tm;
        hb = h_mid_[u];
      } else if (hb < 0) {
        a = tm;
        ha = h_mid_[u];
      } else {
        // A dip between the samples: the vertex of the parabola through them.
        const double d1 = (h_mid_[u] - h_start_[u]) / (tm - t0), d2 = (h_end_[u] - h_mid_[u]) / (t1 - tm);
        const double curvature = (d2 - d1) / (t1 - t0);
        if (!(curvature > 0)) continue;
        const double tv = 0.5 * (t0 + tm) - d1 / (2 * curvature);
        if (!(tv > t0 && tv < t1)) continue;
        const double hv = h_mid_[u] + (tv - tm) * (d1 + curvature * (tv - t0));  // Newton form at tm
        if (hv > 0.25 * std::min(h_start_[u], h_mid_[u])) continue;
        const double probed = indicator_at(j, tv);
        if (!(probed < 0)) continue;
        if (tv < tm) {
          b = tv;
          hb = probed;
        } else {
          a = tm;
          ha = h_mid_[u];
          b = tv;
          hb = probed;
        }
      }
      if (b > a && ha > 0) {
        const double tol = 1e-13 * std::max(1.0, std::fabs(b));
        std::uintmax_t iterations = 100;
        b = boost::math::tools::toms748_solve([this, j](double ts) { return indicator_at(j, ts); }, a, b, ha, hb,
                                               [tol](double lo, double hi) { return std::fabs(hi - lo) <= tol; },
                                               iterations)
                .second;
      }
      if (b < best) {
        best = b;
        best_j = j;
      }
    }
    if (best_j < 0) {
      system_.ensure(x1, t1, scratch_);
      std::swap(h_start_, h_end_);
      return false;
    }
    switch_time_ = best;
    switching_ = best_j;
    interpolate_(best, switch_state_);
    return true;
  }

  /// The indicators at time t on the dense output (re-evaluates ws there).
  void indicators_at(double t, double* h) {
    at(t);
    watch_.indicators(ws_, h);
  }
  double indicator_at(int j, double t) {
    at(t);
    watch_.indicators(ws_, h_probe_.data());
    return h_probe_[static_cast<std::size_t>(j)];
  }

  /// Switches the branch found by find_switch at time t (x: the state there), records the event,
  /// and ends the run at a touch-down or when the switches exceed their budget.
  void switch_branch(double t) {
    const int j = switching_;
    switching_ = -1;
    system_(switch_state_, scratch_, t);  // the old branch at the switch
    const ModeEvent event = watch_.flip(j, ws_, t);
    ++outcome_.switches;
    if (outcome_.events.size() < RunOutcome::kMaxRecordedEvents) outcome_.events.push_back(event);
    if (event.kind == ModeEventKind::touch_down) {
      guard_.fail(RunStatus::touch_down,
                  fmt::format("the load came down to the ground again at t = {:.9g} s after lifting off; setting a "
                              "load down is not modelled, so the case has no valid values past it",
                              t));
    } else if (outcome_.switches > settings_.max_switches) {
      guard_.fail(RunStatus::mode_chatter,
                  fmt::format("more than {} switches between slack and taut (or on and off the ground) by t = {:.9g} s; "
                              "the rope chatters at zero tension",
                              settings_.max_switches, t));
    }
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
        if (watch_.active() && find_switch(method.step_start(), t1, method.state())) {
          // Ends the segment at the switch: its left-hand limit, under the old branch.
          to = switch_time_;
          system_(switch_state_, scratch_, switch_time_);
          observe(switch_state_, switch_time_, on_step_, true, Segment::end);
          if (guard_.ok())
            emit_samples_up_to(switch_time_, false, [&](double ts, State& out) { method.interpolate(ts, out); });
          interpolate_ = nullptr;
          x = switch_state_;
          t = switch_time_;
          initial_step_ = method.next_step();
          return;
        }
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
  ModeWatch watch_;                                ///< switches of contact laws (elastic ropes, ground)
  std::vector<double> h_start_, h_mid_, h_end_, h_probe_;  ///< its indicators at a step's start, middle, end, a probe
  int switching_ = -1;                             ///< indicator that switches at the end of the segment, or -1
  double switch_time_ = 0;                         ///< [s]
  State switch_state_;
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
  SWAYBOUND_REQUIRE(settings.duration > 0, "duration must be > 0, got {}", settings.duration);
  require_built_for(model, ws);
  State x(static_cast<std::size_t>(model.state_size()), 0.0);
  write_start(model, start, x);
  const ScenarioModel& s = model.scenarios[static_cast<std::size_t>(scenario)];
  ws.grounded = false;
  drive_start(model, s.phases.front(), x);
  rope_start(model, ws, s.phases.front(), s.lift_off, s.lift_off_slack, x);
  if (!start.rope_length.empty()) {
    SWAYBOUND_REQUIRE(start.rope_length.size() == model.elastic_links.size() &&
                          start.rope_rate.size() == start.rope_length.size(),
                      "initial state has {} rope lengths and {} rates for {} elastic ropes", start.rope_length.size(),
                      start.rope_rate.size(), model.elastic_links.size());
    std::vector<double> dxdt(x.size());
    for (std::size_t r = 0; r < start.rope_length.size(); ++r) {
      const auto c = static_cast<std::size_t>(model.length_coordinate[static_cast<std::size_t>(model.elastic_links[r])]);
      x[c] = start.rope_length[r];
      x[static_cast<std::size_t>(model.dof) + c] = start.rope_rate[r];
      ws.rope_slack[r] = 0;
    }
    evaluate(model, ws, s.phases.front(), x.data(), 0.0, dxdt.data());
    for (std::size_t r = 0; r < start.rope_length.size(); ++r) ws.rope_slack[r] = ws.taut_margin[r] > 0 ? 0 : 1;
  }
  Driver driver(model, ws, scenario, settings, on_step, on_sample);
  return driver.run(std::move(x));
}

}  // namespace swaybound
