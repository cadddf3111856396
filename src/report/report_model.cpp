// Long for a reason: every section of the review packet is built here from one set of private
// helpers; it splits per section (verdict, loads, governing cases, chaos, sizing) in the planned renovation.
// What the review packet says, section by section (see document.hpp for the order).
#include "report_model.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <map>
#include <numbers>
#include <set>

#include <fmt/format.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/core/version.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/report/format.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/sizing/sizing.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound::report_doc {

Rich plain(std::string text) { return {Span{std::move(text)}}; }

namespace {

constexpr double kDeg = 180 / std::numbers::pi;
constexpr double kTextWidth = 487;  // PDF text width of A4 with the packet's margins [pt]
constexpr int kMaxGoverningPlots = 9;  // figures on the governing-case pages (at least one case)
constexpr int kMaxLadderPlots = 2;
constexpr int kMaxModesSketched = 6;
constexpr std::size_t kEnvelopeDirect = 3000;  // points per series drawn as they are

std::string num(double v, int digits = 4) {
  if (std::isnan(v)) return "-";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  return fmt::format("{:.{}g}", v, digits);
}
/// A small difference in engineering units with 3 significant digits ("-3.47e-07 deg").
std::string precise(double v, const std::string& unit) {
  if (!std::isfinite(v)) return engineering(v, unit);
  const std::string u = engineering_unit(unit);
  return fmt::format("{:.3g}", to_engineering(v, unit)) + (u.empty() ? "" : " " + u);
}
/// A quantity that can run to thousands (a mass, an inertia) in plain digits with thousands
/// separators, never in exponent form: 12000 -> "12,000", 1234.5 -> "1,235", 0.25 -> "0.25".
std::string amount(double v) {
  if (!std::isfinite(v) || std::fabs(v) < 1000) return num(v);
  std::string digits = fmt::format("{:.0f}", std::fabs(v));
  for (int at = static_cast<int>(digits.size()) - 3; at > 0; at -= 3) digits.insert(static_cast<std::size_t>(at), ",");
  return (v < 0 ? "-" : "") + digits;
}
std::string deg(double rad, int digits = 4) { return std::isfinite(rad) ? num(rad * kDeg, digits) : num(rad); }

Block paragraph(Rich text) {
  Block b;
  b.kind = Block::Kind::paragraph;
  b.text = std::move(text);
  return b;
}
Block paragraph(std::string text) { return paragraph(plain(std::move(text))); }

Block subheading(std::string text) {
  Block b;
  b.kind = Block::Kind::subheading;
  b.text = plain(std::move(text));
  return b;
}

Block bullets(std::vector<Rich> items) {
  Block b;
  b.kind = Block::Kind::bullets;
  b.items = std::move(items);
  return b;
}

Block bullets(const std::vector<std::string>& items) {
  std::vector<Rich> r;
  for (const auto& s : items) r.push_back(plain(s));
  return bullets(std::move(r));
}

Block table_block(Table t) {
  Block b;
  b.kind = Block::Kind::table;
  b.table = std::move(t);
  return b;
}

Block figures(std::vector<Figure> f) {
  Block b;
  b.kind = Block::Kind::figures;
  b.figures = std::move(f);
  return b;
}

Block callout(Rich text, Tone tone) {
  Block b;
  b.kind = Block::Kind::callout;
  b.text = std::move(text);
  b.tone = tone;
  return b;
}

Figure figure(plot::Plot p, std::string caption, double height, double share = 1) {
  Figure f;
  p.width = kTextWidth * share - (share < 1 ? 6 : 0);
  p.height = height;
  f.plot = std::move(p);
  f.caption = std::move(caption);
  f.height = height;
  f.width_share = share;
  return f;
}

Column col(std::string title, double weight, Align align, std::string key, bool note = false) {
  return Column{std::move(title), weight, align, std::move(key), note};
}

std::string link_name(const Spec& spec, int link) {
  return link >= 0 && static_cast<std::size_t>(link) < spec.links.size() ? spec.links[static_cast<std::size_t>(link)].name
                                                                          : std::string();
}

// ---------------------------------------------------------------------------------------------
// 1 Title block

Section title_section(const Document& d, const Spec& spec, const CheckReport& r) {
  Section s{"title", "1", "Title block and sign-off", {}, false};
  Block f;
  f.kind = Block::Kind::fields;
  f.field_list = {{"Mechanism", d.mechanism},
                  {"Project", d.project.empty() ? "-" : d.project},
                  {"Revision", d.revision.empty() ? "-" : d.revision},
                  {"Date", d.date.empty() ? "(not given)" : d.date},
                  {"Prepared by", d.prepared_by.empty() ? "-" : d.prepared_by},
                  {"Tool", fmt::format("swaybound {} (commit {})", d.tool_version, d.commit)},
                  {"Spec file", spec.source_file.empty() ? "-" : spec.source_file},
                  {"Spec SHA-256", d.sha256.empty() ? "-" : d.sha256},
                  {"Cases", fmt::format("{} ({} scenario(s), {:g} s each)", r.case_count, spec.scenarios.size(),
                                        spec.cases.duration)}};
  s.blocks.push_back(f);
  long failing = 0;
  for (const auto& c : r.checks) failing += !c.pass;
  Rich verdict;
  if (r.pass)
    verdict = {Span{"Verdict: PASS. ", true}, Span{fmt::format("All {} checks pass.", r.checks.size())}};
  else
    verdict = {Span{"Verdict: FAIL. ", true},
               Span{fmt::format("{} of {} checks fail{}.", failing, r.checks.size(),
                                r.failed_total > 0 ? fmt::format("; {} case(s) failed to run", r.failed_total) : "")}};
  verdict.push_back(Span{" A screening result for review, not a certification.", false, true});
  s.blocks.push_back(callout(verdict, r.pass ? Tone::pass : Tone::fail));
  Block sig;
  sig.kind = Block::Kind::signatures;
  sig.roles = {"Prepared by", "Reviewed by", "Approved by"};
  sig.names = {d.prepared_by, "", ""};
  s.blocks.push_back(sig);
  return s;
}

// ---------------------------------------------------------------------------------------------
// S Sizing (a sized design's packet only)

std::string sizing_value(double si, const std::string& unit) {
  if (!std::isfinite(si)) return num(si);
  return fmt::format("{:.6g}", si) + (unit.empty() ? "" : " " + unit);
}

Section sizing_section(const Spec& input, const SizingResult& r) {
  Section s{"sizing", "S", "Sizing: the design as given and as sized", {}, true};
  const SizingSpec& z = *input.sizing;
  if (r.feasible)
    s.blocks.push_back(callout(
        {Span{"Sized: ", true},
         Span{fmt::format("the sized design passes every check on every case{}; the rest of "
                          "this packet is the check of the sized spec.",
                          r.required_margin > 0
                              ? fmt::format(" with the required {:g}% to spare", 100 * r.required_margin)
                              : std::string())}},
        Tone::pass));
  else
    s.blocks.push_back(callout({Span{"Not sized: ", true},
                                Span{"no design within the ranges and the budget passes every check" +
                                     (r.required_margin > 0 ? fmt::format(" with the required {:g}% to spare",
                                                                          100 * r.required_margin)
                                                            : std::string()) +
                                     "; the design reported is the best found."}},
                               Tone::fail));
  std::vector<std::string> summary{
      fmt::format("Objective: {} ({}), before {}, after {}.",
                  z.objective == Objective::min_cost     ? "min_cost"
                  : z.objective == Objective::max_margin ? "max_margin"
                                                         : "min_metric",
                  r.objective_label, engineering(r.objective_before, r.objective_unit),
                  engineering(r.objective_after, r.objective_unit)),
      fmt::format("Search: {} ({}), seed {}; budget {} evaluations, {:g} s; ended by: {}.",
                  z.mode == SearchMode::local ? "local" : "global", r.algorithm, z.seed, z.max_evaluations,
                  z.max_seconds, r.stop_reason),
      fmt::format(
          "Evaluations: {} ({} on {} screening cases, {} full checks of {} cases, including the design as "
          "given and the final check).",
          r.evaluations, r.screening_evaluations, r.screening_size, r.full_checks, r.case_count),
      fmt::format(
          "Required margin: {:g}% (sizing.required_margin): every check's margin / scale must reach it; the "
          "scale is |limit|, or for a limit of 0 a fixed scale of its dimension (the chain's weight for "
          "forces).",
          100 * r.required_margin)};
  std::vector<std::string> steps;
  for (const auto& v : r.variable_outcomes)
    if (v.step > 0)
      steps.push_back(fmt::format("{} to multiples of {}", v.path, sizing_value(v.step, v.unit)));
  summary.push_back(steps.empty() ? std::string("Steps: none (continuous values as found).")
                                  : fmt::format("Steps: {}; {}.", fmt::join(steps, ", "), r.rounding));
  if (!r.catalogue_method.empty())
    summary.push_back(fmt::format("Catalogue variables: {}.", r.catalogue_method));
  s.blocks.push_back(bullets(summary));

  s.blocks.push_back(subheading("Design variables"));
  Table vt{"sizing-variables",
           {col("variable", 2.2, Align::left, "variable"),
            col("range or catalogue", 1.6, Align::left, "range"), col("step", 0.8, Align::right, "step"),
            col("before", 1, Align::right, "before"), col("found", 1, Align::right, "found"),
            col("after", 1, Align::right, "after"), col("at a bound", 0.7, Align::left, "bound")},
           {},
           "found: the value the search found; after: the value in the sized spec (rounded to its step). SI "
           "units.",
           7.6};
  for (std::size_t i = 0; i < r.variable_outcomes.size(); ++i) {
    const auto& v = r.variable_outcomes[i];
    std::string range;
    if (v.discrete && i < r.variables.size()) {
      std::vector<std::string> values;
      for (double c : r.variables[i].catalogue) values.push_back(fmt::format("{:.6g}", c));
      range = fmt::format("{{{}}} {}", fmt::join(values, ", "), v.unit);
    } else {
      range = fmt::format("{:.6g} to {:.6g} {}", v.lo, v.hi, v.unit);
    }
    vt.rows.push_back(
        {{v.path, range, v.step > 0 ? sizing_value(v.step, v.unit) : "-", sizing_value(v.before, v.unit),
          sizing_value(v.unrounded, v.unit), sizing_value(v.after, v.unit),
          v.at_bound < 0   ? "low end"
          : v.at_bound > 0 ? "high end"
                           : ""},
         Tone::normal,
         {}});
  }
  s.blocks.push_back(table_block(vt));

  s.blocks.push_back(
      subheading(fmt::format("Checks on every case ({} cases), before and after", r.case_count)));
  Table ct{
      "sizing-checks",
      {col("check", 1.5, Align::left, "check"), col("limit", 1, Align::right, "limit"),
       col("worst before", 1, Align::right, "worst-before"),
       col("ratio before", 0.8, Align::right, "ratio-before"),
       col("worst after", 1, Align::right, "worst-after"),
       col("ratio after", 0.8, Align::right, "ratio-after"),
       col("verdict after", 0.7, Align::center, "verdict"), col("binding", 0.6, Align::center, "binding")},
      {},
      fmt::format(
          "ratio = margin / scale (see above); verdict after: the check passes and its ratio reaches the "
          "required {:g}%; binding: within 1% of the required ratio, or failing.",
          100 * r.required_margin),
      7.6};
  for (const auto& l : r.limits) {
    const bool held = l.pass_after && l.ratio_after >= r.required_margin;
    Row row;
    row.cells = {fmt::format("{} ({})", l.key, l.subject),
                 engineering(l.limit_value, l.unit),
                 engineering(l.worst_before, l.unit),
                 ratio_percent(l.ratio_before),
                 engineering(l.worst_after, l.unit),
                 ratio_percent(l.ratio_after),
                 held           ? "pass"
                 : l.pass_after ? "short of margin"
                                : "FAIL",
                 l.binding ? "yes" : ""};
    row.tone = held ? Tone::normal : Tone::fail;
    row.cell_tone.assign(row.cells.size(), Tone::normal);
    row.cell_tone[6] = held ? Tone::pass : Tone::fail;
    ct.rows.push_back(row);
  }
  s.blocks.push_back(table_block(ct));
  return s;
}

// ---------------------------------------------------------------------------------------------
// 2 Scope and assumptions

Section scope_section(const Spec& spec, const CheckReport& r, const Document& d) {
  Section s{"scope", "2", "Scope and assumptions", {}, true};
  s.blocks.push_back(paragraph(fmt::format(
      "This packet reports a design check of the planar pendulum chain \"{}\" ({} link(s)) made with swaybound {}. "
      "Every initial condition of the case set was run under every base-motion scenario ({} cases of {:g} s) with "
      "the full nonlinear equations of motion, and each limit of the spec was checked against the worst value over "
      "the cases.",
      spec.name, spec.links.size(), d.tool_version, r.case_count, spec.cases.duration)));
  std::vector<Rich> model;
  model.push_back({Span{"Planar motion. ", true},
                   Span{"Every link swings in one vertical plane; the angles are absolute, from the downward vertical."}});
  std::string ropes;
  for (const auto& l : spec.links)
    if (l.kind == LinkKind::rope) ropes += (ropes.empty() ? "" : ", ") + ("'" + l.name + "'");
  model.push_back({Span{"Rigid links. ", true},
                   Span{"Every link is a rigid body of fixed length. " +
                        (ropes.empty() ? std::string("The chain has no rope links.")
                                       : "The rope link(s) " + ropes +
                                             " are treated as rigid links of fixed length; their axial tension is "
                                             "computed and checked, and a negative tension means the rope would go "
                                             "slack, which the model itself does not represent.")}});
  std::string friction = "Friction at a pivot is a constant Coulomb torque plus pin friction mu r |R|, regularised "
                         "as tanh(w / w_t), so it never sticks exactly: below the transition rate w_t it acts like a "
                         "stiff viscous damper.";
  std::vector<std::string> rates;
  for (const auto& l : spec.links)
    if (l.pivot.friction)
      rates.push_back(fmt::format("'{}' {} deg/s", l.name, deg(l.pivot.friction->transition_rate)));
  friction += rates.empty() ? " No pivot has friction." : " Transition rates: " + fmt::format("{}", fmt::join(rates, ", ")) + ".";
  model.push_back({Span{"Friction. ", true}, Span{friction}});
  model.push_back({Span{"Dampers. ", true},
                   Span{"Rotary dampers follow the power law tau = -C w_ref (|w| / w_ref)^alpha sign(w), w_ref = "
                        "1 rad/s, with an optional saturation torque and, for alpha < 1, a linear segment below "
                        "linear_below; dashpots are linear and axial, F = -c d(distance)/dt."}});
  model.push_back({Span{"Loads. ", true},
                   Span{"Wind is quadratic drag at one point of a link from a horizontal wind with an optional step "
                        "gust. The top pivot moves with a prescribed piecewise-constant acceleration (the base "
                        "scenarios); it is driven, not coupled to the sway."}});
  model.push_back({Span{"Numerics. ", true},
                   Span{fmt::format("{} with rtol = {:g}, atol = {:g}. Peaks are located on the solver's dense output "
                                    "between steps and on both sides of every jump of base acceleration or wind; "
                                    "each governing case is re-run at a 100x tighter tolerance (section 9).",
                                    spec.solver.method == Stepper::dopri5 ? "Dormand-Prince 5(4) (dopri5)"
                                                                           : "Runge-Kutta-Fehlberg 7(8) (rkf78)",
                                    spec.solver.rtol, spec.solver.atol)}});
  s.blocks.push_back(subheading("Model"));
  s.blocks.push_back(bullets(model));
  s.blocks.push_back(subheading("Not modelled"));
  s.blocks.push_back(bullets(std::vector<std::string>{
      "rope stretch (elastic ropes) and slack-rope dynamics;",
      "hoisting or lowering during travel (the rope length is fixed);",
      "three-dimensional (spherical) swing and twisting of the load;",
      "flexibility of the crane structure, boom, trolley and supports, and any feedback of the sway on the base "
      "motion;",
      "impacts, contact with obstacles, and true stick-slip friction."}));
  s.blocks.push_back(subheading("Units in this packet"));
  s.blocks.push_back(paragraph(
      "The spec and results.json are in SI units. Tables show angles in degrees (3 decimals in the verdict table), "
      "angular rates in deg/s (3 decimals), forces in kN (2 decimals), margin ratios in percent (1 decimal) and "
      "other quantities to 4 significant digits; the verdict table shows exactly these roundings of the numbers in "
      "results.json. A dash means no value was computed."));
  return s;
}

// ---------------------------------------------------------------------------------------------
// 3 Design summary

std::string range_text(const std::vector<Range>& ranges, InitialKind kind, double factor, const std::string& unit) {
  if (ranges.empty()) return "0";
  std::vector<std::string> parts;
  for (const auto& r : ranges) {
    if (kind == InitialKind::single || kind == InitialKind::ladder || r.lo == r.hi)
      parts.push_back(num(r.lo * factor));
    else if (kind == InitialKind::grid)
      parts.push_back(fmt::format("{} to {} ({})", num(r.lo * factor), num(r.hi * factor), r.count));
    else
      parts.push_back(fmt::format("{} to {}", num(r.lo * factor), num(r.hi * factor)));
  }
  return fmt::format("[{}] {}", fmt::join(parts, "; "), unit);
}

const char* kind_name(InitialKind k) {
  switch (k) {
    case InitialKind::single: return "single";
    case InitialKind::grid: return "grid";
    case InitialKind::random: return "random";
    case InitialKind::corners: return "corners";
    case InitialKind::ladder: return "ladder";
  }
  return "";
}

std::string attachment_text(const Spec& spec, const AttachmentSpec& a) {
  if (a.link < 0) return fmt::format("base at ({}, {}) m", num(a.base_x), num(a.base_y));
  return fmt::format("'{}' at {} m", link_name(spec, a.link), num(a.at));
}

Section design_section(const Spec& spec, const CheckReport& r) {
  Section s{"design", "3", "Design summary", {}, false};
  Block f;
  f.kind = Block::Kind::fields;
  f.field_list = {{"Gravity", fmt::format("{} m/s²", num(spec.gravity, 6))},
                  {"Links", std::to_string(spec.links.size())},
                  {"Cases", fmt::format("{} = {} start(s) x {} scenario(s)", r.case_count,
                                        spec.scenarios.empty() ? 0 : r.case_count / static_cast<long>(spec.scenarios.size()),
                                        spec.scenarios.size())},
                  {"Run length", fmt::format("{:g} s per case, recorded at {:g} /s", spec.cases.duration, spec.cases.output_rate)}};
  s.blocks.push_back(f);

  s.blocks.push_back(subheading("Links (top to bottom)"));
  Table links{"links-table",
              {col("#", 0.35, Align::right, "index"), col("link", 2.2, Align::left, "name"),
               col("kind", 0.8, Align::left, "kind"), col("length [m]", 1, Align::right, "length"),
               col("mass [kg]", 1.1, Align::right, "mass"), col("com [m]", 1.2, Align::right, "com"),
               col("inertia about com [kg m²]", 1.5, Align::right, "inertia")},
              {},
              "com: centre of mass from the link's upper pivot; (rod): the uniform-rod default.",
              7.6};
  for (std::size_t i = 0; i < spec.links.size(); ++i) {
    const auto& l = spec.links[i];
    links.rows.push_back({{std::to_string(i + 1), l.name, l.kind == LinkKind::rope ? "rope" : "rigid", num(l.length),
                           amount(l.mass), num(l.com) + (l.com_given ? "" : " (rod)"),
                           amount(l.inertia) + (l.inertia_given ? "" : " (rod)")}});
  }
  s.blocks.push_back(table_block(links));

  s.blocks.push_back(subheading("Pivots: friction and dampers"));
  Table piv{"pivots-table",
            {col("pivot of", 2.0, Align::left, "link"), col("Coulomb [N m]", 1, Align::right, "friction-torque"),
             col("pin r [mm]", 0.9, Align::right, "pin-radius"), col("mu", 0.6, Align::right, "mu"),
             col("w_t [deg/s]", 0.9, Align::right, "transition"), col("C [kN m s/rad]", 1.2, Align::right, "damper-c"),
             col("alpha", 0.6, Align::right, "exponent"), col("max torque [kN m]", 1.0, Align::right, "max-torque"),
             col("linear below [deg/s]", 1.1, Align::right, "linear-below")},
            {},
            "Friction torque T0 + mu r |R|, regularised by tanh(w / w_t); damper tau = C w_ref (|w|/w_ref)^alpha, "
            "w_ref = 1 rad/s, capped at max, linear below linear_below when alpha < 1. A dash: none.",
            7.4};
  for (const auto& l : spec.links) {
    Row row;
    row.cells.push_back(l.name);
    if (l.pivot.friction) {
      const auto& fr = *l.pivot.friction;
      row.cells.insert(row.cells.end(), {num(fr.torque), num(fr.pin_radius * 1000), num(fr.mu), deg(fr.transition_rate)});
    } else {
      row.cells.insert(row.cells.end(), {"-", "-", "-", "-"});
    }
    if (!l.pivot.dampers.empty()) {
      // Several dampers side by side: one value per damper in each column, in spec order.
      std::string c, a, m, w;
      for (const auto& dm : l.pivot.dampers) {
        const std::string sep = c.empty() ? "" : " + ";
        c += sep + num(dm.coefficient / 1000);
        a += (a.empty() ? "" : ", ") + num(dm.exponent);
        m += (m.empty() ? "" : ", ") + (std::isfinite(dm.max_torque) ? num(dm.max_torque / 1000) : std::string("none"));
        w += (w.empty() ? "" : ", ") + (dm.exponent < 1 ? deg(dm.linear_below) : std::string("-"));
      }
      row.cells.insert(row.cells.end(), {c, a, m, w});
    } else {
      row.cells.insert(row.cells.end(), {"-", "-", "-", "-"});
    }
    piv.rows.push_back(row);
  }
  s.blocks.push_back(table_block(piv));

  s.blocks.push_back(subheading("Dashpots"));
  if (spec.dashpots.empty()) {
    s.blocks.push_back(paragraph("None."));
  } else {
    Table t{"dashpots-table",
            {col("dashpot", 1.5, Align::left, "name"), col("from", 2, Align::left, "from"), col("to", 2, Align::left, "to"),
             col("c [kN s/m]", 1, Align::right, "coefficient")},
            {},
            "",
            7.6};
    for (const auto& dp : spec.dashpots)
      t.rows.push_back({{dp.name, attachment_text(spec, dp.from), attachment_text(spec, dp.to), num(dp.coefficient / 1000)}});
    s.blocks.push_back(table_block(t));
  }

  s.blocks.push_back(subheading("Wind"));
  if (spec.wind.empty()) {
    s.blocks.push_back(paragraph("None."));
  } else {
    Table t{"wind-table",
            {col("on link", 1.6, Align::left, "link"), col("at [m]", 0.7, Align::right, "at"),
             col("speed [m/s]", 0.9, Align::right, "speed"), col("A [m²]", 0.7, Align::right, "area"),
             col("Cd", 0.6, Align::right, "cd"), col("rho [kg/m³]", 0.9, Align::right, "rho"),
             col("gust", 2.2, Align::left, "gust")},
            {},
            "Drag F = 1/2 rho Cd A |u - v| (u - v) at the point; positive speed blows towards +x.",
            7.6};
    for (const auto& w : spec.wind)
      t.rows.push_back({{link_name(spec, w.link), num(w.at), num(w.speed), num(w.drag_area), num(w.drag_coefficient),
                         num(w.air_density),
                         w.gust ? fmt::format("+{} m/s from {:g} s for {:g} s", num(w.gust->speed), w.gust->start,
                                              w.gust->duration)
                                : "none"}});
    s.blocks.push_back(table_block(t));
  }

  s.blocks.push_back(subheading("Base-motion scenarios"));
  Table sc{"scenarios-table",
           {col("scenario", 1.6, Align::left, "name"), col("initial velocity [m/s]", 1.1, Align::right, "velocity"),
            col("acceleration segments: duration [s] at (x, y) [m/s²]", 3.2, Align::left, "accel")},
           {},
           "After the last segment the base keeps its velocity.",
           7.6};
  for (const auto& scn : spec.scenarios) {
    std::vector<std::string> seg;
    for (const auto& a : scn.accel) seg.push_back(fmt::format("{:g} s at ({}, {})", a.duration, num(a.ax), num(a.ay)));
    sc.rows.push_back({{scn.name, fmt::format("({}, {})", num(scn.initial_vx), num(scn.initial_vy)),
                        seg.empty() ? "none (constant velocity)" : fmt::format("{}", fmt::join(seg, "; "))}});
  }
  s.blocks.push_back(table_block(sc));

  s.blocks.push_back(subheading("Initial-condition sets"));
  Table is{"initial-sets-table",
           {col("set", 1.1, Align::left, "name"), col("kind", 0.7, Align::left, "kind"),
            col("starts", 0.6, Align::right, "starts"), col("link angles", 2.4, Align::left, "theta"),
            col("link rates", 1.6, Align::left, "rate"), col("notes", 1.6, Align::left, "notes")},
           {},
           "Angles per link, top link first; a link not listed starts at 0. Grids show the count per range.",
           7.4};
  for (const auto& set : spec.cases.initial) {
    std::string notes;
    if (set.kind == InitialKind::random)
      notes = fmt::format("seed {}, {}", set.seed, set.method == SamplingMethod::uniform ? "uniform" : "Latin hypercube");
    if (set.kind == InitialKind::ladder) {
      std::vector<std::string> st;
      for (double v : set.steps) st.push_back(fmt::format("{:g}", set.relative ? v : v * kDeg));
      notes = fmt::format("perturbs '{}' by {} [{}]", link_name(spec, set.perturb_link), fmt::join(st, ", "),
                          set.relative ? "relative" : "deg");
    }
    is.rows.push_back({{set.name, kind_name(set.kind), std::to_string(initial_set_size(set)),
                        range_text(set.theta, set.kind, kDeg, "deg"), range_text(set.rate, set.kind, kDeg, "deg/s"),
                        notes.empty() ? "-" : notes}});
  }
  s.blocks.push_back(table_block(is));
  return s;
}

// ---------------------------------------------------------------------------------------------
// 4 Verdict

std::string where_text(const Spec& spec, const CheckResult& c) {
  std::vector<std::string> parts;
  if (c.governing_link >= 0) parts.push_back(link_name(spec, c.governing_link));
  if (std::isfinite(c.time)) parts.push_back(fmt::format("t = {:.3f} s", c.time));
  return parts.empty() ? "-" : fmt::format("{}", fmt::join(parts, ", "));
}

/// What each figure of the verdict table is, for the limit kinds the spec uses (and the pivot
/// load, which the static-load table and the support force below use).
std::vector<Rich> figure_definitions(const Spec& spec) {
  std::set<LimitKind> kinds{LimitKind::pivot_load};
  for (const auto& l : spec.limits) kinds.insert(l.kind);
  std::vector<Rich> out;
  for (const auto& info : limit_kinds())
    if (kinds.contains(info.kind))
      out.push_back({Span{std::string(info.key), true, false, true}, Span{": " + std::string(info.definition)}});
  out.push_back({Span{"Source: ", true}, Span{"every figure is computed by this tool from the spec (simulation, "
                                              "linearisation or FTLE); none is taken from a design standard."}});
  return out;
}

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

/// The static-load table, the warnings for load limits the chain breaks at rest, and the force on
/// the trolley or boom tip.
void static_load_blocks(const Spec& spec, const CheckReport& r, std::string_view csv, std::vector<Block>& out) {
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
  if (!csv.empty()) {
    try {
      double best = std::nan("");
      std::string where;
      for (const auto& row : read_case_envelope(spec, csv))
        if (row.ok && !row.peak_load.empty() && !(row.peak_load[0] <= best)) {
          best = row.peak_load[0];
          where = row.id;
        }
      peak = std::isfinite(best) ? fmt::format("its peak magnitude over the cases is {} kN, in case {} (the peak pivot "
                                               "load of the top pivot; {} times the static {} kN).",
                                               kn(best), where, num(best / st.pivot.front(), 3), kn(st.pivot.front()))
                                 : "no case ran to its end, so it has no peak.";
    } catch (const std::exception& e) {
      peak = fmt::format("its peak could not be read from cases.csv ({}).", e.what());
    }
  }
  out.push_back(paragraph(fmt::format(
      "The chain pulls on its support with F = -R, the negative of the reaction R on the top link '{}'. Components: x "
      "horizontal, positive in the +x direction of the base scenarios and the wind; y vertical, positive upwards. At "
      "rest F = (0, -{}) kN, straight down; {}",
      top, kn(st.pivot.empty() ? 0.0 : st.pivot.front()), peak)));
  double fx = std::nan(""), fy_low = std::nan(""), fy_high = std::nan("");
  std::string fx_case, fy_case;
  for (const auto& rc : r.recorded)
    for (std::size_t j = 0; j < rc.support_x.size() && j < rc.support_y.size(); ++j) {
      if (!(std::fabs(rc.support_x[j]) <= fx)) {
        fx = std::fabs(rc.support_x[j]);
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
        "other cases are not recorded): largest |F_x| {} kN (case {}); F_y from {} to {} kN, most downward in case {}.",
        spec.cases.output_rate, kn(fx), fx_case, kn(fy_low), kn(fy_high), fy_case)));
}

Section verdict_section(const Spec& spec, const CheckReport& r, std::string_view csv) {
  Section s{"verdict", "4", "Verdict", {}, true};
  long failing = 0;
  for (const auto& c : r.checks) failing += !c.pass;
  if (r.checks.empty())
    s.blocks.push_back(callout(plain("The spec has no limits: nothing was checked."), Tone::warn));
  else if (r.pass)
    s.blocks.push_back(callout({Span{"PASS: ", true}, Span{fmt::format("all {} checks are within their limits.", r.checks.size())}},
                               Tone::pass));
  else
    s.blocks.push_back(callout({Span{"FAIL: ", true},
                                Span{fmt::format("{} of {} checks are outside their limits or could not be shown to be "
                                                 "inside them.",
                                                 failing, r.checks.size())}},
                               Tone::fail));
  Table t{"verdict-table",
          {col("#", 0.3, Align::right, "index"), col("check", 1.55, Align::left, "check"),
           col("applies to", 1, Align::left, "applies-to", true), col("limit", 1.05, Align::right, "limit"),
           col("worst", 1.05, Align::right, "worst"), col("margin", 1.05, Align::right, "margin"),
           col("ratio", 0.62, Align::right, "ratio"), col("verdict", 0.62, Align::center, "verdict"),
           col("governing case", 1, Align::left, "governing", true), col("where", 1, Align::left, "where", true)},
          {},
          "margin = limit - worst for an upper bound, worst - limit for a lower bound; ratio = margin / |limit|. "
          "Every value is rounded by the rules of section 2 from results.json.",
          7.8};
  for (std::size_t i = 0; i < r.checks.size(); ++i) {
    const auto& c = r.checks[i];
    Row row;
    row.cells = {std::to_string(i + 1),
                 c.key,
                 c.subject + (c.bound == Bound::lower ? " (lower bound)" : ""),
                 engineering(c.limit_value, c.unit),
                 engineering(c.worst, c.unit),
                 engineering(c.margin, c.unit),
                 ratio_percent(c.margin_ratio),
                 c.pass ? "pass" : "FAIL",
                 c.governing_id.empty() ? "-" : c.governing_id,
                 where_text(spec, c)};
    row.tone = c.pass ? Tone::normal : Tone::fail;
    row.cell_tone.assign(row.cells.size(), Tone::normal);
    row.cell_tone[7] = c.pass ? Tone::pass : Tone::fail;
    t.rows.push_back(row);
  }
  s.blocks.push_back(table_block(t));

  std::vector<Rich> remarks;
  for (std::size_t i = 0; i < r.checks.size(); ++i) {
    const auto& c = r.checks[i];
    if (c.failed_cases > 0)
      remarks.push_back({Span{fmt::format("Check {} ({}): ", i + 1, c.key), true},
                         Span{fmt::format("{} case(s) failed to run and fail this check; first: {}.", c.failed_cases,
                                          c.first_failure)}});
    if (c.audit_warning)
      remarks.push_back({Span{fmt::format("Check {} ({}): ", i + 1, c.key), true},
                         Span{fmt::format("at a 100x tighter tolerance the worst value moves by {}, more than the "
                                          "margin; the verdict is not numerically settled.",
                                          engineering(c.audit_change, c.unit))}});
  }
  if (!remarks.empty()) {
    s.blocks.push_back(subheading("Remarks"));
    s.blocks.push_back(bullets(remarks));
  }

  s.blocks.push_back(subheading("Failed integrations"));
  if (r.time_budget_total > 0)
    s.blocks.push_back(paragraph("This check is " + time_budget_note(spec, r.time_budget_total) + "."));
  if (r.failed_total == 0) {
    s.blocks.push_back(paragraph(fmt::format("None: every one of the {} cases ran to its end.", r.case_count)));
  } else {
    s.blocks.push_back(paragraph(fmt::format(
        "{} case(s) failed to run{}. A failed case fails every per-case check; it is never skipped.", r.failed_total,
        r.failed.size() < static_cast<std::size_t>(r.failed_total) ? fmt::format(" (the first {} are listed)", r.failed.size())
                                                                     : std::string())));
    Table ft{"failed-table",
             {col("case", 2, Align::left, "case"), col("status", 1, Align::left, "status"),
              col("reason", 4, Align::left, "reason")},
             {},
             "",
             7.4};
    for (const auto& f : r.failed) ft.rows.push_back({{f.id, f.status, f.reason}, Tone::fail, {}});
    s.blocks.push_back(table_block(ft));
  }

  s.blocks.push_back(subheading("What each figure is"));
  s.blocks.push_back(bullets(figure_definitions(spec)));
  static_load_blocks(spec, r, csv, s.blocks);
  return s;
}

// ---------------------------------------------------------------------------------------------
// 5 Modes

Section modal_section(const Spec& spec, const CheckReport& r) {
  Section s{"modes", "5", "Modal analysis", {}, true};
  const auto& modes = r.modes.modes;
  s.blocks.push_back(paragraph(
      "Small-signal modes of the chain about its hanging rest position with the base at rest: undamped natural "
      "frequencies and shapes, and the damping ratio of the damped mode matched to each. Valid for small swings only."));
  if (modes.empty()) {
    s.blocks.push_back(paragraph("No modes were computed."));
    return s;
  }
  Table t{"modes-table",
          {col("mode", 0.5, Align::right, "mode"), col("frequency [Hz]", 1, Align::right, "frequency"),
           col("period [s]", 0.9, Align::right, "period"), col("damping ratio", 0.9, Align::right, "damping"),
           col("damped freq. [Hz]", 1, Align::right, "damped-frequency"), col("shape (per link)", 2, Align::left, "shape"),
           col("note", 1.1, Align::left, "note")},
          {},
          "frequency: the undamped natural frequency f of the mode (dampers and friction left out); period: 1/f; "
          "damped freq.: Im(λ)/2π of the damped mode λ matched to it, the frequency at which the swing actually "
          "oscillates (a dash when that mode is overdamped and does not oscillate); damping ratio: -Re(λ)/|λ|. "
          "Shapes are scaled so the largest component is 1.",
          7.6};
  for (std::size_t k = 0; k < modes.size(); ++k) {
    const Mode& m = modes[k];
    std::vector<std::string> shape;
    for (double v : m.shape) shape.push_back(fmt::format("{:.3f}", v));
    std::string note = m.overdamped ? "overdamped" : (m.damping_ratio <= 0 ? "undamped" : "underdamped");
    Row row{{std::to_string(k + 1), num(m.frequency_hz), num(m.period_s), num(m.damping_ratio),
             m.overdamped ? "-" : num(m.damped_frequency_hz), fmt::format("{}", fmt::join(shape, ", ")), note},
            Tone::normal,
            {}};
    t.rows.push_back(row);
  }
  s.blocks.push_back(table_block(t));
  s.blocks.push_back(paragraph(fmt::format("Least modal damping ratio: {}.", num(r.modes.least_damping_ratio))));

  plot::ChainSketch sketch;
  for (const auto& l : spec.links) sketch.lengths.push_back(l.length);
  for (std::size_t k = 0; k < modes.size() && k < static_cast<std::size_t>(kMaxModesSketched); ++k) {
    sketch.shapes.push_back(modes[k].shape);
    sketch.captions.push_back(fmt::format("mode {}: {} Hz, zeta {}", k + 1, num(modes[k].frequency_hz, 3),
                                          num(modes[k].damping_ratio, 3)));
  }
  const std::string more = modes.size() > static_cast<std::size_t>(kMaxModesSketched)
                               ? fmt::format(" The first {} of {} modes are sketched.", kMaxModesSketched, modes.size())
                               : "";
  s.blocks.push_back(figures({figure(plot::mode_shapes("Mode shapes (undamped)", sketch),
                                     "Each chain hangs from its top pivot (hatched), drawn to scale in length; the "
                                     "deflection is exaggerated to an arbitrary amplitude. Solid: the shape; light "
                                     "dashed: its mirror image half a period later; grey dotted: rest." + more,
                                     std::min(260.0, 120 + 40 * std::min<double>(4, static_cast<double>(spec.links.size()))))}));
  if (!r.modes.notes.empty()) {
    s.blocks.push_back(subheading("Notes of the linearisation"));
    s.blocks.push_back(bullets(r.modes.notes));
  }
  return s;
}

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
  std::vector<plot::Series> base;
  if (moves(rc.base_ax) || moves(rc.base_vx)) {
    base.push_back({"acceleration x [m/s²]", rc.t, rc.base_ax, true, false, 0});
    base.push_back({"speed x [m/s]", rc.t, rc.base_vx, true, false, 1});
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
                       fmt::format("Acceleration and speed of the trolley or boom tip in case {} (x horizontal, y up), "
                                   "as the scenario prescribes.",
                                   id),
                       200, share));
  if (!spec.wind.empty()) {
    std::vector<plot::Series> wind;
    for (std::size_t w = 0; w < rc.wind_x.size(); ++w)
      wind.push_back({fmt::format("wind[{}] on {}", w, spec.links[static_cast<std::size_t>(spec.wind[w].link)].name),
                      rc.t, scaled(rc.wind_x[w], 1e-3), true, false, -1});
    plot::Axis wy{"horizontal wind force", "kN"};
    wy.include_zero = true;
    out.push_back(figure(plot::line_chart("Wind force", {"time", "s"}, wy, wind),
                         fmt::format("Horizontal drag force of each wind load in case {}, gusts included.", id), 200,
                         share));
  }
  return out;
}

std::string link_scope(const Spec& spec, const LimitSpec& l) {
  return l.link >= 0 ? " (" + link_name(spec, l.link) + ")" : "";
}

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
  return fmt::format("scenario '{}', θ0 = ({}) deg, ω0 = ({}) deg/s",
                     scenario < spec.scenarios.size() ? spec.scenarios[scenario].name : "-", fmt::join(theta, ", "),
                     fmt::join(omega, ", "));
}

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
  const int per_case = 3 + static_cast<int>(spec.links.size()) / 2;
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
    std::vector<plot::RefLine> arefs;
    for (const auto& l : spec.limits) {
      if (l.kind == LimitKind::peak_angle) {
        add_ref(arefs, {l.value * kDeg, fmt::format("peak_angle +{} deg{}", num(l.value * kDeg), link_scope(spec, l)), false});
        add_ref(arefs, {-l.value * kDeg, fmt::format("-{} deg", num(l.value * kDeg)), false});
      }
      if (l.kind == LimitKind::residual_sway) {
        add_ref(arefs, {l.value * kDeg, fmt::format("residual_sway after {:g} s", l.after), false, l.after});
        add_ref(arefs, {-l.value * kDeg, "", false, l.after});
      }
    }
    plot::Plot pa = plot::line_chart("Link angles", {"time", "s"}, {"angle θ from vertical", "deg"}, angles, arefs);
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
    s.blocks.push_back(figures(input_figures(spec, *rc, id)));
    // Angle against angle for every pair of adjacent links (configuration space, not a phase
    // portrait: no rates), two to a row.
    std::vector<Figure> pairs;
    for (std::size_t i = 0; i + 1 < rc->theta.size(); ++i) {
      pairs.push_back(figure(plot::phase_portrait(fmt::format("Angle-angle plot, links {} and {}", i + 1, i + 2),
                                                  {fmt::format("θ {}", spec.links[i].name), "deg"},
                                                  {fmt::format("θ {}", spec.links[i + 1].name), "deg"},
                                                  scaled(rc->theta[i], kDeg), scaled(rc->theta[i + 1], kDeg)),
                             fmt::format("θ of link {} against θ of link {} over the run: a regular motion traces a "
                                         "tidy figure, a chaotic one fills an area.",
                                         i + 2, i + 1),
                             240, 0.5));
      if (pairs.size() == 2 || i + 2 == rc->theta.size()) {
        s.blocks.push_back(figures(pairs));
        pairs.clear();
      }
    }
  }
  return s;
}

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

Section envelope_section(const Spec& spec, const CheckReport& r, std::string_view csv) {
  Section s{"envelope", "8", "Envelope over the case set", {}, true};
  if (csv.empty()) {
    s.blocks.push_back(paragraph("Not drawn: the per-case table (cases.csv) was not supplied to the report."));
    return s;
  }
  std::vector<CaseEnvelopeRow> rows;
  try {
    rows = read_case_envelope(spec, csv);
  } catch (const std::exception& e) {
    s.blocks.push_back(paragraph(fmt::format("Not drawn: cases.csv could not be read ({}).", e.what())));
    return s;
  }
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

// ---------------------------------------------------------------------------------------------
// 9 Numerical trust

Section trust_section(const Spec& spec, const CheckReport& r) {
  Section s{"trust", "9", "Numerical trust", {}, true};
  Block f;
  f.kind = Block::Kind::fields;
  f.field_list = {
      {"Integrator", fmt::format("{}, rtol = {:g}, atol = {:g}", spec.solver.method == Stepper::dopri5 ? "dopri5" : "rkf78",
                                 spec.solver.rtol, spec.solver.atol)},
      {"Budgets", fmt::format("{} steps, {:g} s wall time per case; a step under {:g} s is a collapse",
                              spec.solver.max_steps, spec.solver.max_seconds, spec.solver.min_step)},
      {"Steps taken", fmt::format("{} over {} cases", r.total_steps, r.case_count)},
      {"Energy audit", r.max_audit_case.empty()
                           ? std::string("-")
                           : fmt::format("largest residual {} of the energy scale, in case {}", num(r.max_audit_relative, 3),
                                         r.max_audit_case)}};
  s.blocks.push_back(f);
  s.blocks.push_back(paragraph(
      "Energy audit: in every run, kinetic + potential + dissipated energy - work by the base and the wind must stay "
      "equal to the initial energy; the residual, relative to the run's energy scale, measures the integration "
      "error. Values near the tolerances are expected; a large value means the run should not be trusted."));
  s.blocks.push_back(subheading("Accuracy audit"));
  bool any = false;
  Table t{"audit-table",
          {col("#", 0.3, Align::right, "index"), col("check", 1.5, Align::left, "check"),
           col("worst", 1.1, Align::right, "worst"), col("at 100x tighter tol.", 1.2, Align::right, "audit"),
           col("change", 1.1, Align::right, "change"), col("margin", 1.1, Align::right, "margin"),
           col("warning", 0.7, Align::center, "warning")},
          {},
          "Each governing case re-run at rtol/100 and atol/100. Warning: the change exceeds the margin, so the "
          "verdict is not settled by the numerics.",
          7.6};
  for (std::size_t i = 0; i < r.checks.size(); ++i) {
    const auto& c = r.checks[i];
    if (!c.audited) continue;
    any = true;
    Row row{{std::to_string(i + 1), c.key, engineering(c.worst, c.unit), engineering(c.audit_value, c.unit),
             precise(c.audit_change, c.unit), engineering(c.margin, c.unit), c.audit_warning ? "WARNING" : "no"},
            c.audit_warning ? Tone::warn : Tone::normal,
            {}};
    t.rows.push_back(row);
  }
  if (any)
    s.blocks.push_back(table_block(t));
  else
    s.blocks.push_back(paragraph("Not run (the check was run without the accuracy audit, or no check is per case)."));
  return s;
}

// ---------------------------------------------------------------------------------------------
// 10 Cautions

Section caution_section() {
  Section s{"cautions", "10", "Cautions", {}, false};
  s.blocks.push_back(callout({Span{"Loads that fail can kill. ", true},
                              Span{"This packet is a screening and design aid, not a certification."}},
                             Tone::warn));
  s.blocks.push_back(bullets(std::vector<std::string>{
      "The results do not replace the design checks required by the applicable crane and lifting-equipment design "
      "standards and by local regulations; verify the design against them.",
      "The final design must be reviewed and signed off by a licensed professional engineer.",
      "The model is planar with rigid links: no rope stretch, no hoisting during travel, no 3-D swing, no structural "
      "flexibility, regularised (smooth) friction instead of true stick-slip (section 2).",
      "Results are only as good as the spec's masses, inertias, damper laws, friction data, wind data and base "
      "motions, and only cover the cases that were run; conditions outside the case set are not checked.",
      "Check the accuracy audit and the energy audit (section 9) before relying on a figure, and treat a check "
      "with an audit warning as undecided."}));
  return s;
}

}  // namespace

Document build_document(const Spec& spec, const CheckReport& r, const ReportMeta& meta, std::string_view cases_csv) {
  Document d;
  d.title = spec.report.title.empty() ? spec.name : spec.report.title;
  d.mechanism = spec.name;
  d.project = spec.report.project;
  d.revision = spec.report.revision;
  d.prepared_by = spec.report.prepared_by;
  d.date = meta.date;
  d.tool_version = meta.tool_version.empty() ? std::string(tool_version()) : meta.tool_version;
  d.commit = meta.commit.empty() ? std::string(git_commit()) : meta.commit;
  d.sha256 = r.spec_sha256;
  d.sha_prefix = r.spec_sha256.substr(0, 12);
  d.pass = r.pass;
  d.paper = spec.report.paper;
  d.sections.push_back(title_section(d, spec, r));
  if (meta.sizing && meta.sizing_input && meta.sizing_input->sizing)
    d.sections.push_back(sizing_section(*meta.sizing_input, *meta.sizing));
  d.sections.push_back(scope_section(spec, r, d));
  d.sections.push_back(design_section(spec, r));
  d.sections.push_back(verdict_section(spec, r, cases_csv));
  d.sections.push_back(modal_section(spec, r));
  d.sections.push_back(governing_section(spec, r));
  d.sections.push_back(chaos_section(spec, r));
  d.sections.push_back(envelope_section(spec, r, cases_csv));
  d.sections.push_back(trust_section(spec, r));
  d.sections.push_back(caution_section());
  return d;
}

}  // namespace swaybound::report_doc
