// The slewing jib crane demo (specs/jib_crane_slewing.yaml, invented data) through the six commands
// a user runs on it: validate, simulate, modes, check, size and diff. The size run uses a copy of
// the spec with a smaller evaluation budget (the demo's own budget is for the committed example).
#include <catch2/catch.hpp>
#include <unistd.h>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "../support/process.hpp"

using namespace swaybound::testing;
namespace fs = std::filesystem;

namespace {

std::string read(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

/// `swaybound ARGS`, its stdout and exit status (stderr dropped).
CommandResult run_tool(const std::string& args) {
  return run_command(std::string(SWAYBOUND_CLI) + " " + args + " 2>/dev/null");
}

int status(const CommandResult& r) { return r.exited ? r.status : -1; }

/// The values of the CSV column whose name starts with `prefix` (header names are quoted and may
/// hold commas; the values do not).
std::vector<double> column(const std::string& csv, const std::string& prefix) {
  std::istringstream in(csv);
  std::string line;
  std::getline(in, line);
  int index = -1, k = 0;
  bool quoted = false;
  std::string cell;
  for (char ch : line + ",") {
    if (ch == '"') quoted = !quoted;
    if (ch == ',' && !quoted) {
      if (index < 0 && cell.rfind("\"" + prefix, 0) == 0) index = k;
      ++k;
      cell.clear();
    } else {
      cell += ch;
    }
  }
  if (index < 0) FAIL("no column " << prefix);
  std::vector<double> out;
  while (std::getline(in, line)) {
    std::istringstream row(line);
    for (int j = 0; std::getline(row, cell, ','); ++j)
      if (j == index) out.push_back(std::stod(cell));
  }
  return out;
}

}  // namespace

TEST_CASE("the slewing jib crane demo runs through validate, simulate, modes, check, size and diff",
          "[cli][demo][spatial][slew]") {
  const fs::path source(SWAYBOUND_SOURCE_DIR);
  const fs::path spec = source / "specs" / "jib_crane_slewing.yaml";
  const fs::path dir = fs::temp_directory_path() / ("swaybound-jib-demo-" + std::to_string(::getpid()));
  fs::remove_all(dir);
  fs::create_directories(dir);

  // validate: accepted, and the normalised spec it prints is accepted again (slewing, luffing and
  // the starts out of the plane round-trip).
  const CommandResult v = run_tool("validate " + spec.string());
  REQUIRE(status(v) == 0);
  CHECK(v.out.find("motion: spatial") != std::string::npos);
  CHECK(v.out.find("luff:") != std::string::npos);
  std::ofstream(dir / "normalised.yaml") << v.out;
  CHECK(status(run_tool("validate " + (dir / "normalised.yaml").string())) == 0);

  // simulate the scenario whose trolley runs out: 0.6 m/s reached at 0.3 m/s^2 from 2 s, held to
  // 14 s and stopped likewise, so the radius grows by 0.6 + 6 + 0.6 = 7.2 m to 23.2 m; the boom
  // frame's columns are there, and the base stays on that radius about the slewing axis at x = -16 m.
  const fs::path csv_path = dir / "trolley_out.csv";
  REQUIRE(status(run_tool("simulate " + spec.string() + " --scenario \"slew with the trolley running out\" -o " +
                           csv_path.string())) == 0);
  const std::string csv = read(csv_path);
  const std::vector<double> x = column(csv, "base_x"), z = column(csv, "base_z");
  REQUIRE(x.size() == 801);  // 40 s at 20 samples/s
  CHECK(std::hypot(16 + x.front(), z.front()) == Approx(16).epsilon(1e-12));
  CHECK(std::hypot(16 + x.back(), z.back()) == Approx(23.2).epsilon(1e-9));
  // The drum hauls in at 1.2 m/s, reached and left at 0.6 m/s^2 (1 s to 3 s, 9 s to 11 s): 1.2 + 7.2
  // + 1.2 = 9.6 m, so the fall shortens from 18 m to 8.4 m; the drum holds the load's weight at the end.
  const std::vector<double> rope = column(csv, "rope_length(hoist rope)"), pull = column(csv, "drum_force(hoist rope)");
  REQUIRE(rope.size() == x.size());
  CHECK(rope.front() == Approx(18).epsilon(1e-12));
  CHECK(rope.back() == Approx(8.4).epsilon(1e-12));
  // At the end the drum holds the hook load and, as the rope's centre of mass is at half its length,
  // half the rope's weight (to 2 %: the load still swings a few degrees).
  CHECK(pull.back() == Approx((3200 + 0.5 * 45) * 9.81).epsilon(0.02));
  for (const char* name : {"in_plane_sway(hook and payload)", "out_of_plane_sway(hook and payload)",
                           "support_force_radial", "support_force_tangential", "support_force_vertical"})
    CHECK(column(csv, name).size() == x.size());

  // modes: the swing pairs, in the boom's plane and across it, at one frequency each.
  const CommandResult m = run_tool("modes " + spec.string());
  REQUIRE(status(m) == 0);
  CHECK(m.out.find("travel (x-y)") != std::string::npos);
  CHECK(m.out.find("across (z-y)") != std::string::npos);

  // check: the demo's damper as given fails (sway after the gusty stop, residual sway); the packet
  // has the spatial figures and the boom-frame energy audit.
  const fs::path packet = dir / "check";
  const CommandResult checked = run_tool("check " + spec.string() + " --out " + packet.string() + " --quiet");
  CHECK(status(checked) == 1);
  // The search finds a lower least rope tension between the samples: its line says lowered, as the
  // worst of a lower bound moves (it said "raised").
  const std::size_t tension = checked.out.find("rope_tension_min");
  REQUIRE(tension != std::string::npos);
  const std::string tension_search = checked.out.substr(tension, checked.out.find('\n', checked.out.find('\n', tension) + 1) - tension);
  CHECK(tension_search.find("(lowered by") != std::string::npos);
  CHECK(checked.out.find("(raised by") != std::string::npos);  // the upper bounds' searches
  const auto results = nlohmann::json::parse(read(packet / "results.json"));
  CHECK(results.at("verdict") == "fail");
  const std::string html = read(packet / "report.html");
  for (const char* needle : {"Plan views of the hook paths", "In-plane sway", "Out-of-plane sway",
                             "Horizontal force on the support", "Angle-angle plot in the boom", "Energy audit, boom frame",
                             "slewing at radius 16 m", "radial luffing"})
    CHECK(html.find(needle) != std::string::npos);

  // size (a budget of 6 evaluations): a stiffer damper that passes every check.
  std::string text = read(spec);
  const std::string budget = "budget: {evaluations: 40, seconds: 60 s}";
  REQUIRE(text.find(budget) != std::string::npos);
  text.replace(text.find(budget), budget.size(), "budget: {evaluations: 6, seconds: 60 s}");
  std::ofstream(dir / "quick.yaml") << text;
  const fs::path sized = dir / "size";
  CHECK(status(run_tool("size " + (dir / "quick.yaml").string() + " --out " + sized.string() +
                         " --quiet --no-search --no-audit")) == 0);
  const auto sized_results = nlohmann::json::parse(read(sized / "results.json"));
  CHECK(sized_results.at("verdict") == "pass");
  REQUIRE(fs::exists(sized / "sized_spec.yaml"));

  // diff: from the demo to the sized design nothing regresses; back again, checks newly fail.
  const CommandResult forward = run_tool("diff " + packet.string() + " " + sized.string());
  CHECK(status(forward) == 0);
  CHECK(forward.out.find("links[hoist rope].pivot.damper.coefficient: 60000 N m s/rad ->") != std::string::npos);
  const CommandResult back = run_tool("diff " + sized.string() + " " + packet.string());
  CHECK(status(back) == 1);
  CHECK(back.out.find("NEWLY FAILS") != std::string::npos);
  fs::remove_all(dir);
}
