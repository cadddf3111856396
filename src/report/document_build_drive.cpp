// Section 4c, drive and command shaping: per scenario whose travel drive has an input shaper, its
// governing case run with and without the shaper (residual sway, the end of the moves, the top
// link's angle and the base speed over time) and the shaper's sensitivity to the chain's actual
// frequency (checks/shaping_compare.hpp).
#include "document_build.hpp"

#include <cmath>

#include <fmt/format.h>

#include "swaybound/report/format.hpp"

namespace swaybound::report_doc::build {

namespace {

const char* kind_name(ShaperKind kind) {
  switch (kind) {
    case ShaperKind::zv: return "ZV";
    case ShaperKind::zvd: return "ZVD";
    case ShaperKind::ei: return "EI";
  }
  return "?";
}

/// "ZVD, 0.2 Hz, zeta 0.01" (EI: with its tolerance); "ZV, designed from mode 1: 0.2 Hz, zeta 0"
/// for a shaper designed from a mode of the chain.
std::string shaper_text(const ShapingComparison& c) {
  const InputShaper& s = c.shaper;
  std::string text = c.mode > 0 ? fmt::format("{}, designed from mode {}: {} Hz, ζ {}", kind_name(s.kind), c.mode,
                                              num(s.frequency_hz), num(s.damping_ratio, 3))
                                : fmt::format("{}, {} Hz, ζ {}", kind_name(s.kind), num(s.frequency_hz),
                                              num(s.damping_ratio, 3));
  if (s.kind == ShaperKind::ei) text += fmt::format(", Vtol {}%", num(100 * s.vibration_tolerance, 3));
  return text;
}

/// The stop of the compared drive axis, if it has one.
const std::optional<ScenarioSpec::Travel::Stop>& axis_stop(const Spec& spec, const ShapingComparison& c) {
  static const std::optional<ScenarioSpec::Travel::Stop> none;
  const ScenarioSpec& s = spec.scenarios[static_cast<std::size_t>(c.scenario)];
  if (c.axis == "cross_travel") return s.cross_travel ? s.cross_travel->stop : none;
  if (c.axis == "slew") return s.slew ? s.slew->stop : none;
  return s.travel ? s.travel->stop : none;
}

/// The scenario's name, with the drive axis when it is not the travel drive.
std::string scenario_label(const Spec& spec, const ShapingComparison& c) {
  const std::string& name = spec.scenarios[static_cast<std::size_t>(c.scenario)].name;
  return c.axis == "travel" ? name : fmt::format("{} ({})", name, c.axis == "slew" ? "slewing" : "cross travel");
}

/// " The stop at T s ... " when the compared drive has a stop, else empty.
std::string stop_text(const Spec& spec, const ShapingComparison& c) {
  const auto& stop = axis_stop(spec, c);
  if (!stop) return "";
  return fmt::format(" The stop at {} s bypasses the shaper, so both runs stop from the speed their command had "
                     "then.",
                     num(stop->at));
}

/// A fraction as a percentage with one decimal ("94.7%").
std::string percent(double fraction) { return std::isfinite(fraction) ? fmt::format("{:.1f}%", 100 * fraction) : "-"; }

std::string seconds(double v) { return std::isfinite(v) ? num(v) + " s" : "-"; }

/// The top link's angle of both runs against time, with both ends of the moves marked.
Figure angle_figure(const Spec& spec, const ShapingComparison& c, const std::string& scenario) {
  std::vector<plot::Series> series{
      {"unshaped", c.unshaped.t, scaled(c.unshaped.top_angle, kDeg), true, false, 1},
      {"shaped (" + std::string(kind_name(c.shaper.kind)) + ")", c.shaped.t, scaled(c.shaped.top_angle, kDeg), true,
       false, 0}};
  // Two ends closer than a tenth of the run share one label (on the later line), so they do not overlap.
  std::vector<plot::RefLine> refs;
  const bool close = std::fabs(c.shaped.move_end - c.unshaped.move_end) < 0.1 * spec.cases.duration;
  const bool shaped_later = c.shaped.move_end >= c.unshaped.move_end;
  add_ref(refs, {c.unshaped.move_end, close ? (shaped_later ? "" : "moves end: shaped, unshaped") : "unshaped moves end", true});
  add_ref(refs, {c.shaped.move_end, close ? (shaped_later ? "moves end: unshaped, shaped" : "") : "shaped moves end", true});
  plot::Plot p = plot::line_chart(fmt::format("{}: angle of {}", scenario, link_name(spec, 0)), {"time", "s"},
                                  {"angle", "deg"}, std::move(series), std::move(refs));
  return figure(std::move(p),
                fmt::format("Angle of the top link ({}) in case {}, run with the shaper and with the same moves "
                            "unshaped; the vertical lines mark where the moves end ({} s unshaped, {} s shaped). "
                            "Residual sway is the largest angle of any link after {} s.",
                            link_name(spec, 0), c.case_id, num(c.unshaped.move_end), num(c.shaped.move_end),
                            num(c.window_start)),
                210);
}

/// The base speed of both runs against time.
Figure speed_figure(const Spec& spec, const ShapingComparison& c) {
  std::vector<plot::Series> series{{"unshaped", c.unshaped.t, c.unshaped.base_speed, true, false, 1},
                                   {"shaped", c.shaped.t, c.shaped.base_speed, true, false, 0}};
  const bool slew = c.axis == "slew", cross = c.axis == "cross_travel";
  plot::Axis y{slew ? "slewing speed" : cross ? "speed z" : "speed x", slew ? "rad/s" : "m/s"};
  y.include_zero = true;
  plot::Plot p = plot::line_chart(slew ? "Slewing speed" : cross ? "Cross-travel speed" : "Travel speed",
                                  {"time", "s"}, y, std::move(series));
  return figure(std::move(p),
                fmt::format("{}, shaped and unshaped (the shaper's impulses last {} s).{}",
                            slew    ? "Slewing speed of the boom"
                            : cross ? "Speed of the trolley or boom tip across the travel (along z)"
                                    : "Speed of the trolley or boom tip along x",
                            num(c.shaper.duration()), stop_text(spec, c)),
                200, 0.5);
}

/// The shaper's residual vibration against actual / design frequency, with the chain's marked.
Figure sensitivity_figure(const ShapingComparison& c) {
  plot::Series curve{"residual vibration", {}, {}, true, false, 0};
  for (const SensitivityPoint& p : c.curve) {
    curve.x.push_back(p.frequency_ratio);
    curve.y.push_back(100 * p.vibration);
  }
  plot::Axis y{"residual vibration", "% of unshaped"};
  y.min = 0;
  plot::Plot p = plot::line_chart("Shaper sensitivity", {"actual / design frequency", ""}, y, {curve});
  std::vector<std::string> listed;
  for (const SensitivityMark& m : c.marks) {
    if (!std::isfinite(m.ratio)) continue;
    const std::string short_label = m.label == "nominal" ? "nominal" : std::to_string(listed.size());
    p.marks.push_back({m.ratio, 100 * m.vibration, short_label, 1});
    listed.push_back(fmt::format("{}{}: {} Hz, ratio {}, {}", m.label == "nominal" ? "" : short_label + " ", m.label,
                                 num(m.frequency_hz), num(m.ratio, 3), percent(m.vibration)));
  }
  std::string caption = fmt::format(
      "Percentage residual vibration of the {} shaper (closed form, at its damping ratio {}) against the ratio of "
      "the mode's actual frequency to the design frequency {} Hz. Marked: the chain's lowest natural frequency "
      "(modal analysis, hanging at rest) — {}.",
      kind_name(c.shaper.kind), num(c.shaper.damping_ratio, 3), num(c.shaper.frequency_hz), fmt::join(listed, "; "));
  caption += c.range_ends_marked
                 ? " The numbered points are the chain at the ends of the sizing ranges of link lengths and masses."
                 : " The spec has no sizing range of a link length or mass, so only the nominal chain is marked.";
  for (const std::string& note : c.notes) caption += " " + note + ".";
  return figure(std::move(p), caption, 200, 0.5);
}

}  // namespace

Section drive_section(const Spec& spec, const CheckReport& r) {
  Section s{"drive", "4c", "Drive and command shaping", {}, false};
  s.blocks.push_back(paragraph(
      "For each scenario and drive axis (travel along x; on spatial chains also cross travel along z and slewing) "
      "whose drive passes its moves through an input shaper, the case that governs the "
      "sway in that scenario (the largest value of the first residual_sway limit, else of the first peak_angle "
      "limit, else the scenario's first case) was run twice at the spec's tolerance: as specified, and with the "
      "shaper removed (same moves, same stop). Residual sway is the largest angle of any link, located between "
      "the samples, after the later of the two ends of the moves. A shaper is designed for one frequency; the "
      "sensitivity plot shows how much residual vibration it leaves when the chain's frequency differs."));
  Table t{"shaping-table",
          {col("scenario", 1.2, Align::left, "scenario"), col("shaper", 1.3, Align::left, "shaper"),
           col("case", 1.4, Align::left, "case", true), col("residual shaped", 0.9, Align::right, "residual-shaped"),
           col("residual unshaped", 0.9, Align::right, "residual-unshaped"),
           col("reduction", 0.85, Align::right, "reduction"), col("moves end shaped", 0.8, Align::right, "end-shaped"),
           col("moves end unshaped", 0.8, Align::right, "end-unshaped"), col("extra time", 0.7, Align::right, "extra")},
          {},
          "scenario: with the drive axis when not travel; shaper: kind, design frequency, design damping ratio (and the "
          "mode of the chain it was designed from); case: the case run, and the limit that chose it; "
          "residual: largest |angle| of any link after the later end of the moves; reduction: 1 - shaped / unshaped; "
          "extra time: shaped end - unshaped end of the moves.",
          7.6};
  for (const ShapingComparison& c : r.shaping) {
    Row row;
    row.cells = {scenario_label(spec, c),
                 shaper_text(c),
                 fmt::format("{} ({})", c.case_id, c.chosen_by),
                 precise(c.shaped.residual_max, "rad"),
                 precise(c.unshaped.residual_max, "rad"),
                 percent(c.reduction),
                 seconds(c.shaped.move_end),
                 seconds(c.unshaped.move_end),
                 seconds(c.extra_time)};
    row.tone = Tone::normal;
    row.cell_tone.assign(row.cells.size(), Tone::normal);
    t.rows.push_back(row);
  }
  s.blocks.push_back(table_block(t));
  std::vector<Rich> remarks;
  for (const ShapingComparison& c : r.shaping)
    if (c.shaped.status != "ok" || c.unshaped.status != "ok")
      remarks.push_back(plain(fmt::format("{}: a run ended early (shaped: {}, unshaped: {}); its residual covers the "
                                          "run up to where it ended.",
                                          scenario_label(spec, c), c.shaped.status,
                                          c.unshaped.status)));
  for (const ShapingComparison& c : r.shaping)
    if (!stop_text(spec, c).empty())
      remarks.push_back(plain(fmt::format("{}: the drive stops at {} s; the moves end when the stop does, so the "
                                          "extra time ({} s) is not the shaper's duration ({} s).",
                                          scenario_label(spec, c), num(axis_stop(spec, c)->at), num(c.extra_time),
                                          num(c.shaper.duration()))));
  if (!remarks.empty()) s.blocks.push_back(bullets(remarks));
  for (const ShapingComparison& c : r.shaping) {
    const std::string scenario = scenario_label(spec, c);
    s.blocks.push_back(subheading(fmt::format("Scenario '{}'", scenario)));
    s.blocks.push_back(figures({angle_figure(spec, c, scenario)}));
    s.blocks.push_back(figures({speed_figure(spec, c), sensitivity_figure(c)}));
  }
  return s;
}

}  // namespace swaybound::report_doc::build
