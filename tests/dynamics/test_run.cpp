// The integration driver: phase restarts, dense samples, budgets and failure statuses, determinism.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "swaybound/dynamics/forces.hpp"

using namespace swaybound;
using namespace swaybound::testing;

TEST_CASE("the stepper restarts exactly at a jump in base acceleration", "[integrate]") {
  const Model model = model_from_yaml(kBraking);
  Workspace ws(model);
  bool landed = false;
  const Observer on_step = [&](const StepView& v) { landed |= v.t == 1.5; };
  const RunOutcome out = simulate_case(model, ws, 0, {}, settings(10, 1e-9, 1e-11, 0), on_step);
  CHECK(out.status == RunStatus::ok);
  CHECK(landed);
  CHECK(out.t_reached == 10.0);
}

TEST_CASE("dense output samples fall on the output grid", "[integrate]") {
  const Model model = model_from_yaml(kBraking);
  for (Stepper method : {Stepper::dopri5, Stepper::rkf78}) {
    RunSettings s = settings(10, 1e-9, 1e-11, 20);
    s.method = method;
    const Trace trace = run_trace(model, {{0.1, 0.2}, {}}, s);
    REQUIRE(trace.samples.size() == 201);
    for (std::size_t k = 0; k < trace.samples.size(); ++k) CHECK_THAT(trace.samples[k].t, IsCloseTo(k / 20.0, 1e-12, 0));
  }
}

TEST_CASE("dopri5 and rkf78 agree on the same case", "[integrate]") {
  const Model model = model_from_yaml(kBraking);
  RunSettings a = settings(10, 1e-11, 1e-13, 2), b = a;
  b.method = Stepper::rkf78;
  const Trace ta = run_trace(model, {{0.3, -0.2}, {}}, a), tb = run_trace(model, {{0.3, -0.2}, {}}, b);
  REQUIRE(ta.samples.size() == tb.samples.size());
  for (std::size_t k = 0; k < ta.samples.size(); ++k)
    for (int i = 0; i < 4; ++i) CHECK_THAT(ta.samples[k].x[i], IsCloseTo(tb.samples[k].x[i], 1e-8, 0));
}

TEST_CASE("numerical trouble ends a run with a status and a reason, never a hang", "[integrate][faults]") {
  const Model model = model_from_yaml(kBraking);
  Workspace ws(model);
  SECTION("step budget") {
    RunSettings s = settings(10, 1e-9, 1e-11, 0);
    s.max_steps = 100;
    const RunOutcome out = simulate_case(model, ws, 0, {{1.0, 1.0}, {}}, s);
    CHECK(out.status == RunStatus::step_budget);
    CHECK(out.t_reached < 10);
    CHECK_FALSE(out.reason.empty());
  }
  SECTION("step size collapse") {
    RunSettings s = settings(10, 1e-10, 1e-12, 0);
    s.min_step = 0.5;
    const RunOutcome out = simulate_case(model, ws, 0, {{1.0, 1.0}, {}}, s);
    CHECK(out.status == RunStatus::step_collapse);
  }
  SECTION("wall-clock budget") {
    RunSettings s = settings(1e6, 1e-12, 1e-14, 0);
    s.max_seconds = 1e-6;
    const RunOutcome out = simulate_case(model, ws, 0, {{1.0, 1.0}, {}}, s);
    CHECK(out.status == RunStatus::time_budget);
  }
  SECTION("non-finite state") {
    const RunOutcome out =
        simulate_case(model, ws, 0, {{std::numeric_limits<double>::quiet_NaN(), 0}, {}}, settings(10, 1e-9, 1e-11, 0));
    CHECK(out.status == RunStatus::non_finite);
  }
}

TEST_CASE("the same case gives bit-identical results on every run", "[integrate]") {
  const Model model = model_from_yaml(kBraking);
  const Trace a = run_trace(model, {{0.4, 0.9}, {0.1, 0}}, settings(10, 1e-9, 1e-11, 5));
  const Trace b = run_trace(model, {{0.4, 0.9}, {0.1, 0}}, settings(10, 1e-9, 1e-11, 5));
  REQUIRE(a.samples.size() == b.samples.size());
  for (std::size_t k = 0; k < a.samples.size(); ++k) CHECK(a.samples[k].x == b.samples[k].x);
}

TEST_CASE("power-law damper: continuous, odd, saturating, linear below w0", "[dynamics][forces]") {
  DamperLaw p;
  p.c = 4000;
  p.alpha = 0.6;
  p.max_torque = 20000;
  p.linear_below = 1e-3;
  // Continuous at w0 from both sides, odd in w.
  CHECK_THAT(damper_torque(p, 1e-3 * (1 - 1e-12)), IsCloseTo(damper_torque(p, 1e-3 * (1 + 1e-12)), 0, 1e-9));
  CHECK(damper_torque(p, -0.3) == -damper_torque(p, 0.3));
  CHECK_THAT(damper_torque(p, 0.3), IsCloseTo(-4000 * std::pow(0.3, 0.6), 0, 1e-12));
  CHECK_THAT(damper_torque(p, 5e-4), IsCloseTo(-4000 * std::pow(1e-3, -0.4) * 5e-4, 0, 1e-12));
  CHECK(damper_torque(p, 1e6) == -20000);  // saturated
  p.alpha = 1.0;
  CHECK_THAT(damper_torque(p, 0.25), IsCloseTo(-1000, 0, 1e-12));
}

TEST_CASE("friction torque opposes the relative rate and scales with the reaction", "[dynamics][forces]") {
  PivotModel p;
  p.coulomb_torque = 50;
  p.pin_friction = 0.12 * 0.04;
  p.transition_rate = 0.01;
  CHECK_THAT(friction_torque(p, 1.0, 1e5), IsCloseTo(-(50 + 480), 0, 1e-12));
  CHECK_THAT(friction_torque(p, -1.0, 1e5), IsCloseTo(50 + 480, 0, 1e-12));
  CHECK(friction_torque(p, 0.0, 1e5) == 0.0);
  // tanh: half the sliding level at w = w_t atanh(1/2).
  CHECK_THAT(friction_torque(p, 0.01 * std::atanh(0.5), 0), IsCloseTo(-25, 0, 1e-12));
}

TEST_CASE("pin friction is solved consistently with the reactions it depends on", "[dynamics][friction]") {
  // After evaluate, the pin torque must equal mu r |R| tanh(w / w_t) with the final |R|.
  const Model model = model_from_yaml(R"(
swaybound: 1
name: pin friction
links:
  - {name: a, length: 2, mass: 50, pivot: {friction: {pin_radius: 60 mm, mu: 0.3, transition_rate: 0.05 rad/s}}}
  - {name: b, length: 1, mass: 800, com: 0.9, inertia: 20, pivot: {friction: {pin_radius: 40 mm, mu: 0.25}}}
cases: {duration: 1 s, initial: [{single: {theta: [0]}}]}
)");
  Workspace ws(model);
  std::vector<double> x = {0.7, -0.4, 0.3, -1.1, 0, 0}, dxdt(6);
  evaluate(model, ws, model.scenarios[0].phases[0], x.data(), 0.0, dxdt.data());
  const double w[] = {0.3, -1.1 - 0.3};
  const double rates[] = {0.05, 0.01};
  const double mu_r[] = {0.3 * 0.06, 0.25 * 0.04};
  for (int i = 0; i < 2; ++i)
    CHECK_THAT(ws.tau_pin[i], IsCloseTo(-mu_r[i] * ws.reaction[i] * std::tanh(w[i] / rates[i]), 0, 1e-12));
  CHECK(ws.friction_iterations < 10);
}
