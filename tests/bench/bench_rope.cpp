// Elastic-rope benchmark (not a test): steps, right-hand-side evaluations and time per trajectory
// of a hook chain (invented benchmark data: a 14 m fall of 4 parts over a 12.6 t hook load, braking
// the trolley from 0.8 m/s, 30 s) with the rope inextensible and elastic at EA of one part from
// 3 MN to 300 MN (steel wire rope of realistic sizes spans roughly 10-100 MN), for the explicit
// steppers (Dormand-Prince 5(4), Runge-Kutta-Fehlberg 7(8)). Times are medians of interleaved runs.
// Run: cmake --build build/release --target bench_rope && build/release/tests/bench/bench_rope [--quick]
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <numbers>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec/spec.hpp"

using namespace swaybound;
using Clock = std::chrono::steady_clock;

namespace {

Spec hook_chain(double ea_per_part) {
  Spec s;
  s.name = "rope bench";
  s.gravity = 9.81;
  LinkSpec rope;
  rope.name = "rope";
  rope.kind = LinkKind::rope;
  rope.length = 14;
  rope.mass = 45;
  rope.com = 7;
  rope.inertia = 45.0 * 14 * 14 / 12;
  rope.com_given = rope.inertia_given = true;
  rope.parts_of_line = 4;
  rope.pivot.dampers.push_back(DamperSpec{120e3, 1, 1e300, 1e-3, std::nullopt});
  if (ea_per_part > 0) {
    RopeElasticSpec e;
    e.ea = ea_per_part;
    e.damping_ratio = 0.03;
    rope.elastic = e;
  }
  LinkSpec load;
  load.name = "load";
  load.length = 2.5;
  load.mass = 12600;
  load.com = 1.8;
  load.inertia = 4200;
  load.com_given = load.inertia_given = true;
  s.links = {rope, load};
  ScenarioSpec brake;
  brake.name = "brake";
  brake.initial_vx = 0.8;
  brake.accel.push_back(AccelSegment{2.0, -0.4, 0});
  s.scenarios.push_back(brake);
  s.cases.duration = 30;
  return s;
}

struct Row {
  std::string label;
  Model model;
  Stepper method;
  std::vector<double> seconds;
  RunOutcome outcome;
  double axial_hz = 0;
};

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  return v[v.size() / 2];
}

}  // namespace

int main(int argc, char** argv) {
  const bool quick = argc > 1 && std::strcmp(argv[1], "--quick") == 0;
  const int repeats = quick ? 3 : 9;
  std::vector<Row> rows;
  for (const Stepper method : {Stepper::dopri5, Stepper::rkf78})
    for (const double ea : {0.0, 3e6, 3e7, 3e8}) {
      const Model model = build_model(hook_chain(ea));
      Row r{ea > 0 ? fmt::format("elastic, EA {:g} MN", ea / 1e6) : "inextensible", model, method, {}, {}, 0};
      if (ea > 0) {
        const double k = 4 * ea / 14, m = 12600 + 45.0 / 4;
        r.axial_hz = std::sqrt(k / m) / (2 * std::numbers::pi);
      }
      rows.push_back(std::move(r));
    }
  InitialState start;
  start.theta = {2 * std::numbers::pi / 180, -3 * std::numbers::pi / 180};
  for (int k = 0; k < repeats; ++k)
    for (Row& r : rows) {  // interleaved: every row once per round
      Workspace ws(r.model);
      RunSettings settings;
      settings.duration = 30;
      settings.method = r.method;
      settings.rtol = 1e-8;
      settings.atol = 1e-10;
      const auto t0 = Clock::now();
      r.outcome = simulate_case(r.model, ws, 0, start, settings);
      r.seconds.push_back(std::chrono::duration<double>(Clock::now() - t0).count());
    }
  std::printf("hook chain, 30 s trolley brake, rtol 1e-8, atol 1e-10; medians of %d interleaved runs\n\n", repeats);
  std::printf("%-8s %-24s %10s %10s %12s %12s %10s %10s\n", "stepper", "rope", "bounce Hz", "steps", "evaluations",
              "ms/case", "x inext.", "status");
  for (const Row& r : rows) {
    const Row& base = *std::find_if(rows.begin(), rows.end(),
                                    [&](const Row& q) { return q.method == r.method && q.axial_hz == 0; });
    const double ms = 1e3 * median(r.seconds), base_ms = 1e3 * median(base.seconds);
    std::printf("%-8s %-24s %10.3g %10ld %12ld %12.3f %10.2f %10s\n", r.method == Stepper::dopri5 ? "dopri5" : "rkf78",
                r.label.c_str(), r.axial_hz, r.outcome.steps, r.outcome.evaluations, ms, ms / base_ms,
                std::string(status_name(r.outcome.status)).c_str());
  }
  return 0;
}
