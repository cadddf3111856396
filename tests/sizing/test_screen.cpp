// Screening (DesignEvaluator::screen) composes the check pipeline's stages on a list of cases; over
// every case it must agree exactly with the full check of the same design (run_check through
// DesignEvaluator::check): worst values, governing cases, constraint ratios, the objective metric,
// including the global checks (modal damping, and the onset margin from the onset stage).
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numeric>

#include "swaybound/sizing/evaluate.hpp"
#include "swaybound/sizing/sizing.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

const char* kSpec = R"(
swaybound: 1
name: Screening test chain
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 3, mass: 10, pivot: {damper: {coefficient: 500 N m s/rad}}}
  - {name: load, length: 1, mass: 400, com: 0.7, inertia: 20, pivot: {damper: {coefficient: 300 N m s/rad}}}
base:
  scenarios:
    - {name: brake, initial_velocity: {x: 1}, accel: [{for: 1.2 s, x: -0.8}]}
    - {name: start, accel: [{for: 1.2 s, x: 0.8}]}
cases:
  duration: 5 s
  initial:
    - grid: {theta: [[-10 deg, 10 deg, 3], [-20 deg, 20 deg, 2]]}
    - random: {count: 3, seed: 5, theta: [[-15 deg, 15 deg], [-15 deg, 15 deg]]}
limits:
  - {peak_angle: 25 deg}
  - {pivot_load: 4.2 kN, link: rope}
  - {rope_tension_min: 0 N}
  - {residual_sway: 5 deg, after: 4 s}
  - {modal_damping_min: 0.01}
  - {onset_margin: 1.5}
chaos: {onset: {max: 90 deg, resolution: 10 deg}}
sizing:
  variables:
    - {path: "links[load].pivot.damper.coefficient", range: [50 N m s/rad, 2000 N m s/rad], cost: 1}
  objective: {min: peak_angle}
  budget: {evaluations: 10}
)";

bool same(double a, double b) { return (std::isnan(a) && std::isnan(b)) || a == b; }

}  // namespace

TEST_CASE("screening every case gives the full check's worst values, governing cases and ratios",
          "[sizing][screen]") {
  const fs::path path = fs::temp_directory_path() / "swaybound-test-screen.yaml";
  std::ofstream(path) << kSpec;
  const Spec spec = load_spec(path.string());
  const DesignEvaluator evaluator(spec, design_variables(spec), 2);
  std::vector<long> every(static_cast<std::size_t>(evaluator.case_count()));
  std::iota(every.begin(), every.end(), 0L);
  REQUIRE(every.size() == 2 * (6 + 3));

  for (double damper : {120.0, 900.0}) {
    const std::vector<double> values{damper};
    const DesignOutcome screened = evaluator.screen(values, every);
    CheckOptions options;
    options.jobs = 2;
    options.audit = false;
    options.record = false;
    CheckReport report;
    const DesignOutcome full = evaluator.check(evaluator.design(values), options, report);

    REQUIRE(screened.ratio.size() == spec.limits.size());
    REQUIRE(full.ratio.size() == spec.limits.size());
    for (std::size_t i = 0; i < spec.limits.size(); ++i) {
      INFO("damper " << damper << ", limit " << spec.limits[i].key);
      CHECK(same(screened.worst[i], full.worst[i]));
      CHECK(screened.governing[i] == full.governing[i]);
      CHECK(same(screened.ratio[i], full.ratio[i]));
    }
    CHECK(screened.cases == full.cases);
    CHECK(screened.failed_cases == full.failed_cases);
    CHECK(same(screened.metric, full.metric));
    // The global checks were computed, not left empty.
    const auto onset = static_cast<std::size_t>(5);
    CHECK(std::isfinite(screened.worst[4]));
    CHECK(std::isfinite(screened.worst[onset]));
    CHECK(report.chaos.onset.computed);
  }

  // A subset screens only its cases; its worst value is one of theirs (no case outside it counts).
  const std::vector<long> subset{1, 7, 12};
  const DesignOutcome part = evaluator.screen({900.0}, subset);
  CHECK(part.cases == 3);
  for (std::size_t i = 0; i < 4; ++i)
    if (part.governing[i] >= 0) CHECK(std::find(subset.begin(), subset.end(), part.governing[i]) != subset.end());
  fs::remove(path);
}
