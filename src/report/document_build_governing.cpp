// Section 6, governing cases: for each limit, the case that governs it, its recorded sway and
// the inputs beside it.
#include "document_build.hpp"
#include "swaybound/checks/start_transient.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/report/format.hpp"

namespace swaybound::report_doc::build {

namespace {

constexpr int kMaxGoverningPlots = 9;  // figures on the governing-case pages (at least one case)

}  // namespace

// ---------------------------------------------------------------------------------------------
// 6 Governing cases

std::vector<double> scaled(const std::vector<double>& v, double factor) {
  std::vector<double> out(v.size());
  for (std::size_t i = 0; i < v.size(); ++i) out[i] = v[i] * factor;
  return out;
}

void add_ref(std::vector<plot::RefLine>& refs, plot::RefLine r) {
  for (const auto& e : refs)
    if (e.vertical == r.vertical && e.value == r.value && e.from == r.from) return;
  refs.push_back(std::move(r));
}

namespace {

/// The recorded value of `y` at the sample nearest to time t (0 when there are no samples).
double sample_at(const std::vector<double>& t, const std::vector<double>& y, double time) {
  if (t.empty() || y.empty()) return 0;
  const auto it = std::lower_bound(t.begin(), t.end(), time);
  std::size_t k = static_cast<std::size_t>(it - t.begin());
  if (k >= t.size() || (k > 0 && time - t[k - 1] < t[k] - time)) k = k > 0 ? k - 1 : 0;
  return y[std::min(k, y.size() - 1)];
}

/// The inputs of a recorded case beside its sway: base acceleration and speed, and the wind force
/// of each wind load when the spec has wind.
std::vector<Figure> input_figures(const Spec& spec, const RecordedCase& rc, const std::string& id) {
  const auto moves = [](const std::vector<double>& v) {
    return std::any_of(v.begin(), v.end(), [](double x) { return x != 0; });
  };
  // Both horizontal components where the chain is spatial (z across the travel), and y.
  const bool spatial = spec.motion == Motion::spatial && !rc.base_az.empty();
  std::vector<plot::Series> base;
  if (moves(rc.base_ax) || moves(rc.base_vx)) {
    base.push_back({"acceleration x [m/s²]", rc.t, rc.base_ax, true, false, 0});
    base.push_back({"speed x [m/s]", rc.t, rc.base_vx, true, false, 1});
  }
  if (spatial && (moves(rc.base_az) || moves(rc.base_vz))) {
    base.push_back({"acceleration z [m/s²]", rc.t, rc.base_az, true, false, 4});
    base.push_back({"speed z [m/s]", rc.t, rc.base_vz, true, false, 5});
  }
  if (moves(rc.base_ay) || moves(rc.base_vy)) {
    base.push_back({"acceleration y [m/s²]", rc.t, rc.base_ay, true, false, 2});
    base.push_back({"speed y [m/s]", rc.t, rc.base_vy, true, false, 3});
  }
  plot::Axis by{"acceleration, speed", "m/s², m/s"};
  by.include_zero = true;
  plot::Plot pb = plot::line_chart("Base (top pivot) motion", {"time", "s"}, by, base);
  pb.empty_text = "the base does not move in this scenario";
  std::vector<Figure> out;
  const double share = spec.wind.empty() ? 1.0 : 0.5;
  out.push_back(figure(std::move(pb),
                       fmt::format("Acceleration and speed of the trolley or boom tip in case {} ({}), as the "
                                   "scenario prescribes{}.",
                                   id, spatial ? "x along the travel, z across it, y up" : "x horizontal, y up",
                                   rc.slewing ? "; on a slewing boom the tip's components over the ground" : ""),
                       200, share));
  if (!spec.wind.empty()) {
    std::vector<plot::Series> wind;
    for (std::size_t w = 0; w < rc.wind_x.size(); ++w) {
      const std::string name = spec.links[static_cast<std::size_t>(spec.wind[w].link)].name;
      wind.push_back({fmt::format("wind[{}] on {}{}", w, name, spatial ? ", x" : ""), rc.t, scaled(rc.wind_x[w], 1e-3),
                      true, false, -1});
      if (spatial && w < rc.wind_z.size() && moves(rc.wind_z[w]))
        wind.push_back({fmt::format("wind[{}] on {}, z", w, name), rc.t, scaled(rc.wind_z[w], 1e-3), true, false, -1});
    }
    plot::Axis wy{"horizontal wind force", "kN"};
    wy.include_zero = true;
    out.push_back(figure(plot::line_chart("Wind force", {"time", "s"}, wy, wind),
                         fmt::format("Horizontal drag force of each wind load in case {}, gusts included{}.", id,
                                     spatial ? ", by component (x along the travel, z across it; a component that "
                                               "stays 0 is not drawn)"
                                             : ""),
                         200,
                         share));
  }
  return out;
}

}  // namespace

std::string link_scope(const Spec& spec, const LimitSpec& l) {
  return l.link >= 0 ? " (" + link_name(spec, l.link) + ")" : "";
}

namespace {

/// The start of case `index` (its id names the set): its scenario and the angles and rates of every link.
std::string start_text(const Spec& spec, const CaseSpace& space, long index) {
  if (index < 0 || index >= space.size()) return "-";
  const CaseDef def = space.at(index);
  std::vector<std::string> theta, omega;
  for (std::size_t i = 0; i < spec.links.size(); ++i) {
    theta.push_back(deg(i < def.initial.theta.size() ? def.initial.theta[i] : 0.0));
    omega.push_back(deg(i < def.initial.omega.size() ? def.initial.omega[i] : 0.0));
  }
  const auto scenario = static_cast<std::size_t>(def.scenario);
  std::string text = fmt::format("scenario '{}', {}θ0 = ({}) deg, ω0 = ({}) deg/s",
                                 scenario < spec.scenarios.size() ? spec.scenarios[scenario].name : "-",
                                 def.start_kind == StartKind::modal         ? "modal start: "
                                 : def.start_kind == StartKind::equilibrium ? "equilibrium start: "
                                                                            : "",
                                 fmt::join(theta, ", "), fmt::join(omega, ", "));
  if (spec.motion == Motion::spatial) {
    std::vector<std::string> phi, phi_rate;
    for (std::size_t i = 0; i < spec.links.size(); ++i) {
      phi.push_back(deg(i < def.initial.phi.size() ? def.initial.phi[i] : 0.0));
      phi_rate.push_back(deg(i < def.initial.phi_rate.size() ? def.initial.phi_rate[i] : 0.0));
    }
    text += fmt::format(", φ0 = ({}) deg, φ'0 = ({}) deg/s", fmt::join(phi, ", "), fmt::join(phi_rate, ", "));
  }
  // A modal or equilibrium start: the values it came from.
  if (const std::string values = start_values_text(spec, def.set, def.initial.quantities); !values.empty())
    text += " (" + values + ")";
  return text;
}

}  // namespace

Section governing_section(const Spec& spec, const CheckReport& r) {
  Section s{"governing", "6", "Governing cases", {}, true};
  const CaseSpace space(spec);
  // Which case governs which check.
  Table t{"governing-table",
          {col("check", 1.6, Align::left, "check"), col("governing case", 2.4, Align::left, "case"),
           col("where", 1.3, Align::left, "where"), col("worst", 1.1, Align::right, "worst"),
           col("ratio", 0.7, Align::right, "ratio"), col("verdict", 0.75, Align::center, "verdict"),
           col("start", 3, Align::left, "start", true)},
          {},
          "start: the governing case's base scenario and initial conditions, link angles θ0 from the downward "
          "vertical and rates ω0, top link first.",
          7.6};
  for (std::size_t i = 0; i < r.checks.size(); ++i) {
    const auto& c = r.checks[i];
    if (!c.per_case) continue;
    Row row{{fmt::format("{} {}", i + 1, c.key), c.governing_id.empty() ? "-" : c.governing_id, where_text(spec, c),
             engineering(c.worst, c.unit), ratio_percent(c.margin_ratio), c.pass ? "pass" : "FAIL",
             start_text(spec, space, c.governing)},
            c.pass ? Tone::normal : Tone::fail,
            {}};
    t.rows.push_back(row);
  }
  if (t.rows.empty()) {
    s.blocks.push_back(paragraph("No per-case check: no governing case to show."));
    return s;
  }
  s.blocks.push_back(table_block(t));

  // Pick the cases to plot: failing checks first, then the tightest margin ratios.
  std::vector<const CheckResult*> order;
  for (const auto& c : r.checks)
    if (c.per_case && c.governing >= 0) order.push_back(&c);
  std::stable_sort(order.begin(), order.end(), [](const CheckResult* a, const CheckResult* b) {
    if (a->pass != b->pass) return !a->pass;
    const double ra = std::isfinite(a->margin_ratio) ? a->margin_ratio : INFINITY;
    const double rb = std::isfinite(b->margin_ratio) ? b->margin_ratio : INFINITY;
    return ra < rb;
  });
  // Figures per case: angles, loads, inputs, and the angle-angle plots two to a row.
  int ropes = 0;  // rope figures per case: a tension plot per elastic rope, a row for the hoist
  for (const auto& l : spec.links) ropes += l.elastic.has_value();
  if (std::any_of(spec.scenarios.begin(), spec.scenarios.end(),
                  [](const ScenarioSpec& s) { return s.hoist.has_value(); }))
    ++ropes;
  const int links = static_cast<int>(spec.links.size());
  const int per_case = 3 + (spec.motion == Motion::spatial ? links - 1 + 2 : links / 2) + ropes;
  const std::size_t max_cases = static_cast<std::size_t>(std::max(1, kMaxGoverningPlots / per_case));
  std::vector<long> chosen;
  for (const CheckResult* c : order) {
    if (chosen.size() >= max_cases) break;
    if (std::find(chosen.begin(), chosen.end(), c->governing) == chosen.end()) chosen.push_back(c->governing);
  }
  if (r.recorded.empty()) {
    s.blocks.push_back(paragraph("The governing cases were not recorded in this run: no time histories are shown."));
    return s;
  }
  s.blocks.push_back(paragraph(fmt::format(
      "Time histories of the {} governing case(s) of the failing checks, or else of the checks with the smallest "
      "margin ratio, re-run with recording at {:g} samples/s. Limits are drawn as dashed lines.",
      chosen.size(), spec.cases.output_rate)));

  for (long index : chosen) {
    const RecordedCase* rc = nullptr;
    for (const auto& rec : r.recorded)
      if (rec.index == index) rc = &rec;
    std::vector<std::string> governs;
    bool governs_tension = false;
    for (const auto& c : r.checks)
      if (c.governing == index) {
        governs.push_back(c.key);
        governs_tension |= c.key == "rope_tension_min";
      }
    const std::string id = rc ? rc->id : std::to_string(index);
    s.blocks.push_back(subheading(fmt::format("Case {} (governs {})", id, fmt::join(governs, ", "))));
    s.blocks.push_back(paragraph("Start: " + start_text(spec, space, index) + "."));
    if (!rc || rc->t.empty()) {
      s.blocks.push_back(paragraph("This case was not recorded."));
      continue;
    }
    // Angles.
    std::vector<plot::Series> angles;
    for (std::size_t i = 0; i < rc->theta.size(); ++i)
      angles.push_back({fmt::format("θ {}", spec.links[i].name), rc->t, scaled(rc->theta[i], kDeg), true, false, -1});
    const bool spatial = spec.motion == Motion::spatial;  // the recorded angle is the cone angle (>= 0)
    std::vector<plot::RefLine> arefs;
    for (const auto& l : spec.limits) {
      if (l.kind == LimitKind::peak_angle) {
        add_ref(arefs, {l.value * kDeg, fmt::format("peak_angle +{} deg{}", num(l.value * kDeg), link_scope(spec, l)), false});
        if (!spatial) add_ref(arefs, {-l.value * kDeg, fmt::format("-{} deg", num(l.value * kDeg)), false});
      }
      if (l.kind == LimitKind::residual_sway) {
        add_ref(arefs, {l.value * kDeg, fmt::format("residual_sway after {:g} s", l.after), false, l.after});
        if (!spatial) add_ref(arefs, {-l.value * kDeg, "", false, l.after});
      }
    }
    plot::Plot pa = plot::line_chart("Link angles", {"time", "s"},
                                     {spatial ? "cone angle θ from vertical, any direction" : "angle θ from vertical", "deg"},
                                     angles, arefs);
    // Each link's peak |theta| where the run located it (between samples), on the side it swung to.
    for (std::size_t i = 0; i < rc->peak_angle.size() && i < rc->theta.size(); ++i) {
      const Extreme& e = rc->peak_angle[i];
      const double side = sample_at(rc->t, rc->theta[i], e.time) < 0 ? -1.0 : 1.0;
      pa.marks.push_back({e.time, side * e.value * kDeg,
                          fmt::format("{} {:.2f} deg at {:.2f} s", spec.links[i].name, side * e.value * kDeg, e.time),
                          static_cast<int>(i)});
    }
    Figure fa = figure(std::move(pa),
                       fmt::format("Link angles of case {}; circles mark each link's largest |θ| and when it "
                                   "happened, located between the samples.",
                                   id),
                       210);
    // Loads (and rope tension when the case governs it).
    std::vector<plot::Series> loads;
    for (std::size_t i = 0; i < rc->load.size(); ++i)
      loads.push_back({fmt::format("pivot load above {}", spec.links[i].name), rc->t, scaled(rc->load[i], 1e-3), true,
                       false, -1});
    std::vector<plot::RefLine> lrefs;
    for (const auto& l : spec.limits)
      if (l.kind == LimitKind::pivot_load)
        add_ref(lrefs, {l.value / 1000, fmt::format("pivot_load limit {} kN{}", num(l.value / 1000), link_scope(spec, l)), false});
    bool with_tension = governs_tension;
    if (with_tension) {
      for (std::size_t i = 0; i < rc->tension.size(); ++i)
        if (spec.links[i].kind == LinkKind::rope)
          loads.push_back({fmt::format("tension of rope {}", spec.links[i].name), rc->t, scaled(rc->tension[i], 1e-3), true,
                           false, static_cast<int>(rc->load.size() + i)});
      for (const auto& l : spec.limits)
        if (l.kind == LimitKind::rope_tension_min)
          add_ref(lrefs, {l.value / 1000, fmt::format("rope_tension_min {} kN{}", num(l.value / 1000), link_scope(spec, l)), false});
    }
    plot::Axis ly{"force", "kN"};
    ly.include_zero = true;
    plot::Plot pl = plot::line_chart(with_tension ? "Pivot loads and rope tension" : "Pivot loads", {"time", "s"}, ly,
                                     loads, lrefs);
    for (std::size_t i = 0; i < rc->peak_load.size(); ++i)
      pl.marks.push_back({rc->peak_load[i].time, rc->peak_load[i].value / 1000,
                          fmt::format("peak {:.2f} kN at {:.2f} s", rc->peak_load[i].value / 1000, rc->peak_load[i].time),
                          static_cast<int>(i)});
    if (with_tension)
      for (std::size_t i = 0; i < rc->min_tension.size(); ++i)
        if (std::isfinite(rc->min_tension[i].value))
          pl.marks.push_back({rc->min_tension[i].time, rc->min_tension[i].value / 1000,
                              fmt::format("least {:.2f} kN at {:.2f} s", rc->min_tension[i].value / 1000,
                                          rc->min_tension[i].time),
                              static_cast<int>(rc->load.size() + i)});
    Figure fl = figure(std::move(pl),
                       fmt::format("Reaction force at the upper pivot of each link{} in case {}; circles mark each "
                                   "peak{} with its value and time, located between the samples.",
                                   with_tension ? ", and the least axial tension of each rope link," : "", id,
                                   with_tension ? " and least tension" : ""),
                       240);
    s.blocks.push_back(figures({fa}));
    s.blocks.push_back(figures({fl}));
    for (Block& b : rope_blocks(spec, *rc, id)) s.blocks.push_back(std::move(b));
    for (Block& b : spatial_case_blocks(spec, *rc, id)) s.blocks.push_back(std::move(b));
    s.blocks.push_back(figures(input_figures(spec, *rc, id)));
    // Angle against angle for every pair of adjacent links (configuration space, not a phase
    // portrait: no rates), two to a row. A spatial chain's cone angles are >= 0 and fold every
    // swing onto one side, so there each pair gets two plots of signed angles, in the plane (of the
    // travel, or of a slewing boom) and across it: the planar plot in each plane, the same figure
    // as a planar chain's when the motion stays in the plane, where the modes show as lines
    // (in phase, or against) and a chaotic motion fills an area.
    std::vector<Figure> pairs;
    const auto capitalised = [](std::string text) {
      if (!text.empty() && text[0] >= 'a' && text[0] <= 'z') text[0] = static_cast<char>(text[0] - 'a' + 'A');
      return text;
    };
    const auto pair_figure = [&](std::size_t i, const std::vector<std::vector<double>>& angle, const std::string& symbol,
                                 const std::string& what) {
      return figure(plot::phase_portrait(fmt::format("{}, links {} and {}", what, i + 1, i + 2),
                                         {fmt::format("{} {}", symbol, spec.links[i].name), "deg"},
                                         {fmt::format("{} {}", symbol, spec.links[i + 1].name), "deg"},
                                         scaled(angle[i], kDeg), scaled(angle[i + 1], kDeg)),
                    fmt::format("{} of link {} against {} of link {} over the run: a regular motion traces a tidy "
                                "figure, a chaotic one fills an area.",
                                capitalised(symbol), i + 2, symbol, i + 1),
                    240, 0.5);
    };
    const bool signed_planes = spatial && rc->in_plane.size() == rc->theta.size() &&
                               rc->out_of_plane.size() == rc->theta.size();
    const std::string plane = rc->slewing ? "the boom's" : "the travel";
    for (std::size_t i = 0; i + 1 < rc->theta.size(); ++i) {
      if (signed_planes) {
        pairs.push_back(pair_figure(i, rc->in_plane, "in-plane sway", "Angle-angle plot in " + plane + " plane"));
        pairs.push_back(pair_figure(i, rc->out_of_plane, "out-of-plane sway", "Angle-angle plot across " + plane + " plane"));
      } else {
        pairs.push_back(pair_figure(i, rc->theta, "θ", "Angle-angle plot"));
      }
      if (pairs.size() == 2 || i + 2 == rc->theta.size()) {
        s.blocks.push_back(figures(pairs));
        pairs.clear();
      }
    }
  }
  for (Block& b : plan_view_blocks(spec, r)) s.blocks.push_back(std::move(b));
  return s;
}

}  // namespace swaybound::report_doc::build
