// A rope link is a rigid bar that may only pull: a run ends with rope_slack when its tension goes
// below zero, at the time the tension reached zero. Closed forms for a point mass m on a massless
// rope of length L (the simple pendulum, e.g. Meriam & Kraige, Engineering Mechanics: Dynamics,
// normal-tangential coordinates): the rope tension is T = m (L omega^2 + g cos theta), and by
// energy, from theta = 0 at the rate w0, omega^2 = w0^2 - 2 (g / L) (1 - cos theta), so
//   T = m L w0^2 + m g (3 cos theta - 2),  zero at cos theta* = (2 - L w0^2 / g) / 3;
// released from rest at theta0, T = m g (3 cos theta - 2 cos theta0), least at theta0: m g cos theta0.
// The time to reach theta* is t* = integral_0^theta* dtheta / omega(theta), evaluated here by
// Gauss-Kronrod quadrature (Boost.Math), independently of the engine.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <unistd.h>

#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;
namespace fs = std::filesystem;

namespace {
constexpr double kPi = 3.14159265358979323846;
constexpr double kG = 9.81, kL = 2.0, kM = 100.0;

double deg(double d) { return d * kPi / 180; }

/// A point mass on a massless rope (com at the end, no inertia about the com), with `initial` as
/// the case set and `accel` as the scenario's segments.
std::string point_pendulum(const std::string& initial, double duration, const std::string& accel = "{for: 1 s, x: 0}",
                           const std::string& extra = "") {
  return fmt::format(R"(
swaybound: 1
name: point pendulum
gravity: {g}
links:
  - {{name: hoist rope, kind: rope, length: {L} m, mass: {m} kg, com: {L} m, inertia: 0}}
base: {{scenarios: [{{name: motion, accel: [{accel}]}}]}}
cases: {{duration: {dur} s, initial: [{initial}]}}
{extra}
)",
                     fmt::arg("g", kG), fmt::arg("L", kL), fmt::arg("m", kM), fmt::arg("accel", accel),
                     fmt::arg("dur", duration), fmt::arg("initial", initial), fmt::arg("extra", extra));
}

Spec load_text(const std::string& name, const std::string& text) {
  const fs::path path = fs::temp_directory_path() / fmt::format("swaybound-test-{}-{}.yaml", name, ::getpid());
  std::ofstream(path) << text;
  Spec spec = load_spec(path.string());
  fs::remove(path);
  return spec;
}

RunOutcome run_first(const Spec& spec, Stepper method = Stepper::dopri5) {
  const Model model = build_model(spec);
  Workspace ws(model);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.method = method;
  const CaseSpace space(spec);
  return simulate_case(model, ws, 0, space.at(0).initial, settings);
}
}  // namespace

TEST_CASE("a rope pendulum released from rest below 90 deg stays taut, above 90 deg it is slack at once",
          "[integrate][rope]") {
  SECTION("80 deg: ok, least tension m g cos theta0") {
    const Spec spec = load_text("rope-80", point_pendulum("{single: {theta: [80 deg]}}", 6));
    const Model model = build_model(spec);
    Workspace ws(model);
    const CaseSpace space(spec);
    const CaseMetrics m = run_case(model, spec, ws, space.at(0), RunSettings::from_spec(spec), {});
    REQUIRE(m.status == RunStatus::ok);
    CHECK_THAT(m.min_tension[0].value, IsCloseTo(kM * kG * std::cos(deg(80)), 1e-6, 1e-6));
  }
  SECTION("120 deg: T(0) = m g cos 120 deg < 0, so the case ends at t = 0 with rope_slack") {
    const RunOutcome out = run_first(load_text("rope-120", point_pendulum("{single: {theta: [120 deg]}}", 6)));
    CHECK(out.status == RunStatus::rope_slack);
    CHECK(status_name(out.status) == "rope_slack");
    CHECK(out.t_reached == 0.0);
    REQUIRE(out.x_reached.size() >= 1);
    CHECK(out.x_reached[0] == Approx(deg(120)));
    CHECK(out.reason.find("rope 'hoist rope' went slack at t = 0 s") != std::string::npos);
  }
}

TEST_CASE("a rope pendulum swung up from the bottom goes slack where m L w0^2 + m g (3 cos theta - 2) = 0",
          "[integrate][rope]") {
  // cos theta* = -1/2 (theta* = 120 deg) needs L w0^2 / g = 3.5; at theta* omega^2 = g / (2 L) > 0,
  // so the mass gets there still moving.
  const double w0 = std::sqrt(3.5 * kG / kL);
  const double theta_star = std::acos((2 - kL * w0 * w0 / kG) / 3);
  REQUIRE(theta_star == Approx(deg(120)));
  const auto omega = [&](double th) { return std::sqrt(w0 * w0 - 2 * (kG / kL) * (1 - std::cos(th))); };
  const double t_star =
      boost::math::quadrature::gauss_kronrod<double, 61>::integrate([&](double th) { return 1 / omega(th); }, 0.0,
                                                                    theta_star, 15, 1e-14);
  const Spec spec = load_text(
      "rope-swing", point_pendulum(fmt::format("{{single: {{theta: [0 deg], rate: [{} rad/s]}}}}", w0), 5));
  for (const Stepper method : {Stepper::dopri5, Stepper::rkf78}) {
    INFO("method " << (method == Stepper::dopri5 ? "dopri5" : "rkf78"));
    const RunOutcome out = run_first(spec, method);
    REQUIRE(out.status == RunStatus::rope_slack);
    CHECK_THAT(out.t_reached, IsCloseTo(t_star, 1e-6, 0));
    CHECK_THAT(out.x_reached[0], IsCloseTo(theta_star, 1e-6, 0));
    // The tension at the located state is zero to the solver's accuracy.
    const double w = out.x_reached[1];
    CHECK_THAT(kM * (kL * w * w + kG * std::cos(out.x_reached[0])) / (kM * kG), IsCloseTo(0, 1e-6, 0));
    CHECK(out.reason.find(fmt::format("at t = {:.9g} s", out.t_reached)) != std::string::npos);
  }
}

TEST_CASE("a rope slackened by a jump of the base acceleration fails at the jump itself", "[integrate][rope]") {
  // Hanging at rest, the tension is m (g + a_y) with a_y the upward base acceleration: m g before
  // t = 1 s, m (g - 1.5 g) < 0 right after it. The left-hand limit is taut, the right-hand one slack.
  const Spec spec = load_text("rope-drop",
                              point_pendulum("{single: {theta: [0 deg]}}", 3,
                                             fmt::format("{{for: 1 s, x: 0}}, {{for: 1 s, y: {}}}", -1.5 * kG)));
  const RunOutcome out = run_first(spec);
  CHECK(out.status == RunStatus::rope_slack);
  CHECK(out.t_reached == Approx(1.0).epsilon(1e-14));
  CHECK(out.reason.find("went slack at t = 1 s") != std::string::npos);
}

TEST_CASE("a case whose rope goes slack fails every check it touches and is listed with its status",
          "[checks][rope]") {
  // Before the rope_slack status, the 120 deg case ran on with the rope pushing and the check
  // reported its negative least tension as a value.
  const Spec spec = load_text("rope-slack-check",
                              point_pendulum("{single: {theta: [120 deg]}}, {single: {theta: [30 deg]}}", 4,
                                             "{for: 1 s, x: 0}",
                                             "limits:\n  - {rope_tension_min: 0 N}\n  - {peak_angle: 179 deg}\n"));
  CheckOptions options;
  options.audit = false;
  options.record = false;
  std::vector<CaseMetrics> cases;
  options.on_case = [&](const CaseMetrics& m) { cases.push_back(m); };
  const CheckReport r = run_check(spec, options);
  REQUIRE(r.checks.size() == 2);
  CHECK_FALSE(r.pass);
  for (const auto& c : r.checks) {
    INFO(c.key);
    CHECK_FALSE(c.pass);
    CHECK(c.failed_cases == 1);
    CHECK(c.first_failure.find("(rope_slack): rope 'hoist rope' went slack at t = 0 s") != std::string::npos);
  }
  REQUIRE(r.failed.size() == 1);
  CHECK(r.failed[0].status == "rope_slack");
  CHECK(results_json(spec, r).find("\"status\": \"rope_slack\"") != std::string::npos);
  REQUIRE(cases.size() == 2);
  CHECK(cases[0].status == RunStatus::rope_slack);
  CHECK(cases[1].ok());
  CHECK(cases_csv_row(spec, cases[0]).find("rope_slack") != std::string::npos);
}
