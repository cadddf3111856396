// The elastic rope, hoisting and lift-off against closed forms from outside the project:
//   - lifting a grounded load with the drum already at speed v: peak rope force m g + v sqrt(k m)
//     (single-degree-of-freedom spring-mass under a ramp, e.g. Thomson & Dahleh, Theory of
//     Vibration with Applications, ch. 4: response to a ramp; the load leaves the ground at rest
//     when k v t = m g, after which the spring's end moves at v: amplitude v / omega);
//   - a load dropping a height h before the rope takes it: peak force m g (1 + sqrt(1 + 2 k h / (m g)))
//     (impact loading of an elastic member, e.g. Timoshenko & Gere, Mechanics of Materials, energy
//     methods: suddenly applied and impact loads); it is caught at t = sqrt(2 h / g);
//   - slow hoisting or lowering of a swinging load: the sway amplitude scales as L^(-3/4) (adiabatic
//     invariant E / omega of a pendulum of slowly varying length, Landau & Lifshitz, Mechanics,
//     sec. 49-51);
//   - a very stiff elastic rope swings as the inextensible one (two formulations of the same chain).
// Every run also keeps its energy audit (strain energy, drum work, rope damping) at solver tolerance.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <vector>

#include "../support/close_to.hpp"
#include "../support/rope.hpp"
#include "swaybound/integrate/extremes.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;
using swaybound::testing::RopeChain;

namespace {

constexpr double kG = 9.81;

/// A long, light rope (test data) over a load of mass m as a point at the end of a short link.
RopeChain rope_over_point_load(double ea, double m, double rope_length) {
  RopeChain d;
  d.g = kG;
  d.links = {{.m = 1e-3, .L = rope_length, .c = rope_length / 2, .I = 1e-3 * rope_length * rope_length / 12, .ea = ea},
             {.m = m, .L = 1.0, .c = 1.0, .I = 0}};
  return d;
}

struct RopeRun {
  RunOutcome outcome;
  Extreme peak_tension;
  double audit = 0;  ///< largest |audit residual| / audit scale
};

RopeRun run_rope(const Spec& spec, const InitialState& start = {}) {
  const Model model = build_model(spec);
  Workspace ws(model);
  ExtremeFinder tension(1, [](const StepView& v, double* q) { q[0] = v.ws->rope_force[0]; });
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 0;
  RopeRun r;
  r.outcome = simulate_case(model, ws, 0, start, settings, [&](const StepView& v) { tension.observe(v); });
  r.peak_tension = tension.max(0);
  r.audit = r.outcome.max_audit_residual / r.outcome.audit_scale;
  return r;
}

}  // namespace

TEST_CASE("lifting a grounded load with the drum at speed: peak rope force m g + v sqrt(k m)", "[rope][reference]") {
  const double m = 1000, k = 1e6, length = 1000, v = 0.2;
  RopeChain d = rope_over_point_load(k * length, m, length);
  d.duration = 0.2;  // past the first peak, a quarter period after lift-off
  Spec spec = d.spec();
  spec.scenarios[0].lift_off = LiftOffSpec{0.0, {}};
  spec.scenarios[0].hoist = HoistSpec{0, v, {}, {}};
  const RopeRun r = run_rope(spec);
  REQUIRE(r.outcome.status == RunStatus::ok);
  const auto lift_event = std::find_if(r.outcome.events.begin(), r.outcome.events.end(),
                                       [](const ModeEvent& e) { return e.kind == ModeEventKind::lift_off; });
  REQUIRE(lift_event != r.outcome.events.end());
  const ModeEvent& lift = *lift_event;
  // It leaves the ground when the rope carries the weight (the rope starts just taut): with the
  // stretch v t and the stiffness EA / (L - v t) of the shortened rope, EA v t / (L - v t) = m g.
  CHECK_THAT(lift.time, IsCloseTo(m * kG * length / (v * (k * length + m * kG)), 0, 1e-6));
  // The drum shortens the rope by v t during the event, raising k = EA / ell by v t / ell (3e-5 over
  // the event): the closed form holds to that order.
  const double expected = m * kG + v * std::sqrt(k * m);
  CHECK_THAT(r.peak_tension.value, IsCloseTo(expected, 0, 3e-5));
  // T = m g + v sqrt(k m) sin(omega t') after lift-off: the peak comes a quarter period later.
  CHECK_THAT(r.peak_tension.time, IsCloseTo(lift.time + 0.5 * M_PI * std::sqrt(m / k), 0, 1e-3));
  CHECK(r.audit < 1e-8);
}

TEST_CASE("a load dropping a height h onto a rope: peak force m g (1 + sqrt(1 + 2 k h / (m g)))", "[rope][reference]") {
  const double m = 500, k = 2e5, length = 20, h = 0.3;
  RopeChain d = rope_over_point_load(k * length, m, length);
  d.duration = 1.0;
  InitialState start;
  start.rope_length = {length - h};  // slack by h, the load at rest
  start.rope_rate = {0.0};
  const RopeRun r = run_rope(d.spec(), start);
  REQUIRE(r.outcome.status == RunStatus::ok);
  REQUIRE(r.outcome.events.size() >= 2);
  CHECK(r.outcome.events[0].kind == ModeEventKind::taut);
  // Free fall, t = sqrt(2 h / a): with the rope's own 1 g (its centre of mass at half its length,
  // moving at half the load's speed) a = g (m + m_r / 2) / (m + m_r / 4), 2.5e-7 above g.
  const double m_rope = d.links[0].m, fall = kG * (m + m_rope / 2) / (m + m_rope / 4);
  CHECK_THAT(r.outcome.events[0].time, IsCloseTo(std::sqrt(2 * h / fall), 0, 1e-9));
  CHECK(r.outcome.events[1].kind == ModeEventKind::slack);
  const double expected = m * kG * (1 + std::sqrt(1 + 2 * k * h / (m * kG)));
  // The rope's own mass (1 g against 500 kg) is the only departure from the closed form.
  CHECK_THAT(r.peak_tension.value, IsCloseTo(expected, 0, 1e-5));
  CHECK(r.audit < 1e-8);
}

TEST_CASE("a rope with damping keeps its energy audit across slack and taut switches", "[rope][reference]") {
  const double m = 500, k = 2e5, length = 20, h = 0.3;
  RopeChain d = rope_over_point_load(k * length, m, length);
  d.links[0].c_axial = 0.05 * 2 * std::sqrt(k * m);  // 5 % of critical
  d.duration = 6.0;
  InitialState start;
  start.rope_length = {length - h};
  start.rope_rate = {0.0};
  const RopeRun r = run_rope(d.spec(), start);
  REQUIRE(r.outcome.status == RunStatus::ok);
  CHECK(r.outcome.switches >= 4);  // it bounces: taut, slack, taut, slack, ...
  INFO("switches " << r.outcome.switches << ", audit " << r.audit);
  CHECK(r.audit < 1e-8);
}

namespace {

/// Amplitudes of the sway of a point mass on an inextensible rope hoisted or lowered from
/// `from` to `to` metres at a slow drum speed; returns (rope length, amplitude) at each located
/// turning point.
std::vector<std::pair<double, double>> sway_while_hoisting(double from, double to, double& audit) {
  const double speed = 0.004;  // hook speed [m/s]: slow against the sway, (dL/dt) / (L omega) < 5e-4
  RopeChain d;
  d.g = kG;
  d.links = {{.m = 100, .L = from, .c = from, .I = 0, .rope = true}};
  d.duration = std::fabs(to - from) / speed;
  d.rtol = 1e-10;
  Spec spec = d.spec();
  const double drum = from > to ? speed : -speed;  // + hauls in
  spec.scenarios[0].hoist = HoistSpec{0, drum, {}, {}};
  const Model model = build_model(spec);
  Workspace ws(model);
  InitialState start;
  start.theta = {2.0 * M_PI / 180};
  std::vector<std::pair<double, double>> turns;
  double previous_rate = 0;
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 0;
  const RunOutcome out = simulate_case(model, ws, 0, start, settings, [&](const StepView& v) {
    const double rate = v.x[model.dof];
    if (previous_rate * rate < 0 && v.probe != nullptr) {
      // A turning point inside the last span: locate rate = 0 by bisection on the dense output.
      double a = v.probe->from, b = v.t;
      for (int i = 0; i < 80; ++i) {
        const double mid = 0.5 * (a + b);
        const StepView p = v.probe->at(mid);
        if ((p.x[model.dof] > 0) == (previous_rate > 0)) a = mid; else b = mid;
      }
      const StepView p = v.probe->at(0.5 * (a + b));
      turns.emplace_back(p.ws->len[0], std::fabs(p.x[0]));
    }
    previous_rate = rate;
  });
  audit = out.max_audit_residual / out.audit_scale;
  return turns;
}

}  // namespace

TEST_CASE("slow hoisting and lowering: sway amplitude scales as L^(-3/4)", "[rope][reference]") {
  for (const auto& [from, to] : {std::pair{20.0, 10.0}, std::pair{10.0, 20.0}}) {
    INFO("rope from " << from << " m to " << to << " m");
    double audit = 0;
    const auto turns = sway_while_hoisting(from, to, audit);
    REQUIRE(turns.size() > 20);
    // The drum's work on the inextensible rope (its holding force times the length rate) keeps the
    // energy audit closed: hoisting 10 m of a 100 kg load is 9.8 kJ of work.
    CHECK(audit < 1e-8);
    // A L^(3/4) is the adiabatic invariant; compare the first and the last turning points.
    const auto invariant = [](const std::pair<double, double>& t) { return t.second * std::pow(t.first, 0.75); };
    CHECK_THAT(invariant(turns.back()), IsCloseTo(invariant(turns.front()), 0, 5e-4));
    // ... while the amplitude itself changed by (to/from)^(-3/4): 68 % up hoisting, 41 % down lowering.
    CHECK_THAT(turns.back().second / turns.front().second,
               IsCloseTo(std::pow(turns.back().first / turns.front().first, -0.75), 0, 5e-4));
  }
}

TEST_CASE("an elastic rope converges to the inextensible rope as EA grows", "[rope]") {
  RopeChain rigid;
  rigid.links = {{.m = 30, .L = 10, .c = 5, .I = 250, .rope = true}, {.m = 800, .L = 1.2, .c = 0.8, .I = 60}};
  rigid.duration = 4;
  InitialState start;
  start.theta = {5 * M_PI / 180, -3 * M_PI / 180};
  const auto final_angles = [&](const RopeChain& d) {
    const Model model = build_model(d.spec());
    Workspace ws(model);
    const RunOutcome out = simulate_case(model, ws, 0, start, RunSettings::from_spec(d.spec()));
    REQUIRE(out.status == RunStatus::ok);
    return std::vector<double>{out.x_reached[0], out.x_reached[1]};
  };
  const auto reference = final_angles(rigid);
  // The elastic chain differs by the static stretch (T / k) and by the rope's quasi-static
  // response to the swing, both of order 1 / EA: ten times the EA, a tenth of the difference.
  std::vector<double> difference;
  for (const double ea : {1e8, 1e9, 1e10}) {
    RopeChain elastic = rigid;
    elastic.links[0].ea = ea;
    const auto angles = final_angles(elastic);
    difference.push_back(std::max(std::fabs(angles[0] - reference[0]), std::fabs(angles[1] - reference[1])));
  }
  INFO("differences " << difference[0] << ", " << difference[1] << ", " << difference[2] << " rad");
  CHECK(difference[1] > 0);
  CHECK_THAT(difference[0] / difference[1], IsCloseTo(10, 0, 0.2));
  CHECK_THAT(difference[1] / difference[2], IsCloseTo(10, 0, 0.2));
}

TEST_CASE("modes of a load on an elastic rope: the bounce sqrt(k/m) and the sway sqrt(g/l) at the stretched length",
          "[rope][reference][modal]") {
  // A point mass m at the end of a massless elastic rope (the rope link's own mass at its lower
  // end): in the linear vibration of a mass on a spring (any vibrations text) the axial mode is
  // omega = sqrt(k/m), damping ratio c / (2 sqrt(k m)); the sway is the simple pendulum
  // omega = sqrt(g / l) at the statically stretched length l = ell + m g / k.
  const double m = 2000, length = 15, ea = 3e7, c = 4e3;
  RopeChain d;
  d.g = kG;
  d.links = {{.m = m, .L = length, .c = length, .I = 0, .ea = ea, .c_axial = c}};
  const Model model = build_model(d.spec());
  const ModalResult modes = modal_analysis(model);
  REQUIRE(modes.modes.size() == 2);
  const double k = ea / length;
  const Mode& sway = modes.modes[0];
  const Mode& bounce = modes.modes[1];
  CHECK_FALSE(sway.axial);
  CHECK(bounce.axial);
  // Central differences of the right-hand side: agreement to about 1e-11 measured, 1e-9 required.
  CHECK_THAT(bounce.frequency_hz, IsCloseTo(std::sqrt(k / m) / (2 * M_PI), 0, 1e-9));
  CHECK_THAT(bounce.damping_ratio, IsCloseTo(c / (2 * std::sqrt(k * m)), 0, 1e-9));
  CHECK_THAT(sway.frequency_hz, IsCloseTo(std::sqrt(kG / (length + m * kG / k)) / (2 * M_PI), 0, 1e-9));
  REQUIRE(bounce.stretch_shape.size() == 1);
  CHECK(bounce.stretch_shape[0] == 1.0);
}

TEST_CASE("elastic ropes with every force element keep the energy audit closed", "[rope][energy]") {
  // Wind with a gust on the lower rope, dashpots to a link and to the base, pin and Coulomb friction,
  // power-law dampers, a braking base and a drum hoisting the top rope: the audit balances the
  // strain energy, rope damping and drum work against every other term (test data).
  const Spec spec = load_spec_text(R"(swaybound: 1
name: every force element on elastic ropes
links:
  - {name: r0, kind: rope, length: 3 m, mass: 20 kg, parts_of_line: 2, elastic: {ea: 1 MN, damping: 200 N s/m},
     pivot: {damper: {coefficient: 30 N m s/rad, exponent: 1.3}, friction: {torque: 2 N m, pin_radius: 10 mm, mu: 0.1}}}
  - {name: hook, length: 1.1 m, mass: 250 kg, pivot: {damper: {coefficient: 30 N m s/rad, exponent: 0.7}}}
  - {name: sling, kind: rope, length: 1.5 m, mass: 5 kg, elastic: {ea: 200 kN, damping_ratio: 0.05}}
  - {name: load, length: 1 m, mass: 400 kg}
dashpots:
  - {from: {link: r0, at: 1.5 m}, to: {link: load, at: 0.9 m}, coefficient: 50 N s/m}
  - {from: {link: sling, at: 0.5 m}, to: {base: [1 m, -1 m]}, coefficient: 80 N s/m}
wind: {speed: 8 m/s, link: sling, drag_area: 1 m^2, drag_coefficient: 1.2, gust: {start: 0.5 s, for: 0.5 s, speed: 6 m/s}}
base:
  scenarios:
    - name: brake while hoisting
      initial_velocity: {x: 1 m/s}
      accel: [{for: 0.7 s, x: -1.4 m/s^2}]
      hoist: {rope: r0, moves: [{at: 0.2 s, to: 0.6 m/s, accel: 1 m/s^2, jerk: 5 m/s^3}, {at: 2 s, to: 0, accel: 2 m/s^2}]}
cases: {duration: 6 s, initial: [{single: {theta: [20 deg, -10 deg, 5 deg], rate: [0.3 rad/s]}}]}
solver: {rtol: 1e-10, atol: 1e-12}
)",
                                   "all.yaml");
  const Model model = build_model(spec);
  Workspace ws(model);
  InitialState start;
  start.theta = {0.349, -0.175, 0.087};
  start.omega = {0.3};
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 0;
  const RunOutcome out = simulate_case(model, ws, 0, start, settings);
  REQUIRE(out.status == RunStatus::ok);
  INFO("audit " << out.max_audit_residual / out.audit_scale << ", switches " << out.switches);
  CHECK(out.max_audit_residual / out.audit_scale < 1e-8);
}
