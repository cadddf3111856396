// Section 7, chaotic onset: the amplitude ladder, the onset search and the FTLE map.
#include "document_build.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <set>

#include <fmt/format.h>

namespace swaybound::report_doc::build {

namespace {

constexpr int kMaxLadderPlots = 2;

}  // namespace

// ---------------------------------------------------------------------------------------------
// 7 Chaotic onset

Section chaos_section(const Spec& spec, const CheckReport& r) {
  Section s{"chaos", "7", "Chaotic onset", {}, true};
  const ChaosSummary& ch = r.chaos;
  if (!ch.per_case_ftle && !ch.onset.computed && !ch.map.computed && ch.ladders.empty()) {
    // Nothing was asked for: one line, not a page of "not computed".
    s.new_page = false;
    s.blocks.push_back(paragraph("No chaos indicator was asked for (no ftle_max or onset_margin limit, no chaos "
                                 "section, no ladder set), so none was computed."));
    return s;
  }
  s.blocks.push_back(paragraph(fmt::format(
      "Indicator: the largest finite-time Lyapunov exponent (FTLE), by Benettin renormalisation of a nearby "
      "trajectory (initial separation {:g}, renormalised every {:g} s) over a horizon of {:g} s. A damped regular "
      "motion has a negative FTLE; above the threshold {:g} 1/s the motion counts as chaotic.",
      spec.chaos.separation, spec.chaos.renormalise, ch.horizon, spec.chaos.threshold)));

  std::vector<Rich> facts;
  if (ch.per_case_ftle)
    facts.push_back({Span{"Per-case FTLE: ", true},
                     Span{fmt::format("largest {} 1/s, in case {}.", num(ch.max_ftle), ch.max_ftle_case.empty() ? "-" : ch.max_ftle_case)}});
  else
    facts.push_back({Span{"Per-case FTLE: ", true}, Span{"not computed (the spec has no ftle_max limit)."}});
  facts.push_back({Span{"Operating envelope: ", true},
                   Span{fmt::format("the largest start angle of the case sets is {} deg.", deg(ch.envelope_amplitude))}});
  if (ch.onset.computed) {
    if (ch.onset.found)
      facts.push_back({Span{"Onset amplitude: ", true},
                       Span{fmt::format("{} deg (the FTLE first exceeds the threshold between {} and {} deg along the "
                                        "direction [{}], scenario '{}'); {} times the operating envelope.",
                                        deg(ch.onset.amplitude), deg(ch.onset.bracket_low), deg(ch.onset.amplitude),
                                        fmt::join(spec.chaos.onset_direction, ", "), ch.onset.scenario,
                                        ch.envelope_amplitude > 0 ? num(ch.onset.amplitude / ch.envelope_amplitude, 3) : "inf")}});
    else
      facts.push_back({Span{"Onset amplitude: ", true},
                       Span{fmt::format("no onset found up to chaos.onset.max = {} deg (scenario '{}').",
                                        deg(spec.chaos.onset_max), ch.onset.scenario)}});
  } else {
    facts.push_back({Span{"Onset amplitude: ", true},
                     Span{"not computed (the spec has neither an onset_margin limit nor a chaos section)."}});
  }
  s.blocks.push_back(bullets(facts));

  // FTLE map.
  s.blocks.push_back(subheading("FTLE map"));
  if (ch.map.computed && ch.map.x.size() * ch.map.y.size() == ch.map.ftle.size() && !ch.map.ftle.empty()) {
    plot::HeatMap hm;
    hm.x = scaled(ch.map.x, kDeg);
    hm.y = scaled(ch.map.y, kDeg);
    hm.z = ch.map.ftle;
    hm.z_label = "FTLE";
    hm.z_unit = "1/s";
    hm.z_marks.push_back({spec.chaos.threshold, fmt::format("threshold {} 1/s", num(spec.chaos.threshold))});
    std::set<std::array<double, 4>> boxes;
    for (const auto& set : spec.cases.initial) {
      const auto range = [&](std::size_t i, double& lo, double& hi) {
        lo = hi = 0;
        if (i < set.theta.size()) {
          lo = set.theta[i].lo;
          hi = (set.kind == InitialKind::single || set.kind == InitialKind::ladder) ? set.theta[i].lo : set.theta[i].hi;
        }
      };
      double x0, x1, y0, y1;
      range(0, x0, x1);
      range(1, y0, y1);
      boxes.insert({x0 * kDeg, x1 * kDeg, y0 * kDeg, y1 * kDeg});
    }
    for (const auto& b : boxes) {
      // A point start (single, ladder) gets a small square so it stays visible.
      const double dx = b[1] > b[0] ? 0 : 0.8, dy = b[3] > b[2] ? 0 : 0.8;
      hm.outlines.push_back({{b[0] - dx, b[2] - dy}, {b[1] + dx, b[2] - dy}, {b[1] + dx, b[3] + dy}, {b[0] - dx, b[3] + dy}});
    }
    hm.outline_label = "operating envelope: start angles of the case sets";
    s.blocks.push_back(figures({figure(plot::heat_map("FTLE over the start angles of the first two links",
                                                      {fmt::format("θ0 {}", spec.links[0].name), "deg"},
                                                      {fmt::format("θ0 {}", spec.links[1].name), "deg"}, hm),
                                       fmt::format("FTLE at {} x {} start angles (zero start rates, scenario '{}'); "
                                                   "the outlines are the start-angle ranges of the case sets.",
                                                   ch.map.x.size(), ch.map.y.size(), spec.scenarios.front().name),
                                       290)}));
  } else {
    s.blocks.push_back(paragraph(spec.links.size() < 2 ? "Not computed: the map needs a chain of at least two links."
                                                       : "Not computed: the spec does not ask for it (chaos.map)."));
  }

  // Onset scan.
  s.blocks.push_back(subheading("Onset scan"));
  if (ch.onset.computed && !ch.onset.scan_amplitude.empty()) {
    std::vector<std::pair<double, double>> pts;
    for (std::size_t i = 0; i < ch.onset.scan_amplitude.size() && i < ch.onset.scan_ftle.size(); ++i)
      pts.emplace_back(ch.onset.scan_amplitude[i] * kDeg, ch.onset.scan_ftle[i]);
    std::sort(pts.begin(), pts.end());
    plot::Series sr{"FTLE along the onset direction", {}, {}, true, true, 0};
    for (const auto& p : pts) {
      sr.x.push_back(p.first);
      sr.y.push_back(p.second);
    }
    std::vector<plot::RefLine> refs{{spec.chaos.threshold, fmt::format("threshold {} 1/s", num(spec.chaos.threshold)), false},
                                    {ch.envelope_amplitude * kDeg, "operating envelope", true}};
    if (ch.onset.found) refs.push_back({ch.onset.amplitude * kDeg, "onset", true});
    s.blocks.push_back(figures({figure(plot::line_chart("FTLE against start amplitude", {"start amplitude", "deg"},
                                                        {"FTLE", "1/s"}, {sr}, refs),
                                       "The coarse scan and the bisection points of the onset search. A run that "
                                       "failed counts as chaotic and is not plotted.",
                                       210)}));
  } else {
    s.blocks.push_back(paragraph("Not computed."));
  }

  // Ladders.
  s.blocks.push_back(subheading("Perturbation ladders and predictability horizons"));
  if (ch.ladders.empty()) {
    s.blocks.push_back(paragraph("Not computed: the case set has no ladder sets."));
    return s;
  }
  Table t{"ladders-table",
          {col("set", 1.1, Align::left, "set"), col("scenario", 1.6, Align::left, "scenario"),
           col("perturbed", 1.1, Align::left, "link"), col("FTLE [1/s]", 0.9, Align::right, "ftle"),
           col("slope [s]", 0.8, Align::right, "slope"), col("horizon, measured [s]", 1.1, Align::right, "measured"),
           col("horizon, from FTLE [s]", 1.1, Align::right, "predicted")},
          {},
          fmt::format("Predictability horizon: the time for an initial uncertainty of {} deg to grow past {} deg; "
                      "measured from the ladder's divergence times, and ln(tolerance/uncertainty)/FTLE. A dash: "
                      "no divergence within the run (or FTLE <= 0), i.e. no horizon within it.",
                      deg(spec.chaos.uncertainty), deg(spec.chaos.tolerance)),
          7.6};
  for (const auto& l : ch.ladders)
    t.rows.push_back({{l.set, l.scenario, link_name(spec, l.link), num(l.lambda), num(l.slope), num(l.horizon_measured),
                       num(l.horizon_predicted)}});
  s.blocks.push_back(table_block(t));
  int plotted = 0;
  for (const auto& l : ch.ladders) {
    if (plotted++ >= kMaxLadderPlots) {
      s.blocks.push_back(paragraph(fmt::format("{} further ladder(s) are in the table only.", ch.ladders.size() - kMaxLadderPlots)));
      break;
    }
    std::vector<plot::Series> series;
    for (std::size_t k = 0; k < l.separation.size(); ++k) {
      plot::Series sr;
      sr.label = fmt::format("δ = {:.1e} deg", k < l.delta.size() ? l.delta[k] * kDeg : std::nan(""));
      for (std::size_t j = 0; j < l.separation[k].size(); ++j) {
        sr.x.push_back(static_cast<double>(j) * l.sample_interval);
        sr.y.push_back(l.separation[k][j] * kDeg);
      }
      series.push_back(std::move(sr));
    }
    plot::Axis y{"largest link-angle difference", "deg"};
    y.log = true;
    s.blocks.push_back(figures({figure(
        plot::line_chart(fmt::format("Divergence of ladder '{}'", l.set), {"time", "s"}, y, series,
                         {{spec.chaos.tolerance * kDeg, fmt::format("tolerance {} deg", deg(spec.chaos.tolerance)), false}}),
        fmt::format("Separation from the base start ({} perturbation steps on '{}', scenario '{}'), log scale.",
                    l.delta.size(), link_name(spec, l.link), l.scenario),
        220)}));
  }
  return s;
}

}  // namespace swaybound::report_doc::build
