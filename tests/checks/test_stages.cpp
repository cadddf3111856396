// The check pipeline's public stages (checks/check_run.hpp): what plan_check decides from the
// spec, and that the stages composed by hand over a list of cases give what run_check gives.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

const char* kSpec = R"(
swaybound: 1
name: Stage test chain
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 3, mass: 10, pivot: {damper: {coefficient: 500 N m s/rad}}}
  - {name: load, length: 1, mass: 400, com: 0.7, inertia: 20, pivot: {damper: {coefficient: 300 N m s/rad}}}
base: {scenarios: [{name: brake, initial_velocity: {x: 1}, accel: [{for: 1.2 s, x: -0.8}]}]}
cases:
  duration: 4 s
  initial:
    - grid: {theta: [[-10 deg, 10 deg, 3], [-20 deg, 20 deg, 2]]}
    - ladder: {from: {theta: [30 deg, 40 deg]}, relative: [1e-4, 1e-6]}
limits:
  - {peak_angle: 25 deg}
  - {pivot_load: 4.2 kN, link: rope}
  - {ftle_max: 0.5 /s, horizon: 4 s}
  - {modal_damping_min: 0.01}
  - {onset_margin: 1.5}
chaos: {onset: {max: 90 deg, resolution: 10 deg}}
)";

Spec load(const std::string& text) {
  const fs::path path = fs::temp_directory_path() / "swaybound-test-stages.yaml";
  std::ofstream(path) << text;
  Spec spec = load_spec(path.string());
  fs::remove(path);
  return spec;
}

bool same(double a, double b) { return (std::isnan(a) && std::isnan(b)) || a == b; }

}  // namespace

TEST_CASE("plan_check decides the per-case FTLE, the onset search, the map and the ladders from the spec",
          "[checks][stages]") {
  const Spec spec = load(kSpec);
  const CheckPlan plan = plan_check(spec);
  CHECK(plan.space.size() == 6 + 3);
  CHECK(plan.case_options.ftle);
  CHECK(plan.modal_limit);
  CHECK(plan.onset);
  CHECK_FALSE(plan.map);
  CHECK(plan.ladder_sets == std::vector<int>{1});
  CHECK(plan.streaming.output_rate == 0);
  CHECK(plan.run.output_rate == spec.cases.output_rate);

  Spec plain = spec;
  plain.limits.resize(2);  // peak_angle and pivot_load only
  plain.chaos.given = false;
  plain.cases.initial.resize(1);
  const CheckPlan bare = plan_check(plain);
  CHECK_FALSE(bare.case_options.ftle);
  CHECK_FALSE(bare.modal_limit);
  CHECK_FALSE(bare.onset);
  CHECK(bare.ladder_sets.empty());
}

TEST_CASE("the stages composed by hand give run_check's checks, totals and indicators", "[checks][stages]") {
  const Spec spec = load(kSpec);
  CheckOptions options;
  options.jobs = 2;
  options.record = false;
  const CheckReport report = run_check(spec, options);

  const CheckPlan plan = plan_check(spec);
  CheckSet checks(spec);
  CaseTotals totals;
  RunnerOptions runner;
  runner.jobs = 1;  // another thread count: the order of consumption makes it irrelevant
  long seen = 0;
  stream_cases(plan, CaseList::all(plan.space.size()), runner, checks, totals, [&](const CaseMetrics& m) {
    CHECK(m.index == seen);
    ++seen;
  });
  CHECK(seen == plan.space.size());
  CHECK(totals.cases == report.case_count);
  CHECK(totals.total_steps == report.total_steps);
  CHECK(totals.failed_total == report.failed_total);
  CHECK(same(totals.max_ftle, report.chaos.max_ftle));
  CHECK(totals.max_ftle_case == report.chaos.max_ftle_case);

  ModalResult modes;
  ChaosSummary chaos;
  run_global_checks(plan, 2, checks, modes, chaos);
  checks.finish();
  CHECK(modes.least_damping_ratio == report.modes.least_damping_ratio);
  REQUIRE(chaos.ladders.size() == 1);
  CHECK(same(chaos.ladders[0].lambda, report.chaos.ladders[0].lambda));
  CHECK(chaos.onset.amplitude == report.chaos.onset.amplitude);
  CHECK(chaos.onset.scan_ftle.size() == report.chaos.onset.scan_ftle.size());
  // The onset stage on its own gives the same search.
  const OnsetResult direct = onset_search(plan.model, spec, plan.case_options.ftle_settings, 1);
  CHECK(direct.amplitude == chaos.onset.amplitude);
  CHECK(direct.bracket_low == chaos.onset.bracket_low);

  std::vector<CheckResult> results = checks.results();
  audit_governing(plan, 2, results);
  REQUIRE(results.size() == report.checks.size());
  for (std::size_t i = 0; i < results.size(); ++i) {
    INFO("limit " << results[i].key);
    CHECK(same(results[i].worst, report.checks[i].worst));
    CHECK(results[i].governing == report.checks[i].governing);
    CHECK(results[i].pass == report.checks[i].pass);
    CHECK(results[i].audited == report.checks[i].audited);
    CHECK(same(results[i].audit_value, report.checks[i].audit_value));
  }
  // The onset check is the onset amplitude over the envelope of the case sets.
  CHECK(results[4].worst == chaos.onset.amplitude / plan.space.envelope_amplitude());

  // Recording a subset of the cases: only the governing ones, in case order.
  const std::vector<RecordedCase> recorded = record_governing(plan, results);
  REQUIRE_FALSE(recorded.empty());
  for (std::size_t k = 1; k < recorded.size(); ++k) CHECK(recorded[k - 1].index < recorded[k].index);
  for (const auto& rc : recorded) CHECK_FALSE(rc.t.empty());

  // A list of cases: the checks see only those.
  CheckSet part(spec);
  CaseTotals part_totals;
  stream_cases(plan, CaseList::of({2, 4}), runner, part, part_totals);
  CHECK(part_totals.cases == 2);
  for (const auto& c : part.results())
    if (c.per_case && c.governing >= 0) CHECK((c.governing == 2 || c.governing == 4));
}
