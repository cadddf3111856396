// `swaybound simulate` on a slewing scenario: the sway in and across the boom's vertical plane per
// link and the force on the boom tip by component in the boom frame, as CSV columns beside the
// ground-frame ones; checked against the steady slewing angle, a rotation of the ground-frame
// columns, and a planar header that must not change.
#include <catch2/catch.hpp>
#include <unistd.h>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "../support/process.hpp"

using namespace swaybound::testing;
namespace fs = std::filesystem;

namespace {

struct Csv {
  std::vector<std::string> header;  ///< as written, quotes included
  std::vector<std::vector<double>> rows;
  /// The column whose name starts with `prefix` (without the quote), -1 when none does.
  int find(const std::string& prefix) const {
    for (std::size_t k = 0; k < header.size(); ++k)
      if (header[k].rfind("\"" + prefix, 0) == 0) return static_cast<int>(k);
    return -1;
  }
  double at(std::size_t row, const std::string& prefix) const {
    const int k = find(prefix);
    if (k < 0) FAIL("no column " << prefix);
    return rows.at(row).at(static_cast<std::size_t>(k));
  }
};

Csv parse(const std::string& text) {
  Csv csv;
  std::istringstream in(text);
  std::string line, cell;
  std::getline(in, line);
  // Header names are quoted and may hold commas.
  bool quoted = false;
  for (char ch : line) {
    if (ch == '"') quoted = !quoted;
    if (ch == ',' && !quoted) {
      csv.header.push_back(cell);
      cell.clear();
    } else {
      cell += ch;
    }
  }
  csv.header.push_back(cell);
  while (std::getline(in, line)) {
    std::vector<double> row;
    for (std::istringstream r(line); std::getline(r, cell, ',');) row.push_back(std::stod(cell));
    csv.rows.push_back(row);
  }
  return csv;
}

/// Runs `swaybound simulate` on `spec_text` with `args`; returns its standard output (the CSV).
std::string simulate(const std::string& spec_text, const std::string& args) {
  const fs::path dir = fs::temp_directory_path() / ("swaybound-test-boom-frame-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  const fs::path spec = dir / "spec.yaml";
  std::ofstream(spec) << spec_text;
  const CommandResult r =
      run_command(std::string(SWAYBOUND_CLI) + " simulate " + spec.string() + " " + args + " 2>/dev/null");
  fs::remove_all(dir);
  REQUIRE((r.exited && r.status == 0));
  return r.out;
}

// A point load on a massless-ish link (com at the end, no inertia of its own) under a boom slewing
// at a constant rate, with a pivot damper relative to the boom that settles the swing.
constexpr const char* kSteady = R"(
swaybound: 1
name: steady slewing
motion: spatial
gravity: 9.81
links:
  - {name: rope, length: 5 m, mass: 1000 kg, com: 5 m, inertia: 0, pivot: {damper: {coefficient: 30 kN m s/rad}}}
base:
  scenarios:
    - {name: steady, slew: {radius: 10 m, speed: 0.5 rad/s}}
cases:
  duration: 60 s
  initial:
    - single: {}
)";

}  // namespace

TEST_CASE("simulate on a slewing boom: the load settles at the steady slewing angle, read in the boom frame",
          "[cli][simulate][spatial][slew]") {
  // Steady rotation at rate W of a point pendulum of length L whose pivot is at radius R from the
  // axis: the load hangs outwards at a with tan a = W^2 (R + L sin a) / g, and the pivot carries the
  // weight m g and the centripetal force m W^2 (R + L sin a) (any dynamics text, e.g. Meriam &
  // Kraige, Dynamics, the conical pendulum with an offset pivot; from memory). Solved here by
  // fixed-point iteration, independently of the tool.
  const double g = 9.81, m = 1000, L = 5, R = 10, W = 0.5;
  double a = 0;
  for (int k = 0; k < 200; ++k) a = std::atan(W * W * (R + L * std::sin(a)) / g);
  const Csv csv = parse(simulate(kSteady, "--output-rate 1"));
  const std::size_t last = csv.rows.size() - 1;
  REQUIRE(csv.at(last, "t [s]") == Approx(60));
  CHECK(csv.at(last, "in_plane_sway(rope)") == Approx(a).epsilon(1e-6));
  CHECK(std::fabs(csv.at(last, "out_of_plane_sway(rope)")) < 1e-6);
  const double radius = R + L * std::sin(a);
  CHECK(csv.at(last, "support_force_radial") == Approx(m * W * W * radius).epsilon(1e-6));  // pulls the tip out
  CHECK(std::fabs(csv.at(last, "support_force_tangential")) < 1e-3);
  CHECK(csv.at(last, "support_force_vertical") == Approx(-m * g).epsilon(1e-6));  // pulls it down
  // Over the ground the load has gone round: the ground-frame angles are no longer the boom's.
  CHECK(std::fabs(csv.at(last, "travel_plane_angle(rope)") - a) > 0.01);
}

TEST_CASE("simulate on a slewing boom: the boom-frame columns are the ground-frame ones turned by the slewing "
          "angle, on every row and link",
          "[cli][simulate][spatial][slew]") {
  // Two links, swinging in and across the boom while the boom slews, stops and the trolley runs out
  // (radial luffing), with a wind from a direction; the boom angle psi is read from the base's
  // columns: the tip at (R0 + s)(cos psi, sin psi) - (R0, 0) in (x, z), R0 the radius at t = 0.
  const std::string spec = R"(
swaybound: 1
name: slewing and luffing
motion: spatial
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 12 m, mass: 30 kg}
  - {name: block, length: 2 m, mass: 2 t, com: 1.5 m, inertia: 300 kg m^2}
wind: {speed: 8 m/s, direction: 40 deg, link: block, drag_area: 3 m^2, drag_coefficient: 1.2}
base:
  scenarios:
    - name: slew and luff
      slew:
        radius: 20 m
        moves: [{at: 0 s, to: 0.08 rad/s, accel: 0.03 rad/s^2}, {at: 8 s, to: 0 rad/s, accel: 0.04 rad/s^2}]
        luff: {moves: [{at: 1 s, to: 0.5 m/s, accel: 0.25 m/s^2}, {at: 6 s, to: 0 m/s, accel: 0.25 m/s^2}]}
cases:
  duration: 15 s
  initial:
    - single: {theta: [3 deg, -2 deg], phi: [-4 deg, 2 deg]}
)";
  const Csv csv = parse(simulate(spec, "--output-rate 4"));
  REQUIRE(csv.rows.size() == 61);
  const double R0 = 20;
  double largest_turn = 0;
  for (std::size_t k = 0; k < csv.rows.size(); ++k) {
    const double rx = R0 + csv.at(k, "base_x"), rz = csv.at(k, "base_z");
    const double radius = std::hypot(rx, rz), c = rx / radius, s = rz / radius;
    largest_turn = std::max(largest_turn, std::atan2(s, c));
    for (const std::string link : {"rope", "block"}) {
      // tan of the shadow angles: e_x / -e_y and e_z / -e_y; turned into the boom frame.
      const double tx = std::tan(csv.at(k, "travel_plane_angle(" + link + ")"));
      const double tz = std::tan(csv.at(k, "cross_plane_angle(" + link + ")"));
      CHECK(csv.at(k, "in_plane_sway(" + link + ")") == Approx(std::atan(tx * c + tz * s)).margin(1e-9));
      CHECK(csv.at(k, "out_of_plane_sway(" + link + ")") == Approx(std::atan(-tx * s + tz * c)).margin(1e-9));
    }
    // The force on the tip is minus the reaction on the top link.
    const double fx = -csv.at(k, "pivot_x(rope)"), fz = -csv.at(k, "pivot_z(rope)");
    CHECK(csv.at(k, "support_force_radial") == Approx(fx * c + fz * s).margin(1e-6));
    CHECK(csv.at(k, "support_force_tangential") == Approx(-fx * s + fz * c).margin(1e-6));
    CHECK(csv.at(k, "support_force_vertical") == Approx(-csv.at(k, "pivot_y(rope)")).margin(1e-6));
  }
  CHECK(largest_turn > 0.3);  // the boom turned far enough for the frames to differ
  // The wind's drag has all three components, the one across the travel included.
  const double wz = csv.at(0, "wind_force_z(wind[0] on block)"), wx = csv.at(0, "wind_force_x(wind[0] on block)");
  CHECK(wz / wx == Approx(std::tan(40 * M_PI / 180)).epsilon(1e-9));  // at rest at t = 0: along the wind
}

TEST_CASE("simulate without slewing writes no boom-frame columns, and a planar chain's header is unchanged",
          "[cli][simulate][spatial][slew]") {
  const std::string planar = R"(
swaybound: 1
name: planar
links:
  - {name: rope, kind: rope, length: 4 m, mass: 20 kg}
  - {name: block, length: 1 m, mass: 500 kg}
base:
  scenarios:
    - {name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 1.5 s, x: -0.5 m/s^2}]}
cases:
  duration: 2 s
  initial:
    - single: {theta: [3 deg, 4 deg]}
)";
  // The planar header as it was before the boom-frame columns came (the CSV format is a contract).
  const std::vector<std::string> expected = {
      "\"t [s]\"", "\"base_x [m]\"", "\"base_y [m]\"", "\"base_vx [m/s]\"", "\"base_vy [m/s]\"",
      "\"base_ax [m/s^2]\"", "\"base_ay [m/s^2]\"", "\"theta(rope) [rad]\"", "\"omega(rope) [rad/s]\"",
      "\"relative_angle(rope) [rad]\"", "\"theta(block) [rad]\"", "\"omega(block) [rad/s]\"",
      "\"relative_angle(block) [rad]\"", "\"pivot_x(rope) [N]\"", "\"pivot_y(rope) [N]\"", "\"pivot_load(rope) [N]\"",
      "\"tension_top(rope) [N]\"", "\"tension_bottom(rope) [N]\"", "\"pivot_x(block) [N]\"", "\"pivot_y(block) [N]\"",
      "\"pivot_load(block) [N]\"", "\"tension_top(block) [N]\"", "\"tension_bottom(block) [N]\""};
  const Csv flat = parse(simulate(planar, "--output-rate 10"));
  REQUIRE(flat.header.size() == expected.size() + 4);  // + energy, dissipated, work_in, audit_residual
  CHECK(std::vector<std::string>(flat.header.begin(), flat.header.begin() + static_cast<long>(expected.size())) ==
        expected);
  CHECK(flat.rows.at(0).size() == flat.header.size());

  // A spatial chain that travels: ground-frame columns only.
  std::string travelling = planar;
  travelling.replace(travelling.find("links:"), 0, "motion: spatial\n");
  const Csv spatial = parse(simulate(travelling, "--output-rate 10"));
  CHECK(spatial.find("in_plane_sway") < 0);
  CHECK(spatial.find("out_of_plane_sway") < 0);
  CHECK(spatial.find("support_force") < 0);
  CHECK(spatial.find("cross_plane_angle(block)") > 0);
  CHECK(spatial.rows.at(0).size() == spatial.header.size());
}
