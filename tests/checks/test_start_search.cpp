// Consistent starts sampled and searched: an equilibrium set over a range of steady accelerations
// (or wind speeds) gives one equilibrium start per sampled value, and the worst-case search moves a
// start of a modal or equilibrium set through that set's own quantities (amplitude and phase per
// mode, the phase wrapping round; the steady acceleration) instead of through link angles.
#include <catch2/catch.hpp>
#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>

#include <unistd.h>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "../support/process.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/worst_search.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using namespace swaybound::testing;

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kG = 9.81;

/// A point-mass pendulum (all 800 kg at the end of a 4 m rope) with `scenario` and `initial` sets.
std::string point_pendulum(const std::string& scenario, const std::string& initial, const std::string& extra = "") {
  return fmt::format(R"(
swaybound: 1
name: point pendulum
gravity: 9.81
links:
  - {{name: rope, kind: rope, length: 4, mass: 800, com: 4, inertia: 0}}
base: {{scenarios: [{}]}}
cases:
  duration: 10 s
  initial: [{}]
{}
)",
                     scenario, initial, extra);
}

CheckOptions searching() {
  CheckOptions o;
  o.audit = false;
  o.record = false;
  o.search = search_worst;
  return o;
}

}  // namespace

TEST_CASE("an equilibrium set sampled over a range of accelerations starts each case hanging at atan(a/g)",
          "[cases][starts][search][reference]") {
  // Outside check: relative equilibrium in a uniformly accelerating frame (Meriam & Kraige,
  // Engineering Mechanics: Dynamics, relative motion in translating axes): a point pendulum on a
  // base accelerating at a hangs still at theta = -atan(a/g), the load trailing the acceleration.
  const std::string initial = GENERATE(as<std::string>{},
                                       "{name: hanging, equilibrium: {acceleration: [0.2 m/s^2, 2.6 m/s^2, 4]}}",
                                       "{name: hanging, equilibrium: {acceleration: [0.2 m/s^2, 2.6 m/s^2], count: 5, "
                                       "seed: 3, method: latin_hypercube}}");
  const Spec spec = load_spec_text(point_pendulum("{name: still}", initial), "s.yaml");
  const CaseSpace space(spec);
  const bool grid = initial.find(", 4]") != std::string::npos;
  REQUIRE(space.size() == (grid ? 4 : 5));
  std::vector<double> sampled;
  for (long k = 0; k < space.size(); ++k) {
    const CaseDef def = space.at(k);
    CHECK(def.start_kind == StartKind::equilibrium);
    REQUIRE(def.initial.quantities.size() == 2);
    const double a = def.initial.quantities[0];
    CHECK(std::isnan(def.initial.quantities[1]));  // the spec's own wind (none here)
    CHECK(a >= 0.2);
    CHECK(a <= 2.6);
    if (grid) CHECK_THAT(a, IsCloseTo(0.2 + 0.8 * static_cast<double>(k), 1e-14, 0));
    sampled.push_back(a);
    CHECK_THAT(def.initial.theta[0], IsCloseTo(-std::atan(a / kG), 0, 1e-10));
    CHECK(def.initial.omega[0] == 0);
    // Run on a base that keeps accelerating at the case's value: no transient follows.
    const Model model = model_from_yaml(
        point_pendulum(fmt::format("{{name: accelerate, accel: [{{for: 20 s, x: {:.17g} m/s^2}}]}}", a), "{single: {}}"));
    const Trace trace = run_trace(model, def.initial, settings(10, 1e-11, 1e-13, 50));
    REQUIRE(trace.outcome.status == RunStatus::ok);
    double drift = 0;
    for (const Sample& s : trace.samples) drift = std::max(drift, std::fabs(s.x[0] - def.initial.theta[0]));
    INFO("a = " << a << " m/s^2");
    CHECK(drift < 1e-9);
  }
  // The sampled values differ (a random set is not one value repeated).
  std::sort(sampled.begin(), sampled.end());
  CHECK(std::adjacent_find(sampled.begin(), sampled.end()) == sampled.end());
  // The normalised spec reads back to the same starts.
  const Spec again = load_spec_text(normalised_yaml(spec), "n.yaml");
  const CaseSpace space2(again);
  REQUIRE(space2.size() == space.size());
  for (long k = 0; k < space.size(); ++k)
    CHECK_THAT(space2.at(k).initial.theta[0], IsCloseTo(space.at(k).initial.theta[0], 1e-12, 1e-15));
}

TEST_CASE("cases.csv, results.json and the packet name the value of each equilibrium start", "[cases][starts][search]") {
  const Spec spec = load_spec_text(point_pendulum("{name: still}",
                                                  "{name: hanging, equilibrium: {acceleration: [0.5 m/s^2, 1.5 m/s^2, 3]}}",
                                                  "limits: [{peak_angle: 30 deg, link: rope}]\n"),
                                   "s.yaml");
  CheckOptions o;
  o.audit = false;
  o.record = false;
  std::vector<std::string> rows;
  o.on_case = [&](const CaseMetrics& m) { rows.push_back(cases_csv_row(spec, m)); };
  const CheckReport r = run_check(spec, o);
  REQUIRE(r.checks.size() == 1);
  // The steepest start (1.5 m/s^2) governs: on a base at rest it swings through -atan(a/g) to +atan(a/g).
  CHECK_THAT(r.checks[0].worst, IsCloseTo(std::atan(1.5 / kG), 1e-7, 0));
  const auto json = nlohmann::json::parse(results_json(spec, r));
  const auto& start = json["checks"][0]["governing_start"];
  CHECK(start["kind"] == "equilibrium");
  CHECK_THAT(start["acceleration_m_per_s2"].get<double>(), IsCloseTo(1.5, 1e-14, 0));
  CHECK(start["wind_speed_m_per_s"].is_null());
  const std::string header = cases_csv_header(spec);
  CHECK(header.find("\"start_values\"") != std::string::npos);
  REQUIRE(rows.size() == 3);
  const std::string& row = rows[1];  // the grid's middle value, 1 m/s^2
  CHECK(row.find("steady acceleration 1 m/s^2") != std::string::npos);
}

TEST_CASE("the search moves a modal start through its amplitude and phase, the phase wrapping round",
          "[checks][search][starts][modal][reference]") {
  // A point pendulum (length L, w^2 = g / L) started in its only mode with amplitude A and phase p:
  // theta0 = A cos p, omega0 = -A w sin p (modal/modal_start.hpp). Energy conservation (Meriam &
  // Kraige, work-energy) gives the peak angle of the (nonlinear) swing:
  //   cos(theta_max) = cos(A cos p) - (A sin p)^2 / 2,
  // largest over p at p = pi/2 or 3 pi/2 (cos(A c) - A^2 (1 - c^2) / 2 = 1 - A^2/2 + A^4 c^4 / 24 - ...
  // is least at c = cos p = 0), and growing with A: over A in [a_lo, a_hi] and p in [0, 2 pi) the
  // worst is at a_hi, theta_max = acos(1 - a_hi^2 / 2) = 2 asin(a_hi / 2) (a_hi to O(a_hi^3)).
  const double a_hi = 20 * kPi / 180;
  const Spec spec = load_spec_text(
      point_pendulum("{name: still}",
                     "{random: {count: 3, seed: 5, amplitude: [[5 deg, 20 deg]], phase: [[0 deg, 360 deg]]}}",
                     "limits: [{peak_angle: 40 deg, link: rope}]\nsolver: {rtol: 1e-11, atol: 1e-13}\n"),
      "m.yaml");
  Spec searched = spec;
  searched.cases.search.evaluations = 80;
  searched.cases.search.starts = 1;
  searched.cases.duration = 5;  // over a period (4 s) from every phase
  const StartBox box = set_box(searched, 0);
  CHECK(box.kind == StartKind::modal);
  REQUIRE(box.free.size() == 2);
  CHECK_FALSE(box.periodic[0]);
  CHECK(box.periodic[1]);  // the phase over a whole turn
  const CheckReport r = run_check(searched, searching());
  REQUIRE(r.search.size() == 1);
  const LimitSearch& s = r.search[0];
  const double expected = 2 * std::asin(a_hi / 2);
  INFO("sampled " << s.sampled_worst << ", searched " << s.searched_worst << ", expected " << expected);
  CHECK(s.searched);
  CHECK(s.sampled_worst < expected - 1e-3);  // the samples miss the top of the amplitude range
  CHECK(s.found_worse);
  CHECK_THAT(s.searched_worst, IsCloseTo(expected, 0, 1e-6));
  REQUIRE(s.worst_case.initial.quantities.size() == 2);
  CHECK_THAT(s.worst_case.initial.quantities[0], IsCloseTo(a_hi, 0, 1e-6));
  // The phase found is a quarter or three quarters of a turn (the two are mirror images).
  const double phase = s.worst_case.initial.quantities[1];
  CHECK(std::min(std::fabs(phase - kPi / 2), std::fabs(phase - 3 * kPi / 2)) < 1e-2);
  const auto json = nlohmann::json::parse(results_json(searched, r));
  const auto& start = json["checks"][0]["search"]["start"];
  CHECK(start["kind"] == "modal");
  CHECK_THAT(start["amplitude_rad"][0].get<double>(), IsCloseTo(a_hi, 0, 1e-6));
}

TEST_CASE("the search moves an equilibrium start through its range of accelerations to the closed-form worst",
          "[checks][search][starts][reference]") {
  // A point pendulum hanging at equilibrium under a steady acceleration a (theta0 = -atan(a/g), at
  // rest), then a brake at b from t = 0. In the braking base's frame the effective gravity
  // (b, -g) points at atan(b/g); a pendulum released from rest at an angle D from it swings to D on
  // the other side exactly (energy conservation in a uniform field; Meriam & Kraige, relative motion
  // in translating axes and work-energy). D = atan(b/g) + atan(a/g), so the peak angle is
  //   theta_max = 2 atan(b/g) + atan(a/g),
  // rising with a: over a in [a_lo, a_hi] the worst is at a_hi.
  const double b = 1.2, a_hi = 1.5;
  const Spec spec = load_spec_text(
      point_pendulum("{name: brake, accel: [{for: 30 s, x: -1.2 m/s^2}]}",
                     "{name: steady, equilibrium: {acceleration: [0.3 m/s^2, 1.5 m/s^2], count: 2, seed: 4}}",
                     "limits: [{peak_angle: 40 deg, link: rope}]\nsolver: {rtol: 1e-11, atol: 1e-13}\n"),
      "e.yaml");
  Spec searched = spec;
  searched.cases.search.evaluations = 40;
  searched.cases.search.starts = 1;
  searched.cases.duration = 5;
  const StartBox box = set_box(searched, 0);
  CHECK(box.kind == StartKind::equilibrium);
  REQUIRE(box.free.size() == 1);
  CHECK(box.free[0] == 0);  // the acceleration; no wind range
  const CheckReport r = run_check(searched, searching());
  REQUIRE(r.search.size() == 1);
  const LimitSearch& s = r.search[0];
  const double expected = 2 * std::atan(b / kG) + std::atan(a_hi / kG);
  INFO("sampled " << s.sampled_worst << ", searched " << s.searched_worst << ", expected " << expected);
  CHECK(s.sampled_worst < expected - 1e-3);
  CHECK(s.found_worse);
  CHECK_THAT(s.searched_worst, IsCloseTo(expected, 0, 1e-7));
  CHECK_THAT(s.worst_case.initial.quantities.at(0), IsCloseTo(a_hi, 0, 1e-6));
  CHECK_THAT(s.theta.at(0), IsCloseTo(-std::atan(s.worst_case.initial.quantities[0] / kG), 0, 1e-10));
  const auto json = nlohmann::json::parse(results_json(searched, r));
  CHECK(json["checks"][0]["search"]["start"]["kind"] == "equilibrium");
  CHECK_THAT(json["checks"][0]["search"]["start"]["acceleration_m_per_s2"].get<double>(), IsCloseTo(a_hi, 0, 1e-6));
}

TEST_CASE("an equilibrium set without a range is not searched", "[checks][search][starts]") {
  const Spec spec = load_spec_text(point_pendulum("{name: brake, accel: [{for: 30 s, x: -1.2 m/s^2}]}",
                                                  "{equilibrium: {acceleration: 1 m/s^2}}",
                                                  "limits: [{peak_angle: 40 deg, link: rope}]\n"),
                                   "e.yaml");
  CHECK(set_box(spec, 0).free.empty());
  const CheckReport r = run_check(spec, searching());
  REQUIRE(r.search.size() == 1);
  CHECK_FALSE(r.search[0].searched);
}

TEST_CASE("a sizing run flags the final check's start transient in sizing.json, sizing.md and the report",
          "[sizing][starts][cli]") {
  // The kinked start of test_starts.cpp, (2, -4, 6) deg released from rest: the pivot load at the
  // rope peaks through the kink's fast modes within the first quarter of the lowest period. The
  // sizing varies a damper at the block's pivot; every design keeps that start, so the sized
  // design's final check is governed by the transient.
  namespace fs = std::filesystem;
  const fs::path dir = fs::temp_directory_path() / fmt::format("swaybound_size_transient_{}", ::getpid());
  fs::remove_all(dir);
  fs::create_directories(dir);
  std::ofstream(dir / "kinked.yaml") << R"(
swaybound: 1
name: kinked start sized
links:
  - {name: rope, kind: rope, length: 6, mass: 40}
  - {name: block, length: 0.8, mass: 400, pivot: {damper: {coefficient: 50 N m s/rad}}}
  - {name: load, length: 1.5, mass: 2000}
base: {scenarios: [{name: brake, initial_velocity: {x: 1}, accel: [{for: 6 s, x: 0}, {for: 1 s, x: -0.3}]}]}
cases: {duration: 8 s, search: false, initial: [{single: {theta: [2 deg, -4 deg, 6 deg]}}]}
limits: [{pivot_load: 100 kN, link: rope}]
sizing:
  variables:
    - {path: "links[block].pivot.damper.coefficient", range: [10 N m s/rad, 100 N m s/rad], cost: 1}
  budget: {evaluations: 4}
)";
  const auto r = run_command(fmt::format("'{}' size '{}' --out '{}' --jobs 1 --no-audit 2>&1", SWAYBOUND_CLI,
                                         (dir / "kinked.yaml").string(), (dir / "out").string()));
  REQUIRE(r.exited);
  INFO(r.out);
  const auto read = [&](const char* name) {
    std::ifstream in(dir / "out" / name);
    return std::string(std::istreambuf_iterator<char>(in), {});
  };
  const auto sizing = nlohmann::json::parse(read("sizing.json"));
  const auto results = nlohmann::json::parse(read("results.json"));
  const std::string md = read("sizing.md"), html = read("report.html");
  fs::remove_all(dir);
  REQUIRE(sizing["limits"].size() == 1);
  const auto& flag = sizing["limits"][0]["start_transient_after"];
  REQUIRE(flag.is_object());
  CHECK(flag["flagged"] == true);
  CHECK(flag["fraction_of_lowest_period"] == 0.25);
  CHECK(flag["time_s"].get<double>() < flag["within_s"].get<double>());
  // The same flag as the final check's own results.json.
  CHECK(results["checks"][0]["start_transient"]["flagged"] == true);
  CHECK(flag["start"] == results["checks"][0]["start_transient"]["start"]);
  CHECK(flag["start"].get<std::string>().find("single-001") != std::string::npos);
  CHECK(md.find("start transient?") != std::string::npos);
  CHECK(md.find("single-001") != std::string::npos);
  // The report's sizing table marks the check (the check packet's own verdict table says "t = ..., start transient?").
  CHECK(html.find("rope&#39;), start transient?") != std::string::npos);
}

TEST_CASE("an equilibrium set sampled over a range of wind speeds matches the statics of a pendulum",
          "[cases][starts][reference]") {
  // Outside check: statics of a point mass on a massless rod with a horizontal force F at the mass:
  // moments about the pivot F L cos(theta) = m g L sin(theta), so tan(theta) = F / (m g), with the
  // quadratic drag F = 1/2 rho Cd A u^2 (the wind law of specs/README.md).
  const double rho = 1.225, cd = 1.2, area = 6, m = 500;
  const Spec spec = load_spec_text(R"(
swaybound: 1
name: wind range
gravity: 9.81
links:
  - {name: rope, length: 6, mass: 500, com: 6, inertia: 0}
wind: [{link: rope, at: 6 m, speed: 5 m/s, drag_area: 6 m^2, drag_coefficient: 1.2, air_density: 1.225 kg/m^3}]
cases: {duration: 1 s, initial: [{equilibrium: {acceleration: 0 m/s^2, wind_speed: [0 m/s, 30 m/s, 4]}}]}
)",
                                   "w.yaml");
  const CaseSpace space(spec);
  REQUIRE(space.size() == 4);
  for (long k = 0; k < 4; ++k) {
    const CaseDef def = space.at(k);
    const double u = 10.0 * static_cast<double>(k);
    REQUIRE(def.initial.quantities.size() == 2);
    CHECK_THAT(def.initial.quantities[1], IsCloseTo(u, 1e-14, 0));
    CHECK_THAT(def.initial.theta[0], IsCloseTo(std::atan(0.5 * rho * cd * area * u * u / (m * kG)), 0, 1e-10));
  }
}
