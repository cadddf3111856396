// Section 8, envelope: each limit's worst value over the case set against the start amplitude.
#include "document_build.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "swaybound/report/format.hpp"

namespace swaybound::report_doc::build {

namespace {

constexpr std::size_t kEnvelopeDirect = 3000;  // points per series drawn as they are

// ---------------------------------------------------------------------------------------------
// 8 Envelope

/// Keeps every point when there are few; else, per amplitude bin, the points with the largest and
/// smallest value (so the envelope is drawn exactly).
void thin(std::vector<double>& x, std::vector<double>& y) {
  if (x.size() <= kEnvelopeDirect) return;
  constexpr int kBins = 400;
  const double lo = *std::min_element(x.begin(), x.end()), hi = *std::max_element(x.begin(), x.end());
  std::vector<long> top(kBins, -1), bottom(kBins, -1);
  for (std::size_t i = 0; i < x.size(); ++i) {
    const int b = hi > lo ? std::min(kBins - 1, static_cast<int>((x[i] - lo) / (hi - lo) * kBins)) : 0;
    auto& t = top[static_cast<std::size_t>(b)];
    auto& m = bottom[static_cast<std::size_t>(b)];
    if (t < 0 || y[i] > y[static_cast<std::size_t>(t)]) t = static_cast<long>(i);
    if (m < 0 || y[i] < y[static_cast<std::size_t>(m)]) m = static_cast<long>(i);
  }
  std::vector<double> nx, ny;
  for (int b = 0; b < kBins; ++b)
    for (long i : {top[static_cast<std::size_t>(b)], bottom[static_cast<std::size_t>(b)]})
      if (i >= 0) {
        nx.push_back(x[static_cast<std::size_t>(i)]);
        ny.push_back(y[static_cast<std::size_t>(i)]);
      }
  x = std::move(nx);
  y = std::move(ny);
}

}  // namespace

Section envelope_section(const Spec& spec, const CheckReport& r, const std::vector<CaseEnvelopeRow>* cases) {
  Section s{"envelope", "8", "Envelope over the case set", {}, true};
  if (!cases) {
    s.blocks.push_back(paragraph("Not drawn: the per-case table (cases.csv) was not supplied to the report."));
    return s;
  }
  const std::vector<CaseEnvelopeRow>& rows = *cases;
  long ok = 0;
  for (const auto& row : rows) ok += row.ok;
  s.blocks.push_back(paragraph(fmt::format(
      "Peak link angle and peak pivot load of every case against its start amplitude (the largest |start angle| over "
      "the links), from cases.csv: {} cases, {} of them ran to the end; failed cases have no peaks and are not "
      "plotted.{}",
      rows.size(), ok,
      rows.size() > kEnvelopeDirect ? " Above 3000 cases, each series shows the highest and lowest case in each of 400 "
                                      "amplitude bins, which keeps the envelope exact."
                                    : "")));
  if (static_cast<long>(rows.size()) != r.case_count)
    s.blocks.push_back(callout(plain(fmt::format("cases.csv has {} rows but the check ran {} cases.", rows.size(), r.case_count)),
                               Tone::warn));
  std::vector<plot::Series> angle, load;
  for (std::size_t k = 0; k < spec.links.size(); ++k) {
    plot::Series a, l;
    a.label = spec.links[k].name;
    l.label = "above " + spec.links[k].name;
    for (const auto& row : rows) {
      if (!row.ok) continue;
      a.x.push_back(row.amplitude * kDeg);
      a.y.push_back(row.peak_angle[k] * kDeg);
      l.x.push_back(row.amplitude * kDeg);
      l.y.push_back(row.peak_load[k] / 1000);
    }
    thin(a.x, a.y);
    thin(l.x, l.y);
    angle.push_back(std::move(a));
    load.push_back(std::move(l));
  }
  std::vector<plot::RefLine> arefs, lrefs;
  for (const auto& l : spec.limits) {
    if (l.kind == LimitKind::peak_angle)
      add_ref(arefs, {l.value * kDeg, fmt::format("peak_angle limit {} deg{}", num(l.value * kDeg), link_scope(spec, l)), false});
    if (l.kind == LimitKind::pivot_load)
      add_ref(lrefs, {l.value / 1000, fmt::format("pivot_load limit {} kN{}", num(l.value / 1000), link_scope(spec, l)), false});
  }
  plot::Axis ay{"peak |θ|", "deg"}, ly{"peak pivot load", "kN"}, ax{"start amplitude max |θ0|", "deg"};
  ay.include_zero = true;
  ax.include_zero = true;
  s.blocks.push_back(figures({figure(plot::scatter_chart("Peak link angle against start amplitude", ax, ay, angle, arefs),
                                     "One marker per case and link.", 230)}));
  s.blocks.push_back(figures({figure(plot::scatter_chart("Peak pivot load against start amplitude", ax, ly, load, lrefs),
                                     "One marker per case and pivot (the pivot at the upper end of the named link).", 230)}));
  // Largest values per link from the table, as a cross-check of the verdict table.
  Table t{"envelope-table",
          {col("link", 2, Align::left, "link"), col("largest peak angle [deg]", 1.2, Align::right, "peak-angle"),
           col("largest pivot load [kN]", 1.2, Align::right, "peak-load")},
          {},
          "From cases.csv, over the cases that ran to the end.",
          7.6};
  for (std::size_t k = 0; k < spec.links.size(); ++k) {
    double pa = std::nan(""), pl = std::nan("");
    for (const auto& row : rows)
      if (row.ok) {
        if (!(row.peak_angle[k] <= pa)) pa = row.peak_angle[k];
        if (!(row.peak_load[k] <= pl)) pl = row.peak_load[k];
      }
    t.rows.push_back({{spec.links[k].name, engineering(pa, "rad"), engineering(pl, "N")}});
  }
  s.blocks.push_back(table_block(t));
  return s;
}

}  // namespace swaybound::report_doc::build
