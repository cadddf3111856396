// Section S, sizing (a sized design's packet only): the search, the variables before and after,
// the limits that bind.
#include "document_build.hpp"

#include "swaybound/checks/start_transient.hpp"

#include <cmath>

#include <fmt/format.h>

#include "swaybound/report/format.hpp"
#include "swaybound/sizing/sizing.hpp"

namespace swaybound::report_doc::build {

namespace {

// ---------------------------------------------------------------------------------------------
// S Sizing (a sized design's packet only)

std::string sizing_value(double si, const std::string& unit) {
  if (!std::isfinite(si)) return num(si);
  return fmt::format("{:.6g}", si) + (unit.empty() ? "" : " " + unit);
}

}  // namespace

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
          100 * r.required_margin),
      worst_case_search_sentence(r)};
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
    if (l.start_transient_after) {
      row.cells[0] += ", start transient?";
      row.cell_tone[0] = Tone::warn;
    }
    ct.rows.push_back(row);
  }
  s.blocks.push_back(table_block(ct));
  // The final check's start transients, as the check packet remarks on them.
  std::vector<Rich> transients;
  for (const auto& l : r.limits)
    if (l.start_transient_after)
      transients.push_back({Span{fmt::format("{} ({}): ", l.key, l.subject), true},
                            Span{start_transient_remark(l.time_after, lowest_swing_period(r.after.modes),
                                                        l.start_note_after, input.motion)}});
  if (!transients.empty()) s.blocks.push_back(bullets(std::move(transients)));
  if (!r.stages.empty()) {
    s.blocks.push_back(subheading("Why each search stage stopped"));
    Table st{"sizing-stages",
             {col("algorithm", 0.8, Align::left, "algorithm"), col("goal", 0.9, Align::left, "goal"),
              col("stopped by", 1.1, Align::left, "reason"), col("meaning", 3.0, Align::left, "meaning"),
              col("stages", 0.6, Align::right, "stages"), col("evaluations", 1.0, Align::right, "evaluations")},
             {},
             "Why each NLopt stage of the search stopped (sizing.json lists every stage in order).",
             7.6};
    for (const auto& g : group_search_stages(r.stages)) {
      Row row;
      row.cells = {g.algorithm,
                   g.goal,
                   std::string(stop_reason_name(g.reason)),
                   std::string(stop_reason_meaning(g.reason)),
                   std::to_string(g.stages),
                   std::to_string(g.evaluations)};
      st.rows.push_back(row);
    }
    s.blocks.push_back(table_block(st));
  }
  return s;
}

}  // namespace swaybound::report_doc::build
