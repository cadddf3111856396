// The engine against closed forms from outside the project. Each check names its source.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include <boost/math/special_functions/ellint_1.hpp>
#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"

using namespace swaybound;
using namespace swaybound::testing;
using std::numbers::pi;

namespace {
constexpr double kG = 9.81;
double deg(double d) { return d * pi / 180; }

std::string single_link(double length, double mass, double com, double inertia, const std::string& pivot = "{}",
                        const std::string& extra = "", const std::string& kind = "rigid") {
  return fmt::format(R"(
swaybound: 1
name: single link
gravity: {}
links:
  - {{name: arm, kind: {}, length: {}, mass: {}, com: {}, inertia: {}, pivot: {}}}
cases: {{duration: 1 s, initial: [{{single: {{theta: [0.1 rad]}}}}]}}
{}
)",
                     kG, kind, length, mass, com, inertia, pivot, extra);
}

std::string equal_double(double length, double mass, const std::string& extra = "") {
  return equal_double_yaml(length, mass, kG, extra);
}
}  // namespace

TEST_CASE("simple pendulum period at large amplitude matches the elliptic-integral form", "[dynamics][reference]") {
  // T = 4 sqrt(L/g) K(k), k = sin(theta0 / 2): Abramowitz & Stegun, Handbook of Mathematical
  // Functions, 17.3 (complete elliptic integral of the first kind); K from Boost.Math ellint_1.
  const double L = 2.0;
  const Model model = model_from_yaml(single_link(L, 5.0, L, 0.0));
  for (double amplitude : {10.0, 60.0, 120.0, 170.0}) {
    const double k = std::sin(deg(amplitude) / 2);
    const double expected = 4 * std::sqrt(L / kG) * boost::math::ellint_1(k);
    const Trace trace = run_trace(model, {{deg(amplitude)}, {}}, settings(6 * expected, 1e-11, 1e-12, 2000));
    REQUIRE(trace.outcome.status == RunStatus::ok);
    INFO("amplitude " << amplitude << " deg, expected period " << expected << " s");
    CHECK_THAT(mean_period(trace, 0), IsCloseTo(expected, 0, 1e-7));
  }
}

TEST_CASE("equal double pendulum: normal-mode frequencies and shapes", "[dynamics][reference]") {
  // Point masses m on massless links L: w^2 = (2 -+ sqrt 2) g / L, mode shapes theta2/theta1 = +-sqrt 2
  // (Goldstein, Classical Mechanics, 3rd ed., ch. 6; also Marion & Thornton, Classical Dynamics, ch. 12).
  const double L = 1.5;
  const Model model = model_from_yaml(equal_double(L, 3.0));
  SECTION("linearised mass and stiffness constants give the closed form exactly") {
    // At theta = 0 the mass matrix is mu and the gravity stiffness diag(g h_i).
    Eigen::Matrix2d K = Eigen::Matrix2d::Zero();
    K(0, 0) = kG * model.h[0];
    K(1, 1) = kG * model.h[1];
    Eigen::GeneralizedSelfAdjointEigenSolver<Eigen::Matrix2d> eig(K, model.mu.topLeftCorner<2, 2>());
    CHECK_THAT(eig.eigenvalues()(0), IsCloseTo((2 - std::sqrt(2.0)) * kG / L, 0, 1e-12));
    CHECK_THAT(eig.eigenvalues()(1), IsCloseTo((2 + std::sqrt(2.0)) * kG / L, 0, 1e-12));
    const auto v = eig.eigenvectors();
    CHECK_THAT(v(1, 0) / v(0, 0), IsCloseTo(std::sqrt(2.0), 0, 1e-12));
    CHECK_THAT(v(1, 1) / v(0, 1), IsCloseTo(-std::sqrt(2.0), 0, 1e-12));
  }
  SECTION("a small start in each mode shape swings at that mode's frequency and keeps its shape") {
    const double eps = deg(0.2);
    for (int mode : {0, 1}) {
      const double sign = mode == 0 ? 1.0 : -1.0;
      const double w = std::sqrt((2 - sign * std::sqrt(2.0)) * kG / L);
      const Trace trace = run_trace(model, {{eps, sign * std::sqrt(2.0) * eps}, {}},
                                    settings(10 * 2 * pi / w, 1e-11, 1e-13, 4000));
      REQUIRE(trace.outcome.status == RunStatus::ok);
      INFO("mode " << mode);
      // Amplitude effects at 0.2 deg shift the frequency by ~theta^2/16 ~ 1e-6 (from memory: the
      // pendulum's first-order amplitude correction), so 1e-4 is a safe bound.
      CHECK_THAT(mean_period(trace, 0), IsCloseTo(2 * pi / w, 0, 1e-4));
      // The shape: theta2 / theta1 stays at the mode's ratio whenever theta1 is not near a zero.
      double max_ratio_error = 0;
      for (const auto& s : trace.samples)
        if (std::fabs(s.x[0]) > 0.5 * eps)
          max_ratio_error = std::max(max_ratio_error, std::fabs(s.x[1] / s.x[0] - sign * std::sqrt(2.0)));
      CHECK(max_ratio_error < 2e-3);
    }
  }
}

TEST_CASE("compound pendulum period follows its equivalent length", "[dynamics][reference]") {
  // Small-amplitude period 2 pi sqrt(I_pivot / (m g d)) (Meriam & Kraige, Engineering Mechanics:
  // Dynamics, compound pendulum); at 30 deg use the exact form with L_eq = I_pivot / (m d) and A&S 17.3.
  const double L = 1.5, m = 10.0, d = L / 2, I_cm = m * L * L / 12;
  const double I_pivot = I_cm + m * d * d;
  const Model model = model_from_yaml(single_link(L, m, d, I_cm));
  const double small = 2 * pi * std::sqrt(I_pivot / (m * kG * d));
  const Trace t1 = run_trace(model, {{deg(0.5)}, {}}, settings(8 * small, 1e-11, 1e-13, 2000));
  CHECK_THAT(mean_period(t1, 0), IsCloseTo(small, 0, 1e-5));
  const double exact30 = 4 * std::sqrt(I_pivot / (m * d) / kG) * boost::math::ellint_1(std::sin(deg(30) / 2));
  const Trace t2 = run_trace(model, {{deg(30)}, {}}, settings(8 * exact30, 1e-11, 1e-12, 2000));
  CHECK_THAT(mean_period(t2, 0), IsCloseTo(exact30, 0, 1e-7));
}

TEST_CASE("rope tension at the bottom of a swing is m g (3 - 2 cos theta0)", "[dynamics][reference]") {
  // Point mass on a light rope released from rest at theta0: energy conservation gives v^2 = 2 g L
  // (1 - cos theta0) and the radial balance T = m g + m v^2 / L (Meriam & Kraige, Dynamics, ch. 3).
  const double L = 4.0, m = 250.0;
  const Model model = model_from_yaml(single_link(L, m, L, 0.0, "{}", "", "rope"));
  for (double amplitude : {20.0, 60.0, 90.0}) {
    const double period = 4 * std::sqrt(L / kG) * boost::math::ellint_1(std::sin(deg(amplitude) / 2));
    const Trace trace = run_trace(model, {{deg(amplitude)}, {}}, settings(period, 1e-11, 1e-12, 20000));
    double highest = 0;
    for (const auto& s : trace.samples) highest = std::max(highest, s.tension[0]);
    INFO("amplitude " << amplitude);
    CHECK_THAT(highest, IsCloseTo(m * kG * (3 - 2 * std::cos(deg(amplitude))), 0, 1e-6));
    // At the release point the rope carries m g cos theta0 (no radial speed yet).
    CHECK_THAT(trace.samples.front().tension[0], IsCloseTo(m * kG * std::cos(deg(amplitude)), 0, 1e-12));
  }
}

TEST_CASE("static pivot loads equal the weight below each pivot", "[dynamics][reference]") {
  // Statics: at rest and hanging, each pivot carries the weight of everything below it.
  const Model model = model_from_yaml(R"(
swaybound: 1
name: three links at rest
gravity: 9.81
links:
  - {name: a, length: 3, mass: 20}
  - {name: b, length: 1, mass: 150, com: 0.4, inertia: 8}
  - {name: c, length: 2, mass: 900, com: 1.7, inertia: 300}
cases: {duration: 1 s, initial: [{single: {theta: [0]}}]}
)");
  Workspace ws(model);
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0), dxdt(x.size());
  evaluate(model, ws, model.scenarios[0].phases[0], x.data(), 0.0, dxdt.data());
  const double weights[] = {(20 + 150 + 900) * 9.81, (150 + 900) * 9.81, 900 * 9.81};
  for (int i = 0; i < 3; ++i) {
    CHECK_THAT(ws.reaction[i], IsCloseTo(weights[i], 0, 1e-14));
    CHECK_THAT(ws.reaction_y[i], IsCloseTo(weights[i], 0, 1e-14));
    CHECK(dxdt[3 + i] == 0.0);
  }
}

TEST_CASE("steady sway under constant base acceleration settles at atan(a/g)", "[dynamics][reference]") {
  // In the accelerating frame the effective gravity is (-a, -g): equilibrium at theta = -atan(a/g)
  // (Meriam & Kraige, Dynamics: pendulum in an accelerating vehicle).
  for (double a : {0.8, 2.5, -1.2}) {
    const Model model = model_from_yaml(single_link(
        3.0, 500.0, 2.5, 40.0, "{damper: {coefficient: 8 kN m s/rad}}",
        fmt::format("base: {{scenarios: [{{name: s, accel: [{{for: 1000 s, x: {}}}]}}]}}", a)));
    const Trace trace = run_trace(model, {{0.0}, {}}, settings(120, 1e-10, 1e-12, 1));
    REQUIRE(trace.outcome.status == RunStatus::ok);
    INFO("a = " << a);
    CHECK_THAT(trace.samples.back().x[0], IsCloseTo(-std::atan(a / kG), 1e-8, 0));
  }
}

TEST_CASE("log decrement of a lightly damped swing matches the damping ratio", "[dynamics][reference]") {
  // Rotary oscillator with viscous damping: zeta = c / (2 sqrt(I_pivot k)), k = m g d, and the log
  // decrement delta = ln(x_n / x_{n+1}) = 2 pi zeta / sqrt(1 - zeta^2) (Thomson & Dahleh, Theory of
  // Vibration with Applications, 5th ed., sec. 2.6).
  const double L = 2.0, m = 40.0, d = 1.6, I_cm = 3.0, c = 12.0;
  const double I_pivot = I_cm + m * d * d, k = m * kG * d;
  const double zeta = c / (2 * std::sqrt(I_pivot * k));
  const Model model = model_from_yaml(single_link(L, m, d, I_cm, fmt::format("{{damper: {{coefficient: {} N m s/rad}}}}", c)));
  const Trace trace = run_trace(model, {{deg(0.5)}, {}}, settings(30, 1e-11, 1e-14, 4000));
  const auto p = peaks(trace, 0, 1);
  REQUIRE(p.size() >= 6);
  const double delta = std::log(p[0] / p[5]) / 5;
  const double measured = delta / std::sqrt(4 * pi * pi + delta * delta);
  INFO("zeta " << zeta << ", measured " << measured);
  CHECK_THAT(measured, IsCloseTo(zeta, 0, 1e-3));
}

TEST_CASE("Coulomb friction: amplitude falls by 4 T / k per cycle", "[dynamics][reference]") {
  // Dry friction torque T on an oscillator of stiffness k loses 4 T / k of amplitude per full cycle,
  // linearly (Den Hartog, Mechanical Vibrations, 4th ed., sec. 8.2). Here k = m g d (small angles);
  // the tanh regularisation with a transition rate 1/200 of the peak rate adds a small viscous part,
  // hence the 2% tolerance.
  const double L = 2.0, m = 40.0, d = 1.6, I_cm = 3.0, T = 3.0;
  const double k = m * kG * d;
  const Model model = model_from_yaml(
      single_link(L, m, d, I_cm, fmt::format("{{friction: {{torque: {}, transition_rate: 0.001 rad/s}}}}", T)));
  const Trace trace = run_trace(model, {{deg(4.0)}, {}}, settings(12, 1e-10, 1e-12, 4000));
  REQUIRE(trace.outcome.status == RunStatus::ok);
  const auto p = peaks(trace, 0, 1);
  REQUIRE(p.size() >= 3);
  const double per_cycle = (p[0] - p[2]) / 2;
  CHECK_THAT(per_cycle, IsCloseTo(4 * T / k, 0, 0.02));
}

TEST_CASE("energy: conserved without losses, balanced by the audit with them", "[dynamics][energy]") {
  // Undamped double pendulum from 120 deg, 20 s: the relative energy drift must stay below 1e-7
  // at rtol 1e-10 (conservation of energy; the bound is the issue's requirement).
  const Model model = model_from_yaml(equal_double(1.0, 1.0));
  const Trace trace = run_trace(model, {{deg(120), deg(120)}, {}}, settings(20, 1e-10, 1e-10, 0));
  REQUIRE(trace.outcome.status == RunStatus::ok);
  CHECK(trace.max_abs_energy_change / model.energy_scale < 1e-7);

  // With dampers, friction (constant and pin), a dashpot to the moving base, gusty wind and base
  // motion, energy + dissipated - work in stays at the initial energy to solver tolerance.
  const Spec spec = load_spec(std::string(SWAYBOUND_SOURCE_DIR) + "/specs/boom_tip_attachment.yaml");
  const Model boom = build_model(spec);
  for (int scenario = 0; scenario < static_cast<int>(boom.scenarios.size()); ++scenario) {
    RunSettings s = RunSettings::from_spec(spec);
    s.output_rate = 0;
    Workspace ws(boom);
    const RunOutcome out = simulate_case(boom, ws, scenario, {{deg(10), deg(10), deg(20)}, {}}, s);
    REQUIRE(out.status == RunStatus::ok);
    INFO("scenario " << scenario);
    CHECK(out.max_audit_residual / out.audit_scale < 1e-7);
  }
}
