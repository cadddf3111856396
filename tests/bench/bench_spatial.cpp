// Spatial-engine benchmark (not a test): time per trajectory of the spatial engine on a planar
// motion against the planar engine on the same motion, N = 2, 3, 5, 10 links, and of the spatial
// engine on a motion out of the plane; plus the cost of one right-hand-side evaluation. Chains of
// point masses on massless rods with a linear damper at every pivot (invented benchmark data),
// released at 20 deg per link, 20 s, dopri5 at rtol 1e-9. Times are medians of interleaved runs.
// Run: cmake --build build/release --target bench_spatial && build/release/tests/bench/bench_spatial [--quick]
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <numbers>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "swaybound/dynamics/chain.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using Clock = std::chrono::steady_clock;

namespace {

std::string chain_yaml(int n, bool spatial) {
  std::string links;
  for (int i = 0; i < n; ++i)
    links += fmt::format("  - {{name: l{}, length: 1, mass: 1, com: 1, inertia: 0, pivot: {{damper: {{coefficient: "
                         "0.05 N m s/rad}}}}}}\n",
                         i);
  return fmt::format("swaybound: 1\nname: bench chain\n{}gravity: 9.81\nlinks:\n{}cases: {{duration: 20 s, initial: "
                     "[{{single: {{theta: [0.1 rad]}}}}]}}\n",
                     spatial ? "motion: spatial\n" : "", links);
}

struct Timing {
  double seconds = 0;
  long steps = 0, evaluations = 0;
};

Timing run_once(const Model& model, Workspace& ws, const InitialState& start) {
  RunSettings s;
  s.duration = 20;
  s.rtol = s.atol = 1e-9;
  const auto t0 = Clock::now();
  const RunOutcome out = simulate_case(model, ws, 0, start, s);
  Timing t;
  t.seconds = std::chrono::duration<double>(Clock::now() - t0).count();
  t.steps = out.steps;
  t.evaluations = out.evaluations;
  if (out.status != RunStatus::ok) std::fprintf(stderr, "run failed: %s\n", out.reason.c_str());
  return t;
}

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  return v[v.size() / 2];
}

/// Nanoseconds per right-hand-side evaluation at a fixed state (median of batches).
double rhs_ns(const Model& model, Workspace& ws, const InitialState& start, int batches) {
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0), dxdt(x.size());
  // The start through a one-step run would re-do the mapping; write it as the engine does.
  for (int i = 0; i < model.n; ++i) {
    const double th = start.theta[static_cast<std::size_t>(i)], ph = model.spatial ? start.phi[static_cast<std::size_t>(i)] : 0.0;
    if (model.spatial) {
      x[3 * i] = std::sin(th) * std::cos(ph);
      x[3 * i + 1] = -std::cos(th) * std::cos(ph);
      x[3 * i + 2] = std::sin(ph);
      x[model.dof + 3 * i] = 0.3 * std::cos(th);
      x[model.dof + 3 * i + 1] = 0.3 * std::sin(th);
    } else {
      x[i] = th;
      x[model.dof + i] = 0.3;
    }
  }
  std::vector<double> times;
  const int reps = 20000;
  for (int b = 0; b < batches; ++b) {
    const auto t0 = Clock::now();
    for (int r = 0; r < reps; ++r) evaluate(model, ws, model.scenarios[0].phases[0], x.data(), 0.0, dxdt.data());
    times.push_back(std::chrono::duration<double>(Clock::now() - t0).count() / reps * 1e9);
  }
  return median(times);
}

}  // namespace

int main(int argc, char** argv) {
  const bool quick = argc > 1 && std::strcmp(argv[1], "--quick") == 0;
  const int runs = quick ? 3 : 7;
  const double deg = std::numbers::pi / 180;
  std::printf("spatial vs planar engine, 20 s trajectories (dopri5, rtol 1e-9), medians of %d interleaved runs\n", runs);
  std::printf("%4s %12s %12s %7s %14s %13s %10s %10s %7s\n", "N", "planar ms", "spatial ms", "ratio", "out-of-plane ms",
              "steps pl/sp", "rhs pl ns", "rhs sp ns", "ratio");
  for (int n : {2, 3, 5, 10}) {
    const Model planar = build_model(load_spec_text(chain_yaml(n, false), "planar.yaml"));
    const Model spatial = build_model(load_spec_text(chain_yaml(n, true), "spatial.yaml"));
    Workspace wp(planar), ws(spatial);
    InitialState in_plane, out_of_plane;
    in_plane.theta.assign(static_cast<std::size_t>(n), 20 * deg);
    in_plane.phi.assign(static_cast<std::size_t>(n), 0.0);
    out_of_plane = in_plane;
    for (int i = 0; i < n; ++i) out_of_plane.phi[static_cast<std::size_t>(i)] = (i % 2 ? -10 : 10) * deg;
    InitialState planar_start = in_plane;
    planar_start.phi.clear();
    std::vector<double> tp, ts, to;
    long steps = 0, planar_steps = 0;
    for (int r = 0; r < runs; ++r) {
      const Timing p = run_once(planar, wp, planar_start);
      tp.push_back(p.seconds);
      planar_steps = p.steps;
      const Timing t = run_once(spatial, ws, in_plane);
      ts.push_back(t.seconds);
      steps = t.steps;
      to.push_back(run_once(spatial, ws, out_of_plane).seconds);
    }
    const double rp = rhs_ns(planar, wp, planar_start, quick ? 3 : 7), rs = rhs_ns(spatial, ws, in_plane, quick ? 3 : 7);
    std::printf("%4d %12.3f %12.3f %7.2f %14.3f %6ld/%6ld %10.0f %10.0f %7.2f\n", n, median(tp) * 1e3, median(ts) * 1e3,
                median(ts) / median(tp), median(to) * 1e3, planar_steps, steps, rp, rs, rs / rp);
  }
  return 0;
}
