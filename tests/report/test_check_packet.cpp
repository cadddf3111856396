// The library writes the packets (report/check_packet.hpp, report/size_packet.hpp) without the
// command line: a packet that verifies, cases.csv streamed case by case with the report's envelope
// rows equal to its figures, and nothing left of a packet that was not finished.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <unistd.h>

#include <fmt/format.h>

#include "swaybound/core/cancel.hpp"
#include "swaybound/report/check_packet.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/packet.hpp"
#include "swaybound/report/size_packet.hpp"
#include "swaybound/report/verify.hpp"
#include "swaybound/spec.hpp"
#include "../support/packet_files.hpp"
#include "../support/sizing_specs.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

const char* kSpec = R"(
swaybound: 1
name: library packet
links:
  - {name: rope, kind: rope, length: 3, mass: 10, pivot: {damper: {coefficient: 800 N m s/rad}}}
  - {name: load, length: 1, mass: 400, com: 0.7, inertia: 20}
base: {scenarios: [{name: brake, initial_velocity: {x: 1}, accel: [{for: 1.2 s, x: -0.8}]}]}
cases: {duration: 6 s, initial: [{random: {count: 5, seed: 3, theta: [[-6 deg, 6 deg], [-6 deg, 6 deg]]}}]}
limits:
  - {peak_angle: 20 deg}
  - {pivot_load: 6 kN, link: rope}
)";

const std::string kSizingSpec = swaybound::testing::arm_damper_sizing_yaml("library sizing packet", 40);

/// A fresh folder for this process's files.
fs::path temp(const std::string& name) {
  const fs::path dir = fs::temp_directory_path() / fmt::format("swaybound-test-library-packet-{}", ::getpid());
  fs::create_directories(dir);
  return dir / name;
}

std::string read(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

fs::path write(const fs::path& p, const std::string& text) {
  std::ofstream(p, std::ios::binary) << text;
  return p;
}

/// The fields of one CSV line of cases.csv ("..." quoted, "" for a quote).
std::vector<std::string> fields(const std::string& line) {
  std::vector<std::string> out(1);
  bool quoted = false;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const char c = line[i];
    if (quoted && c == '"' && i + 1 < line.size() && line[i + 1] == '"') {
      out.back() += '"';
      ++i;
    } else if (c == '"') {
      quoted = !quoted;
    } else if (c == ',' && !quoted) {
      out.emplace_back();
    } else {
      out.back() += c;
    }
  }
  return out;
}

double number(const std::string& s) { return s.empty() ? std::nan("") : std::strtod(s.c_str(), nullptr); }

/// Packet options for the folder `dir`, the rest as defaults.
PacketOptions at(const fs::path& dir) {
  PacketOptions o;
  o.dir = dir.string();
  return o;
}

bool same(double a, double b) { return (std::isnan(a) && std::isnan(b)) || a == b; }

}  // namespace

TEST_CASE("the library writes a check packet that verifies, without the command line", "[packet][library]") {
  const fs::path spec_path = write(temp("check.yaml"), kSpec), out = temp("check-packet");
  fs::remove_all(out);
  const Spec spec = load_spec(spec_path.string());
  CheckReport report;
  {
    CheckPacket packet(spec, read(spec_path), PacketOptions{out.string(), false, false, "2025-02-03T10:00:00Z"});
    CHECK_FALSE(fs::exists(out));  // nothing in place before finish()
    CheckOptions options;
    options.audit = false;
    options.jobs = 2;
    packet.attach(options);
    report = run_check(spec, options);
    packet.finish(report);
    CHECK(packet.target() == out.string());
  }
  const VerifyResult v = verify_packet(out.string());
  INFO(verify_report(v));
  CHECK(v.intact());
  CHECK(v.kind == "check packet");
  CHECK(v.cases_csv_counted);
  for (const char* name : {"MANIFEST", "results.json", "cases.csv", "spec.yaml", "report.pdf", "report.html"})
    CHECK(fs::exists(out / name));
  CHECK(read(out / "spec.yaml") == read(spec_path));
  const std::string manifest = read(out / "MANIFEST");
  CHECK(manifest.find("date: 2025-02-03T10:00:00Z") != std::string::npos);
  CHECK(manifest.find("accuracy_audit: off") != std::string::npos);  // the run was told not to audit
  CHECK(manifest.find("cases: 5 x 6 s") != std::string::npos);
  CHECK(read(out / "report.html").find("2025-02-03") != std::string::npos);
  CHECK(swaybound::testing::leftovers(out).empty());
}

TEST_CASE("the packet's envelope rows, taken as the cases stream, are the figures of its cases.csv",
          "[packet][library]") {
  const fs::path spec_path = write(temp("envelope.yaml"), kSpec), out = temp("envelope-packet");
  fs::remove_all(out);
  const Spec spec = load_spec(spec_path.string());
  std::vector<CaseEnvelopeRow> rows;
  CheckPacket packet(spec, read(spec_path), at(out));
  CheckOptions options;
  options.audit = false;
  options.jobs = 3;
  // A caller's own hook stays: the packet's comes after it.
  options.on_case = [&](const CaseMetrics& m) { rows.push_back(case_envelope_row(spec, m)); };
  packet.attach(options);
  const CheckReport report = run_check(spec, options);
  packet.finish(report);
  REQUIRE(static_cast<long>(rows.size()) == report.case_count);

  std::istringstream csv(read(out / "cases.csv"));
  std::string line;
  std::getline(csv, line);
  const std::vector<std::string> header = fields(line);
  const auto column = [&](const std::string& name) {
    for (std::size_t i = 0; i < header.size(); ++i)
      if (header[i] == name) return i;
    FAIL("no column " << name);
    return std::size_t{0};
  };
  std::size_t n = 0;
  while (std::getline(csv, line)) {
    REQUIRE(n < rows.size());
    const std::vector<std::string> f = fields(line);
    const CaseEnvelopeRow& r = rows[n++];
    INFO("case " << r.id);
    CHECK(f[column("case")] == r.id);
    CHECK(f[column("scenario")] == r.scenario);
    CHECK(f[column("status")] == r.status);
    double amplitude = 0;
    for (std::size_t k = 0; k < spec.links.size(); ++k) {
      const std::string& link = spec.links[k].name;
      amplitude = std::max(amplitude, std::fabs(number(f[column(fmt::format("theta0({}) [rad]", link))])));
      CHECK(same(number(f[column(fmt::format("peak_angle({}) [rad]", link))]), r.peak_angle[k]));
      CHECK(same(number(f[column(fmt::format("peak_pivot_load({}) [N]", link))]), r.peak_load[k]));
    }
    CHECK(amplitude == r.amplitude);
  }
  CHECK(n == rows.size());
}

namespace {
/// A complete check packet of `spec` (no audit) in `out`: the previous packet of the next test steps.
void write_first_packet(const Spec& spec, const fs::path& spec_path, const fs::path& out) {
  CheckOptions options;
  options.audit = false;
  CheckPacket first(spec, read(spec_path), at(out));
  first.attach(options);
  first.finish(run_check(spec, options));
}
}  // namespace

TEST_CASE("a check packet not finished leaves the previous packet as it was and nothing beside it",
          "[packet][library]") {
  const fs::path spec_path = write(temp("unfinished.yaml"), kSpec), out = temp("unfinished-packet");
  fs::remove_all(out);
  const Spec spec = load_spec(spec_path.string());
  write_first_packet(spec, spec_path, out);
  const std::string results = read(out / "results.json"), manifest = read(out / "MANIFEST");
  {
    // A run that stops (an exception, say) before finish(): the packet object goes away unfinished.
    CheckPacket second(spec, read(spec_path), at(out));
    CheckOptions again;
    again.audit = false;
    second.attach(again);
    run_check(spec, again);
  }
  CHECK(read(out / "results.json") == results);
  CHECK(read(out / "MANIFEST") == manifest);
  CHECK(verify_packet(out.string()).intact());
  CHECK(swaybound::testing::leftovers(out).empty());
}

TEST_CASE("a stop requested while the packet is finished leaves the previous packet and no half packet",
          "[packet][library][interrupt]") {
  const fs::path spec_path = write(temp("stopped.yaml"), kSpec), out = temp("stopped-packet");
  fs::remove_all(out);
  const Spec spec = load_spec(spec_path.string());
  write_first_packet(spec, spec_path, out);
  const std::string manifest = read(out / "MANIFEST");
  {
    CheckPacket second(spec, read(spec_path), at(out));
    CheckOptions again;
    again.audit = false;
    second.attach(again);
    const CheckReport report = run_check(spec, again);
    request_cancel(2);  // SIGINT arrives as the documents are written
    CHECK_THROWS_AS(second.finish(report), Interrupted);
    clear_cancel();
  }
  CHECK(read(out / "MANIFEST") == manifest);
  CHECK(verify_packet(out.string()).intact());
  CHECK(swaybound::testing::leftovers(out).empty());
}

TEST_CASE("the library writes a sizing packet that verifies, without the command line", "[packet][library][sizing]") {
  const fs::path spec_path = write(temp("sizing.yaml"), kSizingSpec), out = temp("sizing-packet");
  fs::remove_all(out);
  const Spec spec = load_spec(spec_path.string());
  SizingPacket packet(spec, read(spec_path), at(out));
  SizingOptions options;
  long seen = 0;  // a caller's own hook stays: the packet's comes after it
  options.on_final_case = [&](const CaseMetrics&) { ++seen; };
  packet.attach(options);
  const SizingResult result = run_sizing(spec, options);
  packet.finish(result);
  CHECK(seen == result.after.case_count);
  const VerifyResult v = verify_packet(out.string());
  INFO(verify_report(v));
  CHECK(v.intact());
  CHECK(v.kind == "sizing folder");
  for (const char* name : {"sized_spec.yaml", "results.json", "cases.csv", "sizing_history.csv", "sizing.md",
                           "sizing.json", "convergence_objective.svg", "convergence_margin.png", "input_spec.yaml",
                           "report.pdf", "report.html"})
    CHECK(fs::exists(out / name));
  CHECK(read(out / "input_spec.yaml") == read(spec_path));
  CHECK(read(out / "sized_spec.yaml") == result.sized_yaml);
  // The report names the sized spec where the user finds it, not in the temporary folder.
  CHECK(read(out / "report.html").find((out / "sized_spec.yaml").string()) != std::string::npos);
  CHECK(swaybound::testing::leftovers(out).empty());
}
