// Numerical trouble on purpose: specs that make the integration stiff, ill-conditioned, violent or
// long. Every case must end with a status and, when it fails, be listed with its reason and fail
// the checks it touches: never a hang, never a silent pass. Each spec has small budgets
// (solver.max_steps, solver.max_seconds) so the suite stays fast; wall time is measured
// (README.md, "Reliability"), not asserted.
//
// Expected outcome of each spec (measured; the reason is stated beside each test):
//   friction, transition_rate 1e-7 rad/s   step_budget: the check fails, the case is listed
//   damper 1e9 N m s/rad                    step_budget: the check fails
//   damper exponent 0.01                    ok: physics fine, energy audit within tolerance
//   base step of 100 g                      ok, audit within tolerance; peak angle and load checks fail
//   1 mm link beside a 100 m link           ok within a 100,000-step budget: audit within tolerance
//   masses 1e-6 kg to 1e6 kg                ok: audit within tolerance, heavy pivot load >= its weight
//   a day of sway                           time_budget (wall clock) or step_budget: the check fails
//   pin friction with mu r / L = 10         friction_unconverged (was reported as non_finite)
//   base acceleration 1e300 m/s^2           non_finite
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <unistd.h>

#include <fmt/format.h>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

/// Writes the spec to a temporary file (run_check hashes the file), loads it, runs the check on
/// one thread, and removes the file.
CheckReport check_text(const std::string& name, const std::string& text, bool audit = true) {
  const fs::path path = fs::temp_directory_path() / fmt::format("swaybound-fault-{}-{}.yaml", name, ::getpid());
  std::ofstream(path) << text;
  const Spec spec = load_spec(path.string());
  CheckOptions options;
  options.jobs = 1;
  options.audit = audit;
  options.record = false;
  CheckReport report = run_check(spec, options);
  fs::remove(path);
  return report;
}

constexpr const char* kLimits = "limits:\n  - {peak_angle: 30 deg}\n  - {pivot_load: 1 MN}\n";

/// The one failed case: listed with the status and a reason, failing every per-case check.
void require_failed_case(const CheckReport& r, const std::string& status, const std::string& reason_part) {
  CHECK_FALSE(r.pass);
  CHECK(r.failed_total == 1);
  REQUIRE(r.failed.size() == 1);
  CHECK(r.failed[0].status == status);
  CHECK(r.failed[0].reason.find(reason_part) != std::string::npos);
  INFO(r.failed[0].reason);
  for (const auto& c : r.checks) {
    CHECK_FALSE(c.pass);
    CHECK(c.failed_cases == 1);
    CHECK(c.first_failure.find(status) != std::string::npos);
  }
}

}  // namespace

TEST_CASE("stiff friction (transition rate 1e-7 rad/s) stops at the step budget and fails", "[faults][reliability]") {
  // Slope T / w_t at w = 0 of about 1e8 N m s/rad: explicit steps of ~1e-7 s while the pivot sticks.
  const CheckReport r = check_text("friction", fmt::format(R"(swaybound: 1
name: stiff friction
links:
  - {{name: arm, length: 2 m, mass: 40 kg, com: 1.6 m,
     pivot: {{friction: {{torque: 3 N m, pin_radius: 20 mm, mu: 0.15, transition_rate: 1e-7 rad/s}}}}}}
cases: {{duration: 20 s, initial: [{{single: {{theta: [10 deg]}}}}]}}
{}solver: {{max_steps: 20000, max_seconds: 20 s}}
)", kLimits));
  require_failed_case(r, "step_budget", "more than 20000 steps");
}

TEST_CASE("a huge damper (1e9 N m s/rad) stops at the step budget and fails", "[faults][reliability]") {
  // Time constant I / C of about 1e-8 s: the explicit stepper cannot leave the first millisecond.
  const CheckReport r = check_text("damper", fmt::format(R"(swaybound: 1
name: huge damper
links:
  - {{name: arm, length: 2 m, mass: 10 kg, pivot: {{damper: {{coefficient: 1e9 N m s/rad}}}}}}
  - {{name: hook, length: 1 m, mass: 100 kg, pivot: {{damper: {{coefficient: 1e9 N m s/rad}}}}}}
cases: {{duration: 10 s, initial: [{{single: {{theta: [10 deg, 20 deg]}}}}]}}
{}solver: {{max_steps: 20000, max_seconds: 20 s}}
)", kLimits));
  require_failed_case(r, "step_budget", "more than 20000 steps");
}

TEST_CASE("a damper exponent of 0.01 runs and keeps its energy balance", "[faults][reliability]") {
  // Nearly a constant torque of 50 N m; the secant-linear law below 1e-3 rad/s keeps the slope
  // finite (about 5e4 N m s/rad), so the run is stiff near rest but within budget. Physics fine:
  // the energy audit is asserted.
  const CheckReport r = check_text("exponent", fmt::format(R"(swaybound: 1
name: damper exponent near zero
links:
  - {{name: arm, length: 2 m, mass: 10 kg, pivot: {{damper: {{coefficient: 50 N m s/rad, exponent: 0.01}}}}}}
cases: {{duration: 10 s, initial: [{{single: {{theta: [20 deg]}}}}]}}
{}solver: {{max_steps: 50000, max_seconds: 20 s}}
)", kLimits));
  CHECK(r.failed_total == 0);
  CHECK(r.max_audit_relative < 1e-9);
  CHECK(r.pass);
  REQUIRE(r.checks.size() == 2);
  CHECK(r.checks[0].worst == Approx(20 * M_PI / 180).epsilon(1e-9));  // the start is the peak
}

TEST_CASE("a base acceleration step of 100 g runs, keeps its energy balance and fails the limits", "[faults][reliability]") {
  // 981 m/s^2 for 0.2 s: the hook block is flung over the top. The run is fine (audit asserted:
  // the residual is judged against the energy at rest, about 1/260 of the kinetic energy here);
  // the design is not, so both checks fail with a governing case.
  const CheckReport r = check_text("hundred_g", fmt::format(R"(swaybound: 1
name: base step of 100 g
links:
  - {{name: rope, kind: rope, length: 6 m, mass: 35 kg}}
  - {{name: hook, length: 1.8 m, mass: 8.5 t, com: 1.5 m, inertia: 950 kg m^2}}
base: {{scenarios: [{{name: crash stop, accel: [{{for: 0.2 s, x: 980.665 m/s^2}}]}}]}}
cases: {{duration: 10 s, initial: [{{single: {{theta: [0 deg, 0 deg]}}}}]}}
{}solver: {{max_steps: 100000, max_seconds: 20 s}}
)", kLimits), /*audit=*/false);
  CHECK(r.failed_total == 0);
  CHECK(r.max_audit_relative < 1e-5);
  CHECK_FALSE(r.pass);
  for (const auto& c : r.checks) {
    CHECK_FALSE(c.pass);
    CHECK(c.margin < 0);
    CHECK(c.governing_id == "crash-stop/single-001");
  }
}

TEST_CASE("a 1 mm link beside a 100 m link runs within a step budget and keeps its energy balance", "[faults][reliability]") {
  // The 1 mm link's own mode is fast (about 2,300 steps per simulated second), not unstable.
  // Physics fine: the energy audit is asserted.
  const CheckReport r = check_text("lengths", fmt::format(R"(swaybound: 1
name: 1 mm link beside a 100 m link
links:
  - {{name: long, length: 100 m, mass: 500 kg}}
  - {{name: short, length: 1 mm, mass: 10 kg}}
  - {{name: hook, length: 2 m, mass: 100 kg}}
cases: {{duration: 5 s, initial: [{{single: {{theta: [5 deg, 5 deg, 5 deg]}}}}]}}
{}solver: {{max_steps: 100000, max_seconds: 20 s}}
)", kLimits), /*audit=*/false);
  CHECK(r.failed_total == 0);
  CHECK(r.max_audit_relative < 1e-9);
  CHECK(r.pass);
}

TEST_CASE("masses 1e-6 kg to 1e6 kg run and keep their energy balance", "[faults][reliability]") {
  // Mass-matrix entries 12 orders of magnitude apart. Physics fine: the energy audit is asserted,
  // and the heavy link's pivot carries at least its weight (the limit is set above it).
  const CheckReport r = check_text("masses", R"(swaybound: 1
name: masses 1e-6 kg to 1e6 kg
links:
  - {name: light, length: 2 m, mass: 1e-6 kg}
  - {name: heavy, length: 2 m, mass: 1e6 kg}
  - {name: feather, length: 1 m, mass: 1e-6 kg}
cases: {duration: 20 s, initial: [{single: {theta: [10 deg, 5 deg, 30 deg]}}]}
limits:
  - {pivot_load: 20 MN}
solver: {max_steps: 50000, max_seconds: 20 s}
)");
  CHECK(r.failed_total == 0);
  CHECK(r.max_audit_relative < 1e-8);
  REQUIRE(r.checks.size() == 1);
  CHECK(r.checks[0].worst >= 1e6 * 9.80665);
  CHECK(r.pass);
}

TEST_CASE("a day-long case stops at its wall-clock or step budget and fails", "[faults][reliability]") {
  const std::string spec = R"(swaybound: 1
name: a day of sway
links:
  - {name: rope, kind: rope, length: 6 m, mass: 35 kg}
  - {name: hook, length: 1.8 m, mass: 8.5 t, com: 1.5 m, inertia: 950 kg m^2}
cases: {duration: 24 h, initial: [{single: {theta: [10 deg, 5 deg]}}]}
limits:
  - {peak_angle: 30 deg}
)";
  SECTION("wall clock: 0.5 s") {
    const CheckReport r = check_text("day_time", spec + "solver: {max_steps: 1000000000, max_seconds: 0.5 s}\n");
    require_failed_case(r, "time_budget", "wall-clock budget of 0.5 s ran out");
  }
  SECTION("steps: 5000") {
    const CheckReport r = check_text("day_steps", spec + "solver: {max_steps: 5000, max_seconds: 60 s}\n");
    require_failed_case(r, "step_budget", "more than 5000 steps");
  }
}

TEST_CASE("pin friction that cannot converge is reported as such, not as a non-finite state", "[faults][reliability]") {
  // mu r / L = 2 * 0.5 m / 0.1 m = 10: the fixed point diverges (DEVELOPERS.md, "Pin friction").
  const CheckReport r = check_text("pin", R"(swaybound: 1
name: pin friction that does not contract
links:
  - {name: arm, length: 0.1 m, mass: 40 kg, pivot: {friction: {pin_radius: 0.5 m, mu: 2}}}
  - {name: hook, length: 0.1 m, mass: 40 kg, pivot: {friction: {pin_radius: 0.5 m, mu: 2}}}
cases: {duration: 5 s, initial: [{single: {theta: [60 deg, -60 deg], rate: [3 rad/s, -3 rad/s]}}]}
limits:
  - {peak_angle: 30 deg}
solver: {max_steps: 20000, max_seconds: 20 s}
)");
  require_failed_case(r, "friction_unconverged", "pin friction did not converge");
}

TEST_CASE("an absurd base acceleration ends as a non-finite state and fails", "[faults][reliability]") {
  const CheckReport r = check_text("absurd", R"(swaybound: 1
name: absurd base acceleration
links:
  - {name: arm, length: 2 m, mass: 40 kg}
base: {scenarios: [{name: absurd, accel: [{for: 1 s, x: 1e300 m/s^2}]}]}
cases: {duration: 5 s, initial: [{single: {theta: [10 deg]}}]}
limits:
  - {peak_angle: 30 deg}
solver: {max_steps: 20000, max_seconds: 20 s}
)");
  require_failed_case(r, "non_finite", "non-finite");
}

TEST_CASE("a failed case fails the check run even when no per-case limit exists", "[faults][reliability]") {
  // Regression: with no per-case limit, a case that failed to run was listed but the verdict
  // was "all checks pass" and `swaybound check` exited 0.
  const CheckReport r = check_text("no_limits", R"(swaybound: 1
name: no per-case limit
links:
  - {name: arm, length: 2 m, mass: 40 kg, pivot: {friction: {torque: 3 N m, transition_rate: 1e-7 rad/s}}}
cases: {duration: 20 s, initial: [{single: {theta: [10 deg]}}]}
limits:
  - {modal_damping_min: 0}
solver: {max_steps: 2000, max_seconds: 20 s}
)");
  CHECK(r.failed_total == 1);
  CHECK_FALSE(r.pass);
}
