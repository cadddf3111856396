// Section 4, verdict: one row per limit, with the definitions of the figures it shows.
#include "document_build.hpp"

#include <cmath>
#include <set>

#include <fmt/format.h>

#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/checks/start_transient.hpp"
#include "swaybound/report/format.hpp"
#include "swaybound/report/results.hpp"

namespace swaybound::report_doc::build {

// ---------------------------------------------------------------------------------------------
// 4 Verdict

std::string where_text(const Spec& spec, const CheckResult& c) {
  std::vector<std::string> parts;
  if (c.governing_link >= 0) parts.push_back(link_name(spec, c.governing_link));
  if (std::isfinite(c.time)) parts.push_back(fmt::format("t = {:.3f} s", c.time));
  return parts.empty() ? "-" : fmt::format("{}", fmt::join(parts, ", "));
}

namespace {

/// What each figure of the verdict table is, for the limit kinds the spec uses (and the pivot
/// load, which the static-load table and the support force below use).
std::vector<Rich> figure_definitions(const Spec& spec) {
  std::set<LimitKind> kinds{LimitKind::pivot_load};
  for (const auto& l : spec.limits) kinds.insert(l.kind);
  std::vector<Rich> out;
  for (const auto& info : limit_kinds())
    if (kinds.contains(info.kind))
      out.push_back({Span{std::string(info.key), true, false, true}, Span{": " + std::string(info.definition)}});
  if (spec.motion == Motion::spatial)
    out.push_back({Span{"Spatial chain: ", true},
                   Span{"θ above is a link's angle from the downward vertical in any direction (the cone angle), "
                        "|θ_i - θ_(i-1)| the angle between a link and the link above, |ω| the magnitude of a link's "
                        "angular velocity; a load is the magnitude of the 3-D force, the horizontal support force the "
                        "magnitude of its part in the horizontal plane (x-z)."}});
  out.push_back({Span{"Source: ", true}, Span{"every figure is computed by this tool from the spec (simulation, "
                                              "linearisation or FTLE); none is taken from a design standard."}});
  return out;
}

}  // namespace

Section verdict_section(const Spec& spec, const CheckReport& r, const std::vector<CaseEnvelopeRow>* cases) {
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
                 where_text(spec, c) + (c.start_transient ? ", start transient?" : "")};
    row.tone = c.pass ? Tone::normal : Tone::fail;
    row.cell_tone.assign(row.cells.size(), Tone::normal);
    row.cell_tone[7] = c.pass ? Tone::pass : Tone::fail;
    if (c.start_transient) row.cell_tone[9] = Tone::warn;
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
    if (c.start_transient)
      remarks.push_back({Span{fmt::format("Check {} ({}): ", i + 1, c.key), true},
                         Span{start_transient_remark(c.time, lowest_swing_period(r.modes), c.start_note, spec.motion)}});
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
  static_load_blocks(spec, r, cases, s.blocks);
  return s;
}

}  // namespace swaybound::report_doc::build
