#include "swaybound/spec/paths.hpp"

#include <array>
#include <limits>

#include <fmt/format.h>

#include "names.hpp"

namespace swaybound {

namespace {
using Field = SpecPath::Field;
struct FieldInfo {
  std::string_view name;
  Field field;
  units::Dim dim;
  double lower;
  bool open;
};
const FieldInfo kLinkFields[] = {
    {"length", Field::length, units::length, 0, true},
    {"mass", Field::mass, units::mass, 0, true},
    {"com", Field::com, units::length, 0, false},
    {"inertia", Field::inertia, units::moment_of_inertia, 0, false},
    {"pivot.damper.coefficient", Field::damper_coefficient, units::rotary_damping, 0, false},
    {"pivot.damper.exponent", Field::damper_exponent, units::dimensionless, 0, true},
    {"pivot.damper.max_torque", Field::damper_max_torque, units::torque, 0, true},
    {"pivot.friction.torque", Field::friction_torque, units::torque, 0, false},
    {"pivot.friction.pin_radius", Field::friction_pin_radius, units::length, 0, false},
    {"pivot.friction.mu", Field::friction_mu, units::dimensionless, 0, false},
};
const FieldInfo kDashpotField{"coefficient", Field::dashpot_coefficient, units::linear_damping, 0, false};

const FieldInfo& info(Field f) {
  for (const auto& i : kLinkFields)
    if (i.field == f) return i;
  return kDashpotField;
}
}  // namespace

std::optional<SpecPath> parse_spec_path(const Spec& spec, std::string_view text, std::string& error) {
  const auto open = text.find('[');
  const auto close = text.find(']');
  if (open == std::string_view::npos || close == std::string_view::npos || close < open ||
      close + 1 >= text.size() || text[close + 1] != '.') {
    error = "expected the form links[NAME].field or dashpots[NAME].coefficient";
    return std::nullopt;
  }
  const std::string_view group = text.substr(0, open);
  const std::string name(text.substr(open + 1, close - open - 1));
  std::string_view field = text.substr(close + 2);
  if (group == "links") {
    const int index = spec.link_index(name);
    if (index < 0) {
      error = fmt::format("no link is named '{}'", name);
      return std::nullopt;
    }
    const PivotSpec& pivot = spec.links[static_cast<std::size_t>(index)].pivot;
    // pivot.dampers[K].X addresses damper K; pivot.damper.X the only damper of the pivot.
    int damper = 0;
    std::string normalised;
    if (field.rfind("pivot.dampers[", 0) == 0) {
      const auto end = field.find(']');
      const std::string digits(field.substr(14, end == std::string_view::npos ? 0 : end - 14));
      if (end == std::string_view::npos || digits.empty() || digits.size() > 3 ||
          digits.find_first_not_of("0123456789") != std::string::npos || end + 1 >= field.size() ||
          field[end + 1] != '.') {
        error = "expected pivot.dampers[K].field with K a damper's position in the list, from 0";
        return std::nullopt;
      }
      damper = std::stoi(digits);
      if (damper >= static_cast<int>(pivot.dampers.size())) {
        error = fmt::format("link '{}' has {} damper(s) at its pivot; K runs from 0 to {}", name, pivot.dampers.size(),
                            static_cast<int>(pivot.dampers.size()) - 1);
        return std::nullopt;
      }
      normalised = "pivot.damper." + std::string(field.substr(end + 2));
      field = normalised;
    } else if (field.rfind("pivot.damper.", 0) == 0 && pivot.dampers.size() > 1) {
      error = fmt::format("link '{}' has {} dampers at its pivot: name one as pivot.dampers[K].{}", name,
                          pivot.dampers.size(), field.substr(13));
      return std::nullopt;
    }
    for (const auto& f : kLinkFields) {
      if (f.name != field) continue;
      const bool damper_field = f.field == Field::damper_coefficient || f.field == Field::damper_exponent ||
                                f.field == Field::damper_max_torque;
      const bool friction_field = f.field == Field::friction_torque || f.field == Field::friction_pin_radius ||
                                  f.field == Field::friction_mu;
      if (damper_field && pivot.dampers.empty()) {
        error = fmt::format("link '{}' has no damper at its pivot to vary", name);
        return std::nullopt;
      }
      if (friction_field && !pivot.friction) {
        error = fmt::format("link '{}' has no friction at its pivot to vary", name);
        return std::nullopt;
      }
      return SpecPath{f.field, index, damper};
    }
    std::string all;
    for (const auto& f : kLinkFields) all += (all.empty() ? "" : ", ") + std::string(f.name);
    error = fmt::format("unknown field '{}' (fields of a link: {})", field, all);
    return std::nullopt;
  }
  if (group == "dashpots") {
    for (std::size_t i = 0; i < spec.dashpots.size(); ++i)
      if (spec_detail::name_key(spec.dashpots[i].name) == spec_detail::name_key(name)) {  // unique (loader)
        if (field != "coefficient") {
          error = fmt::format("unknown field '{}' (a dashpot has: coefficient)", field);
          return std::nullopt;
        }
        return SpecPath{Field::dashpot_coefficient, static_cast<int>(i)};
      }
    error = fmt::format("no dashpot is named '{}'", name);
    return std::nullopt;
  }
  error = fmt::format("unknown group '{}' (use links[...] or dashpots[...])", group);
  return std::nullopt;
}

units::Dim spec_path_dim(const SpecPath& path) { return info(path.field).dim; }

double spec_path_lower_bound(const SpecPath& path, bool& open) {
  open = info(path.field).open;
  return info(path.field).lower;
}

namespace {
template <class SpecT>
auto& value_ref(SpecT& spec, const SpecPath& p) {
  if (p.field == Field::dashpot_coefficient) return spec.dashpots.at(static_cast<std::size_t>(p.index)).coefficient;
  auto& link = spec.links.at(static_cast<std::size_t>(p.index));
  switch (p.field) {
    case Field::length: return link.length;
    case Field::mass: return link.mass;
    case Field::com: return link.com;
    case Field::inertia: return link.inertia;
    case Field::damper_coefficient: return link.pivot.dampers.at(static_cast<std::size_t>(p.damper)).coefficient;
    case Field::damper_exponent: return link.pivot.dampers.at(static_cast<std::size_t>(p.damper)).exponent;
    case Field::damper_max_torque: return link.pivot.dampers.at(static_cast<std::size_t>(p.damper)).max_torque;
    case Field::friction_torque: return link.pivot.friction.value().torque;
    case Field::friction_pin_radius: return link.pivot.friction.value().pin_radius;
    case Field::friction_mu: return link.pivot.friction.value().mu;
    default: return link.length;
  }
}
}  // namespace

double get_spec_value(const Spec& spec, const SpecPath& path) { return value_ref(spec, path); }

void set_spec_value(Spec& spec, const SpecPath& path, double value) {
  value_ref(spec, path) = value;
  if (path.field == Field::dashpot_coefficient) return;
  auto& link = spec.links.at(static_cast<std::size_t>(path.index));
  if (path.field == Field::com) link.com_given = true;
  if (path.field == Field::inertia) link.inertia_given = true;
}

}  // namespace swaybound
