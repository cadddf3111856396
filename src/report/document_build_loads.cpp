// Loads of the hanging equilibrium for the verdict section: the static-load table, the load
// limits the chain breaks at rest, and the force on the trolley or boom tip.
#include "document_build.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "swaybound/model/model.hpp"

namespace swaybound::report_doc::build {

namespace {

/// Loads of the hanging equilibrium: base at rest, no wind, so every link hangs vertical. The
/// pivot load of pivot i is g times the mass at and below link i (Model::mass_below), the rope
/// tension at a rope link's top end the same, at its bottom end g times the mass below the link.
struct StaticLoads {
  std::vector<double> mass;                ///< per link: mass at and below it [kg]
  std::vector<double> pivot, top, bottom;  ///< per link [N]; bottom NaN for the last link
};

StaticLoads static_loads(const Spec& spec) {
  const Model model = build_model(spec);
  StaticLoads s;
  for (int i = 0; i < model.n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    s.mass.push_back(model.mass_below[k]);
    s.pivot.push_back(model.gravity * model.mass_below[k]);
    s.top.push_back(s.pivot.back());
    s.bottom.push_back(i + 1 < model.n ? model.gravity * model.mass_below[k + 1] : std::nan(""));
  }
  return s;
}

bool limit_applies(const LimitSpec& l, std::size_t link) { return l.link < 0 || static_cast<std::size_t>(l.link) == link; }

}  // namespace

/// The static-load table, the warnings for load limits the chain breaks at rest, and the force on
/// the trolley or boom tip.
void static_load_blocks(const Spec& spec, const CheckReport& r, const std::vector<CaseEnvelopeRow>* cases, std::vector<Block>& out) {
  const StaticLoads st = static_loads(spec);
  out.push_back(subheading("Static loads (hanging at rest)"));
  out.push_back(paragraph(
      std::string("The chain hanging at rest with the base at rest: every link vertical, each pivot carries g × the "
                  "mass at and below its link. These are the static loads the dynamic factor divides by.") +
      (spec.wind.empty() ? ""
                         : " The steady wind of the spec is left out of this table (and of the dynamic factor): "
                           "with it the chain hangs at an angle and the pivot loads are slightly larger.")));
  Table t{"static-loads-table",
          {col("pivot above link", 2, Align::left, "link"), col("mass at and below [kg]", 1.2, Align::right, "mass-below"),
           col("static pivot load [kN]", 1.2, Align::right, "static-load"),
           col("rope tension, top [kN]", 1.1, Align::right, "tension-top"),
           col("rope tension, bottom [kN]", 1.1, Align::right, "tension-bottom"),
           col("pivot_load limit [kN]", 1.1, Align::right, "limit")},
          {},
          "Rope tension at rest: at the top end of a rope link g × the mass at and below it, at the bottom end g × "
          "the mass below it (a dash: a rigid link, or the free bottom end of the last link).",
          7.6};
  std::vector<Rich> warnings;
  const auto kn = [](double v) { return std::isfinite(v) ? fmt::format("{:.2f}", v / 1000) : std::string("-"); };
  for (std::size_t k = 0; k < spec.links.size(); ++k) {
    const bool rope = spec.links[k].kind == LinkKind::rope;
    double limit = INFINITY;
    for (const auto& l : spec.limits)
      if (l.kind == LimitKind::pivot_load && limit_applies(l, k)) limit = std::min(limit, l.value);
    Row row{{spec.links[k].name, amount(st.mass[k]), kn(st.pivot[k]), rope ? kn(st.top[k]) : "-",
             rope ? kn(st.bottom[k]) : "-", std::isfinite(limit) ? kn(limit) : "-"},
            Tone::normal,
            {}};
    if (limit < st.pivot[k]) {
      row.tone = Tone::warn;
      warnings.push_back({Span{fmt::format("pivot_load limit below the static load at the pivot above '{}': ",
                                           spec.links[k].name),
                               true},
                          Span{fmt::format("the limit {} kN is less than the {} kN the pivot carries hanging at rest, "
                                           "so the check fails before any swing; check the limit's value and unit.",
                                           kn(limit), kn(st.pivot[k]))}});
    }
    for (const auto& l : spec.limits) {
      if (l.kind != LimitKind::rope_tension_min || !rope || !limit_applies(l, k)) continue;
      const double at_rest = l.end == RopeEnd::top ? st.top[k]
                             : l.end == RopeEnd::bottom ? st.bottom[k]
                                                        : std::fmin(st.top[k], st.bottom[k]);
      if (std::isfinite(at_rest) && l.value > at_rest) {
        row.tone = Tone::warn;
        warnings.push_back({Span{fmt::format("rope_tension_min limit above the static tension of '{}': ", spec.links[k].name),
                                 true},
                            Span{fmt::format("the limit {} kN is more than the {} kN the rope carries hanging at "
                                             "rest, so the check fails before any swing.",
                                             kn(l.value), kn(at_rest))}});
      }
    }
    t.rows.push_back(row);
  }
  out.push_back(table_block(t));
  for (const auto& w : warnings) out.push_back(callout(w, Tone::warn));

  // The force on the support: what the designer of the trolley or boom tip needs.
  out.push_back(subheading("Force on the trolley or boom tip"));
  const std::string top = spec.links.empty() ? std::string() : spec.links.front().name;
  std::string peak = "its peak over the cases needs cases.csv, which was not supplied to the report.";
  if (cases) {
    double best = std::nan("");
    std::string where;
    for (const auto& row : *cases)
      if (row.ok && !row.peak_load.empty() && !(row.peak_load[0] <= best)) {
        best = row.peak_load[0];
        where = row.id;
      }
    peak = std::isfinite(best) ? fmt::format("its peak magnitude over the cases is {} kN, in case {} (the peak pivot "
                                             "load of the top pivot; {} times the static {} kN).",
                                             kn(best), where, num(best / st.pivot.front(), 3), kn(st.pivot.front()))
                               : "no case ran to its end, so it has no peak.";
  }
  const bool spatial = spec.motion == Motion::spatial;
  out.push_back(paragraph(fmt::format(
      "The chain pulls on its support with F = -R, the negative of the reaction R on the top link '{}'. Components: x "
      "horizontal, positive in the +x direction of the base scenarios and the wind; {}y vertical, positive upwards. At "
      "rest F = (0, -{}{}) kN, straight down; {}",
      top,
      spatial ? "z horizontal across the travel (on a slewing boom: radial and tangential, plotted per governing case "
                "in section 6); "
              : "",
      kn(st.pivot.empty() ? 0.0 : st.pivot.front()), spatial ? ", 0" : "", peak)));
  // A spatial chain's horizontal force: the magnitude of its x and z parts.
  const auto horizontal = [&](const RecordedCase& rc, std::size_t j) {
    return spatial && j < rc.support_z.size() ? std::hypot(rc.support_x[j], rc.support_z[j]) : std::fabs(rc.support_x[j]);
  };
  double fx = std::nan(""), fy_low = std::nan(""), fy_high = std::nan("");
  std::string fx_case, fy_case;
  for (const auto& rc : r.recorded)
    for (std::size_t j = 0; j < rc.support_x.size() && j < rc.support_y.size(); ++j) {
      if (!(horizontal(rc, j) <= fx)) {
        fx = horizontal(rc, j);
        fx_case = rc.id;
      }
      if (!(rc.support_y[j] >= fy_low)) {
        fy_low = rc.support_y[j];
        fy_case = rc.id;
      }
      if (!(rc.support_y[j] <= fy_high)) fy_high = rc.support_y[j];
    }
  if (std::isfinite(fx))
    out.push_back(paragraph(fmt::format(
        "Components over the recorded governing cases (sampled at {:g} /s, so a peak between samples can be missed; the "
        "other cases are not recorded): largest {} {} kN (case {}); F_y from {} to {} kN, most downward in case {}.",
        spec.cases.output_rate, spatial ? "horizontal |(F_x, F_z)|" : "|F_x|", kn(fx), fx_case, kn(fy_low),
        kn(fy_high), fy_case)));
}

}  // namespace swaybound::report_doc::build
