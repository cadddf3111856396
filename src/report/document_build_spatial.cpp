// Section 6 (cont.), spatial chains: the sway of a governing case in and across the plane of the
// travel (or of a slewing boom), the force on the support and the load at each lower pivot by
// component, and the plan view (top view) of the hook path of every governing case.
//
// A plan view is seen from above: the engine's y axis is up and z = x cross y, so with z to the
// right and x up the page the viewer looks down the y axis (in the boom frame: tangential to the
// right, radial up the page).
#include "document_build.hpp"

#include <algorithm>
#include <climits>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::report_doc::build {

namespace {

/// Most governing cases with a plan view (one row of two figures each).
constexpr std::size_t kMaxPlanViews = 8;

/// The names of the boom frame's axes for a recorded case.
struct FrameNames {
  std::string radial, tangential;
};

FrameNames frame_names(const RecordedCase& rc) {
  if (rc.slewing) return {"radial, outwards", "tangential, slewing direction"};
  return {"x, along the travel", "z, across the travel"};
}

/// Limit lines of `kind` at +value and -value (deg or kN by `factor`): the limits on every link
/// and those on a link from `first` to `last`.
void limit_lines(const Spec& spec, LimitKind kind, double factor, const std::string& unit, bool both_sides,
                 std::vector<plot::RefLine>& refs, int first = 0, int last = INT_MAX) {
  for (const auto& l : spec.limits) {
    if (l.kind != kind || (l.link >= 0 && (l.link < first || l.link > last))) continue;
    add_ref(refs, {l.value * factor, fmt::format("{} {} {}{}", l.key, num(l.value * factor), unit, link_scope(spec, l)),
                   false});
    if (both_sides) add_ref(refs, {-l.value * factor, "", false});
  }
}

/// A circle at the located peak `e` (of |series|) of link `link`, on the side the series is on at
/// the nearest sample, labelled with its value (times `factor`, in `unit`) and time.
void mark_peak(const Spec& spec, const RecordedCase& rc, const std::vector<double>& series, const Extreme& e,
               double factor, const std::string& unit, int link, plot::Plot& p) {
  if (!std::isfinite(e.value) || !std::isfinite(e.time) || series.empty()) return;
  const auto at = std::lower_bound(rc.t.begin(), rc.t.end(), e.time) - rc.t.begin();
  const auto k = std::min(static_cast<std::size_t>(at), series.size() - 1);
  const double value = (series[k] >= 0 ? 1.0 : -1.0) * e.value * factor;
  const std::string shown = unit == "deg" ? fmt::format("{:.2f}", value) : num(value);
  p.marks.push_back(
      {e.time, value, fmt::format("{} {} {} at {:.2f} s", spec.links[static_cast<std::size_t>(link)].name, shown, unit, e.time),
       link});
}

/// Sway of every link against time in one direction, with the located peaks marked.
Figure sway_figure(const Spec& spec, const RecordedCase& rc, const std::string& id, bool in_plane) {
  const auto& series = in_plane ? rc.in_plane : rc.out_of_plane;
  const auto& peaks = in_plane ? rc.peak_in_plane : rc.peak_out_of_plane;
  std::vector<plot::Series> lines;
  for (std::size_t i = 0; i < series.size(); ++i)
    lines.push_back({spec.links[i].name, rc.t, scaled(series[i], kDeg), true, false, static_cast<int>(i)});
  std::vector<plot::RefLine> refs;
  limit_lines(spec, in_plane ? LimitKind::in_plane_sway : LimitKind::out_of_plane_sway, kDeg, "deg", true, refs);
  const FrameNames names = frame_names(rc);
  plot::Axis y{in_plane ? "in-plane sway" : "out-of-plane sway", "deg"};
  y.include_zero = true;
  plot::Plot p = plot::line_chart(in_plane ? "In-plane sway" : "Out-of-plane sway", {"time", "s"}, y, lines, refs);
  for (std::size_t i = 0; i < peaks.size() && i < series.size(); ++i)
    mark_peak(spec, rc, series[i], peaks[i], kDeg, "deg", static_cast<int>(i), p);
  const std::string plane = rc.slewing ? "the boom's vertical plane (radial)" : "the vertical plane of the travel (x)";
  const std::string across = rc.slewing ? "across the boom's vertical plane (tangential)" : "across the travel (z)";
  return figure(std::move(p),
                in_plane ? fmt::format("Case {}: each link's sway in {}, the angle from the downward vertical of the "
                                       "link seen from the side; circles mark the largest, located between the "
                                       "samples. + is towards +{}.",
                                       id, plane, names.radial)
                         : fmt::format("Case {}: each link's sway {}, the angle from the downward vertical of the link "
                                       "seen along the {}; circles mark the largest. + is towards +{}.",
                                       id, across, rc.slewing ? "boom" : "travel", names.tangential),
                220, 0.5);
}

/// The force of the chain on its support (trolley, boom tip) by component: horizontal in the boom
/// frame, and vertical.
std::vector<Figure> support_figures(const Spec& spec, const RecordedCase& rc, const std::string& id) {
  const FrameNames names = frame_names(rc);
  std::vector<plot::Series> horizontal{
      {rc.slewing ? "radial" : "x", rc.t, scaled(rc.slewing ? rc.support_radial : rc.support_x, 1e-3), true, false, 0},
      {rc.slewing ? "tangential" : "z", rc.t, scaled(rc.slewing ? rc.support_tangential : rc.support_z, 1e-3), true,
       false, 1}};
  std::vector<plot::RefLine> hrefs;
  if (rc.slewing) {
    limit_lines(spec, LimitKind::pivot_load_radial, 1e-3, "kN", true, hrefs, 0, 0);
    limit_lines(spec, LimitKind::pivot_load_tangential, 1e-3, "kN", true, hrefs, 0, 0);
  } else {
    limit_lines(spec, LimitKind::pivot_load_x, 1e-3, "kN", true, hrefs, 0, 0);
    limit_lines(spec, LimitKind::pivot_load_z, 1e-3, "kN", true, hrefs, 0, 0);
  }
  plot::Axis hy{"horizontal force", "kN"};
  hy.include_zero = true;
  std::vector<Figure> out;
  out.push_back(figure(plot::line_chart("Horizontal force on the support", {"time", "s"}, hy, horizontal, hrefs),
                       fmt::format("Case {}: the horizontal force of the chain on the {} by component, {} and {} "
                                   "(the force on the support is minus the reaction R on the top link).",
                                   id, rc.slewing ? "boom tip" : "trolley", names.radial, names.tangential),
                       220, 0.5));
  std::vector<double> down(rc.support_y.size());
  for (std::size_t k = 0; k < down.size(); ++k) down[k] = -rc.support_y[k] * 1e-3;
  std::vector<plot::RefLine> vrefs;
  limit_lines(spec, LimitKind::pivot_load_vertical, 1e-3, "kN", false, vrefs, 0, 0);
  plot::Axis vy{"vertical force, downwards", "kN"};
  vy.include_zero = true;
  out.push_back(figure(plot::line_chart("Vertical force on the support", {"time", "s"}, vy,
                                        {{"vertical", rc.t, std::move(down), true, false, 2}}, vrefs),
                       fmt::format("Case {}: the vertical force of the chain on its support, + pulling it down "
                                   "(the weight at rest).",
                                   id),
                       220, 0.5));
  return out;
}

/// One component of the pivot load of the lower links, in the frame its limits read it.
struct LowerComponent {
  std::string title, axis, component, sense;      ///< figure title, axis name, the component, what + means
  const std::vector<std::vector<double>>* series;  ///< per link [N]
  const std::vector<Extreme>* peaks;               ///< per link, max |.| [N]
  std::vector<LimitKind> limits;                  ///< the limit kinds that bound this component
};

/// The reaction R at the upper pivot of each link below the top one (the force of the link above
/// on it) by component, one figure per component with a line per lower link: in the boom frame
/// (radial, tangential) on a slewing base, else along and across the travel (x, z), and vertical.
/// One figure per component keeps the count at three whatever the number of links, draws each
/// link in the colour of its sway, and puts the pivots' loads of one direction, which one limit
/// bounds, on one scale.
std::vector<Block> lower_pivot_blocks(const Spec& spec, const RecordedCase& rc, const std::string& id) {
  const auto n = static_cast<int>(rc.load_vertical.size());
  if (n < 2) return {};
  // Without slewing the boom frame is the ground's (r = x, t = z): its radial and tangential
  // limits bound x and z.
  std::vector<LowerComponent> components;
  if (rc.slewing) {
    components.push_back({"Radial load at the lower pivots", "radial load", "radial component", "+ outwards",
                          &rc.load_radial, &rc.peak_load_radial, {LimitKind::pivot_load_radial}});
    components.push_back({"Tangential load at the lower pivots", "tangential load", "tangential component",
                          "+ in the slewing direction", &rc.load_tangential, &rc.peak_load_tangential,
                          {LimitKind::pivot_load_tangential}});
  } else {
    components.push_back({"Load along the travel at the lower pivots", "load along the travel (x)",
                          "component along the travel (x)", "+ towards +x", &rc.load_x, &rc.peak_load_x,
                          {LimitKind::pivot_load_x, LimitKind::pivot_load_radial}});
    components.push_back({"Load across the travel at the lower pivots", "load across the travel (z)",
                          "component across the travel (z)", "+ towards +z", &rc.load_z, &rc.peak_load_z,
                          {LimitKind::pivot_load_z, LimitKind::pivot_load_tangential}});
  }
  std::vector<Figure> horizontal;
  std::vector<Figure> vertical;
  const auto chart = [&](const LowerComponent& c, bool both_sides) {
    std::vector<plot::Series> lines;
    for (int i = 1; i < n; ++i)
      lines.push_back({spec.links[static_cast<std::size_t>(i)].name, rc.t,
                       scaled((*c.series)[static_cast<std::size_t>(i)], 1e-3), true, false, i});
    std::vector<plot::RefLine> refs;
    for (LimitKind kind : c.limits) limit_lines(spec, kind, 1e-3, "kN", both_sides, refs, 1, n - 1);
    plot::Axis y{c.axis, "kN"};
    y.include_zero = true;
    plot::Plot p = plot::line_chart(c.title, {"time", "s"}, y, lines, refs);
    for (int i = 1; i < n; ++i) {
      const auto k = static_cast<std::size_t>(i);
      if (k < c.peaks->size()) mark_peak(spec, rc, (*c.series)[k], (*c.peaks)[k], 1e-3, "kN", i, p);
    }
    return figure(std::move(p),
                  fmt::format("Case {}: the {} of the force of the link above on each link below the top one, at "
                              "its upper pivot (the reaction R; the link above feels -R), {}; circles mark the "
                              "largest |.|, located between the samples.",
                              id, c.component, c.sense),
                  220, 0.5);
  };
  for (const LowerComponent& c : components) horizontal.push_back(chart(c, true));
  const LowerComponent up{"Vertical load at the lower pivots", "vertical load", "vertical component",
                          "+ up (at rest the weight below the pivot)", &rc.load_vertical, &rc.peak_load_vertical,
                          {LimitKind::pivot_load_vertical}};
  vertical.push_back(chart(up, false));
  std::vector<Block> out;
  out.push_back(figures(std::move(horizontal)));
  out.push_back(figures(std::move(vertical)));
  return out;
}

/// The plan views of one recorded case: the hook relative to the top pivot in the boom frame, and
/// the hook and the top pivot over the ground.
std::vector<Figure> plan_figures(const RecordedCase& rc, const std::string& id) {
  const FrameNames names = frame_names(rc);
  plot::Plot relative = plot::line_chart(
      fmt::format("Hook relative to the top pivot, case {}", id), {names.tangential, "m"}, {names.radial, "m"},
      {{"hook", rc.hook_tangential, rc.hook_radial, true, false, 0}});
  relative.equal_aspect = true;
  relative.mark_ends = true;
  relative.x.include_zero = relative.y.include_zero = true;
  plot::Plot ground = plot::line_chart(fmt::format("Hook and top pivot over the ground, case {}", id),
                                       {"z, across the travel", "m"}, {"x, along the travel", "m"},
                                       {{"hook", rc.hook_z, rc.hook_x, true, false, 0},
                                        {"top pivot", rc.pivot_z, rc.pivot_x, true, false, 1}});
  ground.equal_aspect = true;
  ground.mark_ends = true;
  std::vector<Figure> out;
  out.push_back(figure(std::move(relative),
                       fmt::format("Case {}: plan view (from above) of the path of the lowest link's end relative "
                                   "to the top pivot{}, over the run; circle: start, square: end. Its distance from "
                                   "the origin is the hook's horizontal offset.",
                                   id, rc.slewing ? ", in the frame of the slewing boom" : ""),
                       230, 0.5));
  out.push_back(figure(std::move(ground),
                       fmt::format("Case {}: plan view (from above) of the hook's and the top pivot's paths over "
                                   "the ground (x along the travel up the page, z across it to the right); circle: "
                                   "start, square: end.",
                                   id),
                       230, 0.5));
  return out;
}

}  // namespace

std::vector<Block> spatial_case_blocks(const Spec& spec, const RecordedCase& rc, const std::string& id) {
  if (spec.motion != Motion::spatial || rc.in_plane.empty()) return {};
  std::vector<Block> out;
  out.push_back(figures({sway_figure(spec, rc, id, true), sway_figure(spec, rc, id, false)}));
  out.push_back(figures(support_figures(spec, rc, id)));
  for (Block& b : lower_pivot_blocks(spec, rc, id)) out.push_back(std::move(b));
  return out;
}

std::vector<Block> plan_view_blocks(const Spec& spec, const CheckReport& r) {
  if (spec.motion != Motion::spatial) return {};
  std::vector<Block> out;
  std::size_t shown = 0;
  for (const RecordedCase& rc : r.recorded) {
    if (rc.hook_x.empty()) continue;
    if (shown++ == kMaxPlanViews) break;
    if (shown == 1) {
      out.push_back(subheading("Plan views of the hook paths"));
      out.push_back(paragraph(fmt::format(
          "The path of the lowest link's end (the hook) seen from above in every governing case{}: relative to the "
          "top pivot (in the boom frame when the scenario slews) and over the ground.",
          r.recorded.size() > kMaxPlanViews ? fmt::format(" (the first {} of {})", kMaxPlanViews, r.recorded.size())
                                            : std::string())));
    }
    out.push_back(figures(plan_figures(rc, rc.id)));
  }
  return out;
}

}  // namespace swaybound::report_doc::build
