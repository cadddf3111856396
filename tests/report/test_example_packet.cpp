// reports/gantry_hook_block/, reports/hoist_lift_off/ and reports/jib_crane_slewing/ are the
// committed example packets of the demo specs. This test makes each packet again and compares it with the committed one through `swaybound diff` and the numbers of
// results.json, so any change in the figures is noticed (and the example must then be regenerated
// and the change explained in the commit).
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <sys/wait.h>
#include <unistd.h>

#include <nlohmann/json.hpp>

#include "swaybound/report/diff.hpp"
#include "swaybound/report/packet.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

TEST_CASE("the committed example packet matches a fresh check of the demo spec", "[packet][example]") {
  const std::string name = GENERATE(as<std::string>{}, "gantry_hook_block", "hoist_lift_off", "jib_crane_slewing");
  INFO("example " << name);
  const fs::path source(SWAYBOUND_SOURCE_DIR);
  const fs::path committed = source / "reports" / name;
  REQUIRE(fs::exists(committed / "results.json"));
  CHECK(verify_manifest(committed.string()).empty());
  // Per process: two test runs at once (two build trees) must not share the folder.
  const fs::path fresh = fs::temp_directory_path() / ("swaybound-example-packet-" + std::to_string(::getpid()) + name);
  fs::remove_all(fresh);
  const std::string cmd = std::string(SWAYBOUND_CLI) + " check " + (source / "specs" / (name + ".yaml")).string() +
                          " --out " + fresh.string() + " --quiet >/dev/null 2>&1";
  const int status = std::system(cmd.c_str());
  REQUIRE(WIFEXITED(status));
  // The exit status of the committed packet's verdict: 0 when it passes, 1 when a check fails
  // (hoist_lift_off fails: its worst-case search finds a start between the samples whose load comes
  // down to the ground again after lifting off; jib_crane_slewing fails: its damper as given is too
  // weak for the sway limits, which `size` fixes).
  std::ifstream committed_results(committed / "results.json");
  const std::string verdict = nlohmann::json::parse(committed_results).at("verdict").get<std::string>();
  REQUIRE((verdict == "pass" || verdict == "fail"));
  CHECK(WEXITSTATUS(status) == (verdict == "pass" ? 0 : 1));
  const DiffResult d = diff_results(committed.string(), fresh.string(), 0.0);
  CHECK(d.specs_compared);
  CHECK(d.spec_changes.empty());
  INFO(diff_report(d, false));
  CHECK_FALSE(d.regression());
  // cases.csv: the same columns and as many rows (its figures are compared through results.json's
  // worst values; a new column means the example must be regenerated).
  std::ifstream csv_a(committed / "cases.csv"), csv_b(fresh / "cases.csv");
  std::string header_a, header_b, line;
  std::getline(csv_a, header_a);
  std::getline(csv_b, header_b);
  CHECK(header_a == header_b);
  long rows_a = 0, rows_b = 0;
  while (std::getline(csv_a, line)) ++rows_a;
  while (std::getline(csv_b, line)) ++rows_b;
  CHECK(rows_a == rows_b);
  // Every worst value the same to 1e-6 relative (allowing only the last digits of libm to differ).
  std::ifstream a(committed / "results.json"), b(fresh / "results.json");
  const auto ja = nlohmann::json::parse(a), jb = nlohmann::json::parse(b);
  REQUIRE(ja["checks"].size() == jb["checks"].size());
  for (std::size_t i = 0; i < ja["checks"].size(); ++i) {
    const auto& x = ja["checks"][i]["worst"];
    const auto& y = jb["checks"][i]["worst"];
    INFO(ja["checks"][i]["limit"]);
    REQUIRE(x.is_number() == y.is_number());
    if (x.is_number()) CHECK(y.get<double>() == Approx(x.get<double>()).epsilon(1e-6).margin(1e-12));
    CHECK(ja["checks"][i]["governing_case"] == jb["checks"][i]["governing_case"]);
  }
  CHECK(ja["cases"]["count"] == jb["cases"]["count"]);
  std::error_code ignored;
  fs::remove_all(fresh, ignored);
}
