// The packet's opening sections: 1 the title block, 2 scope and assumptions.
#include "document_build.hpp"

#include <fmt/format.h>

#include "swaybound/core/version.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/report/format.hpp"

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
      "This packet reports a design check of the {} pendulum chain \"{}\" ({} link(s)) made with swaybound {}. "
      "Every initial condition of the case set was run under every base-motion scenario ({} cases of {:g} s) with "
      "the full nonlinear equations of motion, and each limit of the spec was checked against the worst value over "
      "the cases.",
      spec.motion == Motion::spatial ? "spatial" : "planar", spec.name, spec.links.size(), d.tool_version,
      r.case_count, spec.cases.duration)));
  std::vector<Rich> model;
  if (spec.motion == Motion::spatial)
    model.push_back({Span{"Spatial motion. ", true},
                     Span{"Every link hangs from a spherical pivot and swings in any direction (x along the travel, y "
                          "up, z across the travel); its rotation about its own axis (twist) is not modelled. Angles "
                          "are from the downward vertical in any direction (cone angles); pivot friction and the "
                          "dampers without an axis act on the swing in any direction alike."}});
  else
    model.push_back({Span{"Planar motion. ", true},
                     Span{"Every link swings in one vertical plane; the angles are absolute, from the downward vertical."}});
  // Ropes: inextensible ones are rigid while taut; elastic ones, hoisting and lift-off have their own notes.
  std::string ropes, elastic;
  for (const auto& l : spec.links) {
    if (l.kind != LinkKind::rope) continue;
    std::string& list = l.elastic ? elastic : ropes;
    list += (list.empty() ? "'" : ", '") + l.name + "'";
  }
  std::vector<std::string> hoisting, lifting;
  for (const auto& sc : spec.scenarios) {
    if (sc.hoist) hoisting.push_back("'" + sc.name + "'");
    if (sc.lift_off) lifting.push_back("'" + sc.name + "'");
  }
  const bool variable = !elastic.empty() || !hoisting.empty();
  std::string rigid =
      variable ? "Every link other than an elastic or hoisted rope is a rigid body of fixed length. "
               : "Every link is a rigid body of fixed length. ";
  if (ropes.empty())
    rigid += elastic.empty() ? "The chain has no rope links." : "The chain has no inextensible rope links.";
  else
    rigid += "The rope link(s) " + ropes +
             " are treated as rigid links of fixed length while taut; their axial tension "
             "is computed and checked at both ends. A case in which it goes below "
             "zero ends there with status rope_slack (the rigid model does not hold "
             "once a rope is slack) and fails every check it touches.";
  model.push_back({Span{"Rigid links. ", true}, Span{rigid}});
  if (!elastic.empty()) {
    std::vector<std::string> laws;
    for (const auto& l : spec.links)
      if (l.elastic)
        laws.push_back(
            l.elastic->ea > 0
                ? fmt::format("'{}' {} part(s) of EA = {} N", l.name, l.parts_of_line, amount(l.elastic->ea))
                : fmt::format("'{}' {} part(s), stiffness {} N/m at its length", l.name, l.parts_of_line,
                              amount(l.elastic->stiffness)));
    model.push_back(
        {Span{"Elastic ropes. ", true},
         Span{"The rope link(s) " + elastic +
              " are elastic. Each fall is a Kelvin-Voigt element, a spring and a damper side by side, "
              "that only pulls: its tension is k δ + c δ' while that is positive and zero otherwise "
              "(the rope is slack), δ being the stretch (length less the unstretched length ℓ) and k = "
              "n EA / ℓ for n parts of line of axial stiffness EA each, so a rope stiffens as it is "
              "hauled in. The rope has no bending stiffness and no wave travels along it: it stays "
              "straight between its ends, slack or taut, and its mass is stretched uniformly along it "
              "(its centre of mass keeps its fraction of the length). The instants a rope goes slack "
              "or taut again are located to the solver's accuracy and the run continues across them. " +
              fmt::format("Ropes: {}.", fmt::join(laws, "; "))}});
  }
  if (!hoisting.empty())
    model.push_back(
        {Span{"Hoisting. ", true},
         Span{fmt::format(
             "In scenario(s) {} a drum winds a rope: the rope's length (an elastic rope's unstretched "
             "length) is ℓ(t) = ℓ0 - s(t) / n, s the rope hauled in at the drum since t = 0 and n the "
             "parts of line. The drum's speed follows the scenario's profile (moves of limited "
             "acceleration, and jerk where given, between commanded speeds): the drum is driven, its "
             "speed does not depend on the load.",
             fmt::join(hoisting, ", "))}});
  if (!lifting.empty())
    model.push_back(
        {Span{"Lift-off. ", true},
         Span{fmt::format(
             "In scenario(s) {} the load starts resting on the ground: the links below the rope are "
             "held at rest until the ground's upward force on them reaches zero, and leave the ground "
             "then. The ground neither lets the load slide nor tip; touching down again ends the case "
             "(status touch_down), as setting a load down is not modelled.",
             fmt::join(lifting, ", "))}});
  std::string friction = "Friction at a pivot is a constant Coulomb torque plus pin friction mu r |R|, regularised "
                         "as tanh(w / w_t), so it never sticks exactly: below the transition rate w_t it acts like a "
                         "stiff viscous damper.";
  std::vector<std::string> rates;
  for (const auto& l : spec.links)
    if (l.pivot.friction)
      rates.push_back(fmt::format("'{}' {} deg/s", l.name, deg(l.pivot.friction->transition_rate)));
  friction += rates.empty() ? " No pivot has friction." : " Transition rates: " + fmt::format("{}", fmt::join(rates, ", ")) + ".";
  model.push_back({Span{"Friction. ", true}, Span{friction}});
  std::string dampers =
      "Rotary dampers follow the power law tau = -C w_ref (|w| / w_ref)^alpha sign(w), w_ref = 1 rad/s, with an "
      "optional saturation torque and, for alpha < 1, a linear segment below linear_below; dashpots are linear and "
      "axial, F = -c d(distance)/dt.";
  if (const std::string axes = damper_axes_sentence(spec); !axes.empty()) dampers.append(" ").append(axes);
  model.push_back({Span{"Dampers. ", true}, Span{dampers}});
  model.push_back({Span{"Loads. ", true},
                   Span{spec.motion == Motion::spatial
                            ? "Wind is quadratic drag at one point of a link from a horizontal wind blowing in a given "
                              "direction, with an optional step gust. The top pivot moves as the base scenarios "
                              "prescribe (acceleration segments, drives along x and z, or slewing about a vertical "
                              "axis with luffing); it is driven, not coupled to the sway."
                            : "Wind is quadratic drag at one point of a link from a horizontal wind with an optional "
                              "step gust. The top pivot moves with a prescribed piecewise-constant acceleration (the "
                              "base scenarios); it is driven, not coupled to the sway."}});
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
  std::vector<std::string> left_out;
  if (elastic.empty())
    left_out.push_back(
        "rope stretch (elastic ropes) and the motion of a slack rope (a case ends when a rope goes slack);");
  else
    left_out.push_back(
        "the ropes' bending stiffness, waves travelling along a rope, the sag of a slack rope and the "
        "friction of sheaves" +
        std::string(ropes.empty()
                        ? ";"
                        : "; stretch of the inextensible rope link(s) (a case ends when one goes slack);"));
  if (hoisting.empty())
    left_out.push_back("hoisting or lowering during travel (the rope length is fixed);");
  else
    left_out.push_back(
        "the inertia and drive of the hoist drum (it follows its speed profile whatever the load);");
  if (!lifting.empty())
    left_out.push_back(
        "sliding or tipping of a grounded load and setting it down again (touching down ends the case);");
  left_out.push_back(spec.motion == Motion::spatial
                         ? "twisting of the links and the load about their own axes;"
                         : "three-dimensional (spherical) swing and twisting of the load;");
  left_out.push_back(
      "flexibility of the crane structure, boom, trolley and supports, and any feedback of the sway on "
      "the base motion;");
  left_out.push_back("impacts, contact with obstacles, and true stick-slip friction.");
  s.blocks.push_back(bullets(left_out));
  s.blocks.push_back(subheading("Units in this packet"));
  s.blocks.push_back(paragraph(
      "The spec and results.json are in SI units. Tables show angles in degrees (3 decimals in the verdict table), "
      "angular rates in deg/s (3 decimals), forces in kN (2 decimals), margin ratios in percent (1 decimal) and "
      "other quantities to 4 significant digits; the verdict table shows exactly these roundings of the numbers in "
      "results.json. A dash means no value was computed."));
  return s;
}

}  // namespace swaybound::report_doc::build
