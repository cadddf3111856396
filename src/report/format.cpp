#include "swaybound/report/format.hpp"

#include <cmath>
#include <numbers>
#include <vector>

#include <fmt/format.h>
#include <fmt/ranges.h>

namespace swaybound {

std::string engineering(double v, const std::string& unit) {
  if (std::isnan(v)) return "-";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  if (unit == "rad") return fmt::format("{:.3f} deg", v * 180 / std::numbers::pi);
  if (unit == "rad/s") return fmt::format("{:.3f} deg/s", v * 180 / std::numbers::pi);
  if (unit == "N") return fmt::format("{:.2f} kN", v / 1000);
  if (unit.empty()) return fmt::format("{:.4g}", v);
  return fmt::format("{:.4g} {}", v, unit);
}

std::string engineering_unit(const std::string& unit) {
  if (unit == "rad") return "deg";
  if (unit == "rad/s") return "deg/s";
  if (unit == "N") return "kN";
  return unit;
}

double to_engineering(double v, const std::string& unit) {
  if (unit == "rad" || unit == "rad/s") return v * 180 / std::numbers::pi;
  if (unit == "N") return v / 1000;
  return v;
}

std::string ratio_percent(double ratio) {
  return std::isfinite(ratio) ? fmt::format("{:+.1f}%", 100 * ratio) : std::string("-");
}

std::string damper_axis_label(const std::optional<double>& axis) {
  if (!axis) return "any";
  if (*axis == kDamperAcross) return "across";
  if (*axis == 0) return "along";
  return fmt::format("{:.4g} deg", *axis * 180 / std::numbers::pi);
}

std::string damper_axes_sentence(const Spec& spec) {
  std::vector<std::string> parts;
  for (const LinkSpec& l : spec.links)
    for (std::size_t k = 0; k < l.pivot.dampers.size(); ++k) {
      const auto& axis = l.pivot.dampers[k].axis;
      if (!axis) continue;
      const std::string which = l.pivot.dampers.size() > 1 ? fmt::format(" (damper {})", k + 1) : "";
      const std::string swing = *axis == kDamperAcross ? "the swing in the travel plane"
                                : *axis == 0           ? "the swing across the travel plane"
                                                       : "the swing about its shaft";
      parts.push_back(fmt::format("'{}'{} shaft {} the travel, damping {}", l.name, which,
                                  *axis == kDamperAcross || *axis == 0 ? damper_axis_label(axis)
                                                                       : "at " + damper_axis_label(axis) + " to",
                                  swing));
    }
  if (parts.empty()) return "";
  return fmt::format("Dampers with an axis act about their shaft only, tau = tau(w . a) a with the planar law of the "
                     "rate about the shaft a, which is horizontal and fixed in the trolley frame (turning with a "
                     "slewing boom, 'travel' then meaning the boom's direction): {}.",
                     fmt::join(parts, "; "));
}

}  // namespace swaybound
