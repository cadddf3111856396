// The packet of a chain with an elastic rope: the recording of its governing cases (tension,
// slack intervals, snatch peaks, length, drum, lift-off), the rope page, results.json and cases.csv.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <vector>

#include "../support/rope_packet_spec.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"

using namespace swaybound;
using swaybound::testing::snatch_spec;

namespace {

struct Recorded {
  Spec spec;
  CheckReport report;
};

/// The check of the snatching rope (the hoisting scenario), recorded; shared by the tests below.
const Recorded& snatching() {
  static const Recorded r = [] {
    Recorded k;
    k.spec = snatch_spec();
    CheckOptions o;
    o.audit = false;
    k.report = run_check(k.spec, o);
    return k;
  }();
  return r;
}

/// The run's own record of its switches, from a plain simulate_case of the same case.
RunOutcome outcome_of(const Spec& spec) {
  const Model model = build_model(spec);
  Workspace ws(model);
  const CaseDef def = CaseSpace(spec).at(0);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 0;
  return simulate_case(model, ws, def.scenario, def.initial, settings);
}

}  // namespace

TEST_CASE("recorded rope: slack intervals at the run's located switches, lift-off at its event", "[rope-packet]") {
  const Recorded& r = snatching();
  REQUIRE(r.report.recorded.size() == 1);
  const RecordedCase& rc = r.report.recorded[0];
  REQUIRE(rc.status == "ok");
  REQUIRE(rc.ropes.size() == 1);
  const RecordedRope& rope = rc.ropes[0];
  const RunOutcome out = outcome_of(r.spec);
  REQUIRE(out.status == RunStatus::ok);
  REQUIRE(out.events.size() < RunOutcome::kMaxRecordedEvents);
  // The rope starts slack (5 cm at t = 0): the first interval opens at 0, then every slack event
  // opens one and every taut event closes one.
  std::vector<Interval> expected{{0, std::nan("")}};
  double lift_off = std::nan("");
  for (const ModeEvent& e : out.events) {
    if (e.kind == ModeEventKind::lift_off) lift_off = e.time;
    if (e.link != 0) continue;
    if (e.kind == ModeEventKind::taut) expected.back().to = e.time;
    if (e.kind == ModeEventKind::slack) expected.push_back({e.time, std::nan("")});
  }
  if (std::isnan(expected.back().to)) expected.back().to = out.t_reached;
  REQUIRE(expected.size() >= 3);  // slack at the start and at least twice after lift-off
  REQUIRE(rope.slack.size() == expected.size());
  CHECK(rope.slack_intervals == static_cast<long>(expected.size()));
  double total = 0;
  for (std::size_t k = 0; k < expected.size(); ++k) {
    CHECK(rope.slack[k].from == expected[k].from);
    CHECK(rope.slack[k].to == expected[k].to);
    total += rope.slack[k].to - rope.slack[k].from;
  }
  // The drum hauls in 5 cm of slack at 0.6 m/s before the rope is taut again.
  CHECK(rope.slack[0].to == Approx(0.05 / 0.6).epsilon(1e-6));
  // Located, not sampled: the recording's samples are 10 ms apart, the switches fall between them.
  CHECK(std::fmod(rope.slack[1].from * 100, 1.0) > 1e-6);
  // The metrics of the re-run agree with the intervals.
  CHECK(rope.slack_count == rope.slack_intervals);
  CHECK(rope.slack_time == Approx(total).epsilon(1e-12));
  CHECK(rc.switches == out.switches);
  CHECK(rc.lift_off_time == lift_off);
  CHECK(rc.lift_off_time > rope.slack[0].to);  // the rope takes the weight after it is taut
}

TEST_CASE("recorded rope: one snatch peak per re-tensioning, located between the samples", "[rope-packet]") {
  const Recorded& r = snatching();
  const RecordedCase& rc = r.report.recorded[0];
  const RecordedRope& rope = rc.ropes[0];
  // Every taut interval after a slack one has its peak: the first slack interval ends where the
  // first taut one begins, and so on.
  REQUIRE(rope.snatches.size() == rope.slack.size());
  double largest = 0;
  for (std::size_t j = 0; j < rope.snatches.size(); ++j) {
    const SnatchPeak& p = rope.snatches[j];
    INFO("snatch " << j);
    CHECK(p.located);
    CHECK(p.taut.from == rope.slack[j].to);
    CHECK(p.taut.to == (j + 1 < rope.slack.size() ? rope.slack[j + 1].from : rc.t_end));
    CHECK(p.peak.time >= p.taut.from);
    CHECK(p.peak.time <= p.taut.to);
    // No recorded sample of the interval is above the located peak; the largest is close below.
    double sampled = 0;
    for (std::size_t i = 0; i < rc.t.size(); ++i)
      if (rc.t[i] >= p.taut.from && rc.t[i] <= p.taut.to) sampled = std::max(sampled, rope.force[i]);
    CHECK(sampled <= p.peak.value * (1 + 1e-9));
    CHECK(sampled >= 0.95 * p.peak.value);
    largest = std::max(largest, p.peak.value);
  }
  // The largest of them is the case's snatch load, as the check found it.
  CHECK(largest == Approx(rope.snatch.value).epsilon(1e-9));
  const auto check = std::find_if(r.report.checks.begin(), r.report.checks.end(),
                                  [](const CheckResult& c) { return c.key == "snatch_load"; });
  REQUIRE(check != r.report.checks.end());
  CHECK(largest == Approx(check->worst).epsilon(1e-9));
  // The first catch lifts the load off the ground at the drum's speed: above the static tension.
  CHECK(rope.snatches[0].peak.value > rope.static_force);
}

TEST_CASE("recorded rope: drum travel and speed, rope length and stretch per sample", "[rope-packet]") {
  const Recorded& r = snatching();
  const RecordedCase& rc = r.report.recorded[0];
  const RecordedRope& rope = rc.ropes[0];
  REQUIRE(rc.hoist_link == 0);
  REQUIRE(rc.drum_travel.size() == rc.t.size());
  REQUIRE(rope.length.size() == rc.t.size());
  for (std::size_t i = 0; i < rc.t.size(); i += 37) {
    INFO("t = " << rc.t[i]);
    CHECK(rc.drum_speed[i] == Approx(0.6));
    CHECK(rc.drum_travel[i] == Approx(0.6 * rc.t[i]).margin(1e-12));
    // One part of line: the unstretched length is the rope's less the rope hauled in.
    CHECK(rope.unstretched[i] == Approx(testing::kSnatchRope - 0.6 * rc.t[i]).margin(1e-9));
    CHECK(rope.stretch[i] == Approx(rope.length[i] - rope.unstretched[i]).margin(1e-12));
    CHECK(rc.hoist_length[i] == rope.length[i]);
    if (rope.stretch[i] < 0) CHECK(rope.force[i] == 0);
  }
}

TEST_CASE("recorded rope at rest: the static tension of the fall, no slack, no snatch", "[rope-packet]") {
  Spec spec = snatch_spec(false, 2);
  CheckOptions o;
  o.audit = false;
  const CheckReport r = run_check(spec, o);
  REQUIRE(r.recorded.size() == 1);
  const RecordedCase& rc = r.recorded[0];
  REQUIRE(rc.ropes.size() == 1);
  const RecordedRope& rope = rc.ropes[0];
  // Hanging still: the fall holds the load and the lower half of its own weight (its centre of
  // mass is at mid-length).
  const double expected = 9.81 * (testing::kSnatchLoad + 0.5 * testing::kSnatchRopeMass);
  CHECK(rope.static_force == Approx(expected).epsilon(1e-14));
  for (double f : rope.force) CHECK(f == Approx(expected).epsilon(1e-6));
  CHECK(rope.slack.empty());
  CHECK(rope.snatches.empty());
  CHECK(rc.hoist_link == -1);
  CHECK(rc.drum_travel.empty());
  CHECK(std::isnan(rc.lift_off_time));
}
