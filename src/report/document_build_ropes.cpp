// Section 6 (cont.), the ropes of a governing case: the tension of each elastic rope's fall with
// its slack intervals and snatch peaks, and the rope length and drum when the scenario hoists.
#include "document_build.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::report_doc::build {

namespace {

/// Snatch peaks labelled with value and time on a tension plot (the largest ones; the others are
/// marked without a label so the labels do not pile up).
constexpr std::size_t kLabelledSnatches = 3;

std::string time_text(double t) {
  return fmt::format("{:.2f} s", t);
}

/// The tension plot of one elastic rope.
Figure tension_figure(const Spec& spec, const RecordedCase& rc, const RecordedRope& rope, int style,
                      const std::string& id) {
  const auto k = static_cast<std::size_t>(rope.link);
  const std::string& name = spec.links[k].name;
  const int parts = spec.links[k].parts_of_line;
  std::vector<plot::Series> series{
      {fmt::format("tension of the fall of {}", name), rc.t, scaled(rope.force, 1e-3), true, false, style}};
  std::vector<plot::RefLine> refs;
  add_ref(refs, {rope.static_force / 1000, fmt::format("static {:.2f} kN", rope.static_force / 1000), false});
  for (const auto& l : spec.limits) {
    if (l.link >= 0 && l.link != rope.link) continue;
    if (l.kind == LimitKind::rope_tension_max || l.kind == LimitKind::snatch_load)
      add_ref(refs, {l.value / 1000, fmt::format("{} {} kN", l.key, num(l.value / 1000)), false});
    if (l.kind == LimitKind::line_pull)
      add_ref(refs, {l.value * parts / 1000,
                     parts > 1 ? fmt::format("line_pull {} kN x {} parts", num(l.value / 1000), parts)
                               : fmt::format("line_pull {} kN", num(l.value / 1000)),
                     false});
  }
  if (std::isfinite(rc.lift_off_time))
    add_ref(refs, {rc.lift_off_time, "lift-off " + time_text(rc.lift_off_time), true});
  plot::Axis y{"tension of the fall", "kN"};
  y.include_zero = true;
  plot::Plot p = plot::line_chart(fmt::format("Rope {}: tension, slack and snatches", name), {"time", "s"}, y,
                                  series, refs);
  for (const Interval& s : rope.slack) p.bands.push_back({s.from, s.to});
  if (!std::isnan(rope.take_up.from)) p.bands.push_back({rope.take_up.from, rope.take_up.to});
  p.band_label = "slack (no tension)";
  // Every snatch peak is marked; the largest few carry their value and time.
  std::vector<std::size_t> order;
  for (std::size_t j = 0; j < rope.snatches.size(); ++j)
    if (std::isfinite(rope.snatches[j].peak.value)) order.push_back(j);
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return rope.snatches[a].peak.value > rope.snatches[b].peak.value;
  });
  bool sampled = false;
  for (std::size_t rank = 0; rank < order.size(); ++rank) {
    const SnatchPeak& s = rope.snatches[order[rank]];
    sampled |= !s.located;
    std::string label;
    if (rank < kLabelledSnatches)
      label = fmt::format("snatch {:.2f} kN at {}{}", s.peak.value / 1000, time_text(s.peak.time),
                          s.located ? "" : " (sampled)");
    p.marks.push_back({s.peak.time, s.peak.value / 1000, label, style});
  }
  // The largest tension of the run, when no snatch peak is it (the rope never went slack before it).
  const bool peak_is_snatch =
      std::any_of(rope.snatches.begin(), rope.snatches.end(),
                  [&](const SnatchPeak& s) { return s.peak.time == rope.peak_force.time; });
  if (std::isfinite(rope.peak_force.value) && !peak_is_snatch)
    p.marks.insert(p.marks.begin(), {rope.peak_force.time, rope.peak_force.value / 1000,
                                     fmt::format("peak {:.2f} kN at {}", rope.peak_force.value / 1000,
                                                 time_text(rope.peak_force.time)),
                                     style});
  const std::string take_up =
      std::isnan(rope.take_up.from)
          ? ""
          : fmt::format(" The rope started slack and was taken up by t = {:.4g} s (shaded too; not counted as slack).",
                        rope.take_up.to);
  std::string slack_text =
      rope.slack_intervals == 0
          ? (take_up.empty() ? std::string("The rope stayed taut.") : "The rope stayed taut once taken up." + take_up)
          : fmt::format(
                "Shaded: the {} slack interval(s){}, {:.3g} s in all, bounded by the located switches, not "
                "by the samples.",
                rope.slack_intervals,
                static_cast<long>(rope.slack.size()) < rope.slack_intervals
                    ? fmt::format(" (the first {} shown)", rope.slack.size())
                    : "",
                rope.slack_time) +
            take_up;
  std::string snatch_text =
      rope.snatches.empty()
          ? ""
          : fmt::format(
                " Circles mark the largest tension after each re-tensioning (the snatch), located "
                "between the samples{}; the largest {} are labelled.",
                sampled ? fmt::format(" for the first {} (later ones: the largest sample, marked sampled)",
                                      kLocatedSnatches)
                        : "",
                std::min(order.size(), kLabelledSnatches));
  return figure(
      std::move(p),
      fmt::format("Tension of the fall of rope {} in case {} (all {} part(s) of line). {}{} Dashed: the "
                  "static tension of the rope hanging at rest{}{}.",
                  name, id, parts, slack_text, snatch_text, refs.size() > 1 ? " and the limits" : "",
                  std::isfinite(rc.lift_off_time) ? ", and the instant the load left the ground" : ""),
      240);
}

/// Rope length, and drum travel and speed, of a hoisting case, side by side.
std::vector<Figure> hoist_figures(const Spec& spec, const RecordedCase& rc, const std::string& id) {
  const auto k = static_cast<std::size_t>(rc.hoist_link);
  const std::string& name = spec.links[k].name;
  std::vector<plot::Series> lengths{
      {fmt::format("length of {}", name), rc.t, rc.hoist_length, true, false, 0}};
  for (const RecordedRope& rope : rc.ropes)
    if (rope.link == rc.hoist_link)
      lengths.push_back({"unstretched length", rc.t, rope.unstretched, true, false, 1});
  std::vector<plot::RefLine> refs;
  if (std::isfinite(rc.lift_off_time))
    refs.push_back({rc.lift_off_time, "lift-off " + time_text(rc.lift_off_time), true});
  std::vector<Figure> out;
  out.push_back(figure(
      plot::line_chart(fmt::format("Rope {}: length", name), {"time", "s"}, {"length", "m"}, lengths, refs),
      fmt::format("Length of rope {} in case {} as the drum winds it{}.", name, id,
                  lengths.size() > 1 ? ", and its unstretched length (the drum's length profile)" : ""),
      200, 0.5));
  plot::Axis dy{"travel, speed", "m, m/s"};
  dy.include_zero = true;
  out.push_back(
      figure(plot::line_chart("Hoist drum", {"time", "s"}, dy,
                              {{"rope hauled in [m]", rc.t, rc.drum_travel, true, false, 2},
                               {"drum speed [m/s]", rc.t, rc.drum_speed, true, false, 3}},
                              refs),
             fmt::format("Rope hauled in at the drum since t = 0 and the drum's rope speed in case {} (+ "
                         "hoists); the hook moves at the drum speed / {} part(s) of line.",
                         id, spec.links[k].parts_of_line),
             200, 0.5));
  return out;
}

}  // namespace

std::vector<Block> rope_blocks(const Spec& spec, const RecordedCase& rc, const std::string& id) {
  std::vector<Block> out;
  for (std::size_t r = 0; r < rc.ropes.size(); ++r)
    out.push_back(figures({tension_figure(spec, rc, rc.ropes[r], static_cast<int>(r), id)}));
  if (rc.hoist_link >= 0 && !rc.drum_travel.empty()) out.push_back(figures(hoist_figures(spec, rc, id)));
  if (!rc.ropes.empty() || rc.hoist_link >= 0) {
    std::string text = fmt::format(
        "Contact switches in this case (rope slack or taut, load leaving the ground): {}.", rc.switches);
    if (std::isfinite(rc.lift_off_time))
      text += fmt::format(" The load left the ground at {:.4g} s.", rc.lift_off_time);
    out.push_back(paragraph(text));
  }
  return out;
}

}  // namespace swaybound::report_doc::build
