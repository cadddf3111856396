// Starts that are not raw angles: the static equilibrium under a steady acceleration and wind, modal
// starts, and the start-transient flag of a check.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>

#include <nlohmann/json.hpp>
#include <unistd.h>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "../support/process.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/start_transient.hpp"
#include "swaybound/dynamics/equilibrium.hpp"
#include "swaybound/modal/modal_start.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using namespace swaybound::testing;

namespace {

constexpr double kPi = std::numbers::pi;

/// A chain of `links` (a point-mass pendulum for "point", uniform rods otherwise) on a trolley
/// accelerating at `a` for 20 s, started at the equilibrium under the scenario's acceleration.
std::string accelerating_yaml(const std::string& links, double a) {
  return fmt::format(R"(
swaybound: 1
name: steady sway
gravity: 9.81
links:
{}
base: {{scenarios: [{{name: accelerate, accel: [{{for: 20 s, x: {} m/s^2}}]}}]}}
cases: {{duration: 10 s, initial: [{{name: hanging, equilibrium: {{acceleration: scenario}}}}]}}
)",
                     links, a);
}

/// Every link's largest |theta_i(t) - theta_i(0)| over a run from case 0 of `spec`.
double largest_drift(const Spec& spec, double& theta0) {
  const CaseSpace space(spec);
  const CaseDef def = space.at(0);
  theta0 = def.initial.theta[0];
  const Model model = build_model(spec);
  const Trace trace = run_trace(model, def.initial, settings(10, 1e-11, 1e-13, 50));
  REQUIRE(trace.outcome.status == RunStatus::ok);
  double drift = 0;
  for (const Sample& s : trace.samples)
    for (int i = 0; i < model.n; ++i) drift = std::max(drift, std::fabs(s.x[static_cast<std::size_t>(i)] - def.initial.theta[static_cast<std::size_t>(i)]));
  return drift;
}

}  // namespace

TEST_CASE("an equilibrium start under a constant base acceleration sways steadily at atan(a/g)",
          "[cases][starts][reference]") {
  // Outside check: relative equilibrium in a uniformly accelerating frame (any dynamics text, e.g.
  // Meriam & Kraige, Engineering Mechanics: Dynamics, relative motion in translating axes): in the
  // trolley's frame gravity becomes g_eff = (-a, -g), and a chain hangs still along it. For a rigid
  // chain whose links carry their centres of mass on their axes, every link along g_eff puts each
  // sub-chain's centre of mass on the line of its pivot, so all links are at theta = -atan(a/g)
  // (the load trails the acceleration), whatever the masses.
  const double a = 1.5, g = 9.81, expected = -std::atan(a / g);
  double theta0 = 0;
  SECTION("point-mass pendulum") {
    const Spec spec = load_spec_text(accelerating_yaml("  - {name: rope, length: 4, mass: 800, com: 4, inertia: 0}", a), "s.yaml");
    const double drift = largest_drift(spec, theta0);
    CHECK_THAT(theta0, IsCloseTo(expected, 1e-12, 0));
    CHECK(drift < 1e-9);  // solver tolerance (rtol 1e-11): no transient
  }
  SECTION("two uniform rods") {
    const Spec spec = load_spec_text(
        accelerating_yaml("  - {name: rope, length: 4, mass: 30}\n  - {name: block, length: 1.2, mass: 900}", a), "s.yaml");
    const CaseDef def = CaseSpace(spec).at(0);
    REQUIRE(def.initial.theta.size() == 2);
    CHECK_THAT(def.initial.theta[1], IsCloseTo(expected, 1e-12, 0));
    CHECK(def.start_kind == StartKind::equilibrium);
    const double drift = largest_drift(spec, theta0);
    CHECK_THAT(theta0, IsCloseTo(expected, 1e-12, 0));
    CHECK(drift < 1e-9);
  }
}

TEST_CASE("an equilibrium start in a steady wind matches the statics of a pendulum", "[cases][starts][reference]") {
  // Outside check: statics of a point mass on a massless rod with a horizontal force F at the mass:
  // moments about the pivot F L cos(theta) = m g L sin(theta), so tan(theta) = F / (m g), with the
  // quadratic drag F = 1/2 rho Cd A u^2 (the wind law of specs/README.md).
  const double u = 25, rho = 1.225, cd = 1.2, area = 6, m = 500, g = 9.81;
  const std::string yaml = fmt::format(R"(
swaybound: 1
name: wind start
gravity: {}
links:
  - {{name: rope, length: 6, mass: {}, com: 6, inertia: 0}}
wind: [{{link: rope, at: 6 m, speed: 5 m/s, drag_area: {} m^2, drag_coefficient: {}, air_density: {} kg/m^3}}]
cases: {{duration: 1 s, initial: [{{equilibrium: {{wind_speed: {} m/s, acceleration: 0 m/s^2}}}}, {{equilibrium: {{}}}}]}}
)",
                                       g, m, area, cd, rho, u);
  const Spec spec = load_spec_text(yaml, "w.yaml");
  const CaseSpace space(spec);
  const auto drag = [&](double speed) { return 0.5 * rho * cd * area * speed * speed; };
  CHECK_THAT(space.at(0).initial.theta[0], IsCloseTo(std::atan(drag(u) / (m * g)), 1e-11, 0));
  // The default: the spec's own steady wind (5 m/s).
  CHECK_THAT(space.at(1).initial.theta[0], IsCloseTo(std::atan(drag(5) / (m * g)), 1e-11, 0));
}

TEST_CASE("the equilibrium solver reports a failure instead of a wrong start", "[cases][starts]") {
  // A two-link chain in a strong wind: one Newton iteration and no continuation cannot reach it.
  const Model model = model_from_yaml(R"(
swaybound: 1
name: windy
links:
  - {name: rope, length: 5, mass: 20}
  - {name: sail, length: 3, mass: 50}
wind: [{link: sail, speed: 40 m/s, drag_area: 9 m^2, drag_coefficient: 1.3}]
cases: {duration: 1 s, initial: [{single: {theta: [0]}}]}
)");
  Workspace ws(model);
  const Phase phase = model.scenarios.front().phases.front();
  EquilibriumOptions few;
  few.max_iterations = 1;
  few.continuation_steps = 1;
  const EquilibriumResult failed = static_equilibrium(model, ws, phase, few);
  CHECK_FALSE(failed.converged);
  CHECK_FALSE(failed.reason.empty());
  CHECK(failed.residual > few.tolerance);
  const EquilibriumResult found = static_equilibrium(model, ws, phase);
  REQUIRE(found.converged);
  CHECK(found.residual <= EquilibriumOptions{}.tolerance);
  CHECK(found.theta[1] > 0.5);  // blown well over, downwind (+x)
}

TEST_CASE("a modal start of mode k stays in mode k in the linear range", "[cases][starts][modal][reference]") {
  // Outside check: modal superposition of a linear undamped system (e.g. Meirovitch, Fundamentals of
  // Vibrations, ch. 7): started in mode k alone, the motion stays in mode k. The chain's equations are
  // linear to first order in the amplitude A, so the other modes pick up O(A^3) through the
  // nonlinear terms: at A = 1e-4 rad, 1e-8 of A, well below the 1e-6 checked here.
  const double amplitude = 1e-4;
  for (int links : {2, 3}) {
    std::string chain;
    for (int i = 0; i < links; ++i) chain += fmt::format("  - {{name: l{}, length: {}, mass: {}}}\n", i, 2.0 + i, 100.0 * (i + 1));
    for (int k = 0; k < links; ++k)
      for (double phase_deg : {0.0, 60.0}) {
        INFO("links " << links << ", mode " << k + 1 << ", phase " << phase_deg << " deg");
        std::vector<std::string> a(static_cast<std::size_t>(k + 1), "0 rad"), p(static_cast<std::size_t>(k + 1), "0 deg");
        a.back() = fmt::format("{} rad", amplitude);
        p.back() = fmt::format("{} deg", phase_deg);
        const std::string yaml = fmt::format(R"(
swaybound: 1
name: modal start
links:
{}cases: {{duration: 1 s, initial: [{{single: {{amplitude: [{}], phase: [{}]}}}}]}}
)",
                                             chain, fmt::join(a, ", "), fmt::join(p, ", "));
        const Spec spec = load_spec_text(yaml, "m.yaml");
        const Model model = build_model(spec);
        const ModalResult modes = modal_analysis(model);
        const CaseDef def = CaseSpace(spec).at(0);
        CHECK(def.start_kind == StartKind::modal);
        const double period = modes.modes[static_cast<std::size_t>(k)].period_s;
        const Trace trace = run_trace(model, def.initial, settings(10 * period, 1e-12, 1e-17, 40 / period));
        REQUIRE(trace.outcome.status == RunStatus::ok);
        double other = 0, own_min = INFINITY, own_max = 0;
        for (const Sample& s : trace.samples) {
          const std::vector<double> theta(s.x.begin(), s.x.begin() + links), omega(s.x.begin() + links, s.x.begin() + 2 * links);
          const ModalCoordinates c = modal_coordinates(modes, theta, omega);
          for (int j = 0; j < links; ++j)
            if (j != k) other = std::max(other, c.amplitude[static_cast<std::size_t>(j)]);
          own_min = std::min(own_min, c.amplitude[static_cast<std::size_t>(k)]);
          own_max = std::max(own_max, c.amplitude[static_cast<std::size_t>(k)]);
        }
        CHECK(other < 1e-6 * amplitude);
        CHECK_THAT(own_min, IsCloseTo(amplitude, 0, 1e-6));
        CHECK_THAT(own_max, IsCloseTo(amplitude, 0, 1e-6));
      }
  }
}

TEST_CASE("modal coordinates sampled by a grid become the angles and rates of each case", "[cases][starts][modal]") {
  const Spec spec = load_spec_text(R"(
swaybound: 1
name: modal grid
links:
  - {name: rope, length: 4, mass: 20}
  - {name: load, length: 1, mass: 800}
cases: {duration: 1 s, initial: [{grid: {amplitude: [[-4 deg, 4 deg, 3]], phase: [[0 deg, 90 deg, 2]]}}]}
)",
                                   "g.yaml");
  const CaseSpace space(spec);
  REQUIRE(space.size() == 6);
  const ModalResult modes = modal_analysis(build_model(spec));
  const double w = 2 * kPi * modes.modes[0].frequency_hz;
  // Case k: amplitude index k / 2, phase index k % 2 (last dimension fastest).
  for (long k = 0; k < 6; ++k) {
    const CaseDef def = space.at(k);
    const double amp = (-4.0 + 4.0 * static_cast<double>(k / 2)) * kPi / 180, phase = (k % 2) * kPi / 2;
    for (std::size_t i = 0; i < 2; ++i) {
      CHECK_THAT(def.initial.theta[i], IsCloseTo(amp * std::cos(phase) * modes.modes[0].shape[i], 1e-15, 1e-12));
      CHECK_THAT(def.initial.omega[i], IsCloseTo(-amp * w * std::sin(phase) * modes.modes[0].shape[i], 1e-15, 1e-12));
    }
  }
  // The envelope bounds the start angles by the largest amplitude.
  CHECK_THAT(space.envelope_amplitude(), IsCloseTo(4 * kPi / 180, 1e-15, 0));
}

namespace {

/// A three-link hook block on a trolley travelling at 1 m/s that brakes gently (0.3 m/s^2) from t = 6 s.
std::string braking_chain(const std::string& theta, const std::string& limit) {
  return fmt::format(R"(
swaybound: 1
name: kinked start
links:
  - {{name: rope, kind: rope, length: 6, mass: 40}}
  - {{name: block, length: 0.8, mass: 400}}
  - {{name: load, length: 1.5, mass: 2000}}
base: {{scenarios: [{{name: brake, initial_velocity: {{x: 1}}, accel: [{{for: 6 s, x: 0}}, {{for: 1 s, x: -0.3}}]}}]}}
cases: {{duration: 12 s, search: false, initial: [{{single: {{theta: [{}]}}}}]}}
limits: [{}]
)",
                     theta, limit);
}

CheckReport check_of(const Spec& spec) {
  CheckOptions options;
  options.audit = false;
  options.record = false;
  options.jobs = 1;
  return run_check(spec, options);
}

}  // namespace

TEST_CASE("the start-transient flag marks a check governed right after a kinked start", "[cases][starts][checks]") {
  // The kinked start (2, -4, 6) deg released from rest: the load at the rope's pivot peaks through the
  // fast modes of the kink, before the lowest mode's own swing could build it and long before the
  // trolley brakes at 6 s.
  const Spec kinked = load_spec_text(braking_chain("2 deg, -4 deg, 6 deg", "{pivot_load: 100 kN, link: rope}"), "k.yaml");
  const CheckReport r = check_of(kinked);
  REQUIRE(r.checks.size() == 1);
  const double quarter = kStartTransientFraction * lowest_swing_period(r.modes);
  INFO("governed at " << r.checks[0].time << " s; a quarter period is " << quarter << " s");
  CHECK(r.checks[0].time < quarter);
  CHECK(r.checks[0].start_transient);
  CHECK(r.checks[0].start_note.find("single-001") != std::string::npos);
  CHECK(r.checks[0].start_note.find("released from rest") != std::string::npos);
  const auto json = nlohmann::json::parse(results_json(kinked, r));
  CHECK(json["checks"][0]["start_transient"]["flagged"] == true);
  CHECK(json["checks"][0]["start_transient"]["fraction_of_lowest_period"] == 0.25);
  CHECK(json["checks"][0]["governing_start"]["kind"] == "angles");

  // The same chain hanging straight at the start: its sway comes from the braking at 6 s.
  const Spec braking = load_spec_text(braking_chain("0 deg", "{peak_angle: 20 deg, link: load}"), "b.yaml");
  const CheckReport b = check_of(braking);
  REQUIRE(b.checks.size() == 1);
  CHECK(b.checks[0].time > 6);
  CHECK_FALSE(b.checks[0].start_transient);
  CHECK_FALSE(nlohmann::json::parse(results_json(braking, b))["checks"][0].contains("start_transient"));
}

TEST_CASE("an equilibrium start is never flagged as a start transient", "[cases][starts][checks]") {
  // Hanging still under the trolley's 1.5 m/s^2 from t = 0, the chain's peak angle is its start.
  const Spec spec = load_spec_text(R"(
swaybound: 1
name: steady
links:
  - {name: rope, length: 4, mass: 20}
  - {name: load, length: 1, mass: 800}
base: {scenarios: [{name: accelerate, accel: [{for: 30 s, x: 1.5 m/s^2}]}]}
cases: {duration: 5 s, search: false, initial: [{equilibrium: {}}]}
limits: [{peak_angle: 20 deg, link: load}]
)",
                                   "e.yaml");
  const CheckReport r = check_of(spec);
  REQUIRE(r.checks.size() == 1);
  CHECK_THAT(r.checks[0].worst, IsCloseTo(std::atan(1.5 / 9.80665), 1e-8, 0));
  CHECK_FALSE(r.checks[0].start_transient);
  const auto json = nlohmann::json::parse(results_json(spec, r));
  CHECK(json["checks"][0]["governing_start"]["kind"] == "equilibrium");
  CHECK(cases_csv_header(spec).find("\"start\"") != std::string::npos);
}

TEST_CASE("check prints a note under a check governed by a start transient", "[cases][starts][cli]") {
  namespace fs = std::filesystem;
  const fs::path dir = fs::temp_directory_path() / fmt::format("swaybound_starts_{}", ::getpid());
  fs::remove_all(dir);
  fs::create_directories(dir);
  std::ofstream(dir / "kinked.yaml") << braking_chain("2 deg, -4 deg, 6 deg", "{pivot_load: 100 kN, link: rope}");
  const auto r = run_command(fmt::format("'{}' check '{}' --out '{}' --quiet --no-audit 2>/dev/null", SWAYBOUND_CLI,
                                         (dir / "kinked.yaml").string(), (dir / "packet").string()));
  fs::remove_all(dir);
  REQUIRE(r.exited);
  CHECK(r.out.find("pivot_load (link 'rope')") < r.out.find("    note: start transient?"));
  CHECK(r.out.find("    note: start transient?") != std::string::npos);
  CHECK(r.out.find("single-001: link angles released from rest at theta0 = (2, -4, 6) deg") != std::string::npos);
}
