// Determinism: results.json is byte-identical for 1, 2 and 4 threads and across repeated runs, in
// one process (run_check + results_json) and across processes (the CLI). The spec is chosen to
// magnify any difference: large-amplitude double-pendulum starts (chaotic, so a last-bit change
// grows by e^(lambda t)), two random sets (uniform and Latin hypercube), a perturbation ladder,
// an FTLE limit, pin friction (an iteration inside every evaluation), a wind gust and two base
// scenarios (phases restarted), and the onset search.
#include <catch2/catch.hpp>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <sys/wait.h>
#include <unistd.h>

#include <fmt/format.h>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

constexpr const char* kSpec = R"(swaybound: 1
name: determinism under chaos
links:
  - {name: upper, length: 1 m, mass: 2 kg, pivot: {friction: {pin_radius: 10 mm, mu: 0.1}}}
  - {name: lower, length: 1 m, mass: 1 kg, pivot: {damper: {coefficient: 0.05 N m s/rad, exponent: 0.7}}}
wind: {speed: 3 m/s, link: lower, drag_area: 0.1 m^2, drag_coefficient: 1.2, gust: {start: 1 s, for: 1 s, speed: 5 m/s}}
base:
  scenarios:
    - {name: still}
    - {name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 0.5 s, x: -2 m/s^2}]}
cases:
  duration: 4 s
  initial:
    - random: {count: 6, seed: 11, theta: [[60 deg, 150 deg], [-150 deg, 150 deg]]}
    - random: {count: 6, seed: 12, method: latin_hypercube, theta: [[-120 deg, 120 deg], [-120 deg, 120 deg]],
               rate: [[-1 rad/s, 1 rad/s], [-2 rad/s, 2 rad/s]]}
    - ladder: {from: {theta: [120 deg, 100 deg]}, relative: [1e-3, 1e-6, 1e-9]}
limits:
  - {peak_angle: 150 deg}
  - {pivot_load: 200 N}
  - {ftle_max: 0.5 /s, horizon: 4 s}
chaos: {onset: {max: 120 deg, resolution: 15 deg}}
)";

fs::path write_spec() {
  const fs::path path = fs::temp_directory_path() / fmt::format("swaybound-determinism-{}.yaml", ::getpid());
  std::ofstream(path) << kSpec;
  return path;
}

std::string results_for(const Spec& spec, int jobs) {
  CheckOptions options;
  options.jobs = jobs;
  return results_json(spec, run_check(spec, options));
}

std::string slurp(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream out;
  out << in.rdbuf();
  return out.str();
}

}  // namespace

TEST_CASE("results.json is byte-identical for 1, 2 and 4 threads and across repeated runs", "[determinism][reliability]") {
  const fs::path path = write_spec();
  const Spec spec = load_spec(path.string());
  const std::string one = results_for(spec, 1);
  CHECK(one.find("\"ftle_per_s\"") != std::string::npos);  // the ladder and onset results are in it
  CHECK(results_for(spec, 2) == one);
  CHECK(results_for(spec, 4) == one);
  CHECK(results_for(spec, 4) == one);  // repeated
  fs::remove(path);
}

TEST_CASE("the CLI writes the same results.json for --jobs 1 and --jobs 4", "[determinism][reliability][cli]") {
  const fs::path path = write_spec();
  const fs::path base = fs::temp_directory_path() / fmt::format("swaybound-determinism-out-{}", ::getpid());
  fs::remove_all(base);
  std::string first;
  int run = 0;
  for (int jobs : {1, 4}) {
    const fs::path out = base / std::to_string(run++);
    const std::string cmd = fmt::format("{} check '{}' --out '{}' --jobs {} >/dev/null 2>&1", SWAYBOUND_CLI,
                                        path.string(), out.string(), jobs);
    const int status = std::system(cmd.c_str());
    REQUIRE(WIFEXITED(status));
    CHECK(WEXITSTATUS(status) <= 1);  // 0 pass, 1 a check fails: both write the packet
    const std::string json = slurp(out / "results.json");
    REQUIRE_FALSE(json.empty());
    if (first.empty()) first = json;
    CHECK(json == first);
  }
  fs::remove_all(base);
  fs::remove(path);
}
