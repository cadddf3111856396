// Modal analysis about the rest position against closed forms from outside the project and against
// a numerical linearisation of the engine. Each check names its source.
#include <catch2/catch.hpp>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <string>
#include <sys/wait.h>
#include <vector>

#include <Eigen/Eigenvalues>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "../support/process.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;
using std::numbers::pi;

namespace {
constexpr double kG = 9.81;

Model model_of(const std::string& yaml) { return swaybound::testing::model_from_yaml(yaml); }

std::string single_link(double length, double mass, double com, double inertia, const std::string& pivot) {
  return swaybound::testing::single_link_yaml(length, mass, com, inertia, pivot, kG);
}

/// Jacobian of the engine's right-hand side (angles and rates only) at the rest state, by central
/// differences of swaybound::evaluate.
Eigen::MatrixXd engine_jacobian(const Model& model, double step = 1e-6) {
  const int n = model.n, size = model.state_size();
  Workspace ws(model);
  Eigen::MatrixXd J(2 * n, 2 * n);
  std::vector<double> x(static_cast<std::size_t>(size), 0.0), plus(x.size()), minus(x.size());
  for (int j = 0; j < 2 * n; ++j) {
    std::vector<double> xp = x, xm = x;
    xp[static_cast<std::size_t>(j)] += step;
    xm[static_cast<std::size_t>(j)] -= step;
    evaluate(model, ws, model.scenarios[0].phases[0], xp.data(), 0.0, plus.data());
    evaluate(model, ws, model.scenarios[0].phases[0], xm.data(), 0.0, minus.data());
    for (int i = 0; i < 2 * n; ++i)
      J(i, j) = (plus[static_cast<std::size_t>(i)] - minus[static_cast<std::size_t>(i)]) / (2 * step);
  }
  return J;
}

/// Natural frequency |lambda| / (2 pi) [Hz] and damping ratio of the roots with Im > 0, by |lambda|.
std::vector<std::pair<double, double>> underdamped_roots(const Eigen::VectorXcd& lambda) {
  std::vector<std::pair<double, double>> out;
  for (Eigen::Index k = 0; k < lambda.size(); ++k)
    if (lambda(k).imag() > 0) out.emplace_back(std::abs(lambda(k)) / (2 * pi), -lambda(k).real() / std::abs(lambda(k)));
  std::sort(out.begin(), out.end());
  return out;
}
}  // namespace

TEST_CASE("modes: equal double pendulum of point masses", "[modal]") {
  // Point masses m on massless links L: w^2 = (2 -+ sqrt 2) g / L, mode shapes theta2/theta1 = +-sqrt 2
  // (Goldstein, Classical Mechanics, 3rd ed., ch. 6).
  const double L = 1.5, m = 3.0;
  const Model model = model_of(swaybound::testing::equal_double_yaml(L, m, kG));
  const ModalResult r = modal_analysis(model);
  REQUIRE(r.modes.size() == 2);
  const double w_slow = std::sqrt((2 - std::sqrt(2.0)) * kG / L), w_fast = std::sqrt((2 + std::sqrt(2.0)) * kG / L);
  CHECK_THAT(r.modes[0].frequency_hz, IsCloseTo(w_slow / (2 * pi), 0, 1e-10));
  CHECK_THAT(r.modes[1].frequency_hz, IsCloseTo(w_fast / (2 * pi), 0, 1e-10));
  CHECK_THAT(r.modes[0].period_s, IsCloseTo(2 * pi / w_slow, 0, 1e-10));
  // In phase, lower link sqrt 2 times the upper; then in antiphase. Largest component (lower) is +1.
  CHECK(r.modes[0].shape[1] == 1.0);
  CHECK(r.modes[1].shape[1] == 1.0);
  CHECK_THAT(r.modes[0].shape[1] / r.modes[0].shape[0], IsCloseTo(std::sqrt(2.0), 0, 1e-10));
  CHECK_THAT(r.modes[1].shape[1] / r.modes[1].shape[0], IsCloseTo(-std::sqrt(2.0), 0, 1e-10));
  // No damping: the damped system has the same frequencies and zero damping ratios.
  for (const Mode& mode : r.modes) {
    CHECK_THAT(mode.natural_frequency_with_damping_hz, IsCloseTo(mode.frequency_hz, 0, 1e-10));
    CHECK_THAT(mode.damped_frequency_hz, IsCloseTo(mode.frequency_hz, 0, 1e-10));
    CHECK_THAT(mode.damping_ratio, IsCloseTo(0, 1e-12, 0));
  }
  CHECK_THAT(r.least_damping_ratio, IsCloseTo(0, 1e-12, 0));
}

TEST_CASE("modes: compound pendulum with a linear rotary damper", "[modal]") {
  // Rotary oscillator with viscous damping: w_n = sqrt(k / I_pivot), k = m g d, zeta =
  // c / (2 sqrt(I_pivot k)), w_d = w_n sqrt(1 - zeta^2), roots -zeta w_n +- w_n sqrt(zeta^2 - 1) when
  // zeta > 1 (Thomson & Dahleh, Theory of Vibration with Applications, 5th ed., sec. 2.6);
  // I_pivot = I_cm + m d^2 (parallel-axis theorem).
  const double L = 2.0, m = 40.0, d = 1.6, I_cm = 3.0;
  const double I_pivot = I_cm + m * d * d, k = m * kG * d;
  const double wn = std::sqrt(k / I_pivot);

  SECTION("underdamped") {
    const double c = 12.0;
    const double zeta = c / (2 * std::sqrt(I_pivot * k));
    const ModalResult r = modal_analysis(model_of(single_link(L, m, d, I_cm, fmt::format("{{damper: {{coefficient: {} N m s/rad}}}}", c))));
    REQUIRE(r.modes.size() == 1);
    const Mode& mode = r.modes[0];
    CHECK_THAT(mode.frequency_hz, IsCloseTo(wn / (2 * pi), 0, 1e-10));
    CHECK_THAT(mode.natural_frequency_with_damping_hz, IsCloseTo(wn / (2 * pi), 0, 1e-10));
    CHECK_THAT(mode.damping_ratio, IsCloseTo(zeta, 0, 1e-10));
    CHECK_THAT(mode.damped_frequency_hz, IsCloseTo(wn * std::sqrt(1 - zeta * zeta) / (2 * pi), 0, 1e-10));
    CHECK_FALSE(mode.overdamped);
    CHECK(mode.shape == std::vector<double>{1.0});
    CHECK_THAT(r.least_damping_ratio, IsCloseTo(zeta, 0, 1e-10));
  }
  SECTION("overdamped: zeta > 1 from the two real roots") {
    const double zeta = 2.5;
    const double c = zeta * 2 * std::sqrt(I_pivot * k);
    const ModalResult r = modal_analysis(model_of(single_link(L, m, d, I_cm, fmt::format("{{damper: {{coefficient: {} N m s/rad}}}}", c))));
    REQUIRE(r.modes.size() == 1);
    const Mode& mode = r.modes[0];
    CHECK(mode.overdamped);
    CHECK_THAT(mode.damping_ratio, IsCloseTo(zeta, 0, 1e-10));
    CHECK_THAT(r.least_damping_ratio, IsCloseTo(zeta, 0, 1e-10));
    CHECK_THAT(mode.natural_frequency_with_damping_hz, IsCloseTo(wn / (2 * pi), 0, 1e-10));
    CHECK(mode.damped_frequency_hz == 0.0);
    CHECK(mode.eigenvalue.imag() == 0.0);
    CHECK(mode.partner.imag() == 0.0);
    const double slow = -zeta * wn + wn * std::sqrt(zeta * zeta - 1), fast = -zeta * wn - wn * std::sqrt(zeta * zeta - 1);
    CHECK_THAT(mode.eigenvalue.real(), IsCloseTo(slow, 0, 1e-10));
    CHECK_THAT(mode.partner.real(), IsCloseTo(fast, 0, 1e-10));
  }
  SECTION("power-law dampers: the small-signal slope of the law in forces.hpp") {
    // Project convention (forces.hpp, damper_torque): exponent < 1 is linear below w0 with slope
    // C w0^(alpha - 1); exponent > 1 has slope 0 at rest. Checked against the same closed form.
    const double C = 12.0, alpha = 0.6, w0 = 0.02;
    const double c = C * std::pow(w0, alpha - 1);
    const ModalResult soft = modal_analysis(model_of(single_link(
        L, m, d, I_cm, fmt::format("{{damper: {{coefficient: {} N m s/rad, exponent: {}, linear_below: {} rad/s}}}}", C, alpha, w0))));
    CHECK_THAT(soft.modes[0].damping_ratio, IsCloseTo(c / (2 * std::sqrt(I_pivot * k)), 0, 1e-10));
    const ModalResult stiff =
        modal_analysis(model_of(single_link(L, m, d, I_cm, "{damper: {coefficient: 12 N m s/rad, exponent: 1.4}}")));
    CHECK_THAT(stiff.modes[0].damping_ratio, IsCloseTo(0, 1e-12, 0));
    CHECK(stiff.notes.size() >= 2);
  }
  SECTION("friction is left out and noted") {
    const ModalResult r = modal_analysis(model_of(single_link(L, m, d, I_cm, "{friction: {torque: 3}}")));
    CHECK_THAT(r.modes[0].damping_ratio, IsCloseTo(0, 1e-12, 0));
    bool noted = false;
    for (const auto& note : r.notes) noted |= note.find("friction") != std::string::npos;
    CHECK(noted);
  }
}

TEST_CASE("modes: three-link chain agrees with a numerical linearisation of the engine", "[modal]") {
  // Independent cross-check of the linearisation: the eigenvalues of the finite-difference Jacobian
  // of swaybound::evaluate at rest (central differences, h = 1e-6) with a linear damper at a pivot
  // between two links, one at the top pivot and two slanted dashpots to the base.
  const std::string yaml = R"(
swaybound: 1
name: three links
gravity: 9.81
links:
  - {name: a, length: 1.2, mass: 80, pivot: {damper: {coefficient: 150 N m s/rad}}}
  - {name: b, length: 0.6, mass: 25, pivot: {damper: {coefficient: 40 N m s/rad}}}
  - {name: c, length: 1.4, mass: 450, com: 0.9, inertia: 110}
dashpots:
  - {name: steady, from: {link: c, at: 0.9}, to: {base: [1.5, -2.5]}, coefficient: 800}
  - {name: side, from: {link: b, at: 0.3}, to: {base: [-0.7, -0.4]}, coefficient: 120}
cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}
)";
  const Model model = model_of(yaml);
  const ModalResult r = modal_analysis(model);
  REQUIRE(r.modes.size() == 3);

  SECTION("with damping: every eigenvalue, natural frequency and damping ratio") {
    const Eigen::MatrixXd J = engine_jacobian(model);
    const Eigen::VectorXcd fd = Eigen::EigenSolver<Eigen::MatrixXd>(J, false).eigenvalues();
    // Each modal root (and its partner) has a finite-difference root within 1e-6 relative.
    std::vector<bool> used(static_cast<std::size_t>(fd.size()), false);
    for (const Mode& mode : r.modes)
      for (const std::complex<double> root : {mode.eigenvalue, mode.partner}) {
        std::size_t best = 0;
        double gap = INFINITY;
        for (Eigen::Index k = 0; k < fd.size(); ++k)
          if (!used[static_cast<std::size_t>(k)] && std::abs(fd(k) - root) < gap) {
            gap = std::abs(fd(k) - root);
            best = static_cast<std::size_t>(k);
          }
        used[best] = true;
        INFO("root " << root << ", nearest " << fd(static_cast<Eigen::Index>(best)));
        CHECK(gap <= 1e-6 * std::abs(root));
      }
    const auto roots = underdamped_roots(fd);
    REQUIRE(roots.size() == 3);  // this chain is underdamped in every mode
    std::vector<std::pair<double, double>> modal;
    for (const Mode& mode : r.modes) modal.emplace_back(mode.natural_frequency_with_damping_hz, mode.damping_ratio);
    std::sort(modal.begin(), modal.end());
    for (std::size_t k = 0; k < 3; ++k) {
      INFO("mode " << k + 1);
      CHECK_THAT(modal[k].first, IsCloseTo(roots[k].first, 0, 1e-6));
      CHECK_THAT(modal[k].second, IsCloseTo(roots[k].second, 0, 1e-6));
      CHECK(modal[k].second > 0.0);
    }
    CHECK_THAT(r.least_damping_ratio, IsCloseTo(std::min({modal[0].second, modal[1].second, modal[2].second}), 0, 1e-12));
  }
  SECTION("without damping: the undamped natural frequencies") {
    Model bare = model;
    for (auto& p : bare.pivots) p.dampers.clear();
    bare.any_pivot_torque = false;
    for (auto& d : bare.dashpots) d.coefficient = 0;
    const auto roots = underdamped_roots(Eigen::EigenSolver<Eigen::MatrixXd>(engine_jacobian(bare), false).eigenvalues());
    REQUIRE(roots.size() == 3);
    for (std::size_t k = 0; k < 3; ++k) {
      INFO("mode " << k + 1);
      CHECK_THAT(r.modes[k].frequency_hz, IsCloseTo(roots[k].first, 0, 1e-6));
      CHECK_THAT(roots[k].second, IsCloseTo(0, 1e-6, 0));
    }
  }
}

TEST_CASE("modes: the CLI prints JSON for the demo spec", "[modal][cli]") {
  const std::string cmd =
      std::string(SWAYBOUND_CLI) + " modes '" + SWAYBOUND_SOURCE_DIR + "/specs/gantry_hook_block.yaml' --json 2>/dev/null";
  const auto r = swaybound::testing::run_command(cmd);
  REQUIRE(r.started);
  CHECK(r.exited);
  CHECK(r.status == 0);
  const auto j = nlohmann::json::parse(r.out, nullptr, false);
  REQUIRE_FALSE(j.is_discarded());
  REQUIRE(j["modes"].size() == 2);
  for (const auto& mode : j["modes"]) {
    CHECK(mode["frequency_hz"].get<double>() > 0);
    CHECK(mode["shape_rad_per_rad"].contains("hook and payload"));
  }
  CHECK(j["least_damping_ratio"].is_number());
  CHECK(j["notes"].size() >= 3);  // friction, the exponent-0.6 damper, the rope, wind
}
