// Section 5, modes: the linearised modes of the hanging chain and their sketches.
#include "document_build.hpp"

#include <algorithm>

#include <fmt/format.h>

namespace swaybound::report_doc::build {

namespace {

constexpr int kMaxModesSketched = 6;

}  // namespace

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
    if (spec.motion == Motion::spatial && m.plane == SwayPlane::vertical)
      note += ", vertical (the rope's bounce)";
    else if (spec.motion == Motion::spatial)
      note += fmt::format(", {} (pair of mode {})", m.plane == SwayPlane::travel ? "in the travel plane" : "across it",
                          m.pair + 1);
    Row row{{std::to_string(k + 1), num(m.frequency_hz), num(m.period_s), num(m.damping_ratio),
             m.overdamped ? "-" : num(m.damped_frequency_hz), fmt::format("{}", fmt::join(shape, ", ")), note},
            Tone::normal,
            {}};
    t.rows.push_back(row);
  }
  s.blocks.push_back(table_block(t));
  s.blocks.push_back(paragraph(fmt::format("Least modal damping ratio: {}.", num(r.modes.least_damping_ratio))));
  for (const ClosedLoop& loop : r.modes.closed_loops) {
    s.blocks.push_back(subheading(fmt::format("Closed loop of the travel controller, scenario '{}'", loop.scenario_name)));
    Table cl{"closed-loop-" + std::to_string(loop.scenario),
             {col("pole", 0.5, Align::right, "pole"), col("eigenvalue [1/s]", 1.6, Align::right, "eigenvalue"),
              col("w_n [Hz]", 1, Align::right, "frequency"), col("damping ratio", 1, Align::right, "damping")},
             {},
             "The loop of the drive's controller linearised about rest at a constant speed command (states: link "
             "angles, their rates, the trolley's speed error), without its saturation. A complex pair is listed once; "
             "w_n = |λ|/2π, damping ratio -Re(λ)/|λ|.",
             7.6};
    for (std::size_t k = 0; k < loop.poles.size(); ++k) {
      const ClosedLoopPole& p = loop.poles[k];
      cl.rows.push_back(Row{{std::to_string(k + 1),
                             p.eigenvalue.imag() > 0
                                 ? fmt::format("{} ± {}i", num(p.eigenvalue.real()), num(p.eigenvalue.imag()))
                                 : num(p.eigenvalue.real() + 0.0),
                             num(p.natural_frequency_hz), num(p.damping_ratio)},
                            p.eigenvalue.real() < 0 ? Tone::normal : Tone::fail,
                            {}});
    }
    s.blocks.push_back(table_block(cl));
    s.blocks.push_back(paragraph(loop.stable ? "Every pole has a negative real part: the linearised loop is stable."
                                             : "A pole has a real part >= 0: the linearised loop is NOT stable."));
  }

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

}  // namespace swaybound::report_doc::build
