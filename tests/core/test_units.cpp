// Unit conversions checked against NIST Special Publication 811 (2008 edition), "Guide for the Use
// of the International System of Units (SI)", Appendix B.8/B.9 conversion factors.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include "swaybound/core/units.hpp"

using namespace swaybound::units;

namespace {
Quantity parse(const std::string& text) {
  std::string error;
  auto q = parse_quantity(text, error);
  INFO(text << ": " << error);
  REQUIRE(q.has_value());
  return *q;
}
bool fails(const std::string& text) {
  std::string error;
  return !parse_quantity(text, error).has_value() && !error.empty();
}
}  // namespace

TEST_CASE("NIST SP 811 conversion factors to SI", "[units]") {
  struct Row {
    const char* text;
    double si;
    Dim dim;
  };
  // Factors from NIST SP 811 Appendix B (exact unless noted).
  const Row rows[] = {
      {"1 cm", 1.0e-2, length},
      {"1 mm", 1.0e-3, length},
      {"1 km", 1.0e3, length},
      {"1 t", 1.0e3, mass},             // metric ton: 1.0 E+03 kg
      {"1 g", 1.0e-3, mass},
      {"1 min", 6.0e1, duration},           // minute: 6.0 E+01 s
      {"1 h", 3.6e3, duration},             // hour: 3.6 E+03 s
      {"1 ms", 1.0e-3, duration},
      {"1 deg", 1.745329e-2, angle},    // degree: 1.745 329 E-02 rad (rounded in SP 811)
      {"1 km/h", 2.777778e-1, speed},   // kilometer per hour: 2.777 778 E-01 m/s (rounded)
      {"1 kN", 1.0e3, force},
      {"1 MN", 1.0e6, force},
      {"1 kN m", 1.0e3, torque},
      {"1 kNm", 1.0e3, torque},
      {"1 t m^2", 1.0e3, moment_of_inertia},
      {"1 kN m s/rad", 1.0e3, rotary_damping},
      {"1 kN s/m", 1.0e3, linear_damping},
      {"1 deg/s", 1.745329e-2, angular_rate},
      {"1 m/s^2", 1.0, acceleration},
      {"1 /s", 1.0, rate},
      {"1 cm^2", 1.0e-4, area},
  };
  for (const auto& r : rows) {
    const Quantity q = parse(r.text);
    INFO(r.text);
    CHECK(q.dim == r.dim);
    CHECK(q.has_unit);
    // SP 811 rounds deg and km/h to 7 significant digits.
    CHECK(q.value == Approx(r.si).epsilon(1e-6));
  }
  CHECK(parse("15 deg").value == Approx(15 * std::numbers::pi / 180).epsilon(1e-15));
  CHECK(parse("3.6 km/h").value == Approx(1.0).epsilon(1e-15));
}

TEST_CASE("bare numbers are SI and carry no unit", "[units]") {
  const Quantity q = parse("  9.81 ");
  CHECK(q.value == 9.81);
  CHECK_FALSE(q.has_unit);
  CHECK(parse("1e-8").value == 1e-8);
  CHECK(parse("-0.8 m/s^2").value == -0.8);
  CHECK(parse("+10 deg").value == Approx(10 * std::numbers::pi / 180));
}

TEST_CASE("a bare number is refused wherever the unit holds an angle", "[units]") {
  // Angles, angular rates and rotary damping (N m s/rad) read differently in rad and deg.
  CHECK(angle_unit_required(angle));
  CHECK(angle_unit_required(angular_rate));
  CHECK(angle_unit_required(rotary_damping));
  // A per-time rate (an FTLE in 1/s, an output rate) and a torque hold no angle.
  CHECK_FALSE(angle_unit_required(rate));
  CHECK_FALSE(angle_unit_required(torque));
  CHECK_FALSE(angle_unit_required(dimensionless));
  CHECK_FALSE(angle_unit_required(length));
}

TEST_CASE("the fix for a bare angle offers both readings", "[units]") {
  // 12 rad = 12 x 180/pi deg = 687.55 deg (the definition of the degree, SP 811 B.9).
  CHECK(bare_angle_fix(12, angle) == "write `12 deg` or `12 rad` (= 687.5 deg)");
  // 5 rad/s = 286.48 deg/s.
  CHECK(bare_angle_fix(5, angular_rate) == "write `5 deg/s` or `5 rad/s` (= 286.5 deg/s)");
  // 4000 N m s/rad = 4000 x pi/180 N m s/deg = 69.81 N m s/deg: the angle is in the denominator.
  CHECK(bare_angle_fix(4000, rotary_damping) == "write `4000 N m s/deg` or `4000 N m s/rad` (= 69.81 N m s/deg)");
}

TEST_CASE("compound units multiply and divide", "[units]") {
  CHECK(parse("4 kN m s/rad").value == Approx(4000));
  CHECK(parse("950 kg m^2").dim == moment_of_inertia);
  CHECK(parse("1.225 kg m^-3").dim == density);
  CHECK(parse("1.225 kg/m^3").dim == density);
  CHECK(parse("2 N*m").dim == torque);
  CHECK(parse("250mm").value == Approx(0.25));
}

TEST_CASE("malformed quantities are rejected with a reason", "[units]") {
  CHECK(fails(""));
  CHECK(fails("abc"));
  CHECK(fails("5 furlongs"));
  CHECK(fails("nan"));
  CHECK(fails("inf m"));
  CHECK(fails("1e999"));
  CHECK(fails("5 m/s/s"));
  CHECK(fails("5 m^0"));
  CHECK(fails("5 m/"));
}

TEST_CASE("dimension names read as English", "[units]") {
  CHECK(a_dim_name(length) == "a length");
  CHECK(a_dim_name(angle) == "an angle");
  CHECK(si_unit(rotary_damping) == "N m s/rad");
  CHECK(si_unit(Dim{1, 1, 1, 1}) == "kg m s rad");
}
