// Uncertain values of a scenario (base.scenarios[i].uncertain) as dimensions of the search for the
// worst case: the samples use the spec's value, the search moves it through its range, reports the
// value at the searched worst, and the audit re-runs that case at a tighter tolerance.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/worst_search.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"
#include "../support/close_to.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kG = 9.81;

CheckOptions searching(bool audit = false) {
  CheckOptions o;
  o.audit = audit;
  o.record = false;
  o.search = search_worst;
  return o;
}

/// A point mass (250 kg at the end of a massless 4 m rope) whose top pivot brakes at a constant
/// deceleration for the whole run, known only within [0.5, 1.5] m/s^2 (1 m/s^2 in the spec).
std::string braked_pendulum(const std::string& initial, const std::string& limit = "30 deg") {
  return fmt::format(R"(
swaybound: 1
name: braked pendulum
gravity: 9.81
links:
  - {{name: rope, kind: rope, length: 4, mass: 250, com: 4, inertia: 0}}
base:
  scenarios:
    - name: brake
      initial_velocity: {{x: 2 m/s}}
      accel: [{{for: 3 s, x: -1 m/s^2}}]
      uncertain:
        - {{path: "accel[0].x", range: [-1.5 m/s^2, -0.5 m/s^2]}}
cases:
  duration: 3 s
  search: {{evaluations: 40, starts: 1}}
  initial:
    - {}
limits:
  - {{peak_angle: {}, link: rope}}
solver: {{rtol: 1e-12, atol: 1e-13}}
)",
                     initial, limit);
}

/// Peak |theta| of a pendulum released from rest at theta0 <= 0 while its pivot accelerates at a
/// constant -a along x (a braking). In the pivot's frame the pendulum swings in a uniform field
/// g' = (a, -g) (d'Alembert's inertial force -m a_pivot; Meriam & Kraige, Engineering Mechanics:
/// Dynamics, ch. 2/8, relative motion in a translating frame), whose equilibrium is tilted by
/// theta_e = atan(a / g). A pendulum released from rest in a uniform field swings symmetrically
/// about its equilibrium (energy conservation: it stops where its height is that of the release),
/// so it reaches 2 theta_e - theta0 after half a period, exactly, at any amplitude. The period here
/// (2 pi sqrt(L / |g'|) ~ 4 s at these amplitudes) puts that turn at ~2 s, inside the 3 s run.
double peak_angle(double a, double theta0) { return 2 * std::atan(a / kG) - theta0; }

}  // namespace

TEST_CASE("the search finds the worst braking deceleration within its uncertain range, where the samples used the "
          "spec's value",
          "[checks][search][uncertain][reference]") {
  SECTION("the deceleration alone: a one-dimensional search from a single start at rest") {
    const Spec spec = load_spec_text(braked_pendulum("single: {theta: [0 deg]}"), "braked.yaml");
    const CheckReport r = run_check(spec, searching(true));
    REQUIRE(r.search.size() == 1);
    const LimitSearch& s = r.search[0];
    CHECK_THAT(s.sampled_worst, IsCloseTo(peak_angle(1.0, 0), 0, 1e-6));  // the samples: the spec's value
    CHECK(s.searched);
    CHECK(s.found_worse);
    CHECK_THAT(s.searched_worst, IsCloseTo(peak_angle(1.5, 0), 0, 1e-6));
    REQUIRE(s.uncertain.size() == 1);
    CHECK_THAT(s.uncertain[0], IsCloseTo(-1.5, 1e-6, 0));
    CHECK(s.uncertain_dims.paths[0] == "accel[0].x");
    CHECK(s.uncertain_dims.nominal[0] == -1.0);
    CHECK(s.uncertain_dims.units[0] == "m/s^2");
    CHECK(s.evaluations <= 40);
    // The audit re-ran the searched worst with its deceleration, at a 100x tighter tolerance.
    CHECK(s.audited);
    CHECK_THAT(s.audit_value, IsCloseTo(peak_angle(1.5, 0), 0, 1e-7));
    CHECK(std::fabs(s.audit_change) < 1e-7);
    CHECK_FALSE(s.audit_warning);
  }
  SECTION("the deceleration and the start angle: BOBYQA in two dimensions") {
    const Spec spec = load_spec_text(braked_pendulum("grid: {theta: [[-3 deg, 3 deg, 3]]}"), "braked.yaml");
    const CheckReport r = run_check(spec, searching());
    REQUIRE(r.search.size() == 1);
    const LimitSearch& s = r.search[0];
    const double theta0 = -3 * kPi / 180;
    CHECK_THAT(s.sampled_worst, IsCloseTo(peak_angle(1.0, theta0), 0, 1e-6));
    CHECK_THAT(s.searched_worst, IsCloseTo(peak_angle(1.5, theta0), 0, 1e-6));
    CHECK_THAT(s.theta[0], IsCloseTo(theta0, 1e-7, 0));
    REQUIRE(s.uncertain.size() == 1);
    CHECK_THAT(s.uncertain[0], IsCloseTo(-1.5, 1e-6, 0));
    REQUIRE(s.methods.size() == 1);
    CHECK(s.methods[0] == "BOBYQA");
  }
  SECTION("a limit between the sampled and the searched worst fails the check") {
    // 2 atan(1 / 9.81) = 11.65 deg on the samples, 2 atan(1.5 / 9.81) = 17.39 deg searched.
    const Spec spec = load_spec_text(braked_pendulum("single: {theta: [0 deg]}", "14 deg"), "braked.yaml");
    const CheckReport r = run_check(spec, searching());
    REQUIRE(r.search.size() == 1);
    CHECK(r.search[0].sampled_pass);
    CHECK_FALSE(r.search[0].pass);
    CHECK(r.search[0].sampling_missed());
    CHECK_FALSE(r.pass);
  }
}

TEST_CASE("results.json gives the uncertain values at the searched worst and the search's audit",
          "[checks][search][uncertain][report]") {
  const Spec spec = load_spec_text(braked_pendulum("single: {theta: [0 deg]}"), "braked.yaml");
  const CheckReport r = run_check(spec, searching(true));
  const auto json = nlohmann::json::parse(results_json(spec, r));
  const auto& row = json.at("checks").at(0).at("search");
  REQUIRE(row.at("uncertain").size() == 1);
  CHECK(row.at("uncertain").at(0).at("path") == "accel[0].x");
  CHECK_THAT(row.at("uncertain").at(0).at("value").get<double>(), IsCloseTo(-1.5, 1e-6, 0));
  CHECK(row.at("uncertain").at(0).at("range") == nlohmann::json::array({-1.5, -0.5}));
  CHECK(row.at("uncertain").at(0).at("spec_value") == -1.0);
  CHECK_THAT(row.at("accuracy_audit").at("value").get<double>(), IsCloseTo(peak_angle(1.5, 0), 0, 1e-7));
  CHECK(row.at("accuracy_audit").at("warning") == false);
}

TEST_CASE("an uncertain wind speed and a travel drive's stop deceleration are searched at the end of their ranges "
          "that sways the load most",
          "[checks][search][uncertain]") {
  // More wind, or a harder stop, swings the load further (the sway grows with the force on it):
  // the worst lies at the top of each range; the samples use the spec's value inside it.
  SECTION("wind") {
    const Spec spec = load_spec_text(R"(
swaybound: 1
name: pendulum in the wind
links:
  - {name: rope, kind: rope, length: 4, mass: 50, com: 4, inertia: 0}
wind: {link: rope, speed: 10 m/s, drag_area: 1 m^2, drag_coefficient: 1.2}
base:
  scenarios:
    - name: calm start
      uncertain: [{path: wind.speed, range: [5 m/s, 20 m/s]}]
cases:
  duration: 3 s
  search: {evaluations: 20, starts: 1}
  initial: [{single: {theta: [0 deg]}}]
limits:
  - {peak_angle: 60 deg, link: rope}
)",
                                     "wind.yaml");
    const CheckReport r = run_check(spec, searching());
    REQUIRE(r.search.size() == 1);
    REQUIRE(r.search[0].uncertain.size() == 1);
    CHECK(r.search[0].found_worse);
    CHECK_THAT(r.search[0].uncertain[0], IsCloseTo(20, 1e-6, 0));
  }
  SECTION("travel stop") {
    const Spec spec = load_spec_text(R"(
swaybound: 1
name: trolley stop
links:
  - {name: rope, kind: rope, length: 4, mass: 50, com: 4, inertia: 0}
base:
  scenarios:
    - name: stop
      travel:
        speed: 1 m/s
        stop: {at: 0.5 s, decel: 0.5 m/s^2}
      uncertain: [{path: travel.stop.decel, range: [0.3 m/s^2, 1.5 m/s^2]}]
cases:
  duration: 4 s
  search: {evaluations: 20, starts: 1}
  initial: [{single: {theta: [0 deg]}}]
limits:
  - {peak_angle: 60 deg, link: rope}
)",
                                     "stop.yaml");
    const CheckReport r = run_check(spec, searching());
    REQUIRE(r.search.size() == 1);
    REQUIRE(r.search[0].uncertain.size() == 1);
    CHECK(r.search[0].found_worse);
    CHECK_THAT(r.search[0].uncertain[0], IsCloseTo(1.5, 1e-6, 0));
  }
}

TEST_CASE("an uncertain value is written back by normalised_yaml and reloads to the same spec", "[spec][uncertain]") {
  const Spec spec = load_spec_text(braked_pendulum("single: {theta: [0 deg]}"), "braked.yaml");
  REQUIRE(spec.scenarios[0].uncertain.size() == 1);
  const Spec again = load_spec_text(normalised_yaml(spec), "again.yaml");
  REQUIRE(again.scenarios[0].uncertain.size() == 1);
  CHECK(again.scenarios[0].uncertain[0].path == "accel[0].x");
  CHECK(again.scenarios[0].uncertain[0].lo == -1.5);
  CHECK(again.scenarios[0].uncertain[0].hi == -0.5);
}

TEST_CASE("an uncertain travel acceleration whose low end cannot finish its move before the next is refused at the "
          "range's end",
          "[spec][uncertain][bad]") {
  // 1 m/s at 0.2 m/s^2 takes 5 s: from 1 s the first move ends at 6 s, after the second starts at
  // 3.5 s. The search would run the drive there, so the loader refuses the range, not the search.
  const std::string text = R"(swaybound: 1
name: a travel move whose acceleration may be too low to end before the next move
links:
  - {name: rope, kind: rope, length: 4 m, mass: 250 kg}
base:
  scenarios:
    - name: move
      travel:
        moves: [{at: 1 s, to: 1 m/s, accel: 0.5 m/s^2}, {at: 3.5 s, to: 0 m/s, accel: 0.5 m/s^2}]
      uncertain:
        - {path: "travel.moves[0].accel", range: [0.2 m/s^2, 0.8 m/s^2]}
cases:
  duration: 8 s
  initial: [{single: {theta: [0 deg]}}]
limits:
  - {peak_angle: 30 deg}
)";
  try {
    (void)load_spec_text(text, "overlap.yaml");
    FAIL("the spec loaded");
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].path == "base.scenarios[0].uncertain[0].range[0]");
    CHECK(e.diagnostics()[0].mark.line == 11);
    CHECK(e.diagnostics()[0].mark.column == 51);
  }
  // The same range from 0.5 m/s^2 up loads.
  std::string fine = text;
  fine.replace(fine.find("[0.2 m/s^2"), 10, "[0.5 m/s^2");
  CHECK_NOTHROW(load_spec_text(fine, "overlap.yaml"));
}
