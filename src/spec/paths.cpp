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
    {"parts_of_line", Field::parts_of_line, units::dimensionless, 1, false},
    {"elastic.ea", Field::rope_ea, units::force, 0, true},
    {"elastic.stiffness", Field::rope_stiffness, units::stiffness, 0, true},
    {"elastic.damping", Field::rope_damping, units::linear_damping, 0, false},
    {"elastic.damping_ratio", Field::rope_damping_ratio, units::dimensionless, 0, false},
};
const FieldInfo kDrumFields[] = {
    {"drum_speed", Field::drum_speed, units::speed, -1e300, false},
    {"to", Field::drum_move_to, units::speed, -1e300, false},
    {"accel", Field::drum_move_accel, units::acceleration, 0, true},
    {"jerk", Field::drum_move_jerk, units::jerk, 0, false},
};
const FieldInfo kTravelFields[] = {
    {"travel.shaper.frequency", Field::shaper_frequency, units::rate, 0, true},
    {"travel.shaper.damping_ratio", Field::shaper_damping_ratio, units::dimensionless, 0, false},
    {"travel.stop.decel", Field::stop_decel, units::acceleration, 0, true},
    {"travel.controller.angle_gain", Field::controller_angle_gain, units::sway_angle_gain, -1e300, false},
    {"travel.controller.rate_gain", Field::controller_rate_gain, units::sway_rate_gain, 0, false},
    {"travel.controller.speed_gain", Field::controller_speed_gain, units::rate, 0, false},
};
const FieldInfo kUncertainFields[] = {
    {"x", Field::accel_x, units::acceleration, -1e300, false},
    {"y", Field::accel_y, units::acceleration, -1e300, false},
    {"z", Field::accel_z, units::acceleration, -1e300, false},
    {"wind.speed", Field::wind_speed, units::speed, -1e300, false},
};
const FieldInfo kDashpotField{"coefficient", Field::dashpot_coefficient, units::linear_damping, 0, false};

const FieldInfo& info(Field f) {
  for (const auto& i : kLinkFields)
    if (i.field == f) return i;
  for (const auto& i : kDrumFields)
    if (i.field == f) return i;
  for (const auto& i : kTravelFields)
    if (i.field == f) return i;
  for (const auto& i : kUncertainFields)
    if (i.field == f) return i;
  return kDashpotField;
}

/// scenarios[NAME].hoist.drum_speed | hoist.moves[K].to | accel | jerk
std::optional<SpecPath> parse_scenario_path(const Spec& spec, const std::string& name, std::string_view field,
                                            std::string& error) {
  int index = -1;
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i)
    if (spec_detail::name_key(spec.scenarios[i].name) == spec_detail::name_key(name)) index = static_cast<int>(i);
  if (index < 0) {
    error = fmt::format("no scenario is named '{}'", name);
    return std::nullopt;
  }
  const ScenarioSpec& scenario = spec.scenarios[static_cast<std::size_t>(index)];
  const bool travel = field.rfind("travel.", 0) == 0;
  for (const auto& f : kTravelFields)
    if (field == f.name) {
      const bool control = f.field >= Field::controller_angle_gain;
      const bool present = scenario.travel && (control                         ? scenario.travel->controller.has_value()
                                               : f.field == Field::stop_decel ? scenario.travel->stop.has_value()
                                                                              : scenario.travel->shaper.has_value());
      if (!present) {
        error = fmt::format("scenario '{}' has no travel {} to vary", name,
                            control ? "controller" : f.field == Field::stop_decel ? "stop" : "shaper");
        return std::nullopt;
      }
      const auto& shaper = scenario.travel->shaper;
      if (shaper && shaper->mode > 0 &&
          (f.field == Field::shaper_frequency || (f.field == Field::shaper_damping_ratio && !shaper->damping_given))) {
        error = fmt::format("scenario '{}''s shaper is designed from mode {}, which sets its {}", name, shaper->mode,
                            f.field == Field::shaper_frequency ? "frequency" : "damping ratio");
        return std::nullopt;
      }
      return SpecPath{f.field, index, 0, true};
    }
  const std::vector<DrumMoveSpec>* moves = nullptr;
  if (travel && scenario.travel) moves = &scenario.travel->moves;
  if (!travel && scenario.hoist) moves = &scenario.hoist->moves;
  if (moves == nullptr) {
    error = fmt::format("scenario '{}' has no {} to vary", name, travel ? "travel drive" : "hoist");
    return std::nullopt;
  }
  if (field == (travel ? "travel.speed" : "hoist.drum_speed")) return SpecPath{Field::drum_speed, index, 0, travel};
  const std::string_view prefix = travel ? "travel.moves[" : "hoist.moves[";
  if (field.rfind(prefix, 0) == 0) {
    const auto end = field.find(']');
    const std::string digits(field.substr(prefix.size(), end == std::string_view::npos ? 0 : end - prefix.size()));
    if (end != std::string_view::npos && !digits.empty() && digits.size() <= 3 &&
        digits.find_first_not_of("0123456789") == std::string::npos && end + 1 < field.size() && field[end + 1] == '.') {
      const int move = std::stoi(digits);
      if (move >= static_cast<int>(moves->size())) {
        error = fmt::format("scenario '{}' has {} {} move(s); K runs from 0", name, moves->size(),
                            travel ? "travel" : "drum");
        return std::nullopt;
      }
      const std::string_view what = field.substr(end + 2);
      for (const auto& f : kDrumFields)
        if (f.name == what && f.field != Field::drum_speed) return SpecPath{f.field, index, move, travel};
    }
  }
  error = fmt::format("unknown field '{}' (a scenario has: hoist.drum_speed, hoist.moves[K].to | accel | jerk, "
                      "travel.speed, travel.moves[K].to | accel | jerk, travel.shaper.frequency | damping_ratio, "
                      "travel.stop.decel, travel.controller.angle_gain | rate_gain | speed_gain)",
                      field);
  return std::nullopt;
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
  if (group == "scenarios") return parse_scenario_path(spec, name, field, error);
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
      const LinkSpec& link = spec.links[static_cast<std::size_t>(index)];
      if (f.field == Field::parts_of_line && link.kind != LinkKind::rope) {
        error = fmt::format("link '{}' is not a rope", name);
        return std::nullopt;
      }
      const bool elastic_field = f.field == Field::rope_ea || f.field == Field::rope_stiffness ||
                                 f.field == Field::rope_damping || f.field == Field::rope_damping_ratio;
      if (elastic_field && !link.elastic) {
        error = fmt::format("link '{}' is not an elastic rope (it has no elastic: section)", name);
        return std::nullopt;
      }
      // The elastic section gives EA or a stiffness, damping or a damping ratio: the one it gives.
      if ((f.field == Field::rope_ea && link.elastic->ea <= 0) || (f.field == Field::rope_stiffness && link.elastic->stiffness <= 0)) {
        error = fmt::format("rope '{}' gives its {} instead", name, f.field == Field::rope_ea ? "stiffness" : "ea");
        return std::nullopt;
      }
      if ((f.field == Field::rope_damping_ratio && link.elastic->damping_ratio < 0) ||
          (f.field == Field::rope_damping && link.elastic->damping_ratio >= 0)) {
        error = fmt::format("rope '{}' gives its {} instead", name,
                            f.field == Field::rope_damping ? "damping_ratio" : "damping");
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
  error = fmt::format("unknown group '{}' (use links[...], dashpots[...] or scenarios[...])", group);
  return std::nullopt;
}

namespace {
/// "[K]" at the start of `text`: K (at most 3 digits) and the rest after "].", or -1.
int leading_index(std::string_view text, std::string_view& rest) {
  const auto end = text.find(']');
  if (text.empty() || text[0] != '[' || end == std::string_view::npos || end + 1 >= text.size() ||
      text[end + 1] != '.')
    return -1;
  const std::string digits(text.substr(1, end - 1));
  if (digits.empty() || digits.size() > 3 || digits.find_first_not_of("0123456789") != std::string::npos) return -1;
  rest = text.substr(end + 2);
  return std::stoi(digits);
}
}  // namespace

std::optional<SpecPath> parse_uncertain_path(const Spec& spec, int scenario, std::string_view text, std::string& error) {
  const ScenarioSpec& s = spec.scenarios.at(static_cast<std::size_t>(scenario));
  const std::string forms =
      "the forms are accel[K].x | y | z, travel.stop.decel, travel.moves[K].accel, wind.speed or wind[K].speed";
  std::string_view rest;
  if (text == "wind.speed") {
    if (spec.wind.size() != 1) {
      error = spec.wind.empty() ? "the spec has no wind load"
                                : fmt::format("the spec has {} wind loads: name one as wind[K].speed, K from 0",
                                              spec.wind.size());
      return std::nullopt;
    }
    return SpecPath{Field::wind_speed, 0};
  }
  if (text.rfind("wind[", 0) == 0) {
    const int k = leading_index(text.substr(4), rest);
    if (k < 0 || rest != "speed") {
      error = "expected wind[K].speed with K a wind load's position in the list, from 0";
      return std::nullopt;
    }
    if (k >= static_cast<int>(spec.wind.size())) {
      error = fmt::format("the spec has {} wind load(s); K runs from 0", spec.wind.size());
      return std::nullopt;
    }
    return SpecPath{Field::wind_speed, k};
  }
  if (text.rfind("accel[", 0) == 0) {
    const int k = leading_index(text.substr(5), rest);
    if (k < 0 || (rest != "x" && rest != "y" && rest != "z")) {
      error = "expected accel[K].x, .y or .z with K a segment's position in the scenario's accel list, from 0";
      return std::nullopt;
    }
    if (k >= static_cast<int>(s.accel.size())) {
      error = fmt::format("scenario '{}' has {} accel segment(s); K runs from 0", s.name, s.accel.size());
      return std::nullopt;
    }
    if (rest == "z" && spec.motion != Motion::spatial) {
      error = "a planar chain has no motion across the travel (z)";
      return std::nullopt;
    }
    return SpecPath{rest == "x" ? Field::accel_x : rest == "y" ? Field::accel_y : Field::accel_z, scenario, k};
  }
  if (text == "travel.stop.decel" || (text.rfind("travel.moves[", 0) == 0 && text.size() > 6 &&
                                      text.substr(text.size() - 6) == ".accel")) {
    auto path = parse_scenario_path(spec, s.name, text, error);
    if (path) return path;
    return std::nullopt;
  }
  error = fmt::format("'{}' is not a value that can be uncertain: {}", text, forms);
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
  if (p.field == Field::wind_speed) return spec.wind.at(static_cast<std::size_t>(p.index)).speed;
  if (p.field >= Field::drum_speed) {
    auto& scenario = spec.scenarios.at(static_cast<std::size_t>(p.index));
    if (p.field >= Field::accel_x) {
      auto& segment = scenario.accel.at(static_cast<std::size_t>(p.damper));
      return p.field == Field::accel_x ? segment.ax : p.field == Field::accel_y ? segment.ay : segment.az;
    }
    if (p.field == Field::shaper_frequency) return scenario.travel.value().shaper.value().frequency;
    if (p.field == Field::shaper_damping_ratio) return scenario.travel.value().shaper.value().damping_ratio;
    if (p.field == Field::stop_decel) return scenario.travel.value().stop.value().decel;
    if (p.field == Field::controller_angle_gain) return scenario.travel.value().controller.value().angle_gain;
    if (p.field == Field::controller_rate_gain) return scenario.travel.value().controller.value().rate_gain;
    if (p.field == Field::controller_speed_gain) return scenario.travel.value().controller.value().speed_gain;
    if (p.field == Field::drum_speed)
      return p.travel ? scenario.travel.value().initial_speed : scenario.hoist.value().initial_speed;
    auto& moves = p.travel ? scenario.travel.value().moves : scenario.hoist.value().moves;
    auto& move = moves.at(static_cast<std::size_t>(p.damper));
    return p.field == Field::drum_move_to ? move.to : p.field == Field::drum_move_accel ? move.accel : move.jerk;
  }
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
    case Field::rope_ea: return link.elastic.value().ea;
    case Field::rope_stiffness: return link.elastic.value().stiffness;
    case Field::rope_damping: return link.elastic.value().damping;
    case Field::rope_damping_ratio: return link.elastic.value().damping_ratio;
    default: return link.length;
  }
}
}  // namespace

double get_spec_value(const Spec& spec, const SpecPath& path) {
  if (path.field == Field::parts_of_line) return spec.links.at(static_cast<std::size_t>(path.index)).parts_of_line;
  return value_ref(spec, path);
}

void set_spec_value(Spec& spec, const SpecPath& path, double value) {
  if (path.field == Field::parts_of_line) {
    // A count: the nearest whole number of parts (sizing gives it a catalogue or a step of 1).
    spec.links.at(static_cast<std::size_t>(path.index)).parts_of_line = static_cast<int>(std::lround(std::max(1.0, value)));
    return;
  }
  value_ref(spec, path) = value;
  if (path.field >= Field::drum_speed) return;
  if (path.field == Field::dashpot_coefficient) return;
  auto& link = spec.links.at(static_cast<std::size_t>(path.index));
  if (path.field == Field::com) link.com_given = true;
  if (path.field == Field::inertia) link.inertia_given = true;
}

}  // namespace swaybound
