#include "swaybound/core/units.hpp"

#include <cctype>
#include <charconv>
#include <cmath>
#include <numbers>
#include <vector>

#include <fmt/format.h>

namespace swaybound::units {

namespace {

struct Symbol {
  std::string_view name;
  double factor;  // to SI
  Dim dim;
};

// Conversion factors: NIST SP 811 (2008), Appendix B. Exact by definition except deg (pi/180).
constexpr double kDeg = std::numbers::pi / 180.0;
const Symbol kSymbols[] = {
    {"m", 1.0, length},         {"cm", 1e-2, length},       {"mm", 1e-3, length},
    {"km", 1e3, length},        {"kg", 1.0, mass},          {"g", 1e-3, mass},
    {"t", 1e3, mass},           {"s", 1.0, duration},           {"ms", 1e-3, duration},
    {"min", 60.0, duration},        {"h", 3600.0, duration},        {"N", 1.0, force},
    {"kN", 1e3, force},         {"MN", 1e6, force},         {"Nm", 1.0, torque},
    {"kNm", 1e3, torque},       {"rad", 1.0, angle},        {"deg", kDeg, angle},
    {"°", kDeg, angle},         {"Hz", 1.0, rate},
};

Dim add(Dim a, const Dim& b, int power) {
  a.mass += b.mass * power;
  a.length += b.length * power;
  a.time += b.time * power;
  a.angle += b.angle * power;
  return a;
}

std::string_view trim(std::string_view s) {
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.remove_prefix(1);
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.remove_suffix(1);
  return s;
}

const Symbol* find_symbol(std::string_view name) {
  for (const auto& s : kSymbols)
    if (s.name == name) return &s;
  return nullptr;
}

std::string known_symbols() {
  std::string out;
  for (const auto& s : kSymbols) {
    if (!out.empty()) out += ' ';
    out += s.name;
  }
  return out;
}

}  // namespace

std::optional<Quantity> parse_unit(std::string_view unit, std::string& error) {
  Quantity q{1.0, dimensionless};
  int sign = 1;
  std::size_t i = 0;
  const auto n = unit.size();
  bool any = false, any_after_slash = false;
  while (i < n) {
    const char c = unit[i];
    if (std::isspace(static_cast<unsigned char>(c)) || c == '*') {
      ++i;
      continue;
    }
    if (c == '/') {
      if (sign < 0) {
        error = fmt::format("unit '{}' has more than one '/'", unit);
        return std::nullopt;
      }
      sign = -1;
      ++i;
      continue;
    }
    std::size_t j = i;
    while (j < n && !std::isspace(static_cast<unsigned char>(unit[j])) && unit[j] != '*' &&
           unit[j] != '/' && unit[j] != '^')
      ++j;
    const std::string_view name = unit.substr(i, j - i);
    int power = 1;
    if (j < n && unit[j] == '^') {
      ++j;
      const char* first = unit.data() + j;
      const char* last = unit.data() + n;
      auto [ptr, ec] = std::from_chars(first, last, power);
      if (ec != std::errc() || power == 0) {
        error = fmt::format("unit '{}': '{}^' needs a non-zero integer power", unit, name);
        return std::nullopt;
      }
      j += static_cast<std::size_t>(ptr - first);
    }
    const Symbol* sym = find_symbol(name);
    if (sym == nullptr) {
      error = fmt::format("unknown unit symbol '{}' in '{}' (known: {})", name, unit, known_symbols());
      return std::nullopt;
    }
    q.value *= std::pow(sym->factor, sign * power);
    q.dim = add(q.dim, sym->dim, sign * power);
    any = true;
    any_after_slash = sign < 0;
    i = j;
  }
  if (!any && sign > 0) {
    error = "empty unit";
    return std::nullopt;
  }
  if (sign < 0 && !any_after_slash) {
    error = fmt::format("unit '{}' has nothing after '/'", unit);
    return std::nullopt;
  }
  return q;
}

std::optional<Quantity> parse_quantity(std::string_view text, std::string& error) {
  const std::string_view s = trim(text);
  if (s.empty()) {
    error = "empty value";
    return std::nullopt;
  }
  double number = 0;
  // from_chars takes no leading '+'; an explicit plus sign is still a plain number.
  const std::string_view body = s.front() == '+' && s.size() > 1 && s[1] != '-' ? s.substr(1) : s;
  const char* first = body.data();
  const char* last = body.data() + body.size();
  auto [ptr, ec] = std::from_chars(first, last, number);
  if (ec == std::errc::result_out_of_range) {
    error = fmt::format("'{}' is outside the range of a double-precision number", s);
    return std::nullopt;
  }
  if (ec != std::errc()) {
    if (s.front() == '/') {  // "/s": a unit with an implied 1
      number = 1.0;
      ptr = first;
    } else {
      error = fmt::format("'{}' does not start with a number", s);
      return std::nullopt;
    }
  }
  if (!std::isfinite(number)) {
    error = fmt::format("'{}' is not a finite number", s);
    return std::nullopt;
  }
  const std::string_view rest = trim(std::string_view(ptr, static_cast<std::size_t>(last - ptr)));
  if (rest.empty()) return Quantity{number, dimensionless, false};
  auto unit = parse_unit(rest, error);
  if (!unit) return std::nullopt;
  return Quantity{number * unit->value, unit->dim, true};
}

std::string dim_name(const Dim& d) {
  struct Named {
    Dim dim;
    std::string_view name;
  };
  static const Named kNamed[] = {
      {dimensionless, "dimensionless number"},
      {length, "length"},
      {mass, "mass"},
      {duration, "time"},
      {angle, "angle"},
      {force, "force"},
      {torque, "torque"},
      {rotary_damping, "rotary damping coefficient"},
      {linear_damping, "linear damping coefficient"},
      {speed, "speed"},
      {acceleration, "acceleration"},
      {jerk, "jerk"},
      {stiffness, "stiffness (force per length)"},
      {moment_of_inertia, "moment of inertia"},
      {rate, "rate (per time)"},
      {angular_rate, "angular rate"},
      {angular_acceleration, "angular acceleration"},
      {angular_jerk, "angular jerk"},
      {area, "area"},
      {density, "density"},
  };
  for (const auto& n : kNamed)
    if (n.dim == d) return std::string(n.name);
  return "quantity of unit " + si_unit(d);
}

std::string a_dim_name(const Dim& d) {
  const std::string name = dim_name(d);
  const bool vowel = std::string_view("aeiou").find(name.front()) != std::string_view::npos;
  return (vowel ? "an " : "a ") + name;
}

std::string si_unit(const Dim& d) {
  struct Named {
    Dim dim;
    std::string_view unit;
  };
  static const Named kUnits[] = {
      {dimensionless, ""},          {length, "m"},          {mass, "kg"},
      {duration, "s"},                  {angle, "rad"},         {force, "N"},
      {torque, "N m"},              {rotary_damping, "N m s/rad"},
      {linear_damping, "N s/m"},    {speed, "m/s"},         {acceleration, "m/s^2"},
      {moment_of_inertia, "kg m^2"}, {rate, "1/s"},         {angular_rate, "rad/s"},
      {area, "m^2"},                {density, "kg/m^3"},
      {jerk, "m/s^3"},              {stiffness, "N/m"},
      {angular_acceleration, "rad/s^2"}, {angular_jerk, "rad/s^3"},
  };
  for (const auto& n : kUnits)
    if (n.dim == d) return std::string(n.unit);
  std::string out;
  auto part = [&out](int p, std::string_view sym) {
    if (p == 0) return;
    if (!out.empty()) out += ' ';
    out += sym;
    if (p != 1) out += fmt::format("^{}", p);
  };
  part(d.mass, "kg");
  part(d.length, "m");
  part(d.time, "s");
  part(d.angle, "rad");
  return out;
}

bool angle_unit_required(const Dim& d) { return d.angle != 0; }

std::string bare_angle_fix(double number, const Dim& d) {
  // The same unit with every rad written as deg: "rad/s" -> "deg/s", "N m s/rad" -> "N m s/deg".
  const std::string in_rad = si_unit(d);
  std::string in_deg = in_rad;
  for (std::size_t at = in_deg.find("rad"); at != std::string::npos; at = in_deg.find("rad", at + 3))
    in_deg.replace(at, 3, "deg");
  // x rad^a = x (180/pi)^a deg^a
  const double as_deg = number * std::pow(180.0 / std::numbers::pi, d.angle);
  return fmt::format("write `{0:g} {1}` or `{0:g} {2}` (= {3:.4g} {1})", number, in_deg, in_rad, as_deg);
}

std::string format_si(double value, const Dim& d) {
  const std::string u = si_unit(d);
  return u.empty() ? fmt::format("{:.12g}", value) : fmt::format("{:.12g} {}", value, u);
}

}  // namespace swaybound::units
