// The comparison of a shaped travel drive with its unshaped moves (checks/shaping_compare.hpp), in
// the check report, the packet's document and results.json. References:
//  - a point mass on a massless link of length L is a pendulum of natural frequency sqrt(g / L) / 2 pi;
//  - in the linear range a ZV shaper designed at the mode's own frequency and damping cancels the
//    residual vibration of any command (Singer & Seering 1990: V = 0 there), and its two impulses
//    are half a damped period apart, so the shaped moves end half a period later.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <string>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "../../src/report/report_model.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/shaping_compare.hpp"
#include "swaybound/model/shaper.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {

constexpr double kG = 9.81;
constexpr double kLength = 9.81;  // w = 1 rad/s
const double kFrequency = 1 / (2 * std::numbers::pi);  // [Hz]

/// ", shaper: {kind: zv, frequency: F Hz}" for a travel drive's flow map.
std::string zv(double frequency) { return fmt::format(", shaper: {{kind: zv, frequency: {:.17g} Hz}}", frequency); }

/// The link of a point mass on a massless rope of length kLength (100 kg, com at its end).
const char* const kPointMass = "mass: 100 kg, com: 9.81 m, inertia: 0";

/// A pendulum whose trolley makes a small move (0.05 m/s^2, linear range) at t = 1 s: scenario
/// "shaped" with `shaper` (zv(...), or "" for none) and `extra_scenarios` (YAML list items) after
/// it; the link of length kLength has `link` (its mass, com, inertia); plus `extra` top-level YAML.
std::string pendulum_yaml(const std::string& shaper, const std::string& extra_scenarios = "",
                          const std::string& extra = "", const std::string& starts = "{single: {theta: [0 deg]}}",
                          const std::string& link = kPointMass) {
  return fmt::format(R"(swaybound: 1
name: shaped pendulum
gravity: {g}
links:
  - {{name: rope, kind: rope, length: {L} m, {link}}}
base:
  scenarios:
    - name: shaped
      travel: {{speed: 0, moves: [{{at: 1 s, to: 0.15 m/s, accel: 0.05 m/s^2}}]{shaper}}}
{scenarios}
cases: {{duration: 40 s, output_rate: 20 /s, initial: [{starts}]}}
limits:
  - {{residual_sway: 10 deg, after: 30 s}}
solver: {{rtol: 1e-11, atol: 1e-13}}
{extra}
)",
                     fmt::arg("g", kG), fmt::arg("L", kLength), fmt::arg("link", link), fmt::arg("shaper", shaper),
                     fmt::arg("scenarios", extra_scenarios), fmt::arg("extra", extra), fmt::arg("starts", starts));
}

CheckReport check(const Spec& spec) {
  CheckOptions options;
  options.jobs = 1;
  options.audit = false;
  return run_check(spec, options);
}

}  // namespace

TEST_CASE("shaping comparison: a ZV shaper at the pendulum's own frequency leaves no residual sway",
          "[shaping_compare]") {
  const Spec spec = load_spec_text(pendulum_yaml(zv(kFrequency)), "shaped.yaml");
  const CheckReport r = check(spec);
  REQUIRE(r.shaping.size() == 1);
  const ShapingComparison& c = r.shaping[0];
  CHECK(c.scenario == 0);
  CHECK(c.chosen_by == "residual_sway");
  REQUIRE(c.shaped.status == "ok");
  REQUIRE(c.unshaped.status == "ok");
  // The unshaped move of 3 s (about half a period) leaves a clear swing; the shaped one almost none.
  CHECK(c.unshaped.residual_max > 1e-3);
  CHECK(c.shaped.residual_max < 1e-4 * c.unshaped.residual_max);
  CHECK(c.reduction > 1 - 1e-4);
  // Half the period 2 pi / w = 2 pi s.
  CHECK(c.extra_time == Approx(std::numbers::pi).epsilon(1e-12));
  CHECK(c.shaped.move_end == Approx(1 + 3 + std::numbers::pi).epsilon(1e-12));
  CHECK(c.unshaped.move_end == Approx(4).epsilon(1e-12));
  CHECK(c.window_start == c.shaped.move_end);
  // Both recordings cover the run and differ in their base speed while the shaper acts.
  REQUIRE(!c.shaped.t.empty());
  CHECK(c.shaped.t.back() == Approx(40));
  CHECK(c.shaped.top_angle.size() == c.shaped.t.size());
  CHECK(c.unshaped.base_speed.size() == c.unshaped.t.size());
  CHECK(c.unshaped.base_speed.back() == Approx(0.15));
  CHECK(c.shaped.base_speed.back() == Approx(0.15));
}

TEST_CASE("shaping comparison: the sensitivity curve is the shaper's residual vibration, marked at the chain's "
          "frequencies",
          "[shaping_compare]") {
  // A uniform rod (com L/2, inertia m L^2 / 12 about it: w^2 = 3 g / 2 L), shaped 10% above its
  // frequency, its length sized between L/4 and 4 L: the chain's lowest frequency is
  // sqrt(3 g / 2 length) / 2 pi at each of them.
  const auto rod_frequency = [](double length) { return std::sqrt(1.5 * kG / length) / (2 * std::numbers::pi); };
  const double design = 1.1 * rod_frequency(kLength);
  const Spec spec = load_spec_text(pendulum_yaml(zv(design), "", R"(sizing:
  variables:
    - {path: "links[rope].length", range: [2.4525 m, 39.24 m], cost: 1}
  objective: min_cost)",
                                                 "{single: {theta: [0 deg]}}", "mass: 100 kg"),
                                   "shaped.yaml");
  const CheckReport r = check(spec);
  REQUIRE(r.shaping.size() == 1);
  const ShapingComparison& c = r.shaping[0];
  const InputShaper shaper = design_shaper(ShaperKind::zv, design, 0);
  REQUIRE(c.curve.size() == kSensitivityPoints);
  CHECK(c.curve.front().frequency_ratio == Approx(0.5));
  CHECK(c.curve.back().frequency_ratio == Approx(1.5));
  for (const SensitivityPoint& p : c.curve)
    CHECK(p.vibration == Approx(residual_vibration(shaper, p.frequency_ratio * design, 0)).margin(1e-14));
  CHECK(c.range_ends_marked);
  REQUIRE(c.marks.size() == 3);
  const double lengths[] = {kLength, 2.4525, 39.24};
  for (std::size_t k = 0; k < 3; ++k) {
    const double f = rod_frequency(lengths[k]);
    CHECK(c.marks[k].frequency_hz == Approx(f).epsilon(1e-9));
    CHECK(c.marks[k].ratio == Approx(f / design).epsilon(1e-9));
    CHECK(c.marks[k].vibration == Approx(residual_vibration(shaper, f, 0)).epsilon(1e-9));
  }
  // Off its design frequency the shaper leaves a residual: V(1 / 1.1) of the unshaped one, in the
  // linear range (the moves are the same, the mode is undamped).
  CHECK(c.shaped.residual_max / c.unshaped.residual_max == Approx(c.marks[0].vibration).epsilon(1e-3));
}

TEST_CASE("shaping comparison: the case is the scenario's worst under the residual_sway limit",
          "[shaping_compare]") {
  const Spec spec = load_spec_text(
      pendulum_yaml(zv(kFrequency), "", "", "{grid: {theta: [[-2 deg, 1 deg, 4]]}}"), "shaped.yaml");
  CheckOptions options;
  options.jobs = 1;
  options.audit = false;
  double worst = -1;
  std::string worst_id;
  options.on_case = [&](const CaseMetrics& m) {
    if (m.residual[0] > worst) {
      worst = m.residual[0];
      worst_id = m.id;
    }
  };
  const CheckReport r = run_check(spec, options);
  REQUIRE(r.shaping.size() == 1);
  CHECK(r.shaping[0].case_id == worst_id);
  // From a start of -2 deg the free swing stays: shaping removes only what the move adds.
  CHECK(r.shaping[0].shaped.residual_max == Approx(worst).epsilon(1e-6));
}

TEST_CASE("shaping comparison: a scenario without a shaper gives none", "[shaping_compare]") {
  const std::string plain_move =
      "    - name: plain\n      travel: {speed: 0, moves: [{at: 1 s, to: 0.15 m/s, accel: 0.05 m/s^2}]}";
  const Spec mixed = load_spec_text(pendulum_yaml(zv(kFrequency), plain_move), "mixed.yaml");
  const CheckReport r = check(mixed);
  REQUIRE(r.shaping.size() == 1);
  CHECK(r.shaping[0].scenario == 0);

  // Without any shaper: no comparison, no section, no results.json key.
  const Spec none = load_spec_text(pendulum_yaml(""), "none.yaml");
  REQUIRE(none.scenarios[0].travel);
  REQUIRE(!none.scenarios[0].travel->shaper);
  const CheckReport rn = check(none);
  CHECK(rn.shaping.empty());
  const report_doc::Document d = report_doc::build_document(none, rn, {"2025-02-03", "", ""}, nullptr);
  for (const auto& s : d.sections) CHECK(s.id != "drive");
  CHECK(!nlohmann::json::parse(results_json(none, rn)).contains("shaping"));
}

TEST_CASE("shaping comparison: the packet's section and results.json", "[shaping_compare]") {
  const Spec spec = load_spec_text(pendulum_yaml(zv(kFrequency)), "shaped.yaml");
  const CheckReport r = check(spec);
  REQUIRE(r.shaping.size() == 1);
  const report_doc::Document d = report_doc::build_document(spec, r, {"2025-02-03", "", ""}, nullptr);
  const report_doc::Section* drive = nullptr;
  for (const auto& s : d.sections)
    if (s.id == "drive") drive = &s;
  REQUIRE(drive != nullptr);
  CHECK(drive->number == "4c");
  int tables = 0, figures = 0;
  for (const auto& b : drive->blocks) {
    if (b.kind == report_doc::Block::Kind::table) {
      ++tables;
      REQUIRE(b.table.rows.size() == 1);
      CHECK(b.table.rows[0].cells[0] == "shaped");
    }
    if (b.kind == report_doc::Block::Kind::figures) figures += static_cast<int>(b.figures.size());
  }
  CHECK(tables == 1);
  CHECK(figures == 3);

  const auto j = nlohmann::json::parse(results_json(spec, r));
  REQUIRE(j.contains("shaping"));
  REQUIRE(j["shaping"].size() == 1);
  const auto& s = j["shaping"][0];
  CHECK(s["scenario"] == "shaped");
  CHECK(s["shaper"]["kind"] == "zv");
  CHECK(s["shaper"]["duration_s"].get<double>() == Approx(std::numbers::pi));
  CHECK(s["extra_move_time_s"].get<double>() == r.shaping[0].extra_time);
  CHECK(s["shaped"]["residual_sway_rad"].get<double>() == r.shaping[0].shaped.residual_max);
  CHECK(s["unshaped"]["residual_sway_rad"].get<double>() == r.shaping[0].unshaped.residual_max);
  CHECK(s["unshaped"]["moves_end_s"].get<double>() == Approx(4));
  CHECK(s["residual_reduction"].get<double>() == r.shaping[0].reduction);
  CHECK(s["sensitivity"]["frequency_ratio"].size() == kSensitivityPoints);
  CHECK(s["sensitivity"]["marks"][0]["label"] == "nominal");
  CHECK(s["case"] == r.shaping[0].case_id);
}
