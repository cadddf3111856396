// `swaybound simulate`: runs a case of the spec's case set (by id, or the first), says which start
// it ran, and writes the base motion and wind forces beside the sway.
#include <catch2/catch.hpp>
#include <unistd.h>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "../support/process.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using namespace swaybound::testing;
namespace fs = std::filesystem;

namespace {
// Wind on a resting chain: the drag on the block at t = 0 is 1/2 rho Cd A u^2 (rho = 1.225 kg/m^3
// by default, ISO 2533 sea level) = 0.5 * 1.225 * 1.2 * 2 * 10^2 = 147 N.
constexpr const char* kSpec = R"(
swaybound: 1
name: simulate cases
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 4 m, mass: 20 kg}
  - {name: block, length: 1 m, mass: 500 kg}
wind: [{speed: 10 m/s, link: block, drag_area: 2 m^2, drag_coefficient: 1.2}]
base:
  scenarios:
    - {name: still}
    - {name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 1.5 s, x: -0.5 m/s^2}]}
cases:
  duration: 3 s
  initial:
    - single: {theta: [3 deg, 4 deg]}
    - grid: {theta: [[-5 deg, 5 deg, 3], [-2 deg, 2 deg, 2]]}
)";

struct Csv {
  std::vector<std::string> header;
  std::vector<std::vector<double>> rows;
  int column(const std::string& prefix) const {
    for (std::size_t k = 0; k < header.size(); ++k)
      if (header[k].rfind("\"" + prefix, 0) == 0) return static_cast<int>(k);
    FAIL("no column " << prefix);
    return -1;
  }
};

Csv parse(const std::string& text) {
  Csv csv;
  std::istringstream in(text);
  std::string line;
  std::getline(in, line);
  std::string cell;
  for (std::istringstream h(line); std::getline(h, cell, ',');) csv.header.push_back(cell);
  while (std::getline(in, line)) {
    std::vector<double> row;
    for (std::istringstream r(line); std::getline(r, cell, ',');) row.push_back(std::stod(cell));
    csv.rows.push_back(row);
  }
  return csv;
}

struct Run {
  int status;
  std::string out, err;
};

Run simulate(const std::string& args) {
  // Per process: ctest runs the test cases of this file in parallel.
  const fs::path dir = fs::temp_directory_path() / ("swaybound-test-simulate-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  const fs::path spec = dir / "spec.yaml", err = dir / "stderr.txt";
  std::ofstream(spec) << kSpec;
  const CommandResult r =
      run_command(std::string(SWAYBOUND_CLI) + " simulate " + spec.string() + " " + args + " 2>" + err.string());
  std::ifstream e(err);
  std::stringstream s;
  s << e.rdbuf();
  return {r.exited ? r.status : -1, r.out, s.str()};
}
}  // namespace

TEST_CASE("simulate runs the first case of the spec and says so", "[cli][simulate]") {
  const Spec spec = load_spec_text(kSpec, "inline.yaml");
  const CaseDef first = CaseSpace(spec).at(0);
  const Run r = simulate("--output-rate 10");
  REQUIRE(r.status == 0);
  CHECK(r.err.find("start: case " + first.id + " (the first") != std::string::npos);
  CHECK(r.err.find("theta = [3 deg, 4 deg]") != std::string::npos);
  const Csv csv = parse(r.out);
  REQUIRE(csv.rows.size() == 31);
  CHECK(csv.rows[0][static_cast<std::size_t>(csv.column("theta(rope)"))] == Approx(first.initial.theta[0]).epsilon(1e-9));
  CHECK(csv.rows[0][static_cast<std::size_t>(csv.column("theta(block)"))] == Approx(first.initial.theta[1]).epsilon(1e-9));
  CHECK(csv.rows[0][static_cast<std::size_t>(csv.column("wind_force_x(wind[0] on block)"))] == Approx(147.0).epsilon(1e-12));
  CHECK(csv.column("energy (kinetic + potential in the ground frame") > 0);
  CHECK(csv.column("work_in (done on the chain by the moving base and the wind") > 0);
}

TEST_CASE("simulate --case runs that case: its start and its scenario", "[cli][simulate]") {
  const Spec spec = load_spec_text(kSpec, "inline.yaml");
  const CaseSpace space(spec);
  std::vector<long> grid_under_brake;
  for (long k = 0; k < space.size(); ++k)
    if (space.at(k).scenario == 1 && space.at(k).set == 1) grid_under_brake.push_back(k);
  REQUIRE(grid_under_brake.size() == 6);
  const CaseDef def = space.at(grid_under_brake[2]);
  REQUIRE(def.scenario == 1);
  const Run r = simulate("--case " + def.id + " --output-rate 10");
  REQUIRE(r.status == 0);
  CHECK(r.err.find("start: case " + def.id + ", scenario 'brake'") != std::string::npos);
  const Csv csv = parse(r.out);
  const auto at = [&](std::size_t row, const std::string& col) { return csv.rows[row][static_cast<std::size_t>(csv.column(col))]; };
  CHECK(at(0, "theta(rope)") == Approx(def.initial.theta[0]).margin(1e-12));
  CHECK(at(0, "theta(block)") == Approx(def.initial.theta[1]).margin(1e-12));
  CHECK(at(0, "base_vx") == 1.0);
  // The sample at the end of braking (t = 1.5 s) belongs to the new phase: no acceleration.
  CHECK(at(14, "base_ax") == -0.5);
  CHECK(at(15, "t [s]") == Approx(1.5));
  CHECK(at(15, "base_ax") == 0.0);
  CHECK(at(15, "base_vx") == Approx(0.25).epsilon(1e-12));
}

TEST_CASE("simulate refuses an unknown case id and a case mixed with a start of one's own", "[cli][simulate]") {
  const Run unknown = simulate("--case still/nope-001");
  CHECK(unknown.status == 2);
  CHECK(unknown.err.find("no case 'still/nope-001'") != std::string::npos);
  CHECK(unknown.out.empty());
  const Run mixed = simulate("--case still/single-001 --theta \"1 deg\"");
  CHECK(mixed.status == 2);
  CHECK(mixed.err.find("leave out --theta") != std::string::npos);
  const Run own = simulate("--theta \"2 deg, 1 deg\" --scenario brake --output-rate 10");
  REQUIRE(own.status == 0);
  CHECK(own.err.find("start: your start (--theta/--rate), scenario 'brake'") != std::string::npos);
}

TEST_CASE("simulate --phi: a spatial start of one's own, refused on a planar chain", "[cli][simulate][spatial]") {
  const Run planar = simulate("--theta \"2 deg\" --phi \"1 deg\"");
  CHECK(planar.status == 2);
  CHECK(planar.err.find("--phi: a planar chain has no swing out of its plane") != std::string::npos);
  CHECK(planar.out.empty());

  // The same chain, spatial: the first sample is the start, e = (sin t cos p, -cos t cos p, sin p),
  // so its cone angle is acos(cos t cos p) and its projections atan(tan t) and atan(tan p / cos t).
  const fs::path dir = fs::temp_directory_path() / ("swaybound-test-simulate-spatial-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  std::string spatial_spec = kSpec;
  spatial_spec.replace(spatial_spec.find("gravity:"), 0, "motion: spatial\n");
  const fs::path spec = dir / "spec.yaml";
  std::ofstream(spec) << spatial_spec;
  const CommandResult r = run_command(std::string(SWAYBOUND_CLI) + " simulate " + spec.string() +
                                      " --theta \"3 deg, 0\" --phi \"2 deg, 4 deg\" --output-rate 10 2>/dev/null");
  fs::remove_all(dir);
  REQUIRE((r.exited && r.status == 0));
  const Csv csv = parse(r.out);
  const auto at0 = [&](const std::string& col) { return csv.rows[0][static_cast<std::size_t>(csv.column(col))]; };
  const double t = 3 * M_PI / 180, p = 2 * M_PI / 180;
  CHECK(at0("swing_angle(rope)") == Approx(std::acos(std::cos(t) * std::cos(p))).epsilon(1e-9));
  CHECK(at0("travel_plane_angle(rope)") == Approx(t).epsilon(1e-9));
  CHECK(at0("cross_plane_angle(rope)") == Approx(std::atan(std::tan(p) / std::cos(t))).epsilon(1e-9));
  CHECK(at0("swing_angle(block)") == Approx(4 * M_PI / 180).epsilon(1e-9));
  CHECK(csv.column("pivot_z(rope)") > 0);
}
