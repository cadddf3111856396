// The packet's opening sections: 1 the title block, 2 scope and assumptions.
#include "document_build.hpp"

#include <fmt/format.h>

#include "swaybound/core/version.hpp"
#include "swaybound/model/model.hpp"

namespace swaybound::report_doc::build {

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
                                             " are treated as rigid links of fixed length while taut; their axial tension "
                                             "is computed and checked at both ends. A case in which it goes below "
                                             "zero ends there with status rope_slack (the rigid model does not hold "
                                             "once a rope is slack) and fails every check it touches.")}});
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
      "rope stretch (elastic ropes) and the motion of a slack rope (a case ends when a rope goes slack);",
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

}  // namespace swaybound::report_doc::build
