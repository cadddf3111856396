// The convergence view of a check (checks/convergence.hpp): the sampled worst of each per-case
// limit over the first k starts.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;

TEST_CASE("The sampled worst over the first k starts of a pendulum released from rest is the k-th amplitude",
          "[checks][convergence]") {
  // An undamped point pendulum released from rest at theta0 on a fixed base swings between
  // -theta0 and theta0 (energy conservation), so its peak angle is theta0; with the starts in
  // increasing order 1, 2, ..., 12 deg, the worst over the first k starts is k deg, and the rope's
  // least tension over them, m g cos(theta0) at the turning points (normal equation at rest; e.g.
  // Meriam & Kraige, Dynamics, ch. 3), is that of the k-th start.
  const Spec spec = load_spec_text(R"(swaybound: 1
name: convergence view
gravity: 9.81
links:
  - {name: rod, kind: rope, length: 2 m, mass: 10 kg, com: 2 m, inertia: 0}
cases:
  duration: 3 s
  initial:
    - grid: {theta: [[1 deg, 12 deg, 12]]}
limits:
  - {peak_angle: 30 deg}
  - {rope_tension_min: 0 N}
  - {residual_sway: 30 deg, after: 2 s}
solver: {rtol: 1e-11, atol: 1e-13}
)",
                                   "convergence.yaml");
  CheckOptions options;
  options.jobs = 2;
  options.audit = false;
  options.record = false;
  const CheckReport r = run_check(spec, options);
  REQUIRE(r.convergence.size() == 3);  // one per per-case limit
  const double deg = std::numbers::pi / 180;
  for (const ConvergenceRow& row : r.convergence) {
    INFO("limit " << row.limit);
    REQUIRE(!row.starts.empty());
    CHECK(row.starts.back() == 12);
    // The last count is every start: its worst is the check's worst.
    CHECK(row.worst.back() == r.checks[static_cast<std::size_t>(row.limit)].worst);
    for (std::size_t j = 1; j < row.starts.size(); ++j) CHECK(row.starts[j] > row.starts[j - 1]);
  }
  const ConvergenceRow& angle = r.convergence[0];
  const ConvergenceRow& tension = r.convergence[1];
  for (std::size_t j = 0; j < angle.starts.size(); ++j) {
    const double theta0 = static_cast<double>(angle.starts[j]) * deg;
    INFO("first " << angle.starts[j] << " starts");
    CHECK(std::fabs(angle.worst[j] - theta0) < 1e-8 * theta0);
    CHECK(std::fabs(tension.worst[j] - 10 * 9.81 * std::cos(theta0)) < 1e-6);
  }
}
