#include "swaybound/report/format.hpp"

#include <cmath>
#include <numbers>

#include <fmt/format.h>

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

}  // namespace swaybound
