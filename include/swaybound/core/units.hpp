#pragma once
// Quantities with units at the input edge. Inside the tool everything is SI, angles in radians.
//
// A quantity is written as a bare number (already SI) or as "number unit", where the unit is a
// product of symbols, each with an optional integer power (^2, ^-1), separated by spaces or '*';
// a '/' puts every symbol after it in the denominator: "4 kN m s/rad", "9.81 m/s^2", "0.05 /s".
// Angle is kept as a dimension of its own so that a torque (N m) and a rotary damping coefficient
// (N m s/rad) cannot be confused.
#include <array>
#include <optional>
#include <string>
#include <string_view>

namespace swaybound::units {

/// Exponents of mass, length, time and angle.
struct Dim {
  int mass = 0, length = 0, time = 0, angle = 0;
  friend bool operator==(const Dim&, const Dim&) = default;
};

inline constexpr Dim dimensionless{};
inline constexpr Dim length{0, 1, 0, 0};
inline constexpr Dim mass{1, 0, 0, 0};
inline constexpr Dim duration{0, 0, 1, 0};  // time
inline constexpr Dim angle{0, 0, 0, 1};
inline constexpr Dim force{1, 1, -2, 0};
inline constexpr Dim torque{1, 2, -2, 0};
inline constexpr Dim rotary_damping{1, 2, -1, -1};  // N m s/rad
inline constexpr Dim linear_damping{1, 0, -1, 0};   // N s/m
inline constexpr Dim speed{0, 1, -1, 0};
inline constexpr Dim acceleration{0, 1, -2, 0};
inline constexpr Dim jerk{0, 1, -3, 0};             // m/s^3, a drum move's jerk limit
inline constexpr Dim stiffness{1, 0, -2, 0};        // N/m, a rope's spring rate
inline constexpr Dim moment_of_inertia{1, 2, 0, 0};
inline constexpr Dim rate{0, 0, -1, 0};             // 1/s, e.g. a Lyapunov exponent
inline constexpr Dim angular_rate{0, 0, -1, 1};     // rad/s
inline constexpr Dim angular_acceleration{0, 0, -2, 1};  // rad/s^2, a slewing move's limit
inline constexpr Dim angular_jerk{0, 0, -3, 1};     // rad/s^3
inline constexpr Dim area{0, 2, 0, 0};
inline constexpr Dim density{1, -3, 0, 0};
inline constexpr Dim sway_angle_gain{0, 1, -2, -1};  // m/s^2 per rad, a travel controller's (m s^-2 rad^-1)
inline constexpr Dim sway_rate_gain{0, 1, -1, -1};   // m/s^2 per rad/s (m s^-1 rad^-1)

/// Human name of a dimension ("length", "torque", ...) or its SI form ("kg m^2 s^-1").
std::string dim_name(const Dim& d);
/// dim_name with its article: "a length", "an angle".
std::string a_dim_name(const Dim& d);
/// SI unit that bare numbers of this dimension are in, e.g. "N m s/rad".
std::string si_unit(const Dim& d);

struct Quantity {
  double value = 0;  ///< in SI (angles in rad)
  Dim dim;
  bool has_unit = false;  ///< false for a bare number, which is taken as SI of whatever is expected
};

/// Parses "number [unit]". On failure returns nullopt and sets `error` to a sentence that says why.
std::optional<Quantity> parse_quantity(std::string_view text, std::string& error);

/// Factor to SI of a single unit expression ("kN m", "km/h"); nullopt if unknown.
std::optional<Quantity> parse_unit(std::string_view unit, std::string& error);

/// True when a bare number of dimension `d` is refused: its unit holds an angle (an angle, an
/// angular rate, a rotary damping coefficient in N m s/rad, ...), so a bare number reads one way in
/// rad and another in deg. Zero is the same in both readings and stays allowed bare; a rate per
/// time such as an FTLE (1/s) holds no angle and stays bare SI.
bool angle_unit_required(const Dim& d);

/// The fix line for a bare `number` where dimension `d` (one with an angle) is expected: both
/// readings, the rad one converted to deg, e.g. "write `12 deg` or `12 rad` (= 687.5 deg)".
std::string bare_angle_fix(double number, const Dim& d);

/// Formats an SI value with the SI unit of its dimension, e.g. "0.25 m", "4000 N m s/rad".
std::string format_si(double value, const Dim& d);

}  // namespace swaybound::units
