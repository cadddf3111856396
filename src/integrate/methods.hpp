#pragma once
// The two stepping methods of the case driver (run.cpp), each behind the same small interface:
// `step` takes one accepted step towards t_end, `interpolate` serves the previous and the current
// accepted step, `sample` the current one. Private to src/integrate.
#include <algorithm>
#include <functional>
#include <vector>

#include <boost/numeric/odeint.hpp>

#include "swaybound/integrate/run.hpp"

namespace swaybound::integrate_detail {

namespace odeint = boost::numeric::odeint;
using State = std::vector<double>;

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

}  // namespace swaybound::integrate_detail
