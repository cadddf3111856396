// The packet of a chain with an elastic rope: the recording of its governing cases (tension,
// slack intervals, snatch peaks, length, drum, lift-off), the rope page, results.json and cases.csv.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <vector>

#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>

#include <fmt/format.h>
#include <unistd.h>
#include <nlohmann/json.hpp>

#include "../../src/report/report_model.hpp"
#include "../support/rope_packet_spec.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/report/check_packet.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/plot.hpp"
#include "swaybound/report/verify.hpp"

using namespace swaybound;
using swaybound::testing::snatch_spec;

namespace {

struct Recorded {
  Spec spec;
  CheckReport report;
};

/// The check of the snatching rope (the hoisting scenario), recorded; shared by the tests below.
const Recorded& snatching() {
  static const Recorded r = [] {
    Recorded k;
    k.spec = snatch_spec();
    CheckOptions o;
    o.audit = false;
    k.report = run_check(k.spec, o);
    return k;
  }();
  return r;
}

/// The run's own record of its switches, from a plain simulate_case of the same case.
RunOutcome outcome_of(const Spec& spec) {
  const Model model = build_model(spec);
  Workspace ws(model);
  const CaseDef def = CaseSpace(spec).at(0);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 0;
  return simulate_case(model, ws, def.scenario, def.initial, settings);
}

}  // namespace

TEST_CASE("recorded rope: slack intervals at the run's located switches, lift-off at its event",
          "[rope-packet]") {
  const Recorded& r = snatching();
  REQUIRE(r.report.recorded.size() == 1);
  const RecordedCase& rc = r.report.recorded[0];
  REQUIRE(rc.status == "ok");
  REQUIRE(rc.ropes.size() == 1);
  const RecordedRope& rope = rc.ropes[0];
  const RunOutcome out = outcome_of(r.spec);
  REQUIRE(out.status == RunStatus::ok);
  REQUIRE(out.events.size() < RunOutcome::kMaxRecordedEvents);
  // The rope starts slack (5 cm at t = 0): the first interval opens at 0, then every slack event
  // opens one and every taut event closes one.
  std::vector<Interval> expected{{0, std::nan("")}};
  double lift_off = std::nan("");
  for (const ModeEvent& e : out.events) {
    if (e.kind == ModeEventKind::lift_off) lift_off = e.time;
    if (e.link != 0) continue;
    if (e.kind == ModeEventKind::taut) expected.back().to = e.time;
    if (e.kind == ModeEventKind::slack) expected.push_back({e.time, std::nan("")});
  }
  if (std::isnan(expected.back().to)) expected.back().to = out.t_reached;
  REQUIRE(expected.size() >= 3);  // slack at the start and at least twice after lift-off
  // The first interval is the initial slack being taken up: kept apart from the slack intervals,
  // which count once the rope was taut (as the metrics do).
  CHECK(rope.take_up.from == expected[0].from);
  CHECK(rope.take_up.to == expected[0].to);
  expected.erase(expected.begin());
  REQUIRE(rope.slack.size() == expected.size());
  CHECK(rope.slack_intervals == static_cast<long>(expected.size()));
  double total = 0;
  for (std::size_t k = 0; k < expected.size(); ++k) {
    CHECK(rope.slack[k].from == expected[k].from);
    CHECK(rope.slack[k].to == expected[k].to);
    total += rope.slack[k].to - rope.slack[k].from;
  }
  // The drum hauls in 5 cm of slack at 0.6 m/s before the rope is taut.
  CHECK(rope.take_up.to == Approx(0.05 / 0.6).epsilon(1e-6));
  // Located, not sampled: the recording's samples are 10 ms apart, the switches fall between them.
  CHECK(std::fmod(rope.slack[0].from * 100, 1.0) > 1e-6);
  // The metrics of the re-run agree with the intervals.
  CHECK(rope.slack_count == rope.slack_intervals);
  CHECK(rope.slack_time == Approx(total).epsilon(1e-12));
  CHECK(rc.switches == out.switches);
  CHECK(rc.lift_off_time == lift_off);
  CHECK(rc.lift_off_time > rope.take_up.to);  // the rope takes the weight after it is taut
}

TEST_CASE("recorded rope: one snatch peak per re-tensioning, located between the samples", "[rope-packet]") {
  const Recorded& r = snatching();
  const RecordedCase& rc = r.report.recorded[0];
  const RecordedRope& rope = rc.ropes[0];
  // Every taut interval after a slack one has its peak: the first slack interval ends where the
  // first taut one begins, and so on.
  REQUIRE(rope.snatches.size() == rope.slack.size());
  double largest = 0;
  for (std::size_t j = 0; j < rope.snatches.size(); ++j) {
    const SnatchPeak& p = rope.snatches[j];
    INFO("snatch " << j);
    CHECK(p.located);
    CHECK(p.taut.from == rope.slack[j].to);
    CHECK(p.taut.to == (j + 1 < rope.slack.size() ? rope.slack[j + 1].from : rc.t_end));
    CHECK(p.peak.time >= p.taut.from);
    CHECK(p.peak.time <= p.taut.to);
    // No recorded sample of the interval is above the located peak; the largest is close below.
    double sampled = 0;
    for (std::size_t i = 0; i < rc.t.size(); ++i)
      if (rc.t[i] >= p.taut.from && rc.t[i] <= p.taut.to) sampled = std::max(sampled, rope.force[i]);
    CHECK(sampled <= p.peak.value * (1 + 1e-9));
    CHECK(sampled >= 0.95 * p.peak.value);
    largest = std::max(largest, p.peak.value);
  }
  // The largest of them is the case's snatch load, as the check found it.
  CHECK(largest == Approx(rope.snatch.value).epsilon(1e-9));
  const auto check = std::find_if(r.report.checks.begin(), r.report.checks.end(),
                                  [](const CheckResult& c) { return c.key == "snatch_load"; });
  REQUIRE(check != r.report.checks.end());
  CHECK(largest == Approx(check->worst).epsilon(1e-9));
  // The first catch lifts the load off the ground at the drum's speed: above the static tension.
  CHECK(rope.snatches[0].peak.value > rope.static_force);
}

TEST_CASE("recorded rope: drum travel and speed, rope length and stretch per sample", "[rope-packet]") {
  const Recorded& r = snatching();
  const RecordedCase& rc = r.report.recorded[0];
  const RecordedRope& rope = rc.ropes[0];
  REQUIRE(rc.hoist_link == 0);
  REQUIRE(rc.drum_travel.size() == rc.t.size());
  REQUIRE(rope.length.size() == rc.t.size());
  for (std::size_t i = 0; i < rc.t.size(); i += 37) {
    INFO("t = " << rc.t[i]);
    CHECK(rc.drum_speed[i] == Approx(0.6));
    CHECK(rc.drum_travel[i] == Approx(0.6 * rc.t[i]).margin(1e-12));
    // One part of line: the unstretched length is the rope's less the rope hauled in.
    CHECK(rope.unstretched[i] == Approx(testing::kSnatchRope - 0.6 * rc.t[i]).margin(1e-9));
    CHECK(rope.stretch[i] == Approx(rope.length[i] - rope.unstretched[i]).margin(1e-12));
    CHECK(rc.hoist_length[i] == rope.length[i]);
    if (rope.stretch[i] < 0) CHECK(rope.force[i] == 0);
  }
}

TEST_CASE("recorded rope at rest: the static tension of the fall, no slack, no snatch", "[rope-packet]") {
  Spec spec = snatch_spec(false, 2);
  CheckOptions o;
  o.audit = false;
  const CheckReport r = run_check(spec, o);
  REQUIRE(r.recorded.size() == 1);
  const RecordedCase& rc = r.recorded[0];
  REQUIRE(rc.ropes.size() == 1);
  const RecordedRope& rope = rc.ropes[0];
  // Hanging still: the fall holds the load and the lower half of its own weight (its centre of
  // mass is at mid-length).
  const double expected = 9.81 * (testing::kSnatchLoad + 0.5 * testing::kSnatchRopeMass);
  CHECK(rope.static_force == Approx(expected).epsilon(1e-14));
  for (double f : rope.force) CHECK(f == Approx(expected).epsilon(1e-6));
  CHECK(rope.slack.empty());
  CHECK(rope.snatches.empty());
  CHECK(rc.hoist_link == -1);
  CHECK(rc.drum_travel.empty());
  CHECK(std::isnan(rc.lift_off_time));
}

namespace {

/// The figures of the governing-cases section whose plot title starts with `title`.
std::vector<const report_doc::Figure*> figures_titled(const report_doc::Document& d,
                                                      const std::string& title) {
  std::vector<const report_doc::Figure*> out;
  for (const auto& s : d.sections)
    if (s.id == "governing")
      for (const auto& b : s.blocks)
        for (const auto& f : b.figures)
          if (f.plot.title.rfind(title, 0) == 0) out.push_back(&f);
  return out;
}

}  // namespace

TEST_CASE("rope page: tension with the slack intervals shaded, snatch peaks marked, static tension, lift-off",
          "[rope-packet][report]") {
  const Recorded& r = snatching();
  const RecordedCase& rc = r.report.recorded[0];
  const RecordedRope& rope = rc.ropes[0];
  const report_doc::Document d =
      report_doc::build_document(r.spec, r.report, {"2025-02-03", "", ""}, nullptr);
  const auto tension = figures_titled(d, "Rope l0: tension");
  REQUIRE(tension.size() == 1);
  const plot::Plot& p = tension[0]->plot;
  // One band per slack interval, exactly the located interval, then the initial slack taken up.
  REQUIRE(p.bands.size() == rope.slack.size() + 1);
  REQUIRE(!rope.slack.empty());
  for (std::size_t k = 0; k < rope.slack.size(); ++k) {
    CHECK(p.bands[k].from == rope.slack[k].from);
    CHECK(p.bands[k].to == rope.slack[k].to);
  }
  CHECK(p.bands.back().from == rope.take_up.from);
  CHECK(p.bands.back().to == rope.take_up.to);
  CHECK(!p.band_label.empty());
  // A mark on every snatch peak at its located time and value; the largest carries both.
  for (const SnatchPeak& s : rope.snatches) {
    const auto mark = std::find_if(p.marks.begin(), p.marks.end(), [&](const plot::PointMark& m) {
      return m.x == s.peak.time && m.y == s.peak.value / 1000;
    });
    CHECK(mark != p.marks.end());
  }
  const auto largest =
      std::max_element(rope.snatches.begin(), rope.snatches.end(),
                       [](const SnatchPeak& a, const SnatchPeak& b) { return a.peak.value < b.peak.value; });
  const std::string label =
      fmt::format("snatch {:.2f} kN at {:.2f} s", largest->peak.value / 1000, largest->peak.time);
  CHECK(std::any_of(p.marks.begin(), p.marks.end(),
                    [&](const plot::PointMark& m) { return m.label == label; }));
  // Labels stay few: the plot must stay readable however often the rope snatches.
  const auto labelled = std::count_if(p.marks.begin(), p.marks.end(),
                                      [](const plot::PointMark& m) { return !m.label.empty(); });
  CHECK(labelled <= 4);
  // The static tension g (m + m_rope / 2) as a horizontal line, lift-off as a vertical one.
  const double static_kn = 9.81 * (testing::kSnatchLoad + 0.5 * testing::kSnatchRopeMass) / 1000;
  CHECK(std::any_of(p.refs.begin(), p.refs.end(), [&](const plot::RefLine& l) {
    return !l.vertical && l.value == Approx(static_kn).epsilon(1e-12) &&
           l.label.find("static") != std::string::npos;
  }));
  CHECK(std::any_of(p.refs.begin(), p.refs.end(), [&](const plot::RefLine& l) {
    return l.vertical && l.value == rc.lift_off_time && l.label.find("lift-off") != std::string::npos;
  }));
  // The tension series is the recorded fall tension in kN.
  REQUIRE(p.series.size() == 1);
  CHECK(p.series[0].y.size() == rope.force.size());
  CHECK(p.series[0].y[100] == rope.force[100] / 1000);
  // The hoist: rope length and the drum beside each other.
  const auto length = figures_titled(d, "Rope l0: length");
  const auto drum = figures_titled(d, "Hoist drum");
  REQUIRE(length.size() == 1);
  REQUIRE(drum.size() == 1);
  CHECK(length[0]->width_share == 0.5);
  CHECK(drum[0]->plot.series.size() == 2);
  CHECK(drum[0]->plot.series[1].y == rc.drum_speed);
}

namespace {
/// A chain whose only rope is inextensible, with a peak_angle limit (test data).
Spec inextensible_rope_spec() {
  testing::RopeChain c;
  c.links = {{.m = 1, .L = 2, .c = 1, .I = 0.3, .rope = true}, {.m = 100, .L = 1, .c = 0.5, .I = 8}};
  c.duration = 1;
  Spec spec = c.spec();
  spec.cases.initial[0].theta = {{0.05, 0.05, 1}, {0, 0, 1}};
  LimitSpec l;
  l.kind = LimitKind::peak_angle;
  l.key = "peak_angle";
  l.value = 0.5;
  spec.limits.push_back(l);
  return spec;
}
}  // namespace

TEST_CASE("a chain without elastic ropes has no rope page", "[rope-packet][report]") {
  const Spec spec = inextensible_rope_spec();
  CheckOptions o;
  o.audit = false;
  const CheckReport r = run_check(spec, o);
  REQUIRE(r.recorded.size() == 1);
  CHECK(r.recorded[0].ropes.empty());
  const report_doc::Document d = report_doc::build_document(spec, r, {"2025-02-03", "", ""}, nullptr);
  CHECK(figures_titled(d, "Rope").empty());
  CHECK(figures_titled(d, "Link angles").size() == 1);
}

TEST_CASE("plot bands shade their x interval under the data", "[rope-packet][plots]") {
  plot::Plot p =
      plot::line_chart("bands", {"time", "s"}, {"force", "kN"}, {{"f", {0, 10}, {1, 1}, true, false, 0}});
  p.bands.push_back({2, 4});
  p.band_label = "slack";
  const std::string with = plot::to_png(p, 1);
  p.bands.clear();
  const std::string without = plot::to_png(p, 1);
  CHECK(with != without);
  // The legend names the bands only when some band lies within the plotted range.
  p.bands.push_back({20, 30});
  CHECK(plot::to_png(p, 1) == without);
}

namespace {

/// The text of the scope section's bullets and paragraphs.
std::string scope_text(const report_doc::Document& d) {
  std::string text;
  for (const auto& s : d.sections)
    if (s.id == "scope")
      for (const auto& b : s.blocks) {
        for (const auto& span : b.text) text += span.text;
        for (const auto& item : b.items)
          for (const auto& span : item) text += span.text + "\n";
      }
  return text;
}

}  // namespace

TEST_CASE("model notes: the elastic rope law, the drum's length profile and the ground of a lift-off",
          "[rope-packet][report]") {
  const Recorded& r = snatching();
  const std::string text =
      scope_text(report_doc::build_document(r.spec, r.report, {"2025-02-03", "", ""}, nullptr));
  INFO(text);
  for (const char* needle : {"Kelvin-Voigt", "only pulls", "k = n EA / ℓ", "no bending stiffness",
                             "no wave travels", "mass is stretched uniformly", "ℓ(t) = ℓ0 - s(t) / n",
                             "ground's upward force", "reaches zero", "neither lets the load slide nor tip",
                             "touching down again ends the case", "'l0' 1 part(s) of EA = 20,000,000 N"})
    CHECK(text.find(needle) != std::string::npos);
  // What no longer holds for this chain is not claimed.
  CHECK(text.find("the rope length is fixed") == std::string::npos);
  CHECK(text.find("a case ends when a rope goes slack") == std::string::npos);
  // A chain without them keeps the rigid-rope notes.
  const Spec still = snatch_spec(false, 1);
  CHECK(scope_text(report_doc::build_document(still, r.report, {}, nullptr)).find("Lift-off") ==
        std::string::npos);
}

namespace {

namespace fs = std::filesystem;
using Json = nlohmann::json;

std::string read_file(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// The fields of one CSV record (quotes removed, "" inside quotes read as ").
std::vector<std::string> csv_fields(const std::string& line) {
  std::vector<std::string> out(1);
  bool quoted = false;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const char c = line[i];
    if (c == '"' && quoted && i + 1 < line.size() && line[i + 1] == '"') {
      out.back() += '"';
      ++i;
    } else if (c == '"') {
      quoted = !quoted;
    } else if (c == ',' && !quoted) {
      out.emplace_back();
    } else if (c != '\n' && c != '\r') {
      out.back() += c;
    }
  }
  return out;
}

struct WrittenPacket {
  fs::path dir;
  std::vector<CaseMetrics> cases;  ///< as the run streamed them
  Json results;
  std::map<std::string, std::string> row;  ///< cases.csv: column -> value of the only case
  std::vector<std::string> header;
};

/// A check packet of `spec` written by the library into a folder of this process.
WrittenPacket write_packet(Spec spec, const std::string& name) {
  WrittenPacket w;
  w.dir = fs::temp_directory_path() / fmt::format("swaybound-test-rope-packet-{}-{}", ::getpid(), name);
  fs::remove_all(w.dir);
  spec.source_text = "# in-memory test spec: " + spec.name + "\n";
  {
    CheckPacket packet(spec, spec.source_text,
                       PacketOptions{w.dir.string(), false, false, "2025-02-03T10:00:00Z"});
    CheckOptions options;
    options.audit = false;
    options.on_case = [&](const CaseMetrics& m) { w.cases.push_back(m); };
    packet.attach(options);
    packet.finish(run_check(spec, options));
  }
  w.results = Json::parse(read_file(w.dir / "results.json"));
  std::istringstream csv(read_file(w.dir / "cases.csv"));
  std::string header, row;
  std::getline(csv, header);
  std::getline(csv, row);
  w.header = csv_fields(header);
  const std::vector<std::string> values = csv_fields(row);
  REQUIRE(values.size() == w.header.size());
  for (std::size_t k = 0; k < values.size(); ++k) w.row[w.header[k]] = values[k];
  return w;
}

}  // namespace

TEST_CASE("rope packet: results.json and cases.csv carry the rope figures of the run, and verify accepts it",
          "[rope-packet][packet]") {
  const WrittenPacket w = write_packet(snatch_spec(), "snatch");
  const VerifyResult v = verify_packet(w.dir.string());
  INFO(verify_report(v));
  CHECK(v.intact());
  CHECK(v.cases_csv_counted);
  REQUIRE(w.cases.size() == 1);
  const CaseMetrics& m = w.cases[0];
  REQUIRE(m.ok());
  REQUIRE(m.slack_count[0] >= 3);
  // results.json: the governing case's rope as the streamed run measured it.
  REQUIRE(w.results.contains("governing_cases"));
  REQUIRE(w.results["governing_cases"].size() == 1);
  const Json& g = w.results["governing_cases"][0];
  CHECK(g["case"] == m.id);
  CHECK(g["switches"].get<long>() == m.switches);
  CHECK(g["lift_off_time_s"].get<double>() == Approx(m.lift_off_time).epsilon(1e-9));
  REQUIRE(g["ropes"].size() == 1);
  const Json& rope = g["ropes"][0];
  CHECK(rope["link"] == "l0");
  CHECK(rope["slack_count"].get<long>() == m.slack_count[0]);
  CHECK(rope["slack_time_s"].get<double>() == Approx(m.slack_time[0]).epsilon(1e-9));
  CHECK(rope["snatch_load_n"].get<double>() == Approx(m.snatch[0].value).epsilon(1e-9));
  CHECK(rope["snatch_load_time_s"].get<double>() == Approx(m.snatch[0].time).epsilon(1e-9));
  CHECK(rope["peak_rope_tension_n"].get<double>() == Approx(m.peak_rope_force[0].value).epsilon(1e-9));
  CHECK(rope["slack_intervals_listed"] == true);
  REQUIRE(rope["slack_intervals_s"].size() == static_cast<std::size_t>(m.slack_count[0]));
  double total = 0;
  for (const Json& in : rope["slack_intervals_s"]) total += in[1].get<double>() - in[0].get<double>();
  CHECK(total == Approx(m.slack_time[0]).epsilon(1e-9));
  CHECK(rope["snatch_peaks"].size() == rope["slack_intervals_s"].size());
  // cases.csv: the rope kinds' columns for the rope link only, in SI units, and the counts.
  for (const char* column :
       {"peak_rope_tension(l0) [N]", "peak_line_pull(l0) [N]", "slack_time(l0) [s]", "snatch_load(l0) [N]",
        "slack_count(l0) [-]", "switches [-]", "lift_off_time [s]"})
    CHECK(w.row.count(column) == 1);
  for (const char* column : {"peak_rope_tension(l1) [N]", "slack_time(l1) [s]", "slack_count(l1) [-]"})
    CHECK(w.row.count(column) == 0);
  CHECK(std::stod(w.row.at("peak_rope_tension(l0) [N]")) == Approx(m.peak_rope_force[0].value).epsilon(1e-9));
  CHECK(std::stod(w.row.at("peak_line_pull(l0) [N]")) ==
        Approx(m.peak_rope_force[0].value).epsilon(1e-9));  // one part
  CHECK(std::stod(w.row.at("slack_time(l0) [s]")) == Approx(m.slack_time[0]).epsilon(1e-9));
  CHECK(std::stod(w.row.at("snatch_load(l0) [N]")) == Approx(m.snatch[0].value).epsilon(1e-9));
  CHECK(std::stol(w.row.at("slack_count(l0) [-]")) == m.slack_count[0]);
  CHECK(std::stol(w.row.at("switches [-]")) == m.switches);
  CHECK(std::stod(w.row.at("lift_off_time [s]")) == Approx(m.lift_off_time).epsilon(1e-9));
  fs::remove_all(w.dir);
}

TEST_CASE("a chain with an inextensible rope only: no rope count columns, no governing_cases in results.json",
          "[rope-packet][packet]") {
  const Spec spec = inextensible_rope_spec();
  const WrittenPacket w = write_packet(spec, "rigid");
  CHECK(verify_packet(w.dir.string()).intact());
  CHECK_FALSE(w.results.contains("governing_cases"));
  for (const auto& column : w.header) {
    INFO(column);
    CHECK(column.find("slack") == std::string::npos);
    CHECK(column.find("switches") == std::string::npos);
    CHECK(column.find("lift_off") == std::string::npos);
  }
  // The inextensible rope link still has the rope kinds that apply to it (its fall's tension).
  CHECK(w.row.count("peak_rope_tension(l0) [N]") == 1);
  CHECK(w.row.count("peak_rope_tension(l1) [N]") == 0);
  fs::remove_all(w.dir);
}

TEST_CASE("rope recordings keep at most kMaxRecordedPoints per series", "[rope-packet][bounded]") {
  Spec spec = snatch_spec(true, 2);
  spec.cases.output_rate = 3 * kMaxRecordedPoints;  // over 6 x more samples than kept
  CheckOptions o;
  o.audit = false;
  const CheckReport r = run_check(spec, o);
  REQUIRE(r.recorded.size() == 1);
  const RecordedCase& rc = r.recorded[0];
  CHECK(rc.stride >= 6);
  CHECK(static_cast<long>(rc.t.size()) <= kMaxRecordedPoints);
  for (const auto* series : {&rc.ropes[0].force, &rc.ropes[0].length, &rc.ropes[0].unstretched,
                             &rc.ropes[0].stretch, &rc.hoist_length, &rc.drum_travel, &rc.drum_speed})
    CHECK(series->size() == rc.t.size());
  // The intervals do not depend on the sampling: the same switches as at 100 samples/s.
  const RecordedCase& coarse = snatching().report.recorded[0];
  REQUIRE(coarse.ropes[0].slack.size() >= rc.ropes[0].slack.size());
  for (std::size_t k = 0; k < rc.ropes[0].slack.size(); ++k)
    CHECK(rc.ropes[0].slack[k].from == coarse.ropes[0].slack[k].from);
}
