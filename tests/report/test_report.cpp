// The review packet: report.pdf and report.html show the verdict numbers of results.json, the HTML
// is well-formed, the plots are valid SVG/PNG, the envelope rows agree with the checks.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <regex>
#include <set>
#include <sstream>
#include <sys/wait.h>
#include <unistd.h>
#include <utility>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/core/hash.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/plot.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"
#include "../support/process.hpp"

using namespace swaybound;
namespace fs = std::filesystem;
using Json = nlohmann::json;

namespace {

const char* kSpec = R"(
swaybound: 1
name: Report test chain
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 3, mass: 10, pivot: {damper: {coefficient: 500 N m s/rad}}}
  - {name: load, length: 1, mass: 400, com: 0.7, inertia: 20, pivot: {damper: {coefficient: 300 N m s/rad, exponent: 0.8}}}
wind: {speed: 8 m/s, link: load, drag_area: 1.5 m^2, drag_coefficient: 1.1, gust: {start: 1 s, for: 1 s, speed: 4 m/s}}
base: {scenarios: [{name: brake, initial_velocity: {x: 1}, accel: [{for: 1.2 s, x: -0.8}]}]}
cases:
  duration: 6 s
  initial:
    - grid: {theta: [[-10 deg, 10 deg, 3], [-20 deg, 20 deg, 3]]}
    - ladder: {from: {theta: [30 deg, 40 deg]}, relative: [1e-4, 1e-6]}
limits:
  - {peak_angle: 25 deg}
  - {peak_rate: 40 deg/s, link: load}
  - {pivot_load: 4.2 kN, link: rope}
  - {dynamic_factor: 1.5}
  - {rope_tension_min: 0 N}
  - {residual_sway: 5 deg, after: 5 s}
  - {ftle_max: 0.2 /s, horizon: 6 s}
  - {modal_damping_min: 0.01}
  - {onset_margin: 1.5}
chaos: {onset: {max: 90 deg, resolution: 5 deg}, map: {theta: [[-60 deg, 60 deg, 5], [-60 deg, 60 deg, 5]]}}
report: {title: Report test, project: Test project, revision: C, prepared_by: Tester, paper: letter}
)";

/// A folder of this process (ctest runs test cases in parallel processes), removed at exit
/// unless SWAYBOUND_KEEP_TEST_FILES is set (to look at the pages).
fs::path temp_dir() {
  struct Folder {
    fs::path path = fs::temp_directory_path() / fmt::format("swaybound-test-report-{}", ::getpid());
    Folder() { fs::create_directories(path); }
    ~Folder() {
      std::error_code ec;
      if (!std::getenv("SWAYBOUND_KEEP_TEST_FILES")) fs::remove_all(path, ec);
    }
  };
  static const Folder folder;
  return folder.path;
}

std::string read(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// Runs a shell command; returns its exit status and stdout.
int run(const std::string& command, std::string& out) {
  auto r = swaybound::testing::run_command(command);
  out = std::move(r.out);
  return r.status;
}

std::string checker() { return std::string(SWAYBOUND_SOURCE_DIR) + "/tests/report/check_markup.py"; }

/// The documented display of an SI value (include/swaybound/report/format.hpp), written out
/// again here so the test does not take the report's own formatter on trust.
std::vector<std::string> displayed(const Json& v, const std::string& unit) {
  if (v.is_null()) return {"-", "inf", "-inf"};  // results.json writes every non-finite value as null
  const double x = v.get<double>();
  if (unit == "rad") return {fmt::format("{:.3f} deg", x * 180 / std::numbers::pi)};
  if (unit == "rad/s") return {fmt::format("{:.3f} deg/s", x * 180 / std::numbers::pi)};
  if (unit == "N") return {fmt::format("{:.2f} kN", x / 1000)};
  if (unit.empty()) return {fmt::format("{:.4g}", x)};
  return {fmt::format("{:.4g} {}", x, unit)};
}

std::vector<std::string> displayed_ratio(const Json& v) {
  if (v.is_null()) return {"-"};
  return {fmt::format("{:+.1f}%", 100 * v.get<double>())};
}

/// Parses the number a table shows ("-15.000 deg", "1.499", "+18.2%", "1.2e-05 1/s") and checks it
/// is the JSON value (converted to the display unit) rounded to the digits shown: within half a
/// unit of the last digit.
bool rounds_to(const std::string& shown, const Json& v, double factor) {
  if (v.is_null()) return shown == "-" || shown == "inf" || shown == "-inf";
  static const std::regex number(R"(^([+-]?)(\d+)(?:\.(\d+))?(?:e([+-]\d+))?)");
  std::smatch m;
  if (!std::regex_search(shown, m, number)) return false;
  const double x = std::stod(m[0].str());
  const int decimals = static_cast<int>(m[3].length());
  const int exponent = m[4].matched ? std::stoi(m[4].str()) : 0;
  const double half_ulp = 0.5 * std::pow(10.0, exponent - decimals);
  const double value = v.get<double>() * factor;
  return std::fabs(x - value) <= half_ulp * (1 + 1e-9) + 1e-12 * std::fabs(value);
}

double display_factor(const std::string& unit) {
  if (unit == "rad" || unit == "rad/s") return 180 / std::numbers::pi;
  if (unit == "N") return 1e-3;
  return 1;
}

bool one_of(const std::string& s, const std::vector<std::string>& allowed) {
  return std::find(allowed.begin(), allowed.end(), s) != allowed.end();
}

std::vector<std::string> split_columns(const std::string& line) {
  // pdftotext -layout separates table columns by two or more spaces.
  std::vector<std::string> out;
  static const std::regex gap(R"(\s{2,})");
  std::sregex_token_iterator it(line.begin(), line.end(), gap, -1), end;
  for (; it != end; ++it)
    if (!it->str().empty()) out.push_back(*it);
  return out;
}

struct Packet {
  Spec spec;
  CheckReport report;
  Json results;
  std::vector<CaseEnvelopeRow> rows;  ///< envelope rows of the cases, as the packet writer takes them
  fs::path dir;
};

/// One check run and one packet, shared by the test cases below (the run takes a few seconds).
const Packet& packet() {
  static const Packet p = [] {
    Packet k;
    k.dir = temp_dir();
    const fs::path spec_path = k.dir / "spec.yaml";
    std::ofstream(spec_path) << kSpec;
    k.spec = load_spec(spec_path.string());
    CheckOptions options;
    options.on_case = [&](const CaseMetrics& m) { k.rows.push_back(case_envelope_row(k.spec, m)); };
    k.report = run_check(k.spec, options);
    k.results = Json::parse(results_json(k.spec, k.report));
    const ReportMeta meta{"2025-02-03", "", ""};
    write_report_pdf(k.spec, k.report, (k.dir / "report.pdf").string(), meta, &k.rows);
    std::ofstream(k.dir / "report.html", std::ios::binary) << report_html(k.spec, k.report, meta, &k.rows);
    return k;
  }();
  return p;
}

}  // namespace

TEST_CASE("the test spec exercises passing and failing checks of every unit", "[report]") {
  const Packet& p = packet();
  REQUIRE(p.results["checks"].size() == 9);
  bool pass = false, fail = false;
  for (const auto& c : p.results["checks"]) (c["verdict"] == "pass" ? pass : fail) = true;
  CHECK(pass);
  CHECK(fail);  // pivot_load 4.2 kN is below the swing load
  CHECK(p.report.chaos.map.computed);
  CHECK(p.report.chaos.onset.computed);
  CHECK_FALSE(p.report.recorded.empty());
}

TEST_CASE("report.html: well-formed, and its verdict table equals results.json", "[report]") {
  const Packet& p = packet();
  std::string out;
  const int status = run(fmt::format("{} {} html {}", SWAYBOUND_PYTHON, checker(), (p.dir / "report.html").string()), out);
  REQUIRE(status == 0);  // the strict checker prints its findings on stderr
  const Json parsed = Json::parse(out);
  CHECK(parsed["svg_count"].get<int>() >= 8);
  const Json& table = parsed["tables"]["verdict-table"];
  const std::vector<std::string> headers = table["headers"];
  const auto column = [&](const std::string& name) {
    const auto it = std::find(headers.begin(), headers.end(), name);
    REQUIRE(it != headers.end());
    return static_cast<std::size_t>(it - headers.begin());
  };
  const std::size_t index = column("#"), check = column("check"), applies = column("applies to"),
                    limit = column("limit"), worst = column("worst"), margin = column("margin"), ratio = column("ratio"),
                    verdict = column("verdict"), governing = column("governing case");
  const Json& checks = p.results["checks"];
  REQUIRE(table["rows"].size() == checks.size());
  for (std::size_t i = 0; i < checks.size(); ++i) {
    const Json& c = checks[i];
    const std::vector<std::string> row = table["rows"][i];
    const std::string unit = c["unit"];
    INFO("check " << i + 1 << " " << c["limit"] << " row: " << fmt::format("{}", fmt::join(row, " | ")));
    CHECK(row[index] == std::to_string(i + 1));
    CHECK(row[check] == c["limit"].get<std::string>());
    CHECK(row[applies].rfind(c["applies_to"].get<std::string>(), 0) == 0);
    CHECK(one_of(row[limit], displayed(c["limit_value"], unit)));
    CHECK(one_of(row[worst], displayed(c["worst"], unit)));
    CHECK(one_of(row[margin], displayed(c["margin"], unit)));
    CHECK(one_of(row[ratio], displayed_ratio(c["margin_ratio"])));
    const double k = display_factor(unit);
    CHECK(rounds_to(row[limit], c["limit_value"], k));
    CHECK(rounds_to(row[worst], c["worst"], k));
    CHECK(rounds_to(row[margin], c["margin"], k));
    CHECK(rounds_to(row[ratio], c["margin_ratio"], 100));
    CHECK(row[verdict] == (c["verdict"] == "pass" ? "pass" : "FAIL"));
    const std::string gov = c["governing_case"];
    CHECK(row[governing] == (gov.empty() ? "-" : gov));
  }
}

TEST_CASE("report.pdf: page count, paper, footer, and its verdict table equals results.json", "[report]") {
  const Packet& p = packet();
  const fs::path pdf = p.dir / "report.pdf";
  std::string info;
  REQUIRE(run(fmt::format("pdfinfo {}", pdf.string()), info) == 0);
  std::smatch m;
  REQUIRE(std::regex_search(info, m, std::regex(R"(Pages:\s+(\d+))")));
  const int pages = std::stoi(m[1]);
  CHECK(pages >= 8);
  CHECK(std::regex_search(info, std::regex(R"(Page size:\s+612 x 792)")));  // letter, from report.paper

  std::string text;
  REQUIRE(run(fmt::format("pdftotext -layout {} -", pdf.string()), text) == 0);
  for (int page = 1; page <= pages; ++page) CHECK(text.find(fmt::format("page {} of {}", page, pages)) != std::string::npos);
  CHECK(text.find(spec_sha256(p.spec).substr(0, 12)) != std::string::npos);
  CHECK(text.find("2025-02-03") != std::string::npos);

  std::vector<std::string> lines;
  {
    std::istringstream in(text);
    for (std::string line; std::getline(in, line);) lines.push_back(line);
  }
  const std::regex header(R"(^\s*#\s+check\s+limit\s+worst\s+margin\s+ratio\s+verdict\s*$)");
  std::size_t start = 0;
  while (start < lines.size() && !std::regex_match(lines[start], header)) ++start;
  REQUIRE(start < lines.size());
  const Json& checks = p.results["checks"];
  std::size_t at = start;
  for (std::size_t i = 0; i < checks.size(); ++i) {
    const Json& c = checks[i];
    const std::string key = c["limit"], unit = c["unit"];
    const std::regex row_start(fmt::format(R"(^\s*{}\s+{}\s{{2,}}(.*)$)", i + 1, key));
    std::smatch row;
    while (at < lines.size() && !std::regex_match(lines[at], row, row_start)) ++at;
    INFO("check " << i + 1 << " " << key);
    REQUIRE(at < lines.size());
    const std::vector<std::string> cells = split_columns(row[1].str());
    INFO("row: " << lines[at]);
    REQUIRE(cells.size() == 5);
    CHECK(one_of(cells[0], displayed(c["limit_value"], unit)));
    CHECK(one_of(cells[1], displayed(c["worst"], unit)));
    CHECK(one_of(cells[2], displayed(c["margin"], unit)));
    CHECK(one_of(cells[3], displayed_ratio(c["margin_ratio"])));
    const double k = display_factor(unit);
    CHECK(rounds_to(cells[0], c["limit_value"], k));
    CHECK(rounds_to(cells[1], c["worst"], k));
    CHECK(rounds_to(cells[2], c["margin"], k));
    CHECK(rounds_to(cells[3], c["margin_ratio"], 100));
    CHECK(cells[4] == (c["verdict"] == "pass" ? "pass" : "FAIL"));
    // The second line of the row names what it applies to and the governing case.
    std::string note;
    for (std::size_t k = at + 1; k < lines.size() && k <= at + 3; ++k) note += lines[k] + " ";
    CHECK(note.find("applies to: " + c["applies_to"].get<std::string>()) != std::string::npos);
    const std::string gov = c["governing_case"];
    if (!gov.empty()) CHECK(note.find("governing case: " + gov) != std::string::npos);
    ++at;
  }
}

TEST_CASE("report pages render, and the packet says what was and was not computed", "[report]") {
  const Packet& p = packet();
  const fs::path pngs = p.dir / "pages";
  fs::remove_all(pngs);
  fs::create_directories(pngs);
  std::string out;
  REQUIRE(run(fmt::format("pdftoppm -r 30 -png {} {}", (p.dir / "report.pdf").string(), (pngs / "page").string()), out) == 0);
  CHECK(std::distance(fs::directory_iterator(pngs), fs::directory_iterator()) >= 8);
  const std::string html = read(p.dir / "report.html");
  for (const char* needle : {"Scope and assumptions", "Design summary", "Verdict", "Modal analysis", "Governing cases",
                             "Chaotic onset", "Envelope over the case set", "Numerical trust", "Cautions",
                             "Loads that fail can kill", "licensed professional engineer", "Reviewed by", "Approved by",
                             "rope stretch", "hoisting or lowering during travel", "Test project"})
    CHECK(html.find(needle) != std::string::npos);
  // Nothing reaches the network: no external URLs in src/href attributes, no scripts.
  CHECK_FALSE(std::regex_search(html, std::regex(R"((src|href)\s*=\s*"(https?:)?//)")));
  CHECK(html.find("<script") == std::string::npos);
  // Same inputs, same HTML.
  CHECK(report_html(p.spec, p.report, {"2025-02-03", "", ""}, &p.rows) == html);

  // Without cases.csv and without chaos the sections say so plainly.
  CheckReport bare = p.report;
  bare.chaos = ChaosSummary{};
  const std::string plain = report_html(p.spec, bare, {"2025-02-03", "", ""}, nullptr);
  CHECK(plain.find("cases.csv) was not supplied") != std::string::npos);
  CHECK(plain.find("No chaos indicator was asked for") != std::string::npos);
}

TEST_CASE("envelope rows: one per case, peaks agree with the checks", "[report]") {
  const Packet& p = packet();
  const std::vector<CaseEnvelopeRow>& rows = p.rows;
  REQUIRE(static_cast<long>(rows.size()) == p.report.case_count);
  double peak = 0, load = 0, amplitude = 0;
  for (const auto& r : rows) {
    REQUIRE(r.peak_angle.size() == 2);
    peak = std::max({peak, r.peak_angle[0], r.peak_angle[1]});
    load = std::max(load, r.peak_load[0]);
    amplitude = std::max(amplitude, r.amplitude);
  }
  // Check 1 is peak_angle over every link, check 3 the pivot load of the rope's pivot.
  CHECK(peak == Approx(p.report.checks[0].worst).epsilon(1e-9));
  CHECK(load == Approx(p.report.checks[2].worst).epsilon(1e-9));
  CHECK(amplitude == Approx(p.report.chaos.envelope_amplitude).epsilon(1e-9));
}

TEST_CASE("plots: every kind renders to SVG that parses as XML, and to PNG", "[report]") {
  using namespace plot;
  std::vector<Plot> plots;
  std::vector<double> t, a, b;
  for (int i = 0; i <= 2000; ++i) {
    t.push_back(i * 0.01);
    a.push_back(10 * std::sin(t.back()) * std::exp(-0.1 * t.back()));
    b.push_back(std::exp(-t.back()) + 1e-9);
  }
  plots.push_back(line_chart("Angles & <loads>", {"time", "s"}, {"angle", "deg"},
                             {{"a", t, a, true, false, -1}, {"b", t, b, true, false, -1}}, {{5, "limit 5 deg", false}}));
  Axis log_y{"separation", "rad"};
  log_y.log = true;
  plots.push_back(line_chart("Log", {"time", "s"}, log_y, {{"b", t, b, true, false, -1}}, {{1e-3, "tolerance", false}}));
  plots.push_back(scatter_chart("Scatter", {"x", ""}, {"y", "kN"}, {{"s", a, b, false, true, -1}}));
  plots.push_back(phase_portrait("Phase", {"θ1", "deg"}, {"θ2", "deg"}, a, b));
  HeatMap hm;
  hm.x = {-2, -1, 0, 1, 2};
  hm.y = {-1, 0, 1};
  hm.z = {0.1, 0.2, NAN, 0.4, 0.5, -0.1, 0, 0.1, 0.2, 0.3, 0.6, 0.7, 0.8, 0.9, 1.0};
  hm.z_label = "FTLE";
  hm.z_unit = "1/s";
  hm.outlines = {{{-1, -0.5}, {1, -0.5}, {1, 0.5}, {-1, 0.5}}};
  hm.outline_label = "envelope";
  hm.z_marks = {{0.05, "threshold"}};
  plots.push_back(heat_map("Map", {"θ0", "deg"}, {"θ1", "deg"}, hm));
  plots.push_back(mode_shapes("Modes", {{3, 1}, {{1, 0.9}, {-0.3, 1}}, {"mode 1", "mode 2"}, 0.35}));
  plots.push_back(line_chart("Empty", {"x", ""}, {"y", ""}, {}));

  const fs::path dir = temp_dir() / "plots";
  fs::create_directories(dir);
  std::string files;
  for (std::size_t k = 0; k < plots.size(); ++k) {
    const std::string svg = to_svg(plots[k]);
    CHECK(svg.find("<svg") != std::string::npos);
    const fs::path f = dir / fmt::format("plot-{}.svg", k);
    std::ofstream(f, std::ios::binary) << svg;
    files += " " + f.string();
    const std::string png = to_png(plots[k], 1.5);
    REQUIRE(png.size() > 8);
    CHECK(png.compare(0, 8, "\x89PNG\r\n\x1a\n") == 0);
    std::ofstream(dir / fmt::format("plot-{}.png", k), std::ios::binary) << png;
  }
  std::string out;
  CHECK(run(fmt::format("{} {} svg{}", SWAYBOUND_PYTHON, checker(), files), out) == 0);
}

TEST_CASE("plot ticks are nice numbers that cover the range", "[report]") {
  const auto ticks = plot::nice_ticks(0.13, 9.7, 5);
  REQUIRE(ticks.size() >= 2);
  CHECK(ticks.front() <= 0.13);
  CHECK(ticks.back() >= 9.7);
  CHECK(ticks[1] - ticks[0] == Approx(2));
  CHECK(plot::nice_ticks(-0.0731, -0.0569, 4).front() <= -0.0731);
  CHECK(plot::tick_label(0.30000000000000004, 0.1) == "0.3");
  CHECK(plot::tick_label(-1e-17, 0.1) == "0");
  CHECK(plot::nice_ticks(-1, 1, 4)[2] == 0.0);
  // Palettes: colour-blind-safe series colours are distinct; the sequential map brightens.
  CHECK(plot::series_colour(0).b > plot::series_colour(0).r);
  const plot::Rgb dark = plot::sequential_colour(0), light = plot::sequential_colour(1);
  CHECK(0.2126 * light.r + 0.7152 * light.g + 0.0722 * light.b > 0.2126 * dark.r + 0.7152 * dark.g + 0.0722 * dark.b);
}

TEST_CASE("a one-link chain with a failed run, no chaos and no recording still gives a whole packet", "[report]") {
  const fs::path dir = temp_dir() / "one-link";
  fs::create_directories(dir);
  const fs::path spec_path = dir / "spec.yaml";
  std::ofstream(spec_path) << R"(
swaybound: 1
name: "One <link> & a failure"
links:
  - {name: "hook \"A\"", kind: rope, length: 2, mass: 100, com: 2, inertia: 0}
cases: {duration: 30 s, initial: [{grid: {theta: [[-70 deg, 70 deg, 3]]}}]}
limits:
  - {pivot_load: 2 kN}
  - {rope_tension_min: 0 N}
solver: {max_steps: 100}
)";
  const Spec spec = load_spec(spec_path.string());
  CheckOptions options;
  options.record = false;
  options.audit = false;
  std::vector<CaseEnvelopeRow> rows;
  options.on_case = [&](const CaseMetrics& m) { rows.push_back(case_envelope_row(spec, m)); };
  const CheckReport report = run_check(spec, options);
  REQUIRE(report.failed_total > 0);
  const fs::path pdf = dir / "report.pdf", html = dir / "report.html";
  REQUIRE_NOTHROW(write_report_pdf(spec, report, pdf.string(), {}, &rows));
  std::ofstream(html, std::ios::binary) << report_html(spec, report, {}, &rows);
  std::string out;
  CHECK(run(fmt::format("{} {} html {}", SWAYBOUND_PYTHON, checker(), html.string()), out) == 0);
  const std::string text = read(html);
  CHECK(text.find("One &lt;link&gt; &amp; a failure") != std::string::npos);
  CHECK(text.find("failed-table") != std::string::npos);
  CHECK(text.find("(not given)") != std::string::npos);  // no date passed in
  CHECK(text.find("were not recorded") != std::string::npos);
  CHECK(run(fmt::format("pdftotext {} -", pdf.string()), out) == 0);
  CHECK(out.find("step_budget") != std::string::npos);
  CHECK_THROWS_AS(write_report_pdf(spec, report, (dir / "no-such-folder" / "report.pdf").string()), RunError);
}

namespace {

/// A heavy two-link hook with no chaos indicator, no report title and no revision, and a pivot_load
/// limit below the weight it carries; two single starts so each governing case is known by hand.
const char* kHeavySpec = R"(
swaybound: 1
name: Heavy hook
gravity: 9.81
links:
  - {name: hoist rope, kind: rope, length: 6 m, mass: 150 kg, com: 3 m, inertia: 0, pivot: {damper: {coefficient: 2000 N m s/rad}}}
  - {name: hook block, length: 1 m, mass: 12000 kg, com: 0.5 m, inertia: 1000 kg m^2}
base: {scenarios: [{name: stop, initial_velocity: {x: 1 m/s}, accel: [{for: 2 s, x: -0.5 m/s^2}]}]}
cases:
  duration: 4 s
  initial:
    - single: {theta: [3 deg, -2 deg], rate: [1 deg/s]}
    - single: {theta: [-4 deg, 1 deg]}
limits:
  - {pivot_load: 100 kN, link: hoist rope}
  - {dynamic_factor: 1.5}
  - {peak_angle: 30 deg}
  - {rope_tension_min: 0 N}
)";

struct HeavyPacket {
  Spec spec;
  CheckReport report;
  std::vector<CaseEnvelopeRow> rows;
  std::string html, pdf_text, pdf_info;
  std::string text;  ///< the HTML with its character references undone, to search for sentences
  Json tables;
};

/// `html` with the references report.html writes for & < > " ' turned back into the characters.
std::string unescaped(std::string html) {
  for (const auto& [ref, c] : std::vector<std::pair<std::string, std::string>>{
           {"&#39;", "'"}, {"&quot;", "\""}, {"&lt;", "<"}, {"&gt;", ">"}, {"&amp;", "&"}})
    for (std::size_t at = html.find(ref); at != std::string::npos; at = html.find(ref, at + c.size()))
      html.replace(at, ref.size(), c);
  return html;
}

const HeavyPacket& heavy_packet() {
  static const HeavyPacket p = [] {
    HeavyPacket k;
    const fs::path dir = temp_dir() / "heavy";
    fs::create_directories(dir);
    std::ofstream(dir / "spec.yaml") << kHeavySpec;
    k.spec = load_spec((dir / "spec.yaml").string());
    CheckOptions options;
    options.audit = false;
    options.on_case = [&](const CaseMetrics& m) { k.rows.push_back(case_envelope_row(k.spec, m)); };
    k.report = run_check(k.spec, options);
    const ReportMeta meta{"2025-02-03", "", ""};
    write_report_pdf(k.spec, k.report, (dir / "report.pdf").string(), meta, &k.rows);
    k.html = report_html(k.spec, k.report, meta, &k.rows);
    k.text = unescaped(k.html);
    std::ofstream(dir / "report.html", std::ios::binary) << k.html;
    std::string out;
    REQUIRE(run(fmt::format("{} {} html {}", SWAYBOUND_PYTHON, checker(), (dir / "report.html").string()), out) == 0);
    k.tables = Json::parse(out)["tables"];
    REQUIRE(run(fmt::format("pdftotext -layout {} -", (dir / "report.pdf").string()), k.pdf_text) == 0);
    REQUIRE(run(fmt::format("pdfinfo {}", (dir / "report.pdf").string()), k.pdf_info) == 0);
    return k;
  }();
  return p;
}

/// The column `name` of an HTML table as the markup checker read it.
std::vector<std::string> table_column(const Json& table, const std::string& name) {
  const std::vector<std::string> headers = table["headers"];
  const auto it = std::find(headers.begin(), headers.end(), name);
  REQUIRE(it != headers.end());
  std::vector<std::string> out;
  for (const auto& row : table["rows"]) out.push_back(row[static_cast<std::size_t>(it - headers.begin())]);
  return out;
}

}  // namespace

TEST_CASE("static loads: g times the mass at and below each pivot, and a warning for a limit below it", "[report]") {
  const HeavyPacket& p = heavy_packet();
  REQUIRE(p.tables.contains("static-loads-table"));
  const Json& t = p.tables["static-loads-table"];
  // Hand calculation: 9.81 m/s^2 x (150 + 12000) kg = 119.19 kN; 9.81 x 12000 kg = 117.72 kN.
  CHECK(table_column(t, "static pivot load [kN]") == std::vector<std::string>{"119.19", "117.72"});
  CHECK(table_column(t, "rope tension, top [kN]") == std::vector<std::string>{"119.19", "-"});
  CHECK(table_column(t, "rope tension, bottom [kN]") == std::vector<std::string>{"117.72", "-"});
  CHECK(table_column(t, "pivot_load limit [kN]") == std::vector<std::string>{"100.00", "-"});
  CHECK(p.text.find("pivot_load limit below the static load at the pivot above 'hoist rope'") != std::string::npos);
  // The dynamic factor divides by these loads: its definition says so, and that it is simulated.
  CHECK(p.text.find("peak pivot load ÷ static pivot load") != std::string::npos);
  CHECK(p.text.find("not a design standard's dynamic coefficient") != std::string::npos);
  CHECK(p.pdf_text.find("Static loads (hanging at rest)") != std::string::npos);
  // The shared packet has a steady wind: its table says the wind is left out.
  CHECK(read(packet().dir / "report.html").find("steady wind of the spec is left out") != std::string::npos);
}

TEST_CASE("each governing case shows its start: scenario, angles and rates", "[report]") {
  const HeavyPacket& p = heavy_packet();
  const std::vector<std::string> starts = table_column(p.tables["governing-table"], "start");
  const std::vector<std::string> checks = table_column(p.tables["governing-table"], "check");
  REQUIRE(starts.size() == p.report.checks.size());  // every check of this spec is per case
  for (std::size_t i = 0; i < starts.size(); ++i) {
    const CheckResult& c = p.report.checks[i];
    INFO(checks[i] << ": " << starts[i]);
    REQUIRE((c.governing == 0 || c.governing == 1));
    // The two starts as written in kHeavySpec (a link not listed starts at 0).
    const std::string expected = c.governing == 0 ? "scenario 'stop', θ0 = (3, -2) deg, ω0 = (1, 0) deg/s"
                                                  : "scenario 'stop', θ0 = (-4, 1) deg, ω0 = (0, 0) deg/s";
    CHECK(starts[i].find(expected) != std::string::npos);
  }
  CHECK(p.text.find("Start: scenario 'stop'") != std::string::npos);  // under each plotted case's heading
}

TEST_CASE("the force on the trolley: the reaction's sign convention, its peak and components", "[report]") {
  const HeavyPacket& p = heavy_packet();
  CHECK(p.text.find("R is the force of the upper body") != std::string::npos);
  // Its peak magnitude is the peak pivot load of the top pivot, which the pivot_load check found.
  const CheckResult& top_load = p.report.checks[0];
  REQUIRE(top_load.key == "pivot_load");
  CHECK(p.text.find(fmt::format("its peak magnitude over the cases is {:.2f} kN", top_load.worst / 1000)) !=
        std::string::npos);
  CHECK(p.text.find("At rest F = (0, -119.19) kN, straight down") != std::string::npos);
  CHECK(p.text.find("largest |F_x|") != std::string::npos);
  // The recorded force on the support is minus the reaction on the top link: same magnitude.
  REQUIRE_FALSE(p.report.recorded.empty());
  for (const RecordedCase& rc : p.report.recorded) {
    REQUIRE(rc.support_x.size() == rc.t.size());
    for (std::size_t j = 0; j < rc.t.size(); ++j)
      CHECK(std::hypot(rc.support_x[j], rc.support_y[j]) == Approx(rc.load[0][j]).epsilon(1e-12));
    CHECK(rc.support_y.front() < 0);  // hanging: the chain pulls the trolley down
  }
}

TEST_CASE("small things: masses in plain digits, one title, no empty revision, one line for no chaos", "[report]") {
  const HeavyPacket& p = heavy_packet();
  CHECK(table_column(p.tables["links-table"], "mass [kg]") == std::vector<std::string>{"150", "12,000"});
  CHECK(p.text.find("1.2e+04") == std::string::npos);
  CHECK(p.html.find("<title>Heavy hook</title>") != std::string::npos);
  std::smatch subject;
  REQUIRE(std::regex_search(p.pdf_info, subject, std::regex(R"(Subject:\s+(.*))")));
  CHECK(subject[1].str() == "Design check of Heavy hook");
  CHECK(p.text.find("No chaos indicator was asked for") != std::string::npos);
  CHECK(p.text.find("Not computed") == std::string::npos);

  // The shared packet: the modes table explains its frequency columns, and the ladder caption
  // counts the steps without calling them degrees.
  const std::string html = read(packet().dir / "report.html");
  for (const char* note : {"frequency: the undamped natural frequency", "period: 1/f", "damped freq.: Im(λ)/2π"})
    CHECK(html.find(note) != std::string::npos);
  CHECK(html.find("(2 perturbation steps on") != std::string::npos);
  CHECK(html.find("deg perturbation steps") == std::string::npos);
}

TEST_CASE("governing pages: peaks marked where located, inputs beside the sway, angle-angle plots of every pair",
          "[report][plots]") {
  // Three links, a braking base and a wind with a gust: every governing page must show the base
  // motion and the wind force, an angle-angle plot for links 1-2 and 2-3, and each pivot's peak
  // load marked with the value and time the run located (the check's own figure for the governing
  // link of the pivot_load check).
  const Spec spec = load_spec_text(R"(
swaybound: 1
name: three links with wind (invented data)
gravity: 9.81
links:
  - {name: hanger, length: 1.5 m, mass: 60 kg}
  - {name: swivel, length: 0.5 m, mass: 20 kg}
  - {name: basket, length: 1.2 m, mass: 300 kg, pivot: {damper: {coefficient: 400 N m s/rad}}}
wind: [{speed: 8 m/s, link: basket, drag_area: 2 m^2, drag_coefficient: 1.1, gust: {start: 2 s, for: 1 s, speed: 6 m/s}}]
base: {scenarios: [{name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 1 s, x: -1 m/s^2}]}]}
cases: {duration: 5 s, initial: [{grid: {theta: [[-3 deg, 3 deg, 2], [0 deg, 0 deg, 1], [-3 deg, 3 deg, 2]]}}]}
limits:
  - {pivot_load: 10 kN}
  - {peak_angle: 20 deg}
)",
                                   "plots.yaml");
  CheckOptions options;
  options.audit = false;
  const CheckReport r = run_check(spec, options);
  const std::string html = report_html(spec, r, {"2025-02-03", "", ""}, nullptr);
  for (const char* needle : {"Angle-angle plot, links 1 and 2", "Angle-angle plot, links 2 and 3",
                             "Base (top pivot) motion", "Wind force"})
    CHECK(html.find(needle) != std::string::npos);
  // Text inside the plots is text in the PDF (pdftotext reads it); in the HTML it is drawn.
  const fs::path pdf = temp_dir() / "plots.pdf";
  write_report_pdf(spec, r, pdf.string(), {"2025-02-03", "", ""}, nullptr);
  std::string text;
  REQUIRE(run(fmt::format("pdftotext {} -", pdf.string()), text) == 0);
  CHECK(text.find("wind[0] on basket") != std::string::npos);
  CHECK(html.find("Phase portrait") == std::string::npos);  // angle against angle is not a phase portrait
  REQUIRE(!r.recorded.empty());
  const CheckResult& load = r.checks[0];
  REQUIRE(load.key == "pivot_load");
  const RecordedCase* rc = nullptr;
  for (const auto& c : r.recorded)
    if (c.index == load.governing) rc = &c;
  REQUIRE(rc != nullptr);
  // The recording run locates the same peak as the check (same case, same tolerance), and the
  // samples alone stay below it.
  const Extreme& peak = rc->peak_load[static_cast<std::size_t>(load.governing_link)];
  CHECK(peak.value == Approx(load.worst).epsilon(1e-9));
  const auto& samples = rc->load[static_cast<std::size_t>(load.governing_link)];
  CHECK(*std::max_element(samples.begin(), samples.end()) <= peak.value * (1 + 1e-12));
  // Every pivot's located peak of each plotted case is marked with its value and time.
  int plotted = 0;
  for (const auto& c : r.recorded) {
    if (html.find("Case " + c.id + " (governs") == std::string::npos) continue;
    ++plotted;
    for (const Extreme& e : c.peak_load) {
      const std::string mark = fmt::format("peak {:.2f} kN at {:.2f} s", e.value / 1000, e.time);
      INFO(mark);
      CHECK(text.find(mark) != std::string::npos);
    }
  }
  CHECK(plotted >= 1);
  // The recorded inputs are the scenario's: -1 m/s^2 during the first second, then 0.
  REQUIRE(rc->t.size() == rc->base_ax.size());
  for (std::size_t k = 0; k < rc->t.size(); ++k) CHECK(rc->base_ax[k] == (rc->t[k] < 1 - 1e-9 ? -1.0 : 0.0));
}

TEST_CASE("report.html keeps each glyph outline once and every reference resolves", "[report][html]") {
  const auto count = [](const std::string& s, const std::string& what) {
    std::size_t n = 0;
    for (std::size_t at = s.find(what); at != std::string::npos; at = s.find(what, at + 1)) ++n;
    return n;
  };
  // Every href="#ID" names an element of the page.
  const auto refs_resolve = [](const std::string& s) {
    for (std::size_t at = s.find("href=\"#"); at != std::string::npos; at = s.find("href=\"#", at + 1)) {
      const std::size_t start = at + 7, end = s.find('"', start);
      if (s.find("id=\"" + s.substr(start, end - start) + "\"") == std::string::npos) return false;
    }
    return true;
  };
  // The same plot twice on one page: cairo writes its glyphs twice; shared, they stand once.
  const plot::Plot p = plot::line_chart("Glyph test", {"time", "s"}, {"angle", "deg"}, {{"θ", {0, 1, 2}, {0, 1, 0}}});
  const std::string a = plot::to_svg(p, "a"), b = plot::to_svg(p, "b");
  const std::string page = "<html><body>\n" + a.substr(a.find("<svg")) + b.substr(b.find("<svg")) + "</body></html>";
  const std::string shared = share_svg_glyphs(page);
  REQUIRE(count(page, "<symbol") > 0);
  CHECK(count(shared, "<symbol") * 2 <= count(page, "<symbol"));  // (equal outlines within one SVG merge too)
  CHECK(count(shared, "<use") == count(page, "<use"));
  CHECK(refs_resolve(page));
  CHECK(refs_resolve(shared));
  CHECK(shared.size() < page.size());

  // The packet's page: every glyph once, every reference resolves.
  const std::string html = read(packet().dir / "report.html");
  CHECK(refs_resolve(html));
  std::set<std::string> bodies;
  for (std::size_t at = html.find("<symbol"); at != std::string::npos; at = html.find("<symbol", at + 1)) {
    const std::size_t open = html.find('>', at) + 1, close = html.find("</symbol>", open);
    CHECK(bodies.insert(html.substr(open, close - open)).second);
  }
}
