// The packet folder: MANIFEST hashes, the overwrite rule, interrupted runs, diff of two revisions.
#include <catch2/catch.hpp>
#include <chrono>
#include <csignal>
#include <filesystem>
#include <fstream>
#include <sys/wait.h>
#include <thread>
#include <unistd.h>

#include <fmt/format.h>

#include "swaybound/core/error.hpp"
#include "swaybound/report/diff.hpp"
#include "swaybound/report/packet.hpp"
#include "../support/packet_files.hpp"
#include "../support/sizing_specs.hpp"

using namespace swaybound;
namespace fs = std::filesystem;
using swaybound::testing::leftovers;

namespace {

fs::path temp(const std::string& name) { return fs::temp_directory_path() / ("swaybound-packet-" + name); }

std::string spec_text(double damper, double duration = 8, int count = 6,
                      const std::string& name = "packet test") {
  return fmt::format(R"(
swaybound: 1
name: {}
links:
  - {{name: rope, kind: rope, length: 3, mass: 10, pivot: {{damper: {{coefficient: {} N m s/rad}}}}}}
  - {{name: load, length: 1, mass: 400, com: 0.7, inertia: 20}}
base: {{scenarios: [{{name: brake, initial_velocity: {{x: 1}}, accel: [{{for: 1.2 s, x: -0.8}}]}}]}}
cases: {{duration: {} s, initial: [{{random: {{count: {}, seed: 5, theta: [[-5 deg, 5 deg], [-5 deg, 5 deg]]}}}}]}}
limits:
  - {{peak_angle: 20 deg}}
  - {{residual_sway: 4 deg, after: 6 s}}
)",
                     name, damper, duration, count);
}


fs::path write_spec(const std::string& name, const std::string& text) {
  const fs::path p = temp(name + ".yaml");
  std::ofstream(p) << text;
  return p;
}

int run_cli(const std::string& args) {
  const int status = std::system((std::string(SWAYBOUND_CLI) + " " + args + " >/dev/null 2>&1").c_str());
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

}  // namespace

TEST_CASE("the MANIFEST lists every file with a SHA-256 that verifies", "[packet]") {
  const fs::path out = temp("manifest");
  fs::remove_all(out);
  REQUIRE(run_cli(fmt::format("check {} --out {}", write_spec("m", spec_text(2000)).string(), out.string())) == 0);
  CHECK(verify_manifest(out.string()).empty());
  std::ifstream manifest(out / "MANIFEST");
  std::string text((std::istreambuf_iterator<char>(manifest)), {});
  for (const char* name : {"results.json", "cases.csv", "spec.yaml"}) CHECK(text.find(std::string("  ") + name) != std::string::npos);
  CHECK(text.find("tool: swaybound") != std::string::npos);
  CHECK(text.find("seeds: random=5") != std::string::npos);
  std::ofstream(out / "cases.csv", std::ios::app) << "tampered\n";
  CHECK(verify_manifest(out.string()) == std::vector<std::string>{"cases.csv"});
}

TEST_CASE("a packet of another design is replaced only with --force", "[packet]") {
  const fs::path out = temp("force");
  fs::remove_all(out);
  REQUIRE(run_cli(fmt::format("check {} --out {}", write_spec("f1", spec_text(2000)).string(), out.string())) == 0);
  const std::string first = packet_spec_sha256(out.string());
  const fs::path other = write_spec("f2", spec_text(1500, 8, 6, "another design"));
  CHECK(run_cli(fmt::format("check {} --out {}", other.string(), out.string())) == 2);
  CHECK(packet_spec_sha256(out.string()) == first);
  CHECK(verify_manifest(out.string()).empty());
  // --no-search: the search finds a start of this lighter damper past the residual-sway limit
  // (corner -5 deg, -5 deg, between its 6 random samples); what is tested here is the replacement.
  CHECK(run_cli(fmt::format("check {} --out {} --force --no-search", other.string(), out.string())) == 0);
  CHECK(packet_spec_sha256(out.string()) != first);
  // A folder that is not a packet is not replaced, with or without --force.
  const fs::path plain = temp("plain-folder");
  fs::remove_all(plain);
  fs::create_directories(plain);
  std::ofstream(plain / "notes.txt") << "keep me";
  CHECK(run_cli(fmt::format("check {} --out {}", other.string(), plain.string())) == 2);
  CHECK(run_cli(fmt::format("check {} --out {} --force", other.string(), plain.string())) == 2);
  CHECK(fs::exists(plain / "notes.txt"));
  CHECK(leftovers(plain).empty());
}

TEST_CASE("an output folder that cannot be created is reported before any work", "[packet]") {
  const fs::path file = temp("a-file");
  std::ofstream(file) << "x";
  CHECK(run_cli(fmt::format("check {} --out {}/sub", write_spec("w", spec_text(2000)).string(), file.string())) == 2);
}

namespace {

/// `text` with a sizing section over the rope's damper (for `swaybound size`); screening searches
/// for the worst case between the samples too, so the sized design holds in the final check, which
/// searches.
std::string with_sizing(const std::string& text) {
  return text + R"(sizing:
  variables:
    - {path: "links[rope].pivot.damper.coefficient", range: [500 N m s/rad, 4000 N m s/rad], cost: 1}
  budget: {evaluations: 40}
  search_in_screening: true
)";
}

/// Runs `command` (check or size) to completion on a short spec, then again with --force on a long
/// one and sends it `signal` once its own half-written folder exists. The interrupted run must exit
/// 128 + signal, leave the first packet as it was (same spec hash, every MANIFEST hash verifies)
/// and remove its half-written folder.
void interrupt_and_compare(const std::string& command, int signal, bool sizing) {
  const std::string tag = fmt::format("interrupt-{}-{}", command, signal);
  const fs::path out = temp(tag);
  fs::remove_all(out);
  const auto text = [sizing](double duration, int count) {
    const std::string t = spec_text(2000, duration, count);
    return sizing ? with_sizing(t) : t;
  };
  const fs::path spec = write_spec(tag, text(8, 4));
  REQUIRE(run_cli(fmt::format("{} {} --out {} --quiet", command, spec.string(), out.string())) == 0);
  const std::string before = packet_spec_sha256(out.string());
  REQUIRE_FALSE(before.empty());
  // The same spec with many long cases, so the run is still going when the signal arrives.
  std::ofstream(spec) << text(600, 400);
  const pid_t pid = fork();
  if (pid == 0) {
    const std::string o = out.string(), s = spec.string();
    std::freopen("/dev/null", "w", stdout);
    std::freopen("/dev/null", "w", stderr);
    execl(SWAYBOUND_CLI, SWAYBOUND_CLI, command.c_str(), s.c_str(), "--out", o.c_str(), "--force", "--jobs", "2",
          static_cast<char*>(nullptr));
    _exit(127);
  }
  // Wait until the run is under way (its half-written folder exists), then interrupt it.
  const std::string own_prefix = fmt::format(".{}.swaybound-partial-{}-", out.filename().string(), pid);
  const auto own_folder = [&]() {
    for (const auto& name : leftovers(out))
      if (name.rfind(own_prefix, 0) == 0) return out.parent_path() / name;
    return fs::path();
  };
  for (int k = 0; k < 400 && own_folder().empty(); ++k)
    std::this_thread::sleep_for(std::chrono::milliseconds(25));
  const fs::path own = own_folder();
  REQUIRE_FALSE(own.empty());
  std::this_thread::sleep_for(std::chrono::milliseconds(200));
  kill(pid, signal);
  int status = 0;
  waitpid(pid, &status, 0);
  REQUIRE(WIFEXITED(status));
  CHECK(WEXITSTATUS(status) == 128 + signal);
  CHECK(packet_spec_sha256(out.string()) == before);
  CHECK(verify_manifest(out.string()).empty());
  // The interrupted process's own half packet is gone, and its lock file with it.
  CHECK_FALSE(fs::exists(own));
  CHECK(leftovers(out).empty());
  fs::remove_all(out);
}

}  // namespace

TEST_CASE("SIGINT during a check leaves the previous packet intact and no half packet", "[packet][interrupt]") {
  interrupt_and_compare("check", SIGINT, false);
}

TEST_CASE("SIGTERM during a check leaves the previous packet intact and no half packet", "[packet][interrupt]") {
  interrupt_and_compare("check", SIGTERM, false);
}

TEST_CASE("SIGINT and SIGTERM during size leave the previous output intact and no half folder",
          "[packet][interrupt][sizing]") {
  SECTION("SIGINT") { interrupt_and_compare("size", SIGINT, true); }
  SECTION("SIGTERM") { interrupt_and_compare("size", SIGTERM, true); }
}

TEST_CASE("diff flags a worsened margin after a spec edit and exits 1", "[packet][diff]") {
  const fs::path a = temp("rev-a"), b = temp("rev-b");
  fs::remove_all(a);
  fs::remove_all(b);
  REQUIRE(run_cli(fmt::format("check {} --out {}", write_spec("ra", spec_text(2000)).string(), a.string())) == 0);
  // Less damping: the residual sway grows and its margin shrinks.
  REQUIRE(run_cli(fmt::format("check {} --out {}", write_spec("rb", spec_text(400)).string(), b.string())) <= 1);
  const DiffResult d = diff_results(a.string(), b.string(), 0.01);
  REQUIRE(d.specs_compared);
  REQUIRE(d.spec_changes.size() == 1);
  CHECK(d.spec_changes[0].key == "links[rope].pivot.damper.coefficient");
  CHECK(d.regression());
  bool residual_shrunk = false;
  for (const auto& r : d.rows) residual_shrunk |= r.check.rfind("residual_sway", 0) == 0 && (r.shrunk || r.newly_failing);
  CHECK(residual_shrunk);
  CHECK(run_cli(fmt::format("diff {} {}", a.string(), b.string())) == 1);
  CHECK(run_cli(fmt::format("diff {} {} --markdown", a.string(), a.string())) == 0);
  CHECK(run_cli(fmt::format("diff {} {}", a.string(), temp("missing").string())) == 2);
}

TEST_CASE("a full disk is reported as a write error and leaves no packet", "[packet][faults]") {
  // /dev/full fails every write with ENOSPC, as a full disk does; a file of the packet that points
  // there makes the write fail the way a full tmpfs would.
  if (!fs::exists("/dev/full")) {
    WARN("no /dev/full on this machine; the full-disk check is skipped");
    return;
  }
  const fs::path out = temp("full-disk");
  fs::remove_all(out);
  {
    PacketWriter packet(out.string(), "full disk", "0", false);
    fs::create_symlink("/dev/full", packet.path("results.json"));
    CHECK_THROWS_AS(packet.write("results.json", std::string(1 << 16, 'x')), RunError);
  }
  CHECK_FALSE(fs::exists(out));
  CHECK(leftovers(out).empty());
}

TEST_CASE("swaybound size writes its convergence plots into its output folder", "[packet][sizing]") {
  const fs::path out = temp("sizing-out");
  fs::remove_all(out);
  const fs::path spec =
      write_spec("sizing", swaybound::testing::arm_damper_sizing_yaml("sizing convergence plot", 60, "gravity: 9.81"));
  REQUIRE(run_cli(fmt::format("size {} --out {} --quiet", spec.string(), out.string())) == 0);
  for (const char* name : {"convergence_objective.svg", "convergence_margin.svg"}) {
    std::ifstream in(out / name);
    std::string text((std::istreambuf_iterator<char>(in)), {});
    CHECK(text.find("<svg") != std::string::npos);
  }
  CHECK(fs::file_size(out / "convergence_margin.png") > 1000);
  CHECK(verify_manifest(out.string()).empty());
}
