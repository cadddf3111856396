// Feedback anti-sway on the travel drive (model/controller.hpp): the closed-loop poles of `modes`
// against linearisations derived here by hand, the decay of a simulated braking run at the poles'
// damping ratio, the saturation of the command, the energy audit with the base as a state, the
// spec keys, the sizing paths, and sizing moving a gain.
#include <catch2/catch.hpp>
#include <algorithm>
#include <cmath>
#include <complex>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <numbers>

#include <Eigen/Eigenvalues>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "../support/process.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/sizing/sizing.hpp"
#include "swaybound/spec/paths.hpp"

using namespace swaybound;
using namespace swaybound::testing;

namespace {

constexpr double kG = 9.81;

/// A point mass `mass` on a massless rod `length` (com = length, inertia 0) under a trolley at
/// 0.5 m/s that brakes to rest at 0.25 m/s^2 from t = 1 s, with the controller map `controller`
/// (none when empty).
std::string point_pendulum(double length, const std::string& controller, const std::string& extra = "",
                           double mass = 100) {
  return fmt::format(R"(
swaybound: 1
name: controlled trolley
gravity: {g}
links:
  - {{name: arm, length: {L}, mass: {m}, com: {L}, inertia: 0}}
base:
  scenarios:
    - name: brake
      travel:
        speed: 0.5 m/s
        moves: [{{at: 1 s, to: 0 m/s, accel: 0.25 m/s^2}}]
{c}
cases: {{duration: 30 s, initial: [{{single: {{theta: [0]}}}}]}}
{extra}
)",
                     fmt::arg("g", kG), fmt::arg("L", length), fmt::arg("m", mass), fmt::arg("c", controller.empty() ? "" : "        controller: " + controller),
                     fmt::arg("extra", extra));
}

/// The poles of a loop with each complex pair expanded to both roots.
std::vector<std::complex<double>> all_poles(const ClosedLoop& loop) {
  std::vector<std::complex<double>> out;
  for (const ClosedLoopPole& p : loop.poles) {
    out.push_back(p.eigenvalue);
    if (p.eigenvalue.imag() > 0) out.push_back(std::conj(p.eigenvalue));
  }
  return out;
}

/// Every reference root has a pole of `loop` within 1e-9 relative, and the counts agree.
void check_poles_match(const ClosedLoop& loop, const Eigen::VectorXcd& reference) {
  const auto poles = all_poles(loop);
  REQUIRE(poles.size() == static_cast<std::size_t>(reference.size()));
  for (Eigen::Index k = 0; k < reference.size(); ++k) {
    const std::complex<double> want = reference(k);
    double nearest = 1e300;
    for (const auto& p : poles) nearest = std::min(nearest, std::abs(p - want));
    INFO("reference root " << want.real() << " + " << want.imag() << "i, nearest pole off by " << nearest);
    CHECK(nearest <= 1e-9 * std::max(1.0, std::abs(want)));
  }
}

}  // namespace

// Outside check 1a. A hanging point pendulum on a support with a prescribed horizontal
// acceleration a, linearised about rest: L theta'' + g theta = -a (Lagrange's equation of the
// pendulum on an accelerating support; e.g. Meirovitch, Methods of Analytical Dynamics, or the
// cart-pendulum of any control text with the cart's acceleration as the input). With the law
// a = k_p theta + k_d theta' - k_v e and e' = a (e = v - v_ref, v_ref constant), the state
// (theta, theta', e) has
//   A = [[0, 1, 0], [-(g + k_p)/L, -k_d/L, k_v/L], [k_p, k_d, -k_v]],
// and det(sI - A), expanded by the first row, is (hand derivation)
//   s^3 + (k_v + k_d/L) s^2 + ((g + k_p)/L) s + g k_v / L.
// Its roots are taken from the companion matrix, not from A.
TEST_CASE("closed-loop poles of a point pendulum: modes against the hand-derived characteristic polynomial",
          "[controller][modal][reference]") {
  const double L = 5;
  struct Gains {
    double kp, kd, kv;
  };
  for (const Gains g : {Gains{1.2, 1.8, 0.4}, Gains{0, 2, 0.5}, Gains{-2, 0.7, 3}, Gains{4, 0.3, 0.05}}) {
    INFO("k_p " << g.kp << ", k_d " << g.kd << ", k_v " << g.kv);
    const Model model = model_from_yaml(point_pendulum(
        L, fmt::format("{{angle_gain: {} m s^-2 rad^-1, rate_gain: {} m s^-1 rad^-1, speed_gain: {} /s}}", g.kp, g.kd,
                       g.kv)));
    const ModalResult r = modal_analysis(model);
    REQUIRE(r.closed_loops.size() == 1);
    CHECK(r.closed_loops[0].scenario_name == "brake");
    Eigen::Matrix3d companion = Eigen::Matrix3d::Zero();
    companion(0, 0) = -(g.kv + g.kd / L);
    companion(0, 1) = -(kG + g.kp) / L;
    companion(0, 2) = -kG * g.kv / L;
    companion(1, 0) = companion(2, 1) = 1;
    const Eigen::VectorXcd roots = Eigen::EigenSolver<Eigen::Matrix3d>(companion, false).eigenvalues();
    check_poles_match(r.closed_loops[0], roots);
    // Stability by Routh-Hurwitz for the cubic s^3 + a2 s^2 + a1 s + a0: all a_i > 0 and a2 a1 > a0.
    const double a2 = g.kv + g.kd / L, a1 = (kG + g.kp) / L, a0 = kG * g.kv / L;
    CHECK(r.closed_loops[0].stable == (a2 > 0 && a1 > 0 && a0 > 0 && a2 * a1 > a0));
    for (const ClosedLoopPole& p : r.closed_loops[0].poles) {
      CHECK_THAT(p.natural_frequency_hz, IsCloseTo(std::abs(p.eigenvalue) / (2 * std::numbers::pi), 0, 1e-12));
      CHECK_THAT(p.damping_ratio, IsCloseTo(-p.eigenvalue.real() / std::abs(p.eigenvalue), 0, 1e-12));
    }
  }
  // Without the speed loop the sway is the damped oscillator L theta'' + k_d theta' + (g + k_p) theta = 0:
  // w_n = sqrt((g + k_p)/L), zeta = k_d / (2 sqrt(L (g + k_p))), and the speed error has a pole at 0.
  const Model model = model_from_yaml(point_pendulum(L, "{angle_gain: 1 m s^-2 rad^-1, rate_gain: 1.5 m s^-1 rad^-1}"));
  const ClosedLoop loop = modal_analysis(model).closed_loops.at(0);
  REQUIRE(loop.poles.size() == 2);
  CHECK(std::abs(loop.poles[0].eigenvalue) < 1e-12);
  CHECK_FALSE(loop.stable);
  CHECK_THAT(loop.poles[1].natural_frequency_hz, IsCloseTo(std::sqrt((kG + 1) / L) / (2 * std::numbers::pi), 0, 1e-12));
  CHECK_THAT(loop.poles[1].damping_ratio, IsCloseTo(1.5 / (2 * std::sqrt(L * (kG + 1))), 0, 1e-12));
  CHECK_THAT(loop.least_damping_ratio, IsCloseTo(1.5 / (2 * std::sqrt(L * (kG + 1))), 0, 1e-12));
}

// Outside check 1b. Two equal point masses m on massless links L (the equal double pendulum),
// linearised about rest on a support with horizontal acceleration a (Lagrange; the free double
// pendulum's linearisation is in e.g. Thomson & Dahleh, Theory of Vibration with Applications,
// ch. 6; the support's acceleration adds -h_i a with h = (2 m L, m L), the first moments below
// each pivot):
//   m L^2 [[2, 1], [1, 1]] theta'' + m g L diag(2, 1) theta = -m L (2, 1)^T a.
// Written out by hand here (not taken from the model's mass matrix), closed with the law on the
// measured link, and solved by Eigen's general eigensolver.
TEST_CASE("closed-loop poles of a double pendulum: modes against the hand-derived linearisation",
          "[controller][modal][reference]") {
  const double L = 3, m = 500, kp = 0.8, kd = 2.5, kv = 0.6;
  for (const int measured : {0, 1}) {
    INFO("measured link " << measured);
    const std::string controller = fmt::format(
        "{{measure: {}, angle_gain: {} m s^-2 rad^-1, rate_gain: {} m s^-1 rad^-1, speed_gain: {} /s}}",
        measured == 0 ? "upper" : "lower", kp, kd, kv);
    const std::string yaml = equal_double_yaml(L, m, kG, fmt::format(R"(
base:
  scenarios:
    - name: still
    - name: brake
      travel:
        speed: 1 m/s
        moves: [{{at: 1 s, to: 0 m/s, accel: 0.3 m/s^2}}]
        controller: {}
)",
                                                                    controller));
    const Model model = model_from_yaml(yaml);
    const ModalResult r = modal_analysis(model);
    REQUIRE(r.closed_loops.size() == 1);
    CHECK(r.closed_loops[0].scenario == 1);
    Eigen::Matrix2d M, K;
    M << 2 * m * L * L, m * L * L, m * L * L, m * L * L;
    K << 2 * m * kG * L, 0, 0, m * kG * L;
    const Eigen::Vector2d F(-2 * m * L, -m * L);
    Eigen::MatrixXd A = Eigen::MatrixXd::Zero(5, 5);
    A.block<2, 2>(0, 2).setIdentity();
    A.block<2, 2>(2, 0) = -M.inverse() * K;
    const Eigen::Vector2d b = M.inverse() * F;  // theta'' per unit base acceleration
    Eigen::RowVectorXd gain = Eigen::RowVectorXd::Zero(5);
    gain(measured) = kp;
    gain(2 + measured) = kd;
    gain(4) = -kv;
    A.block(2, 0, 2, 5) += b * gain;
    A.row(4) += gain;
    check_poles_match(r.closed_loops[0], Eigen::EigenSolver<Eigen::MatrixXd>(A, false).eigenvalues());
  }
}

// Outside check 2. After the brake the reference is a constant speed (0) and the loop is linear
// while the command stays below its limit; the sway then decays as the closed loop's complex pair
// (the real pole, about 3 times faster with these gains, is gone by then and moves the trolley's
// speed more than the angle). The logarithmic decrement of successive peaks of the same sign,
// delta = ln(p_k / p_{k+1}), gives zeta = delta / sqrt(4 pi^2 + delta^2) (Thomson & Dahleh, Theory
// of Vibration with Applications, sec. 2.6).
TEST_CASE("a braking run under the controller: the sway decays at the closed-loop damping ratio",
          "[controller][integrate][reference]") {
  const Model model = model_from_yaml(
      point_pendulum(5, "{rate_gain: 2 m s^-1 rad^-1, speed_gain: 0.5 /s, accel_limit: 5 m/s^2}"));
  const ClosedLoop loop = modal_analysis(model).closed_loops.at(0);
  REQUIRE(loop.stable);
  const ClosedLoopPole& pair = *std::find_if(loop.poles.begin(), loop.poles.end(),
                                             [](const ClosedLoopPole& p) { return p.eigenvalue.imag() > 0; });
  const Trace trace = run_trace(model, InitialState{}, settings(30, 1e-10, 1e-12, 200));
  REQUIRE(trace.outcome.status == RunStatus::ok);
  Trace late;  // the samples after the brake (ends at 3 s) and 3 s of the real pole's decay
  for (const Sample& s : trace.samples)
    if (s.t >= 6) late.samples.push_back(s);
  const std::vector<double> p = peaks(late, 0, 1);
  REQUIRE(p.size() >= 4);
  const double amplitude = *std::max_element(p.begin(), p.end(), [](double a, double b) { return std::fabs(a) < std::fabs(b); });
  CHECK(std::fabs(amplitude) < 0.02);  // small swings: the linearisation holds
  std::vector<double> zetas;
  for (std::size_t k = 0; k + 1 < 4; ++k) {
    const double delta = std::log(p[k] / p[k + 1]);
    zetas.push_back(delta / std::sqrt(4 * std::numbers::pi * std::numbers::pi + delta * delta));
  }
  INFO("pole damping ratio " << pair.damping_ratio << ", from the peaks " << zetas[0] << ", " << zetas[1] << ", "
                             << zetas[2]);
  for (double z : zetas) CHECK_THAT(z, IsCloseTo(pair.damping_ratio, 0, 0.03));
  // And the controller did the damping: the audit balances with the base's work.
  CHECK(trace.outcome.max_audit_residual < 1e-7 * model.energy_scale);
}

// Outside check 3. A tiny acceleration limit: the drive's acceleration, as every recorded step and
// sample shows it, never exceeds it, and it is reached (the command saturates).
TEST_CASE("with a tiny acceleration limit the drive's acceleration never exceeds it", "[controller][integrate]") {
  const double limit = 0.02;
  const Model model = model_from_yaml(
      point_pendulum(5, fmt::format("{{rate_gain: 2 m s^-1 rad^-1, speed_gain: 0.5 /s, accel_limit: {} m/s^2}}", limit)));
  Workspace ws(model);
  double largest = 0, speed_lo = 1e300, speed_hi = -1e300;
  long views = 0;
  const Observer record = [&](const StepView& v) {
    largest = std::max(largest, std::fabs(v.ws->base_ax));
    speed_lo = std::min(speed_lo, v.ws->base_vx);
    speed_hi = std::max(speed_hi, v.ws->base_vx);
    ++views;
    CHECK(v.audit_residual < 1e-7 * model.energy_scale);
  };
  RunSettings s = settings(30, 1e-9, 1e-12, 50);
  const RunOutcome out = simulate_case(model, ws, 0, InitialState{}, s, record, record);
  REQUIRE(out.status == RunStatus::ok);
  CHECK(views > 100);
  CHECK(largest <= limit);
  CHECK(largest >= limit * (1 - 1e-9));
  // The speed is the integral of the limited acceleration: it took 0.5 / 0.02 = 25 s to brake.
  CHECK(speed_hi <= 0.5 + 1e-9);
  const auto d = static_cast<std::size_t>(model.drive_state());
  CHECK(out.x_reached[d + 1] > 0.5 - limit * 30 - 1e-9);
}

TEST_CASE("a model without a controller keeps its state layout and its base follows the phases",
          "[controller][travel]") {
  const Model plain = model_from_yaml(point_pendulum(5, ""));
  CHECK_FALSE(plain.drive_states);
  CHECK(plain.state_size() == 2 * plain.dof + 2);
  CHECK_FALSE(plain.scenarios[0].phases[0].control.active);
  const Model controlled = model_from_yaml(point_pendulum(5, "{rate_gain: 1 m s^-1 rad^-1}"));
  CHECK(controlled.drive_states);
  CHECK(controlled.state_size() == 2 * controlled.dof + 4);
  for (const Phase& p : controlled.scenarios[0].phases) CHECK(p.control.active);
}

TEST_CASE("the controller's keys: defaults, units, the normalised spec and the sizing paths", "[controller][spec]") {
  const std::string yaml = equal_double_yaml(2, 100, kG, R"(
base:
  scenarios:
    - name: go
      travel:
        moves: [{at: 0 s, to: 1 m/s, accel: 0.3 m/s^2}, {at: 5 s, to: 0 m/s, accel: 0.4 m/s^2}]
        stop: {at: 8 s, decel: 0.6 m/s^2}
        controller: {angle_gain: 0.1 m/s^2 deg, rate_gain: 1.5 m s^-1 rad^-1}
)");
  const Spec spec = load_spec_text(yaml, "inline.yaml");
  const auto& c = spec.scenarios.at(0).travel.value().controller.value();
  CHECK(c.measure == 1);                                   // the lowest link
  CHECK_THAT(c.accel_limit, IsCloseTo(0.6, 0, 1e-15));     // the largest of the moves and the stop
  CHECK_THAT(c.angle_gain, IsCloseTo(0.1 * 180 / std::numbers::pi, 0, 1e-12));  // "m/s^2 deg": per degree
  CHECK(c.speed_gain == 0);
  // The normalised spec reads back to the same controller.
  const Spec again = load_spec_text(normalised_yaml(spec), "normalised.yaml");
  const auto& c2 = again.scenarios.at(0).travel.value().controller.value();
  CHECK(c2.measure == c.measure);
  CHECK_THAT(c2.angle_gain, IsCloseTo(c.angle_gain, 0, 1e-11));  // written with 12 significant digits
  CHECK(c2.rate_gain == c.rate_gain);
  CHECK(c2.accel_limit == c.accel_limit);
  // Sizing paths address the gains.
  for (const char* name : {"angle_gain", "rate_gain", "speed_gain"}) {
    std::string why;
    const auto path = parse_spec_path(spec, fmt::format("scenarios[go].travel.controller.{}", name), why);
    INFO(name << ": " << why);
    REQUIRE(path);
    Spec changed = spec;
    set_spec_value(changed, *path, 0.75);
    CHECK(get_spec_value(changed, *path) == 0.75);
  }
  std::string why;
  const Spec bare = load_spec_text(equal_double_yaml(2, 100, kG, R"(
base: {scenarios: [{name: go, travel: {moves: [{at: 0 s, to: 1 m/s, accel: 0.3 m/s^2}]}}]}
)"),
                                   "bare.yaml");
  CHECK_FALSE(parse_spec_path(bare, "scenarios[go].travel.controller.rate_gain", why));
  CHECK(why.find("controller") != std::string::npos);
}

TEST_CASE("swaybound modes and the check packet print the closed loop", "[controller][cli]") {
  const std::string path = (std::filesystem::temp_directory_path() / "swaybound-controller-modes.yaml").string();
  std::ofstream(path) << point_pendulum(5, "{rate_gain: 2 m s^-1 rad^-1, speed_gain: 0.5 /s}");
  const CommandResult table = run_command(fmt::format("{} modes '{}'", SWAYBOUND_CLI, path));
  CHECK(table.status == 0);
  CHECK(table.out.find("closed loop of the travel controller, scenario 'brake': stable") != std::string::npos);
  const CommandResult json = run_command(fmt::format("{} modes --json '{}'", SWAYBOUND_CLI, path));
  REQUIRE(json.status == 0);
  const auto j = nlohmann::json::parse(json.out);
  const ClosedLoop loop = modal_analysis(model_from_yaml(point_pendulum(5, "{rate_gain: 2 m s^-1 rad^-1, speed_gain: 0.5 /s}")))
                              .closed_loops.at(0);
  REQUIRE(j.at("closed_loops").size() == 1);
  REQUIRE(j["closed_loops"][0]["poles"].size() == loop.poles.size());
  for (std::size_t k = 0; k < loop.poles.size(); ++k)
    CHECK(j["closed_loops"][0]["poles"][k]["damping_ratio"].get<double>() == loop.poles[k].damping_ratio);
  // The check packet's modal section: results.json and the report.
  const std::filesystem::path out = std::filesystem::temp_directory_path() / "swaybound-controller-packet";
  std::filesystem::remove_all(out);
  const CommandResult check =
      run_command(fmt::format("{} check '{}' --out '{}' --jobs 1 --quiet", SWAYBOUND_CLI, path, out.string()));
  REQUIRE(check.status == 0);
  std::ifstream results(out / "results.json");
  const auto packet = nlohmann::json::parse(results);
  const auto& loops = packet.at("modes").at("closed_loops");
  REQUIRE(loops.size() == 1);
  CHECK(loops[0]["stable"].get<bool>());
  REQUIRE(loops[0]["poles"].size() == loop.poles.size());
  for (std::size_t k = 0; k < loop.poles.size(); ++k)
    CHECK(loops[0]["poles"][k]["eigenvalue_real_per_s"].get<double>() == loop.poles[k].eigenvalue.real());
  std::ifstream html_file(out / "report.html");
  const std::string html((std::istreambuf_iterator<char>(html_file)), std::istreambuf_iterator<char>());
  CHECK(html.find("Closed loop of the travel controller, scenario &#39;brake&#39;") != std::string::npos);
  std::filesystem::remove_all(out);
}

// Sizing searches a gain: the residual sway after the brake fails with a weak rate gain; the least
// (cheapest) rate gain that passes is found within the range.
TEST_CASE("sizing moves a controller gain until the residual sway holds", "[controller][sizing]") {
  const std::string yaml = point_pendulum(5, "{rate_gain: 0.05 m s^-1 rad^-1, accel_limit: 5 m/s^2}", R"(
limits:
  - {residual_sway: 0.3 deg, after: 12 s}
sizing:
  variables:
    - {path: "scenarios[brake].travel.controller.rate_gain", range: [0.05 m s^-1 rad^-1, 5 m s^-1 rad^-1], cost: 1}
  budget: {evaluations: 40}
solver: {rtol: 1e-9, atol: 1e-12}
)");
  const Spec spec = load_spec_text(yaml, "inline.yaml");
  SizingOptions o;
  o.jobs = 1;
  o.audit = false;
  const SizingResult r = run_sizing(spec, o);
  REQUIRE(r.values.size() == 1);
  INFO("sized rate gain " << r.values[0]);
  CHECK_FALSE(r.before.pass);
  CHECK(r.feasible);
  CHECK(r.after.pass);
  CHECK(r.values[0] > 0.05);
  CHECK(r.values[0] < 5);
  std::string why;
  CHECK(get_spec_value(r.sized, *parse_spec_path(r.sized, "scenarios[brake].travel.controller.rate_gain", why)) ==
        r.values[0]);
}
