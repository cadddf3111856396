#pragma once
// Addresses of numeric values in a spec, as used by sizing variables:
//   links[NAME].length | mass | com | inertia
//   links[NAME].pivot.damper.coefficient | exponent | max_torque   (a pivot with one damper)
//   links[NAME].pivot.dampers[K].coefficient | exponent | max_torque   (K from 0, any pivot)
//   links[NAME].pivot.friction.torque | pin_radius | mu
//   links[NAME].parts_of_line | elastic.ea | elastic.stiffness | elastic.damping | elastic.damping_ratio  (ropes)
//   dashpots[NAME].coefficient
//   scenarios[NAME].hoist.drum_speed | hoist.moves[K].to | hoist.moves[K].accel | hoist.moves[K].jerk
//   scenarios[NAME].travel.speed | travel.moves[K].to | travel.moves[K].accel | travel.moves[K].jerk
//   scenarios[NAME].travel.shaper.frequency | travel.shaper.damping_ratio | travel.stop.decel
//   scenarios[NAME].travel.controller.angle_gain | rate_gain | speed_gain   (model/controller.hpp)
// and, for the uncertain values of a scenario only (parse_uncertain_path, relative to the scenario):
//   accel[K].x | y | z   travel.stop.decel   travel.moves[K].accel   wind.speed | wind[K].speed
#include <optional>
#include <string>
#include <string_view>

#include "swaybound/core/units.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct SpecPath {
  enum class Field {
    length, mass, com, inertia,
    damper_coefficient, damper_exponent, damper_max_torque,
    friction_torque, friction_pin_radius, friction_mu,
    dashpot_coefficient,
    parts_of_line, rope_ea, rope_stiffness, rope_damping, rope_damping_ratio,
    drum_speed, drum_move_to, drum_move_accel, drum_move_jerk,
    shaper_frequency, shaper_damping_ratio, stop_decel,  // a travel drive's
    controller_angle_gain, controller_rate_gain, controller_speed_gain,  // a travel drive's controller's
    accel_x, accel_y, accel_z,  // a base-acceleration segment's (uncertain values only)
    wind_speed,                 // a wind load's steady speed (uncertain values only)
  };
  Field field{};
  int index = 0;  ///< link, dashpot, scenario or wind-load index
  int damper = 0; ///< damper fields: which damper of the pivot; drum moves: which move; accel: which segment
  bool travel = false;  ///< drum fields: of the scenario's travel drive instead of its hoist
};

/// Parses `text` against `spec`; on failure returns nullopt and a sentence in `error`.
std::optional<SpecPath> parse_spec_path(const Spec& spec, std::string_view text, std::string& error);
/// Parses the path of an uncertain value of scenario `scenario` (UncertainSpec::path): accel[K].x | y
/// | z, travel.stop.decel, travel.moves[K].accel, wind.speed (the spec's one wind load) or
/// wind[K].speed; on failure returns nullopt and a sentence in `error`.
std::optional<SpecPath> parse_uncertain_path(const Spec& spec, int scenario, std::string_view text, std::string& error);
/// Dimension of the value a path addresses.
units::Dim spec_path_dim(const SpecPath& path);
/// Lower bound of the value's allowed range (e.g. mass > 0), used to check sizing ranges.
double spec_path_lower_bound(const SpecPath& path, bool& open);
/// Reads / writes the addressed value. Writing a com or inertia marks it as given.
double get_spec_value(const Spec& spec, const SpecPath& path);
void set_spec_value(Spec& spec, const SpecPath& path, double value);

}  // namespace swaybound
