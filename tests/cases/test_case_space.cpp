// Case sets: counts, values, ids and determinism of the case space.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <set>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/cases/runner.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {
const char* kSpec = R"(
swaybound: 1
name: case space test
links:
  - {name: rope, kind: rope, length: 5, mass: 20}
  - {name: load, length: 1, mass: 900}
base:
  scenarios:
    - {name: Brake from travel, initial_velocity: {x: 1}, accel: [{for: 1 s, x: -1}]}
    - {name: start, accel: [{for: 1 s, x: 1}]}
cases:
  duration: 5 s
  initial:
    - grid: {theta: [[-10 deg, 10 deg, 3], [-20 deg, 20 deg, 5]], rate: [[0, 0, 1], [-1 deg/s, 1 deg/s, 2]]}
    - random: {count: 50, seed: 3, method: latin_hypercube, theta: [[-5 deg, 5 deg], [0, 30 deg]]}
    - random: {count: 20, seed: 9, theta: [[-5 deg, 5 deg]]}
    - corners: {theta: [[-1 rad, 1 rad], [0, 0]], rate: [[-2 rad/s, 2 rad/s]]}
    - ladder: {from: {theta: [10 deg, 10 deg]}, relative: [1e-3, 1e-6], link: load}
    - single: {theta: [1 deg, 2 deg], rate: [0.1 rad/s]}
)";
}

TEST_CASE("the case space crosses every start with every scenario", "[cases]") {
  const Spec spec = load_spec_text(kSpec, "cases.yaml");
  const CaseSpace space(spec);
  const long starts = 3 * 5 * 1 * 2 + 50 + 20 + 4 + 3 + 1;
  CHECK(space.starts() == starts);
  CHECK(space.size() == 2 * starts);
  CHECK(space.size() == case_count(spec));
  std::set<std::string> ids;
  for (long i = 0; i < space.size(); ++i) ids.insert(space.at(i).id);
  CHECK(static_cast<long>(ids.size()) == space.size());
  CHECK(space.at(0).id == "brake-from-travel/grid-001");
  CHECK(space.at(starts).id == "start/grid-001");
  CHECK(space.at(starts).scenario == 1);
}

TEST_CASE("grid, corners, ladder and single starts take the stated values", "[cases]") {
  const Spec spec = load_spec_text(kSpec, "cases.yaml");
  const CaseSpace space(spec);
  const double deg = std::numbers::pi / 180;
  const CaseDef first = space.at(0), last = space.at(29);
  CHECK(first.initial.theta[0] == Approx(-10 * deg));
  CHECK(first.initial.theta[1] == Approx(-20 * deg));
  CHECK(first.initial.omega[1] == Approx(-1 * deg));
  CHECK(last.initial.theta[0] == Approx(10 * deg));
  CHECK(last.initial.theta[1] == Approx(20 * deg));
  CHECK(last.initial.omega[1] == Approx(1 * deg));
  CHECK(space.at(1).initial.omega[1] == Approx(1 * deg));  // the last dimension varies fastest
  // Corners: two non-degenerate ranges give four combinations of their extremes.
  std::set<std::pair<double, double>> corners;
  for (long k = 100; k < 104; ++k) corners.insert({space.at(k).initial.theta[0], space.at(k).initial.omega[0]});
  CHECK(corners == std::set<std::pair<double, double>>{{-1, -2}, {-1, 2}, {1, -2}, {1, 2}});
  // Ladder: the base start, then the perturbed link's angle times (1 + step).
  CHECK(space.at(104).initial.theta[1] == Approx(10 * deg));
  CHECK(space.at(105).initial.theta[1] == Approx(10 * deg * (1 + 1e-3)).epsilon(1e-15));
  CHECK(space.at(106).initial.theta[0] == Approx(10 * deg));
  CHECK(space.at(107).initial.omega[0] == 0.1);
  CHECK(space.envelope_amplitude() == Approx(1.0));
}

TEST_CASE("Latin hypercube samples put one start in every stratum of every dimension", "[cases]") {
  // Definition of Latin hypercube sampling (McKay, Beckman & Conover, Technometrics 21, 1979).
  const Spec spec = load_spec_text(kSpec, "cases.yaml");
  const CaseSpace space(spec);
  const double deg = std::numbers::pi / 180;
  std::set<int> strata0, strata1;
  for (long k = 30; k < 80; ++k) {
    const CaseDef c = space.at(k);
    strata0.insert(static_cast<int>(std::floor((c.initial.theta[0] + 5 * deg) / (10 * deg) * 50)));
    strata1.insert(static_cast<int>(std::floor(c.initial.theta[1] / (30 * deg) * 50)));
  }
  CHECK(strata0.size() == 50);
  CHECK(strata1.size() == 50);
}

TEST_CASE("random starts are uniform in range and repeat exactly", "[cases]") {
  const Spec spec = load_spec_text(kSpec, "cases.yaml");
  const CaseSpace a(spec), b(spec);
  const double deg = std::numbers::pi / 180;
  double mean = 0;
  for (long k = 80; k < 100; ++k) {
    const double v = a.at(k).initial.theta[0];
    CHECK(v >= -5 * deg);
    CHECK(v < 5 * deg);
    CHECK(v == b.at(k).initial.theta[0]);
    mean += v / 20;
  }
  CHECK(std::fabs(mean) < 2.5 * deg);  // loose: 20 samples of a uniform in [-5, 5] deg
  double u = 0;
  for (int k = 0; k < 100000; ++k) u += unit_random(42, 1, static_cast<std::uint64_t>(k));
  CHECK(u / 100000 == Approx(0.5).margin(0.005));  // mean of U[0,1); 5 sigma is 0.0046
}

TEST_CASE("the runner hands results over in case order on any thread count", "[cases][runner]") {
  const Spec spec = load_spec_text(kSpec, "cases.yaml");
  const Model model = build_model(spec);
  const CaseSpace space(spec);
  for (int jobs : {1, 2, 4}) {
    std::vector<long> order;
    RunnerOptions options;
    options.jobs = jobs;
    options.window = 3;
    run_ordered<CaseDef>(
        200, options, [&] { return Workspace(model); },
        [&](long i, Workspace&) { return space.at(i); }, [&](CaseDef&& def) { order.push_back(def.index); });
    REQUIRE(order.size() == 200);
    for (long i = 0; i < 200; ++i) CHECK(order[static_cast<std::size_t>(i)] == i);
  }
}
