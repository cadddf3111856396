// Files of a sizing run: the history CSV, the before/after table and the summary JSON.
#include <algorithm>
#include <cmath>
#include <sstream>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/checks/start_transient.hpp"
#include "swaybound/core/version.hpp"
#include "swaybound/sizing/sizing.hpp"

namespace swaybound {

namespace {

/// An SI value in the unit an engineer reads (deg for angles, kN for forces).
std::string engineering(double v, const std::string& unit) {
  if (std::isnan(v)) return "-";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  if (unit == "rad") return fmt::format("{:.3f} deg", v * 180 / M_PI);
  if (unit == "rad/s") return fmt::format("{:.3f} deg/s", v * 180 / M_PI);
  if (unit == "N") return fmt::format("{:.2f} kN", v / 1000);
  if (unit.empty() || unit == "-") return fmt::format("{:.5g}", v);
  return fmt::format("{:.5g} {}", v, unit);
}

std::string percent(double ratio) {
  if (std::isnan(ratio)) return "-";
  if (std::fabs(ratio) >= 1e5) return ratio > 0 ? "> +1e7%" : "< -1e7%";
  return fmt::format("{:+.2f}%", 100 * ratio);
}

std::string csv_quote(const std::string& s) {
  if (s.find_first_of(",\"\n") == std::string::npos) return s;
  std::string out = "\"";
  for (char c : s) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

std::string number(double v) {
  if (std::isnan(v)) return "";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  return fmt::format("{:.12g}", v);
}

nlohmann::json json_number(double v) {
  if (!std::isfinite(v)) return nullptr;
  return v;
}

std::string objective_name(const Spec& spec) {
  switch (spec.sizing->objective) {
    case Objective::min_cost: return "min_cost";
    case Objective::min_metric: return "min_metric";
    case Objective::max_margin: return "max_margin";
  }
  return "";
}

std::string bound_name(int at_bound) { return at_bound < 0 ? "low end" : at_bound > 0 ? "high end" : ""; }

}  // namespace

std::vector<SearchStageGroup> group_search_stages(const std::vector<SearchStage>& stages) {
  std::vector<SearchStageGroup> groups;
  for (const auto& st : stages) {
    auto g = std::find_if(groups.begin(), groups.end(), [&](const SearchStageGroup& x) {
      return x.algorithm == st.algorithm && x.goal == st.goal && x.reason == st.reason;
    });
    if (g == groups.end()) {
      groups.push_back({st.algorithm, st.goal, st.reason, 0, 0});
      g = groups.end() - 1;
    }
    ++g->stages;
    g->evaluations += st.evaluations;
  }
  return groups;
}

std::string sizing_history_csv(const Spec& spec, const SizingResult& r) {
  std::ostringstream out;
  out << "evaluation,kind,cases";
  for (const auto& v : r.variables) out << ',' << csv_quote(fmt::format("{} [{}]", v.path, v.unit));
  out << ",cost [-]," << csv_quote(fmt::format("objective: {}{}", r.objective_label,
                                                r.objective_unit.empty() ? " [-]" : " [" + r.objective_unit + "]"));
  for (std::size_t i = 0; i < spec.limits.size(); ++i) {
    const std::string subject = i < r.after.checks.size() ? r.after.checks[i].subject : std::string();
    out << ',' << csv_quote(fmt::format("margin ratio {} {} ({}) [-]", i, spec.limits[i].key, subject));
  }
  out << ",geometry margin [-],least margin ratio [-],pass,elapsed [s]\n";
  for (const auto& e : r.history) {
    out << e.number << ',' << evaluation_kind_name(e.kind) << ',' << e.cases;
    for (double v : e.values) out << ',' << number(v);
    out << ',' << number(e.cost) << ',' << number(e.objective);
    for (std::size_t i = 0; i < spec.limits.size(); ++i) out << ',' << (i < e.ratio.size() ? number(e.ratio[i]) : "");
    out << ',' << (std::isinf(e.geometry) ? std::string() : number(e.geometry)) << ',' << number(e.least) << ','
        << (e.pass ? 1 : 0) << ',' << fmt::format("{:.3f}", e.seconds) << '\n';
  }
  return out.str();
}

std::string worst_case_search_sentence(const SizingResult& r) {
  if (!r.searched_final)
    return "Worst-case search: off (cases.search: false, or --no-search): every verdict rests on the sampled "
           "cases alone.";
  return r.searched_screening
             ? "Worst-case search: in the final check and in screening and every verification round "
               "(sizing.search_in_screening): each limit's verdict rests on its searched worst."
             : "Worst-case search: in the final check only (screening and the verification rounds use the "
               "sampled cases; sizing.search_in_screening: true searches there too): each limit's final "
               "verdict rests on its searched worst.";
}

std::string sizing_table_markdown(const Spec& spec, const SizingResult& r) {
  std::ostringstream out;
  const SizingSpec& s = *spec.sizing;
  out << fmt::format("# Sizing: {}\n\n", spec.name);
  out << fmt::format("Spec `{}` (sha256 {}), swaybound {} ({}).\n\n", r.source_file, r.source_sha256, tool_version(),
                     git_commit());
  out << fmt::format("Objective `{}`; search `{}` ({}), seed {}; budget {} evaluations, {:g} s.\n", objective_name(spec),
                     s.mode == SearchMode::local ? "local" : "global", r.algorithm, s.seed, s.max_evaluations,
                     s.max_seconds);
  if (!r.catalogue_method.empty()) out << fmt::format("Catalogue variables: {}.\n", r.catalogue_method);
  out << fmt::format(
      "Required margin {:g}% (`sizing.required_margin`): every check's margin / scale must reach it.\n",
      100 * r.required_margin);
  out << worst_case_search_sentence(r) << "\n";
  {
    std::string steps;
    for (const auto& v : r.variable_outcomes)
      if (v.step > 0)
        steps += fmt::format("{}`{}` to multiples of {:.6g} {}", steps.empty() ? "" : ", ", v.path, v.step,
                             v.unit);
    out << (steps.empty() ? std::string("Steps: none.\n")
                          : fmt::format("Steps: {}; {}.\n", steps, r.rounding));
  }
  out << fmt::format(
      "{} evaluations ({} on {} screening cases, {} full checks of {} cases incl. the design as given and the final "
      "check); the search ended by: {}.\n\n",
      r.evaluations, r.screening_evaluations, r.screening_size, r.full_checks, r.case_count, r.stop_reason);
  if (!r.stages.empty()) {
    out << "## Why each search stage stopped\n\n| algorithm | goal | stopped by | meaning | stages | evaluations |\n"
           "|---|---|---|---|---|---|\n";
    for (const auto& g : group_search_stages(r.stages))
      out << fmt::format("| {} | {} | `{}` | {} | {} | {} |\n", g.algorithm, g.goal, stop_reason_name(g.reason),
                         stop_reason_meaning(g.reason), g.stages, g.evaluations);
    out << "\n";
  }

  out << "## Design variables\n\n| variable | range or catalogue | cost weight | step | before | found | "
         "after | at "
         "a bound |\n|---|---|---|---|---|---|---|---|\n";
  for (const auto& v : r.variable_outcomes) {
    std::string range;
    if (v.discrete) {
      for (const auto& dv : r.variables)
        if (dv.path == v.path)
          for (double c : dv.catalogue) range += (range.empty() ? "" : ", ") + fmt::format("{:.6g}", c);
      range = "{" + range + "} " + v.unit;
    } else {
      range = fmt::format("{:.6g} to {:.6g} {}", v.lo, v.hi, v.unit);
    }
    out << fmt::format("| `{}` | {} | {:g} | {} | {:.6g} {} | {:.6g} {} | {:.6g} {} | {} |\n", v.path, range,
                       v.cost, v.step > 0 ? fmt::format("{:.6g} {}", v.step, v.unit) : std::string("-"),
                       v.before, v.unit, v.unrounded, v.unit, v.after, v.unit, bound_name(v.at_bound));
  }
  out << fmt::format("\n## Objective\n\n| {} | before | after |\n|---|---|---|\n| value | {} | {} |\n", r.objective_label,
                     engineering(r.objective_before, r.objective_unit), engineering(r.objective_after, r.objective_unit));

  out << fmt::format("\n## Checks on every case ({} cases)\n\n", r.case_count);
  out << "| check | limit | worst before | margin before | worst after | margin after | verdict after | binding |\n"
         "|---|---|---|---|---|---|---|---|\n";
  for (const auto& l : r.limits)
    out << fmt::format("| {} ({}) | {} | {} | {} | {} | {} | {} | {} |\n", l.key, l.subject,
                       engineering(l.limit_value, l.unit), engineering(l.worst_before, l.unit),
                       percent(l.ratio_before), engineering(l.worst_after, l.unit), percent(l.ratio_after),
                       !l.pass_after                        ? "FAIL"
                       : l.ratio_after >= r.required_margin ? "pass"
                                                            : "short of margin",
                       l.binding ? "yes" : "");
  if (std::isfinite(r.outcome_after.geometry))
    out << fmt::format("| geometry (points on their links) | on the link | | | | {} | {} | |\n",
                       percent(r.outcome_after.geometry), r.outcome_after.geometry >= 0 ? "pass" : "FAIL");
  // The final check's start transients, as a check packet flags them.
  for (const auto& l : r.limits)
    if (l.start_transient_after)
      out << fmt::format("\n**{} ({}): {}**\n", l.key, l.subject,
                         start_transient_remark(l.time_after, lowest_swing_period(r.after.modes), l.start_note_after,
                                                spec.motion));
  out << "\nMargins are margin / |limit| (a limit of 0: margin / the chain's weight for forces, x horizon "
         "for "
         "ftle_max); binding: within 1% of the required margin, or failing; short of margin: within the "
         "limit but "
         "not by the required margin.\n";

  out << "\n## Verdict\n\n";
  if (r.feasible) {
    out << "The sized design passes every check on every case (the final check of the sized spec file, "
           "results.json)";
    out << (r.required_margin > 0
                ? fmt::format(", each with the required {:g}% to spare.\n", 100 * r.required_margin)
                : std::string(".\n"));
  } else {
    out << "**No design within the ranges and the budget passes every check";
    if (r.required_margin > 0)
      out << fmt::format(" with the required {:g}% to spare", 100 * r.required_margin);
    out << ".** The design reported is the best found; it fails:\n\n";
    for (const auto& l : r.limits)
      if (l.pass_after && l.ratio_after < r.required_margin)
        out << fmt::format("- {} ({}): worst {} against {} holds, by {} of the required {:g}%\n", l.key,
                           l.subject, engineering(l.worst_after, l.unit), engineering(l.limit_value, l.unit),
                           percent(l.ratio_after), 100 * r.required_margin);
      else if (!l.pass_after)
        out << fmt::format("- {} ({}): worst {} against {}, short by {} ({}), governing case {}\n", l.key, l.subject,
                           engineering(l.worst_after, l.unit), engineering(l.limit_value, l.unit),
                           engineering(l.shortfall, l.unit), percent(l.ratio_after), l.governing_after);
    if (std::isfinite(r.outcome_after.geometry) && r.outcome_after.geometry < 0)
      out << "- a point placed on a link lies beyond the link's end\n";
    bool any = false;
    for (const auto& v : r.variable_outcomes)
      if (v.at_bound != 0) {
        if (!any) out << "\nVariables at a bound of their range (widen it, or change the design):\n\n";
        any = true;
        out << fmt::format("- `{}` = {:.6g} {} at the {}\n", v.path, v.after, v.unit, bound_name(v.at_bound));
      }
  }
  out << "\nCaution: a screening and design aid, not a certification. The sized design goes to a licensed "
         "engineer's review and sign-off.\n";
  return out.str();
}

std::string sizing_summary_json(const Spec& spec, const SizingResult& r) {
  using nlohmann::json;
  const SizingSpec& s = *spec.sizing;
  json j;
  j["schema"] = "swaybound.sizing/1";
  j["tool"] = {{"name", "swaybound"}, {"version", std::string(tool_version())}, {"commit", std::string(git_commit())}};
  j["spec"] = {{"name", spec.name}, {"sha256", r.source_sha256}};
  j["objective"] = {{"kind", objective_name(spec)},
                    {"label", r.objective_label},
                    {"unit", r.objective_unit},
                    {"before", json_number(r.objective_before)},
                    {"after", json_number(r.objective_after)}};
  j["search"] = {{"mode", s.mode == SearchMode::local ? "local" : "global"},
                 {"algorithm", r.algorithm},
                 {"catalogue_method", r.catalogue_method},
                 {"seed", s.seed},
                 {"budget_evaluations", s.max_evaluations},
                 {"budget_seconds", s.max_seconds},
                 {"required_margin", r.required_margin},
                 {"rounding", r.rounding},
                 {"stopped_by", r.stop_reason},
                 {"evaluations", r.evaluations},
                 {"screening_evaluations", r.screening_evaluations},
                 {"full_checks", r.full_checks},
                 {"screening_cases", r.screening_size},
                 {"cases", r.case_count},
                 {"worst_case_search", {{"final_check", r.searched_final}, {"screening", r.searched_screening}}}};
  json stages = json::array();
  for (const auto& st : r.stages)
    stages.push_back({{"algorithm", st.algorithm},
                      {"goal", st.goal},
                      {"first_evaluation", st.first_evaluation},
                      {"evaluations", st.evaluations},
                      {"budget", st.budget},
                      {"stopped_by", std::string(stop_reason_name(st.reason))},
                      {"meaning", std::string(stop_reason_meaning(st.reason))}});
  j["search"]["stages"] = stages;
  j["feasible"] = r.feasible;
  json vars = json::array();
  for (std::size_t i = 0; i < r.variable_outcomes.size(); ++i) {
    const auto& v = r.variable_outcomes[i];
    json o = {{"path", v.path}, {"unit", v.unit}, {"low", v.lo}, {"high", v.hi}, {"cost", v.cost},
              {"before", v.before}, {"after", v.after}, {"at_bound", bound_name(v.at_bound)}};
    if (v.discrete) o["catalogue"] = r.variables[i].catalogue;
    if (v.step > 0) {
      o["step"] = v.step;
      o["found"] = v.unrounded;
    }
    vars.push_back(o);
  }
  j["variables"] = vars;
  json limits = json::array();
  for (const auto& l : r.limits)
    limits.push_back({{"limit", l.limit},
                      {"key", l.key},
                      {"subject", l.subject},
                      {"unit", l.unit},
                      {"value", l.limit_value},
                      {"worst_before", json_number(l.worst_before)},
                      {"worst_after", json_number(l.worst_after)},
                      {"margin_ratio_before", json_number(l.ratio_before)},
                      {"margin_ratio_after", json_number(l.ratio_after)},
                      {"pass_after", l.pass_after},
                      {"binding", l.binding},
                      {"shortfall", json_number(l.shortfall)},
                      {"governing_after", l.governing_after}});
  // The final check's start transients, in the shape of results.json's checks[i].start_transient.
  for (std::size_t i = 0; i < r.limits.size(); ++i)
    if (r.limits[i].start_transient_after)
      limits[i]["start_transient_after"] = {
          {"flagged", true},
          {"time_s", json_number(r.limits[i].time_after)},
          {"within_s", json_number(kStartTransientFraction * lowest_swing_period(r.after.modes))},
          {"fraction_of_lowest_period", kStartTransientFraction},
          {"start", r.limits[i].start_note_after}};
  j["limits"] = limits;
  return j.dump(2) + "\n";
}

}  // namespace swaybound
