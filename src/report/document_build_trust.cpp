// The closing sections: 9 numerical trust (accuracy audit, integrator figures), 10 cautions.
#include "document_build.hpp"

#include <fmt/format.h>

#include "swaybound/report/format.hpp"

namespace swaybound::report_doc::build {

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
  if (!r.max_boom_audit_case.empty())
    f.field_list.push_back({"Energy audit, boom frame",
                            fmt::format("largest residual {} of the energy scale, in case {}",
                                        num(r.max_boom_audit_relative, 3), r.max_boom_audit_case)});
  s.blocks.push_back(f);
  if (!r.max_boom_audit_case.empty())
    s.blocks.push_back(paragraph(
        "Energy audit in the boom frame (slewing scenarios): kinetic energy relative to the boom + potential - "
        "centrifugal potential + dissipated energy - work of the luffing and the wind relative to the boom - work "
        "of the Euler forces as the slewing speed changes must stay equal to its initial value; Coriolis forces do "
        "no work. Without slewing it is the energy audit above."));
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

Section caution_section(const Spec& spec) {
  bool elastic = false;
  for (const auto& l : spec.links) elastic |= l.kind == LinkKind::rope && l.elastic.has_value();
  const std::string model =
      std::string(spec.motion == Motion::spatial
                      ? "The model is spatial, but no link turns about its own axis (twist is not modelled)"
                      : "The model is planar: no swing out of the plane of the travel (a spatial spec models it)") +
      (elastic ? "; ropes stretch by their elastic law where the spec gives one, every other link is rigid"
               : "; ropes are inextensible and links rigid (no rope stretch)") +
      "; no structural flexibility; regularised (smooth) friction instead of true stick-slip (section 2).";
  Section s{"cautions", "10", "Cautions", {}, false};
  s.blocks.push_back(callout({Span{"Loads that fail can kill. ", true},
                              Span{"This packet is a screening and design aid, not a certification."}},
                             Tone::warn));
  s.blocks.push_back(bullets(std::vector<std::string>{
      "The results do not replace the design checks required by the applicable crane and lifting-equipment design "
      "standards and by local regulations; verify the design against them.",
      "The final design must be reviewed and signed off by a licensed professional engineer.",
      model,
      "Results are only as good as the spec's masses, inertias, damper laws, friction data, wind data and base "
      "motions, and only cover the cases that were run; conditions outside the case set are not checked.",
      "Check the accuracy audit and the energy audit (section 9) before relying on a figure, and treat a check "
      "with an audit warning as undecided."}));
  return s;
}

}  // namespace swaybound::report_doc::build
