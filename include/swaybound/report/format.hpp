#pragma once
// Engineering-unit display of SI values, shared by the printed summary, the PDF and the HTML
// packet, so every table shows the same digits.
//
// Rounding rules (the verdict tables of report.pdf and report.html follow them, and a test
// compares them with results.json):
//   unit "rad"    -> degrees, 3 decimals:              "12.000 deg"
//   unit "rad/s"  -> degrees per second, 3 decimals:   "4.218 deg/s"
//   unit "N"      -> kilonewtons, 2 decimals:          "99.70 kN"
//   no unit       -> 4 significant digits ({:.4g}):    "0.05386"
//   other units   -> 4 significant digits and the unit: "-0.0672 1/s"
//   NaN -> "-", +-infinity -> "inf" / "-inf"
//   margin ratio  -> percent with sign, 1 decimal:     "+18.2%"; not finite -> "-"
#include <optional>
#include <string>

#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// An SI value in the unit an engineer reads (see the rules above).
std::string engineering(double si_value, const std::string& si_unit);

/// The unit `engineering` shows for an SI unit ("rad" -> "deg", "N" -> "kN", ...).
std::string engineering_unit(const std::string& si_unit);

/// The number `engineering` shows, before rounding (e.g. rad -> deg, N -> kN).
double to_engineering(double si_value, const std::string& si_unit);

/// A margin ratio as a signed percentage with one decimal, "-" when not finite.
std::string ratio_percent(double ratio);

/// A pivot damper's shaft (spec `axis` [rad]) for a table: "across", "along" or its angle from the
/// travel direction towards +z ("30 deg"); "any" for a damper without one (isotropic in the swing).
std::string damper_axis_label(const std::optional<double>& axis);

/// One sentence naming every pivot damper with an axis and the swing it damps, for the packet's
/// model notes and results.json; "" when no damper has one.
std::string damper_axes_sentence(const Spec& spec);

}  // namespace swaybound
