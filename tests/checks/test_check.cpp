// The check pipeline: verdicts whose answer is known, failed runs, determinism across threads.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <sys/wait.h>

#include <fmt/format.h>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

/// Writes `text` to a temporary spec file and loads it (run_check hashes the file).
Spec spec_file(const std::string& name, const std::string& text) {
  const fs::path path = fs::temp_directory_path() / ("swaybound-test-" + name + ".yaml");
  std::ofstream(path) << text;
  return load_spec(path.string());
}

std::string pendulum(double pivot_limit_newtons, const std::string& extra = "") {
  return fmt::format(R"(
swaybound: 1
name: released pendulum
gravity: 9.81
links:
  - {{name: rope, kind: rope, length: 4, mass: 250, com: 4, inertia: 0}}
cases: {{duration: 6 s, initial: [{{single: {{theta: [60 deg]}}}}]}}
limits:
  - {{pivot_load: {} N, link: rope}}
solver: {{rtol: 1e-11, atol: 1e-12}}
{}
)",
                     pivot_limit_newtons, extra);
}

int run_cli(const std::string& args) {
  const int status = std::system((std::string(SWAYBOUND_CLI) + " " + args + " >/dev/null 2>&1").c_str());
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

}  // namespace

TEST_CASE("a pivot-load limit just above and just below m g (3 - 2 cos theta0) passes and fails", "[checks]") {
  // Point mass on a rope released from rest at 60 deg: the greatest tension, at the bottom of the
  // swing, is m g (3 - 2 cos theta0) (Meriam & Kraige, Engineering Mechanics: Dynamics, ch. 3).
  const double peak = 250 * 9.81 * (3 - 2 * std::cos(std::numbers::pi / 3));
  // Peaks are taken at accepted steps: the step nearest the bottom sees slightly less; 1e-3 covers it.
  const CheckReport above = run_check(spec_file("above", pendulum(peak * 1.001)), {});
  const CheckReport below = run_check(spec_file("below", pendulum(peak * 0.999)), {});
  REQUIRE(above.checks.size() == 1);
  CHECK(above.checks[0].worst == Approx(peak).epsilon(1e-3));
  CHECK(above.checks[0].pass);
  CHECK(above.pass);
  CHECK_FALSE(below.checks[0].pass);
  CHECK(below.checks[0].margin < 0);
  CHECK(below.checks[0].margin_ratio == Approx(-(peak - peak * 0.999) / (peak * 0.999)).epsilon(0.5));
  CHECK(above.checks[0].audited);
  CHECK(std::fabs(above.checks[0].audit_change) < 1e-3 * peak);
}

TEST_CASE("a case whose run fails fails every per-case check and is listed", "[checks][faults]") {
  const CheckReport r = run_check(spec_file("failing", pendulum(1e9, "") + ""), {});
  CHECK(r.pass);
  std::string text = pendulum(1e9);
  text.replace(text.find("solver: {rtol: 1e-11, atol: 1e-12}"), 34, "solver: {rtol: 1e-11, atol: 1e-12, max_steps: 100}");
  const CheckReport failing = run_check(spec_file("failing2", text), {});
  CHECK_FALSE(failing.pass);
  CHECK(failing.failed_total == 1);
  REQUIRE(failing.failed.size() == 1);
  CHECK(failing.failed[0].status == "step_budget");
  CHECK(failing.checks[0].failed_cases == 1);
  CHECK_FALSE(failing.checks[0].pass);
}

TEST_CASE("results.json is byte-identical for 1 and 2 threads", "[checks][determinism]") {
  const Spec spec = spec_file("jobs", R"(
swaybound: 1
name: determinism
links:
  - {name: rope, kind: rope, length: 3, mass: 10}
  - {name: load, length: 1, mass: 400, com: 0.7, inertia: 20, pivot: {damper: {coefficient: 300 N m s/rad, exponent: 0.8}}}
base: {scenarios: [{name: brake, initial_velocity: {x: 1}, accel: [{for: 1.2 s, x: -0.8}]}]}
cases:
  duration: 8 s
  initial:
    - random: {count: 24, seed: 5, theta: [[-10 deg, 10 deg], [-20 deg, 20 deg]]}
    - ladder: {from: {theta: [30 deg, 40 deg]}, relative: [1e-4, 1e-6]}
limits:
  - {peak_angle: 25 deg}
  - {pivot_load: 8 kN}
  - {ftle_max: 0.2 /s, horizon: 8 s}
  - {modal_damping_min: 0.01}
  - {residual_sway: 5 deg, after: 6 s}
chaos: {onset: {max: 90 deg, resolution: 5 deg}}
)");
  CheckOptions one, two;
  one.jobs = 1;
  two.jobs = 2;
  const std::string a = results_json(spec, run_check(spec, one));
  const std::string b = results_json(spec, run_check(spec, two));
  CHECK(a == b);
  CHECK(a.find("\"schema\": \"swaybound.results/1\"") != std::string::npos);
}

TEST_CASE("swaybound check: exit status, files, and nothing written for a bad spec", "[checks][cli]") {
  const fs::path out = fs::temp_directory_path() / "swaybound-test-check-out";
  fs::remove_all(out);
  const double peak = 250 * 9.81 * 2;
  const fs::path good = fs::temp_directory_path() / "swaybound-test-cli-pass.yaml";
  std::ofstream(good) << pendulum(peak * 1.01);
  CHECK(run_cli(fmt::format("check {} --out {} --jobs 2", good.string(), out.string())) == 0);
  CHECK(fs::exists(out / "results.json"));
  CHECK(fs::exists(out / "cases.csv"));
  CHECK(fs::exists(out / "spec.yaml"));
  const fs::path bad = fs::temp_directory_path() / "swaybound-test-cli-fail.yaml";
  std::ofstream(bad) << pendulum(peak * 0.9);
  CHECK(run_cli(fmt::format("check {} --out {} --force", bad.string(), out.string())) == 1);
  const fs::path broken = fs::temp_directory_path() / "swaybound-test-cli-broken.yaml";
  std::ofstream(broken) << "swaybound: 1\nname: x\nlinks: []\n";
  const fs::path untouched = fs::temp_directory_path() / "swaybound-test-check-none";
  fs::remove_all(untouched);
  CHECK(run_cli(fmt::format("check {} --out {}", broken.string(), untouched.string())) == 2);
  CHECK_FALSE(fs::exists(untouched));
}

TEST_CASE("rope_tension_min reads the end it names: top, bottom or either", "[checks][rope]") {
  // A rope (30 kg, uniform) carrying a 2,000 kg block, hanging at rest: by statics the top end
  // carries both weights, (30 + 2000) g, the bottom end the block's, 2000 g; either end's least is
  // the bottom's. The limits sit between the two so that top passes and bottom fails.
  const double g = 9.81;
  const Spec spec = spec_file("rope-ends", fmt::format(R"(
swaybound: 1
name: rope ends
gravity: {}
links:
  - {{name: rope, kind: rope, length: 5 m, mass: 30 kg}}
  - {{name: block, length: 1 m, mass: 2000 kg}}
cases: {{duration: 2 s, initial: [{{single: {{theta: [0 deg, 0 deg]}}}}]}}
limits:
  - {{rope_tension_min: 19.9 kN, link: rope, end: top}}
  - {{rope_tension_min: 19.9 kN, link: rope, end: bottom}}
  - {{rope_tension_min: 19.9 kN, link: rope}}
)",
                                                          g));
  CheckOptions options;
  options.audit = false;
  const CheckReport r = run_check(spec, options);
  REQUIRE(r.checks.size() == 3);
  CHECK(r.checks[0].worst == Approx(2030 * g).epsilon(1e-9));
  CHECK(r.checks[0].pass);
  CHECK(r.checks[0].subject == "link 'rope', top end");
  CHECK(r.checks[1].worst == Approx(2000 * g).epsilon(1e-9));
  CHECK_FALSE(r.checks[1].pass);
  CHECK(r.checks[1].subject == "link 'rope', bottom end");
  CHECK(r.checks[2].worst == Approx(2000 * g).epsilon(1e-9));
  CHECK(r.checks[2].subject == "link 'rope', either end");

  // The bottom end of the last link hangs free: naming it is an input error at `end`.
  try {
    spec_file("rope-free-end", R"(
swaybound: 1
name: free end
links:
  - {name: rope, kind: rope, length: 5 m, mass: 30 kg}
cases: {duration: 2 s, initial: [{single: {theta: [0 deg]}}]}
limits:
  - {rope_tension_min: 1 kN, end: bottom}
)");
    FAIL("a bottom-end limit on a free end loaded");
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].path == "limits[0].end");
    CHECK(e.diagnostics()[0].mark.line == 8);
  }
}
