// Verifying a packet (swaybound verify, report/verify.hpp): an untouched packet verifies; each kind
// of edit made after the packet was written is caught with a finding that names the file and what
// is wrong; diff refuses a side that fails verification, compares sizing folders' sized specs, names
// an unknown schema version and, with --require-pass, fails a new design that fails a check.
#include <catch2/catch.hpp>
#include <unistd.h>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "../support/process.hpp"
#include "../support/sizing_specs.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/report/diff.hpp"
#include "swaybound/report/verify.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

/// A path of this test process's own (ctest runs test cases in parallel processes, and two runs
/// writing one packet at once are refused by design).
fs::path temp(const std::string& name) {
  return fs::temp_directory_path() / ("swaybound-verify-" + std::to_string(::getpid()) + "-" + name);
}

const double kDegree = M_PI / 180;

/// A small two-link spec, checked in well under a second, with a limit of each per-case kind that
/// `check` computes cheaply (upper bounds, and the lower-bound rope_tension_min).
std::string spec_text(const std::string& peak_angle = "12 deg", const std::string& solver = "") {
  return fmt::format(R"(
swaybound: 1
name: verify test
links:
  - {{name: rope, kind: rope, length: 3, mass: 10, pivot: {{damper: {{coefficient: 2000 N m s/rad}}}}}}
  - {{name: load, length: 1, mass: 400, com: 0.7, inertia: 20}}
base: {{scenarios: [{{name: brake, initial_velocity: {{x: 1}}, accel: [{{for: 1.2 s, x: -0.8}}]}}]}}
cases: {{duration: 8 s, initial: [{{random: {{count: 6, seed: 5, theta: [[-5 deg, 5 deg], [-5 deg, 5 deg]]}}}}]}}
limits:
  - {{peak_angle: {}}}
  - {{residual_sway: 4 deg, after: 6 s}}
  - {{peak_rate: 90 deg/s}}
  - {{pivot_load: 20 kN}}
  - {{dynamic_factor: 1.5}}
  - {{rope_tension_min: 0 N, link: rope}}
{}
)",
                     peak_angle, solver);
}

std::string cli() {
  return std::string(SWAYBOUND_CLI);
}

/// Runs the CLI with `args`; its exit status and everything it printed (stdout and stderr).
testing::CommandResult run_cli(const std::string& args) {
  return testing::run_command(cli() + " " + args + " 2>&1");
}

/// A fresh packet of `text` in `name` (check exit status `expected`).
fs::path make_packet(const std::string& name, const std::string& text, int expected = 0) {
  const fs::path spec = temp(name + ".yaml"), out = temp(name);
  std::ofstream(spec) << text;
  fs::remove_all(out);
  const auto r = run_cli(fmt::format("check {} --out {} --quiet", spec.string(), out.string()));
  REQUIRE(r.status == expected);
  return out;
}

/// A copy of the packet `source` in `name`, to tamper with.
fs::path copy_packet(const fs::path& source, const std::string& name) {
  const fs::path out = temp(name);
  fs::remove_all(out);
  fs::copy(source, out, fs::copy_options::recursive);
  return out;
}

std::string read_text(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

void write_text(const fs::path& p, const std::string& text) {
  std::ofstream(p, std::ios::binary) << text;
}

nlohmann::ordered_json read_json(const fs::path& p) {
  return nlohmann::ordered_json::parse(read_text(p));
}

void write_json(const fs::path& p, const nlohmann::ordered_json& j) {
  write_text(p, j.dump(2) + "\n");
}

/// Rewrites the MANIFEST line of `name` with the file's present SHA-256, as someone covering an
/// edit would: what is left to catch the edit is results.json's own consistency.
void rehash(const fs::path& dir, const std::string& name) {
  std::string manifest = read_text(dir / "MANIFEST");
  const auto at = manifest.find("  " + name + "\n");
  REQUIRE(at != std::string::npos);
  REQUIRE(at >= 64);
  manifest.replace(at - 64, 64, sha256_file((dir / name).string()));
  write_text(dir / "MANIFEST", manifest);
}

/// The findings about `file` whose problem contains `text`.
std::size_t count_findings(const VerifyResult& r, const std::string& file, const std::string& text) {
  std::size_t n = 0;
  for (const auto& f : r.findings) n += f.file == file && f.problem.find(text) != std::string::npos;
  return n;
}

/// The index in results.json "checks" of the check of limit `key`.
std::size_t check_index(const nlohmann::ordered_json& j, const std::string& key) {
  for (std::size_t i = 0; i < j["checks"].size(); ++i)
    if (j["checks"][i]["limit"] == key) return i;
  FAIL("no check " << key);
  return 0;
}

const fs::path& passing_packet() {
  static const fs::path p = make_packet("pass", spec_text());
  return p;
}

}  // namespace

TEST_CASE("an untouched packet verifies: check packet, sizing folder, the committed example",
          "[verify][packet]") {
  const fs::path packet = passing_packet();
  const VerifyResult r = verify_packet(packet.string());
  INFO(verify_report(r));
  CHECK(r.intact());
  CHECK(r.kind == "check packet");
  long files = 0;
  for (const auto& entry : fs::directory_iterator(packet)) files += entry.path().filename() != "MANIFEST";
  CHECK(r.files_hashed == files);
  CHECK(r.checks_verified == 6);
  CHECK(r.cases_csv_counted);
  CHECK(fs::path(r.spec_copy).filename() == "spec.yaml");
  const auto cmd = run_cli("verify " + packet.string());
  CHECK(cmd.status == 0);
  CHECK(cmd.out.find("intact") != std::string::npos);

  // The example packet holds the three lower-bound kinds (rope_tension_min, modal_damping_min,
  // onset_margin) and ftle_max, as the tool wrote them.
  const VerifyResult example =
      verify_packet((fs::path(SWAYBOUND_SOURCE_DIR) / "reports/gantry_hook_block").string());
  INFO(verify_report(example));
  CHECK(example.intact());
  CHECK(example.checks_verified == 8);

  const fs::path sizing_spec = temp("sizing.yaml"), sizing = temp("sizing");
  std::ofstream(sizing_spec) << swaybound::testing::arm_damper_sizing_yaml("sizing verify", 40);
  fs::remove_all(sizing);
  REQUIRE(run_cli(fmt::format("size {} --out {} --quiet", sizing_spec.string(), sizing.string())).status ==
          0);
  const VerifyResult s = verify_packet(sizing.string());
  INFO(verify_report(s));
  CHECK(s.intact());
  CHECK(s.kind == "sizing folder");
  CHECK(fs::path(s.spec_copy).filename() == "sized_spec.yaml");
  // The sized spec is what results.json was computed from: editing it is caught.
  std::ofstream(sizing / "sized_spec.yaml", std::ios::app) << "# edited\n";
  const VerifyResult edited = verify_packet(sizing.string());
  CHECK(count_findings(edited, "sized_spec.yaml", "results.json records spec.sha256") == 1);
  CHECK(count_findings(edited, "sized_spec.yaml", "MANIFEST 'sized spec' records") == 1);
}

TEST_CASE("verify catches a MANIFEST hash that does not match its file", "[verify][packet]") {
  const fs::path dir = copy_packet(passing_packet(), "manifest-hash");
  std::string manifest = read_text(dir / "MANIFEST");
  const auto at = manifest.find("  cases.csv\n");
  REQUIRE(at != std::string::npos);
  manifest[at - 1] = manifest[at - 1] == '0' ? '1' : '0';  // the last hex digit of cases.csv's hash
  write_text(dir / "MANIFEST", manifest);
  const VerifyResult r = verify_packet(dir.string());
  INFO(verify_report(r));
  REQUIRE(r.findings.size() == 1);
  CHECK(r.findings[0].file == "cases.csv");
  CHECK(r.findings[0].problem.find("MANIFEST records") != std::string::npos);
  CHECK(r.findings[0].method == "SHA-256 of the file recomputed");
  CHECK(run_cli("verify " + dir.string()).status == 1);
}

TEST_CASE("verify catches a worst value edited past its limit with the verdict left pass",
          "[verify][packet]") {
  const fs::path dir = copy_packet(passing_packet(), "worst-edited");
  auto j = read_json(dir / "results.json");
  const std::size_t i = check_index(j, "peak_angle");
  REQUIRE(j["checks"][i]["verdict"] == "pass");
  REQUIRE(j["verdict"] == "pass");
  j["checks"][i]["worst"] =
      17.2 * kDegree;  // against a 12 deg limit; margin, verdict and overall verdict untouched
  write_json(dir / "results.json", j);

  SECTION("the hash in MANIFEST left as it was") {
    const VerifyResult r = verify_packet(dir.string());
    INFO(verify_report(r));
    CHECK(count_findings(r, "results.json", "MANIFEST records") == 1);
    CHECK(count_findings(r, "results.json",
                         "verdict 'pass', but worst 17.200 deg against limit 12.000 deg") == 1);
  }
  SECTION("the hash in MANIFEST rewritten to match") {
    rehash(dir, "results.json");
    const VerifyResult r = verify_packet(dir.string());
    INFO(verify_report(r));
    CHECK(count_findings(r, "results.json", "MANIFEST records") == 0);
    CHECK(count_findings(r, "results.json", "(peak_angle, every link): margin 4.") == 1);
    CHECK(count_findings(r, "results.json", "(peak_angle, every link): verdict 'pass'") == 1);
    CHECK(count_findings(r, "results.json", "overall verdict is 'pass', but check 1 (peak_angle) fails") ==
          1);
    // Only the edited check is flagged.
    for (const char* other :
         {"residual_sway", "peak_rate", "pivot_load", "dynamic_factor", "rope_tension_min"})
      CHECK(count_findings(r, "results.json", std::string("(") + other) == 0);
    CHECK(run_cli("verify " + dir.string()).status == 1);
  }
}

TEST_CASE("verify catches a flipped overall verdict", "[verify][packet]") {
  const fs::path dir = copy_packet(passing_packet(), "verdict-flipped");
  auto j = read_json(dir / "results.json");
  REQUIRE(j["verdict"] == "pass");
  j["verdict"] = "fail";
  write_json(dir / "results.json", j);
  rehash(dir, "results.json");
  const VerifyResult r = verify_packet(dir.string());
  INFO(verify_report(r));
  REQUIRE(r.findings.size() == 1);
  CHECK(r.findings[0].file == "results.json");
  CHECK(r.findings[0].problem ==
        "overall verdict is 'fail', but every check passes and no case failed to run");
}

TEST_CASE("verify catches an edited spec copy", "[verify][packet]") {
  const fs::path dir = copy_packet(passing_packet(), "spec-edited");
  std::string spec = read_text(dir / "spec.yaml");
  const auto at = spec.find("peak_angle: 12 deg");
  REQUIRE(at != std::string::npos);
  spec.replace(at, 18, "peak_angle: 18 deg");
  write_text(dir / "spec.yaml", spec);

  SECTION("MANIFEST untouched") {
    const VerifyResult r = verify_packet(dir.string());
    INFO(verify_report(r));
    CHECK(count_findings(r, "spec.yaml", "MANIFEST records") == 1);
    CHECK(count_findings(r, "spec.yaml", "MANIFEST spec_sha256 records") == 1);
    CHECK(count_findings(r, "spec.yaml", "results.json records spec.sha256") == 1);
  }
  SECTION("its MANIFEST file line rewritten: spec_sha256 and results.json still disagree") {
    rehash(dir, "spec.yaml");
    const VerifyResult r = verify_packet(dir.string());
    INFO(verify_report(r));
    CHECK(count_findings(r, "spec.yaml", "MANIFEST records") == 0);
    CHECK(count_findings(r, "spec.yaml", "MANIFEST spec_sha256 records") == 1);
    CHECK(count_findings(r, "spec.yaml", "results.json records spec.sha256") == 1);
  }
}

TEST_CASE("verify applies each limit kind's sign convention (lower bounds: worst - limit)",
          "[verify][packet]") {
  const fs::path dir =
      copy_packet(fs::path(SWAYBOUND_SOURCE_DIR) / "reports/gantry_hook_block", "lower-bound");
  auto j = read_json(dir / "results.json");

  SECTION("a rope going slack, with the margin worked out as for an upper bound") {
    auto& c = j["checks"][check_index(j, "rope_tension_min")];
    REQUIRE(c["bound"] == "lower");
    REQUIRE(c["limit_value"].get<double>() == 0.0);
    c["worst"] = -500.0;  // N: the rope pushes
    c["margin"] = 500.0;  // limit - worst, the upper-bound rule
    c["verdict"] = "pass";
    c.erase("accuracy_audit");
    write_json(dir / "results.json", j);
    rehash(dir, "results.json");
    const VerifyResult r = verify_packet(dir.string());
    INFO(verify_report(r));
    CHECK(count_findings(r, "results.json",
                         "(rope_tension_min, link 'hoist rope', either end): margin 0.50 kN, but recomputed -0.50 kN") ==
          1);
    CHECK(count_findings(r, "results.json", "(rope_tension_min, link 'hoist rope', either end): verdict 'pass'") == 1);
  }
  SECTION("an upper limit relabelled lower, its margin made to agree") {
    auto& c = j["checks"][check_index(j, "peak_angle")];
    c["bound"] = "lower";
    c["worst"] = 17.2 * kDegree;
    c["margin"] = c["worst"].get<double>() - c["limit_value"].get<double>();
    c["margin_ratio"] = c["margin"].get<double>() / c["limit_value"].get<double>();
    c.erase("accuracy_audit");
    write_json(dir / "results.json", j);
    rehash(dir, "results.json");
    const VerifyResult r = verify_packet(dir.string());
    INFO(verify_report(r));
    CHECK(count_findings(r, "results.json", "bound 'lower', but peak_angle is an upper") == 1);
    CHECK(count_findings(r, "results.json", "(peak_angle, link 'hoist rope'): verdict 'pass'") == 1);
  }
  SECTION("modal damping below its minimum, verdict left pass") {
    auto& c = j["checks"][check_index(j, "modal_damping_min")];
    REQUIRE(c["verdict"] == "pass");
    c["worst"] = 0.5 * c["limit_value"].get<double>();
    write_json(dir / "results.json", j);
    rehash(dir, "results.json");
    const VerifyResult r = verify_packet(dir.string());
    INFO(verify_report(r));
    CHECK(count_findings(r, "results.json", "(modal_damping_min, the chain): verdict 'pass'") == 1);
  }
}

TEST_CASE("a packet whose cases failed to run verifies; hiding the failures is caught", "[verify][packet]") {
  // 100 steps cannot cover 8 s: every case stops on its step budget and fails every per-case check.
  const fs::path packet = make_packet("failed-cases", spec_text("12 deg", "solver: {max_steps: 100}"), 1);
  const VerifyResult r = verify_packet(packet.string());
  INFO(verify_report(r));
  CHECK(r.intact());
  const fs::path dir = copy_packet(packet, "failed-cases-hidden");
  auto j = read_json(dir / "results.json");
  REQUIRE(j["cases"]["failed"] == 6);
  j["verdict"] = "pass";
  write_json(dir / "results.json", j);
  rehash(dir, "results.json");
  const VerifyResult hidden = verify_packet(dir.string());
  INFO(verify_report(hidden));
  CHECK(count_findings(hidden, "results.json", "overall verdict is 'pass', but 6 case(s) failed to run") ==
        1);
}

TEST_CASE("verify catches cases.csv rows removed and files added", "[verify][packet]") {
  const fs::path dir = copy_packet(passing_packet(), "rows-removed");
  std::string csv = read_text(dir / "cases.csv");
  csv.erase(csv.rfind('\n', csv.size() - 2) + 1);  // the last row
  write_text(dir / "cases.csv", csv);
  rehash(dir, "cases.csv");
  write_text(dir / "notes.txt", "added later\n");
  const VerifyResult r = verify_packet(dir.string());
  INFO(verify_report(r));
  CHECK(count_findings(r, "cases.csv", "has 5 case row(s), results.json counts 6 cases") == 1);
  CHECK(count_findings(r, "notes.txt", "not listed in MANIFEST") == 1);
  CHECK(r.findings.size() == 2);
}

TEST_CASE("verify: a folder that is not a packet, or a path that does not exist, is an input error",
          "[verify][packet]") {
  const fs::path plain = temp("not-a-packet");
  fs::remove_all(plain);
  fs::create_directories(plain);
  fs::copy_file(passing_packet() / "results.json", plain / "results.json");
  CHECK_THROWS_AS(verify_packet(plain.string()), RunError);
  const auto cmd = run_cli("verify " + plain.string());
  CHECK(cmd.status == 2);
  CHECK(cmd.out.find("not a swaybound packet: it has no MANIFEST") != std::string::npos);
  CHECK(run_cli("verify " + temp("missing").string()).status == 2);
  // Its results.json alone is checked for consistency.
  CHECK(verify_packet((plain / "results.json").string()).intact());
}

TEST_CASE("a results.json of the wrong shape gives findings, not an internal error", "[verify][diff]") {
  const fs::path dir = temp("wrong-shape");
  fs::remove_all(dir);
  fs::create_directories(dir);
  auto j = read_json(passing_packet() / "results.json");
  j["checks"][0]["limit"] = 5;
  j["checks"][1]["applies_to"] = nullptr;
  j["failed_cases"] = nlohmann::ordered_json::object();
  write_json(dir / "results.json", j);
  const VerifyResult r = verify_packet((dir / "results.json").string());
  INFO(verify_report(r));
  CHECK(count_findings(r, "results.json", "check 1 (, every link): 'limit' is missing or not text") == 1);
  CHECK(count_findings(r, "results.json", "'applies_to' is missing or not text") == 1);
  CHECK(count_findings(r, "results.json", "has no 'failed_cases' list") == 1);
  const auto cmd =
      run_cli(fmt::format("diff {} {}", passing_packet().string(), (dir / "results.json").string()));
  CHECK(cmd.status == 2);
  CHECK(cmd.out.find("(NEW) fails verification") != std::string::npos);
  CHECK(cmd.out.find("internal error") == std::string::npos);
}

TEST_CASE("diff refuses a packet that fails verification", "[verify][diff]") {
  const fs::path dir = copy_packet(passing_packet(), "diff-tampered");
  auto j = read_json(dir / "results.json");
  j["checks"][check_index(j, "peak_angle")]["worst"] = 17.2 * kDegree;
  write_json(dir / "results.json", j);
  rehash(dir, "results.json");
  // Before verification, this went through as "no regression" (exit 0).
  const auto cmd = run_cli(fmt::format("diff {} {}", passing_packet().string(), dir.string()));
  CHECK(cmd.status == 2);
  CHECK(cmd.out.find("(NEW) fails verification") != std::string::npos);
  CHECK(cmd.out.find("verdict 'pass', but worst 17.200 deg against limit 12.000 deg") != std::string::npos);
  CHECK(cmd.out.find("no regression") == std::string::npos);
  CHECK_THROWS_AS(diff_results(dir.string(), passing_packet().string(), 0.01), RunError);
  CHECK_NOTHROW(diff_results(passing_packet().string(), passing_packet().string(), 0.01));
}

TEST_CASE("diff --require-pass fails a new design that fails a check even with no regression",
          "[verify][diff]") {
  const fs::path failing = make_packet("failing", spec_text("2 deg"), 1);
  const fs::path again = copy_packet(failing, "failing-again");
  const DiffResult d = diff_results(failing.string(), again.string(), 0.01);
  CHECK_FALSE(d.regression());
  CHECK(d.new_fails());
  CHECK(run_cli(fmt::format("diff {} {}", failing.string(), again.string())).status == 0);
  const auto gated = run_cli(fmt::format("diff {} {} --require-pass", failing.string(), again.string()));
  CHECK(gated.status == 1);
  CHECK(gated.out.find("the new design fails a check") != std::string::npos);
  CHECK(
      run_cli(fmt::format("diff {} {} --require-pass", failing.string(), passing_packet().string())).status ==
      0);
}

TEST_CASE("diff names an unsupported schema version", "[verify][diff]") {
  const fs::path dir = temp("schema-2");
  fs::remove_all(dir);
  fs::create_directories(dir);
  auto j = read_json(passing_packet() / "results.json");
  j["schema"] = "swaybound.results/2";
  write_json(dir / "results.json", j);
  const auto cmd =
      run_cli(fmt::format("diff {} {}", passing_packet().string(), (dir / "results.json").string()));
  CHECK(cmd.status == 2);
  CHECK(cmd.out.find("unsupported schema version 2 (this swaybound reads 1)") != std::string::npos);
  CHECK(cmd.out.find("not a swaybound results file") == std::string::npos);
  j["schema"] = "something else";
  write_json(dir / "results.json", j);
  CHECK(run_cli(fmt::format("diff {} {}", passing_packet().string(), (dir / "results.json").string()))
            .out.find("not a swaybound results file") != std::string::npos);
  CHECK(results_schema_version("swaybound.results/1") == 1);
  CHECK(results_schema_version("swaybound.results/12") == 12);
  CHECK(results_schema_version("swaybound.results/") == 0);
  CHECK(results_schema_version("swaybound.result/1") == 0);
}

TEST_CASE("diff of two sizing folders compares the sized specs", "[verify][diff][sizing]") {
  const auto size = [](const std::string& name, const std::string& limit) {
    const fs::path spec = temp(name + ".yaml"), out = temp(name);
    std::ofstream(spec) << fmt::format(R"(
swaybound: 1
name: sizing diff
links:
  - {{name: arm, length: 1, mass: 1, com: 1, inertia: 0, pivot: {{damper: {{coefficient: 5 N m s/rad}}}}}}
cases: {{duration: 10 s, initial: [{{single: {{theta: [2 deg]}}}}]}}
limits:
  - {{residual_sway: {}, after: 9.5 s}}
sizing:
  variables:
    - {{path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}}
  budget: {{evaluations: 40}}
)",
                                       limit);
    fs::remove_all(out);
    REQUIRE(run_cli(fmt::format("size {} --out {} --quiet", spec.string(), out.string())).status == 0);
    return out;
  };
  const fs::path loose = size("sized-loose", "0.5 deg"), tight = size("sized-tight", "0.05 deg");
  const DiffResult d = diff_results(loose.string(), tight.string(), 0.01);
  INFO(diff_report(d, false));
  REQUIRE(d.specs_compared);
  // Both input specs give the damper 5 N m s/rad; only the sized specs differ in it.
  bool coefficient = false, limit = false;
  for (const auto& c : d.spec_changes) {
    coefficient |= c.key == "links[arm].pivot.damper.coefficient" && c.old_value != c.new_value;
    limit |= c.key == "limits[0].residual_sway";
  }
  CHECK(coefficient);
  CHECK(limit);
}
