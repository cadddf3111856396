// Section 4b, the worst case between the samples: per per-case check the sampled worst, the
// searched worst, the start that gives it, the raise and the verdict on it (checks/worst_search.hpp).
#include "document_build.hpp"

#include <fmt/format.h>

#include "swaybound/checks/start_transient.hpp"
#include "swaybound/report/format.hpp"

namespace swaybound::report_doc::build {

namespace {

/// "theta 3 deg, -6 deg; rate 2 deg/s, 0 deg/s" for a start.
std::string start_text(const Spec& spec, const LimitSearch& s) {
  std::vector<std::string> theta, rate;
  for (double v : s.theta) theta.push_back(deg(v) + " deg");
  for (double v : s.omega) rate.push_back(num(v * kDeg) + " deg/s");
  std::string text = fmt::format("theta {}; rate {}", fmt::join(theta, ", "), fmt::join(rate, ", "));
  if (!s.phi.empty()) {
    std::vector<std::string> phi, phi_rate;
    for (double v : s.phi) phi.push_back(deg(v) + " deg");
    for (double v : s.phi_rate) phi_rate.push_back(num(v * kDeg) + " deg/s");
    text += fmt::format("; phi {}; phi rate {}", fmt::join(phi, ", "), fmt::join(phi_rate, ", "));
  }
  // A modal or equilibrium start: the values the search moved.
  if (const std::string values = start_values_text(spec, s.worst_case.set, s.worst_case.initial.quantities); !values.empty())
    text += "; " + values;
  // The scenario's uncertain values there, each with the spec's value the samples used.
  const UncertainDims& dims = s.uncertain_dims;
  for (std::size_t k = 0; k < s.uncertain.size() && k < dims.size(); ++k)
    text += fmt::format("; {} {} (spec {})", dims.paths[k], engineering(s.uncertain[k], dims.units[k]),
                        engineering(dims.nominal[k], dims.units[k]));
  return text;
}

/// The sampled worst of each per-case check after a quarter, a half and all of the starts, and how
/// much the last half moved it as a share of the final margin.
Block convergence_table(const CheckReport& r) {
  Table t{"convergence-table",
          {col("#", 0.3, Align::right, "index"), col("check", 1.3, Align::left, "check"),
           col("starts", 0.6, Align::right, "starts"), col("worst, first quarter", 1, Align::right, "quarter"),
           col("first half", 1, Align::right, "half"), col("all starts", 1, Align::right, "all"),
           col("last half moved it (of margin)", 1.4, Align::right, "moved")},
          {},
          "The sampled worst over the first starts of the case sets (in their order; each start under every "
          "scenario): what a case set of that size would have reported. A worst that still moves over the last half "
          "of the starts says that more samples could move it again.",
          7.6};
  for (const ConvergenceRow& row : r.convergence) {
    const CheckResult& c = r.checks[static_cast<std::size_t>(row.limit)];
    const auto at = [&](long count) {
      for (std::size_t j = 0; j < row.starts.size(); ++j)
        if (row.starts[j] == count) return row.worst[j];
      return std::nan("");
    };
    const long all = row.starts.empty() ? 0 : row.starts.back();
    const double half = at(all / 2), whole = at(all);
    const double moved = std::fabs(whole - half);
    const bool has_margin = std::isfinite(c.margin) && c.margin != 0;
    Row line;
    line.cells = {std::to_string(row.limit + 1), c.key, std::to_string(all),
                  all / 4 > 0 ? engineering(at(all / 4), c.unit) : "-", all / 2 > 0 ? engineering(half, c.unit) : "-",
                  engineering(whole, c.unit),
                  all / 2 > 0 && std::isfinite(moved)
                      ? engineering(moved, c.unit) + (has_margin ? " (" + ratio_percent(moved / std::fabs(c.margin)) + ")" : "")
                      : "-"};
    line.cell_tone.assign(line.cells.size(), Tone::normal);
    t.rows.push_back(line);
  }
  return table_block(t);
}

}  // namespace

Section search_section(const Spec& spec, const CheckReport& r) {
  Section s{"search", "4b", "Worst case between the samples", {}, false};
  s.blocks.push_back(paragraph(fmt::format(
      "For each per-case check, the {} worst sampled cases were moved through the box of starts the case sets "
      "declare (each link's least to largest initial angle and rate) by a bounded local search (NLopt BOBYQA), "
      "at most {} case runs per check, each under the scenario of its start, whose uncertain values (where the "
      "spec gives ranges) move through their ranges as well; the sampled cases use the spec's values. The "
      "searched worst is the worse of the sampled worst and the best found: a local worst, so a lower bound on the "
      "true worst over the box, not a proof that nothing worse exists. A check fails when its searched worst "
      "fails. Audit: the searched worst's case run again at a 100x tighter tolerance, and how far that moved it.",
      r.search_budget.starts, r.search_budget.evaluations)));
  Table t{"search-table",
          {col("#", 0.3, Align::right, "index"), col("check", 1.3, Align::left, "check"),
           col("sampled worst", 1, Align::right, "sampled"), col("searched worst", 1, Align::right, "searched"),
           col("raise (of margin)", 1.0, Align::right, "raise"), col("start", 1.8, Align::left, "start", true),
           col("runs", 0.45, Align::right, "runs"), col("audit moved it", 0.75, Align::right, "audit"),
           col("verdict", 0.62, Align::center, "verdict")},
          {},
          "raise: searched worst - sampled worst in the direction that uses up the margin, and as a share of the "
          "sampled margin; start: the scenario and start angles and rates that give the searched worst (of the run "
          "that failed, where one did) and the scenario's uncertain values there; runs: evaluations the search made for the "
          "check; audit moved it: the change of the searched worst at a 100x tighter tolerance (- without the audit).",
          7.6};
  std::vector<Rich> remarks;
  for (const LimitSearch& ls : r.search) {
    const CheckResult& c = r.checks[static_cast<std::size_t>(ls.limit)];
    const std::string scenario =
        ls.scenario >= 0 ? spec.scenarios[static_cast<std::size_t>(ls.scenario)].name + ": " : std::string();
    Row row;
    row.cells = {std::to_string(ls.limit + 1),
                 c.key,
                 engineering(ls.sampled_worst, c.unit),
                 ls.failed_run ? "run failed" : engineering(ls.searched_worst, c.unit),
                 !ls.searched ? "not searched"
                 : ls.failed_run ? "-"
                                 : fmt::format("{} ({})", engineering(ls.raise, c.unit), ratio_percent(ls.raise_of_margin)),
                 ls.searched ? scenario + start_text(spec, ls) : "-",
                 std::to_string(ls.evaluations),
                 ls.audited ? engineering(ls.audit_change, c.unit) : "-",
                 ls.pass ? "pass" : "FAIL"};
    row.tone = ls.pass ? Tone::normal : Tone::fail;
    row.cell_tone.assign(row.cells.size(), Tone::normal);
    row.cell_tone[7] = ls.audit_warning ? Tone::fail : Tone::normal;
    row.cell_tone[8] = ls.pass ? Tone::pass : Tone::fail;
    t.rows.push_back(row);
    const std::string label = fmt::format("Check {} ({}): ", ls.limit + 1, c.key);
    if (ls.sampling_missed())
      remarks.push_back({Span{label, true}, Span{"the sampled cases pass, but the searched worst fails: sampling "
                                                 "alone would have passed this check."}});
    if (ls.failed_run)
      remarks.push_back({Span{label, true}, Span{fmt::format("a run failed during the search ({}); it fails the check.",
                                                             ls.failure)}});
    if (ls.audit_warning)
      remarks.push_back({Span{label, true},
                         Span{fmt::format("at a 100x tighter tolerance the searched worst moved by {}, more than the "
                                          "margin: its verdict may depend on the solver tolerance.",
                                          engineering(ls.audit_change, c.unit))}});
    if (ls.chaotic)
      remarks.push_back({Span{label, true},
                         Span{fmt::format("the searched worst's FTLE ({} 1/s) is above chaos.threshold: a local "
                                          "worst, statistical, not a bound.",
                                          num(ls.ftle))}});
  }
  s.blocks.push_back(table_block(t));
  if (!remarks.empty()) s.blocks.push_back(bullets(remarks));
  if (!r.convergence.empty()) s.blocks.push_back(convergence_table(r));
  return s;
}

}  // namespace swaybound::report_doc::build
