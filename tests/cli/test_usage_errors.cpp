// Bad command-line input is a usage error, told apart from a bad spec: exit status 2, a message
// that says "usage error" and names the option, and nothing written.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <string>
#include <unistd.h>

#include <fmt/format.h>

#include "../support/process.hpp"

using namespace swaybound::testing;
namespace fs = std::filesystem;

namespace {

const char* kSpec = R"(
swaybound: 1
name: usage errors
links:
  - {name: rope, kind: rope, length: 3, mass: 10, pivot: {damper: {coefficient: 800 N m s/rad}}}
  - {name: load, length: 1, mass: 400}
cases: {duration: 2 s, initial: [{single: {theta: [2 deg, 1 deg]}}]}
limits:
  - {peak_angle: 20 deg}
sizing:
  variables:
    - {path: "links[rope].pivot.damper.coefficient", range: [100 N m s/rad, 2000 N m s/rad], cost: 1}
  budget: {evaluations: 10}
)";

/// A folder of this process's own, with the spec in it.
fs::path folder() {
  const fs::path dir = fs::temp_directory_path() / fmt::format("swaybound-test-usage-{}", ::getpid());
  fs::create_directories(dir);
  std::ofstream(dir / "spec.yaml") << kSpec;
  return dir;
}

struct Outcome {
  int status = -1;
  std::string err;  ///< stderr
};

/// Runs `swaybound ARGS` in folder() with stderr captured.
Outcome cli(const std::string& args) {
  const CommandResult r =
      run_command(fmt::format("cd {} && {} {} 2>&1 >/dev/null", folder().string(), SWAYBOUND_CLI, args));
  return {r.exited ? r.status : -1, r.out};
}

/// Exit 2, "usage error" naming `option`, and nothing new in the folder.
void require_usage_error(const std::string& args, const std::string& option) {
  const fs::path dir = folder();
  std::vector<std::string> before;
  for (const auto& e : fs::directory_iterator(dir)) before.push_back(e.path().filename().string());
  const Outcome o = cli(args);
  INFO("swaybound " << args << "\n" << o.err);
  CHECK(o.status == 2);
  CHECK(o.err.find("usage error: " + option) != std::string::npos);
  CHECK(o.err.find("nothing was written") != std::string::npos);
  CHECK(o.err.find("internal error") == std::string::npos);
  std::vector<std::string> after;
  for (const auto& e : fs::directory_iterator(dir)) after.push_back(e.path().filename().string());
  std::sort(before.begin(), before.end());
  std::sort(after.begin(), after.end());
  CHECK(after == before);
}

}  // namespace

TEST_CASE("check: a spec file that is not there, or a folder given as the spec, is a usage error", "[cli][usage]") {
  require_usage_error("check missing.yaml --out packet --quiet", "SPEC: no file or folder 'missing.yaml'");
  require_usage_error("check . --out packet --quiet", "SPEC: '.' is a folder");
}

TEST_CASE("size: a spec file that is not there is a usage error", "[cli][usage][sizing]") {
  require_usage_error("size missing.yaml --out sized --quiet", "SPEC: no file or folder 'missing.yaml'");
}

TEST_CASE("simulate: a bad option value, an unknown case and conflicting options are usage errors",
          "[cli][usage][simulate]") {
  require_usage_error("simulate spec.yaml --case nope -o run.csv", "--case: no case 'nope'");
  require_usage_error("simulate spec.yaml --duration '0 s' -o run.csv", "--duration: must be > 0");
  require_usage_error("simulate spec.yaml --theta '3 kg' -o run.csv", "--theta: '3 kg' is");
  require_usage_error("simulate spec.yaml --theta 3 -o run.csv", "--theta: '3' has no unit");
  require_usage_error("simulate spec.yaml --scenario gust -o run.csv", "--scenario: no scenario 'gust'");
  const std::string id = "c0";  // any id: the conflict is found before the id is looked up
  require_usage_error("simulate spec.yaml --case " + id + " --theta '1 deg' -o run.csv", "--case");
  const Outcome o = cli("simulate spec.yaml --case c0 --theta '1 deg' -o run.csv");
  CHECK(o.err.find("--theta") != std::string::npos);
  require_usage_error("simulate missing.yaml -o run.csv", "SPEC");
}

TEST_CASE("validate, modes, diff and verify: a file or folder that is not there is a usage error naming it",
          "[cli][usage]") {
  require_usage_error("validate missing.yaml", "SPEC: no file or folder 'missing.yaml'");
  require_usage_error("modes missing.yaml", "SPEC: no file or folder 'missing.yaml'");
  require_usage_error("diff old-packet spec.yaml", "OLD: no file or folder 'old-packet'");
  require_usage_error("diff spec.yaml new-packet", "NEW: no file or folder 'new-packet'");
  require_usage_error("verify no-packet", "DIR: no file or folder 'no-packet'");
}

TEST_CASE("an option value the parser refuses exits 2 naming the option, and writes nothing", "[cli][usage]") {
  // Ranges checked while parsing: CLI11's own message names the option.
  for (const auto& [args, option] : std::vector<std::pair<std::string, std::string>>{
           {"check spec.yaml --out packet --jobs -2", "--jobs"},
           {"size spec.yaml --out sized --margin 70%", "--margin"},
           {"validate spec.yaml --max-cases 0", "--max-cases"},
           {"modes spec.yaml --max-samples 0", "--max-samples"},
           {"diff spec.yaml spec.yaml --tolerance -1", "--tolerance"},
           {"simulate spec.yaml --max-samples -1 -o run.csv", "--max-samples"}}) {
    const Outcome o = cli(args);
    INFO("swaybound " << args << "\n" << o.err);
    CHECK(o.status == 2);
    CHECK(o.err.find(option) != std::string::npos);
    for (const char* name : {"packet", "sized", "run.csv"}) CHECK_FALSE(fs::exists(folder() / name));
  }
}

TEST_CASE("a bad spec is reported as a spec error, not a usage error", "[cli][usage]") {
  std::ofstream(folder() / "bad.yaml") << "swaybound: 1\nname: bad\nlinks: []\n";
  const Outcome o = cli("check bad.yaml --out packet --quiet");
  INFO(o.err);
  CHECK(o.status == 2);
  CHECK(o.err.find("in the spec; nothing was written") != std::string::npos);
  CHECK(o.err.find("usage error") == std::string::npos);
  CHECK_FALSE(fs::exists(folder() / "packet"));
}
