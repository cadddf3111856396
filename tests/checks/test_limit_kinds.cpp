// The tables of limit kinds and case-set kinds (checks/limit_kinds.hpp, spec/case_set_kinds.hpp),
// and the per-case kind horizontal_support_force against a closed form.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <sstream>
#include <unistd.h>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/report/verify.hpp"
#include "swaybound/sizing/evaluate.hpp"
#include "swaybound/spec.hpp"
#include "swaybound/spec/case_set_kinds.hpp"
#include "../support/process.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

fs::path temp(const std::string& name) {
  return fs::temp_directory_path() / ("swaybound-kinds-" + std::to_string(::getpid()) + "-" + name);
}

Spec spec_file(const std::string& name, const std::string& text) {
  const fs::path path = temp(name + ".yaml");
  std::ofstream(path) << text;
  return load_spec(path.string());
}

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

constexpr double kMass = 250, kGravity = 9.81;
const double kTheta0 = std::numbers::pi / 3;  // 60 deg

/// A point mass on a massless rod (all the link's mass at its end, no inertia of its own), released
/// from rest at kTheta0 with the base at rest.
std::string pendulum(const std::string& limit) {
  return fmt::format(R"(
swaybound: 1
name: released point pendulum
gravity: {}
links:
  - {{name: rod, length: 4, mass: {}, com: 4, inertia: 0}}
cases: {{duration: 6 s, initial: [{{single: {{theta: [60 deg]}}}}]}}
limits:
  - {}
solver: {{rtol: 1e-11, atol: 1e-12}}
)",
                     kGravity, kMass, limit);
}

/// The largest horizontal force a simple pendulum released from rest at theta0 applies to its pivot.
/// With v^2 = 2 g L (cos t - cos t0) (energy), the rod's tension is T = m g cos t + m v^2 / L
/// = m g (3 cos t - 2 cos t0) (e.g. Meriam & Kraige, Engineering Mechanics: Dynamics, ch. 3, the
/// normal-tangential equations of a simple pendulum), and its horizontal component
/// F(t) = m g (3 cos t - 2 cos t0) sin t. dF/dt = m g (3 cos^2 t - 3 sin^2 t - 2 c0 cos t)
/// = m g (6 c^2 - 2 c0 c - 3) with c = cos t, c0 = cos t0, zero at c* = (c0 + sqrt(c0^2 + 18)) / 6
/// (the other root is negative, outside the swing). c* > c0, i.e. the maximum lies strictly inside
/// (0, t0) rather than at the release angle, when sqrt(c0^2 + 18) > 5 c0: for c0 > 0, c0^2 < 3/4,
/// t0 > 30 deg.
double closed_form_peak(double& c_star) {
  const double c0 = std::cos(kTheta0);
  c_star = (c0 + std::sqrt(c0 * c0 + 18)) / 6;
  return kMass * kGravity * (3 * c_star - 2 * c0) * std::sqrt(1 - c_star * c_star);
}

}  // namespace

TEST_CASE("every limit kind has one row: key, enum and documentation agree", "[checks][kinds]") {
  const std::string readme = read_text(fs::path(SWAYBOUND_SOURCE_DIR) / "specs/README.md");
  const auto limits = readme.find("\n## limits");
  REQUIRE(limits != std::string::npos);
  const std::string section = readme.substr(limits, readme.find("\n## ", limits + 1) - limits);
  for (const auto& info : limit_kinds()) {
    INFO(info.key);
    CHECK(&limit_kind(info.kind) == &info);
    CHECK(find_limit_kind(info.key) == &info);
    CHECK(section.find(fmt::format("| `{}` |", info.key)) != std::string::npos);
    CHECK_FALSE(info.definition.empty());
  }
  CHECK(find_limit_kind("peak_anlge") == nullptr);
}

TEST_CASE("a case-set kind is found by its key, whatever its place in the table", "[spec][kinds]") {
  for (const auto& info : initial_kinds()) {
    INFO(info.name);
    CHECK(&initial_kind(info.kind) == &info);
    CHECK(find_initial_kind(info.name) == &info);
  }
  // A spec with every kind of set loads each set as the kind its key names.
  const Spec spec = spec_file("sets", R"(
swaybound: 1
name: every kind of set
links:
  - {name: arm, length: 2 m, mass: 10 kg}
cases:
  duration: 1 s
  initial:
    - {ladder: {from: {theta: [10 deg]}, absolute: [1e-3 rad]}}
    - {corners: {theta: [[-5 deg, 5 deg]]}}
    - {random: {count: 3, seed: 1, theta: [[-5 deg, 5 deg]]}}
    - {grid: {theta: [[-5 deg, 5 deg, 3]]}}
    - {single: {theta: [10 deg]}}
)");
  REQUIRE(spec.cases.initial.size() == 5);
  const InitialKind expected[] = {InitialKind::ladder, InitialKind::corners, InitialKind::random, InitialKind::grid,
                                  InitialKind::single};
  for (std::size_t i = 0; i < 5; ++i) {
    CHECK(spec.cases.initial[i].kind == expected[i]);
    CHECK(spec.cases.initial[i].name == initial_kind(expected[i]).name);
  }
  CHECK(case_count(spec) == 2 + 2 + 3 + 3 + 1);
}

TEST_CASE("horizontal_support_force of a released point pendulum is m g (3 cos t - 2 cos t0) sin t at its maximum",
          "[checks][kinds]") {
  double c_star = 0;
  const double peak = closed_form_peak(c_star);
  // The maximum lies strictly inside the swing, not at the release angle.
  REQUIRE(c_star > std::cos(kTheta0));
  REQUIRE(c_star < 1);
  REQUIRE(peak > kMass * kGravity * std::cos(kTheta0) * std::sin(kTheta0) * 1.5);

  std::vector<CaseMetrics> cases;
  CheckOptions options;
  options.jobs = 1;
  options.on_case = [&](const CaseMetrics& m) { cases.push_back(m); };
  const Spec spec = spec_file("peak", pendulum(fmt::format("{{horizontal_support_force: {} N}}", peak * 1.0001)));
  const CheckReport r = run_check(spec, options);
  REQUIRE(r.checks.size() == 1);
  const CheckResult& c = r.checks[0];
  CHECK(c.key == "horizontal_support_force");
  CHECK(c.subject == "the chain");
  CHECK(c.unit == "N");
  CHECK(c.bound == Bound::upper);
  CHECK(c.per_case);
  CHECK(c.worst == Approx(peak).epsilon(1e-6));
  CHECK(c.governing_link == -1);
  // The first maximum is reached on the way down, when cos t = c*: before the bottom, which the
  // pendulum reaches after about a quarter of its period 2 pi sqrt(L / g) (longer at 60 deg).
  CHECK(c.time > 0);
  CHECK(c.time < 0.25 * 2 * std::numbers::pi * std::sqrt(4 / kGravity) * 1.1);
  CHECK(c.pass);

  // cases.csv: one column for the chain, holding the case's value.
  REQUIRE(cases.size() == 1);
  const std::string header = cases_csv_header(spec), row = cases_csv_row(spec, cases[0]);
  CHECK(header.find("\"horizontal_support_force [N]\"") != std::string::npos);
  CHECK(cases[0].support_force_x.value == Approx(peak).epsilon(1e-6));
  CHECK(row.find(fmt::format("{:.10g}", cases[0].support_force_x.value)) != std::string::npos);

  // results.json names the kind, its subject and its bound.
  const auto j = nlohmann::json::parse(results_json(spec, r));
  CHECK(j["checks"][0]["limit"] == "horizontal_support_force");
  CHECK(j["checks"][0]["applies_to"] == "the chain");
  CHECK(j["checks"][0]["bound"] == "upper");
  CHECK(j["checks"][0]["unit"] == "N");
}

TEST_CASE("a horizontal_support_force limit just above the closed-form peak passes, just below fails",
          "[checks][kinds]") {
  double c_star = 0;
  const double peak = closed_form_peak(c_star);
  CheckOptions options;
  options.jobs = 1;
  options.record = false;
  const CheckReport above =
      run_check(spec_file("above", pendulum(fmt::format("{{horizontal_support_force: {} N}}", peak * 1.0001))), options);
  const CheckReport below =
      run_check(spec_file("below", pendulum(fmt::format("{{horizontal_support_force: {} N}}", peak * 0.9999))), options);
  CHECK(above.checks[0].pass);
  CHECK(above.pass);
  CHECK(above.checks[0].margin == Approx(peak * 0.0001).epsilon(0.02));
  CHECK_FALSE(below.checks[0].pass);
  CHECK_FALSE(below.pass);
  CHECK(below.checks[0].margin == Approx(-peak * 0.0001).epsilon(0.02));
}

TEST_CASE("a packet with a horizontal_support_force check verifies, and its report defines the figure",
          "[checks][kinds][packet][verify]") {
  const fs::path spec = temp("packet.yaml"), out = temp("packet");
  std::ofstream(spec) << pendulum("{horizontal_support_force: 5 kN}");
  fs::remove_all(out);
  const auto r = testing::run_command(std::string(SWAYBOUND_CLI) + " check " + spec.string() + " --out " +
                                      out.string() + " --quiet 2>&1");
  REQUIRE(r.status == 0);
  const VerifyResult v = verify_packet(out.string());
  INFO(verify_report(v));
  CHECK(v.intact());
  CHECK(v.checks_verified == 1);
  const std::string html = read_text(out / "report.html");
  CHECK(html.find(std::string(limit_kind(LimitKind::horizontal_support_force).definition.substr(0, 60))) !=
        std::string::npos);
  fs::remove_all(out);
}

TEST_CASE("sizing can minimise the worst horizontal_support_force, a whole-chain quantity in newtons",
          "[checks][kinds][sizing]") {
  const Spec spec = spec_file("objective", pendulum("{pivot_load: 1 MN}") + R"(
sizing:
  variables:
    - {path: "links[rod].mass", range: [100 kg, 300 kg]}
  objective: {min: horizontal_support_force}
)");
  const ObjectiveMetric m = objective_metric(spec);
  CHECK(m.active);
  CHECK(m.limit.kind == LimitKind::horizontal_support_force);
  CHECK(m.unit == "N");
  CHECK_FALSE(m.lower);
  CHECK(m.check == -1);  // no such limit: the evaluator accumulates it from the cases
  CHECK(m.label == "worst horizontal_support_force");
}
