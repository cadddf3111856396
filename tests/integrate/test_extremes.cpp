// Extremes located where they happen: on the interpolant between accepted steps and on both sides
// of every jump of an input. Closed forms for the uniform rod (compound pendulum) on a pivot:
//   I_pivot = m L^2 / 3; energy from rest at theta0: omega^2 = (3 g / L) (cos theta - cos theta0);
//   at the bottom the pivot force is vertical, R = m (g + a_y + (L/2) omega^2) (centripetal
//   acceleration of the centre of mass, a_y the upward base acceleration); at a turning point
//   (omega = 0) the axial tension is m g cos theta0;
//   period T = 4 K(sin(theta0 / 2)) / sqrt(3 g / (2 L))
// (e.g. Meriam & Kraige, Engineering Mechanics: Dynamics, compound pendulum; the elliptic-integral
// period: Abramowitz & Stegun 17.3 with the equivalent simple pendulum of length 2L/3).
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include <boost/math/special_functions/ellint_1.hpp>
#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/integrate/extremes.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {
constexpr double kPi = 3.14159265358979323846;
constexpr double kG = 9.81, kL = 2.0, kM = 100.0;

double deg(double d) { return d * kPi / 180; }

/// A uniform rod link released from rest at theta0 [deg], with `accel` as the scenario's segments.
std::string rod_spec(const std::string& kind, double theta0_deg, double duration, const std::string& accel,
                     const std::string& extra = "") {
  return fmt::format(R"(
swaybound: 1
name: uniform rod
gravity: {g}
links:
  - {{name: rod, kind: {kind}, length: {L} m, mass: {m} kg}}
base: {{scenarios: [{{name: motion, accel: [{accel}]}}]}}
cases: {{duration: {dur} s, initial: [{{single: {{theta: [{th} deg]}}}}]}}
{extra}
)",
                     fmt::arg("g", kG), fmt::arg("kind", kind), fmt::arg("L", kL), fmt::arg("m", kM),
                     fmt::arg("accel", accel), fmt::arg("dur", duration), fmt::arg("th", theta0_deg),
                     fmt::arg("extra", extra));
}

CaseMetrics run_first_case(const Spec& spec, double rtol, double atol) {
  const Model model = build_model(spec);
  Workspace ws(model);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.rtol = rtol;
  settings.atol = atol;
  const CaseSpace space(spec);
  return run_case(model, spec, ws, space.at(0), settings, {});
}

/// A probe over a known function of time, for testing the finder without an integration.
struct FunctionProbe final : DenseProbe {
  double (*f)(double) = nullptr;
  double x[4] = {0, 0, 0, 0};
  StepView at(double t) override {
    x[0] = f(t);
    StepView v;
    v.t = t;
    v.x = x;
    return v;
  }
};
}  // namespace

TEST_CASE("the finder locates maxima between coarse samples and at window starts", "[integrate][extremes]") {
  // q(t) = sin t sampled every 0.7 s: the samples miss the maxima of 1 at pi/2 + 2 k pi; the window
  // from t = 4 s starts on a falling stretch (q(4) = sin 4, above every later sample until the next
  // maximum... which is 1 at 5 pi / 2): both must come out exact.
  FunctionProbe probe;
  probe.f = [](double t) { return std::sin(t); };
  ExtremeFinder finder(
      2, [](const StepView& v, double* q) { q[0] = q[1] = v.x[0]; }, {0.0, 4.0});
  const double h = 0.7;
  double sampled = -2;
  for (int k = 0; k * h <= 9.0 + 1e-12; ++k) {
    const double t = k * h;
    StepView v = probe.at(t);
    v.segment_start = k == 0;
    v.segment_end = (k + 1) * h > 9.0 + 1e-12;
    probe.from = std::max(0.0, t - 2 * h);
    probe.to = t;
    v.probe = k == 0 ? nullptr : &probe;
    sampled = std::max(sampled, std::sin(t));
    finder.observe(v);
  }
  CHECK(sampled < 1 - 1e-3);  // the samples alone are well short of the maximum
  CHECK_THAT(finder.max(0).value, IsCloseTo(1, 0, 1e-13));
  CHECK_THAT(finder.max(0).time, IsCloseTo(kPi / 2, 0, 1e-6));
  CHECK_THAT(finder.max(1).value, IsCloseTo(1, 0, 1e-13));
  CHECK_THAT(finder.max(1).time, IsCloseTo(2.5 * kPi, 0, 1e-6));

  // A window opening inside a step on a falling stretch: its maximum is the value at its start.
  probe.f = [](double t) { return std::cos(t); };
  ExtremeFinder opening(1, [](const StepView& v, double* q) { q[0] = v.x[0]; }, {0.3});
  for (int k = 0; k <= 3; ++k) {
    StepView v = probe.at(k * h);
    v.segment_start = k == 0;
    probe.from = std::max(0.0, k * h - 2 * h);
    probe.to = k * h;
    v.probe = k == 0 ? nullptr : &probe;
    opening.observe(v);
  }
  CHECK_THAT(opening.max(0).value, IsCloseTo(std::cos(0.3), 0, 1e-15));
  CHECK(opening.max(0).time == 0.3);
}

TEST_CASE("peaks between accepted steps match the closed forms to the solver tolerance", "[integrate][extremes]") {
  // Released from 60 deg: peak load at the bottom 1.75 m g, least rope tension at the turning points
  // 0.5 m g, peak rate sqrt(3 g (1 - cos 60) / L), residual sway after 3 s = 60 deg (no damping).
  const Spec spec = load_spec_text(
      rod_spec("rope", 60, 10, "{for: 10 s, x: 0}", "limits: [{residual_sway: 61 deg, after: 3 s}]"), "rod.yaml");
  const double load = 1.75 * kM * kG, tension = 0.5 * kM * kG, rate = std::sqrt(1.5 * kG / kL);
  for (const auto& [rtol, atol, allowed] : {std::tuple{1e-8, 1e-10, 1e-6}, std::tuple{1e-11, 1e-13, 1e-9}}) {
    INFO("rtol " << rtol);
    const CaseMetrics m = run_first_case(spec, rtol, atol);
    REQUIRE(m.ok());
    CHECK(std::fabs(m.peak_load[0].value / load - 1) < allowed);
    CHECK(std::fabs(m.min_tension[0].value / tension - 1) < allowed);
    CHECK(std::fabs(m.peak_rate[0].value / rate - 1) < allowed);
    REQUIRE(m.residual.size() == 1);
    CHECK(std::fabs(m.residual[0] / deg(60) - 1) < allowed);
  }
}

TEST_CASE("regression: a load peak just after a jump of base acceleration is observed under the new phase",
          "[integrate][extremes]") {
  // The rod reaches the bottom at T/4; there the base starts accelerating upward at 1.2 g for
  // 0.05 s. The pivot load jumps from m (g + L w^2 / 2) to m (g + 1.2 g + L w^2 / 2) and then falls
  // as the rod swings up: the peak is the right-hand limit at the jump, and only there.
  const double theta0 = deg(40);
  const double quarter = boost::math::ellint_1(std::sin(theta0 / 2)) / std::sqrt(1.5 * kG / kL);
  const double omega2 = 3 * kG / kL * (1 - std::cos(theta0));
  const double before = kM * (kG + kL / 2 * omega2), after = kM * (kG + 1.2 * kG + kL / 2 * omega2);
  const std::string accel = fmt::format("{{for: {:.17g} s}}, {{for: 0.05 s, y: {:.17g} m/s^2}}", quarter, 1.2 * kG);
  const Spec spec = load_spec_text(rod_spec("rigid", 40, 3, accel), "jump.yaml");

  const CaseMetrics m = run_first_case(spec, 1e-11, 1e-13);
  REQUIRE(m.ok());
  CHECK(std::fabs(m.peak_load[0].value / after - 1) < 1e-8);
  CHECK_THAT(m.peak_load[0].time, IsCloseTo(quarter, 0, 1e-12));

  // Both sides of the jump are seen at the same t: the left under the old inputs, the right under
  // the new ones.
  const Model model = build_model(spec);
  Workspace ws(model);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.rtol = 1e-11;
  settings.atol = 1e-13;
  double left = 0, right = 0;
  const Observer on_step = [&](const StepView& v) {
    if (v.t != quarter) return;
    if (v.segment_end) left = v.ws->reaction[0];
    if (v.segment_start) right = v.ws->reaction[0];
  };
  REQUIRE(simulate_case(model, ws, 0, {{theta0}, {}}, settings, on_step).status == RunStatus::ok);
  CHECK(std::fabs(left / before - 1) < 1e-8);
  CHECK(std::fabs(right / after - 1) < 1e-8);
}

TEST_CASE("a sample that falls on a jump is taken under the new phase", "[integrate][extremes]") {
  const Spec spec = load_spec_text(rod_spec("rigid", 10, 3, "{for: 1.5 s, x: -0.8 m/s^2}, {for: 1 s, x: 0.5 m/s^2}"),
                                   "samples.yaml");
  const Model model = build_model(spec);
  Workspace ws(model);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 10;
  std::vector<double> times, accel;
  const Observer on_sample = [&](const StepView& v) {
    times.push_back(v.t);
    accel.push_back(v.ws->base_ax);
  };
  REQUIRE(simulate_case(model, ws, 0, {{deg(10)}, {}}, settings, {}, on_sample).status == RunStatus::ok);
  REQUIRE(times.size() == 31);  // 0, 0.1, ..., 3.0: one sample per grid time, none twice
  for (std::size_t k = 0; k < times.size(); ++k) {
    INFO("t = " << times[k]);
    CHECK_THAT(times[k], IsCloseTo(0.1 * static_cast<double>(k), 1e-12, 0));
    const double expected = times[k] < 1.5 - 1e-9 ? -0.8 : times[k] < 2.5 - 1e-9 ? 0.5 : 0.0;
    CHECK(accel[k] == expected);
  }
}
