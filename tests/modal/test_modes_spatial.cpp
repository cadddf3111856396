// Modes of a spatial chain: pairs of swing in the travel plane and across it, each damped by what
// acts in its plane, against closed forms.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "../support/pendulum.hpp"
#include "swaybound/modal/modes.hpp"

using namespace swaybound;
using namespace swaybound::testing;

TEST_CASE("modes of a spherical pendulum come in pairs, each plane damped by what acts in it", "[modal][spatial]") {
  // A point mass m on a light link of length L, a rotary damper c_p at its pivot (isotropic in the
  // swing) and a horizontal dashpot c_d along x from the mass to the base. Linearised, each swing
  // direction is m L^2 a'' + c a' + m g L a = 0 with c = c_p + c_d L^2 in the travel plane (the
  // dashpot's line) and c = c_p across it (the dashpot is perpendicular to that swing at rest):
  // w_n = sqrt(g / L), zeta = c / (2 m L^2 w_n) (Thomson & Dahleh, Theory of Vibration with
  // Applications, 5th ed., sec. 2.6).
  const double g = 9.81, L = 4, m = 500, cp = 900, cd = 300;
  const std::string yaml = fmt::format(R"(
swaybound: 1
name: damped spherical pendulum
motion: spatial
gravity: {}
links:
  - {{name: rope, length: {} m, mass: {} kg, com: {} m, inertia: 0, pivot: {{damper: {{coefficient: {} N m s/rad}}}}}}
dashpots:
  - {{name: steady, from: {{link: rope, at: {} m}}, to: {{base: [2 m, -{} m]}}, coefficient: {} N s/m}}
cases: {{duration: 1 s, initial: [{{single: {{theta: [1 deg]}}}}]}}
)",
                                       g, L, m, L, cp, L, L, cd);
  const Model model = model_from_yaml(yaml);
  const ModalResult r = modal_analysis(model);
  REQUIRE(r.modes.size() == 2);
  const double wn = std::sqrt(g / L);
  const double zeta_travel = (cp + cd * L * L) / (2 * m * L * L * wn), zeta_across = cp / (2 * m * L * L * wn);
  const Mode& a = r.modes[0];
  const Mode& b = r.modes[1];
  CHECK(a.plane == SwayPlane::travel);
  CHECK(b.plane == SwayPlane::across);
  CHECK(a.pair == 1);
  CHECK(b.pair == 0);
  for (const Mode* mode : {&a, &b}) CHECK(mode->frequency_hz == Approx(wn / (2 * std::numbers::pi)).epsilon(1e-12));
  CHECK(a.damping_ratio == Approx(zeta_travel).epsilon(1e-10));
  CHECK(b.damping_ratio == Approx(zeta_across).epsilon(1e-10));
  CHECK(r.least_damping_ratio == Approx(zeta_across).epsilon(1e-10));
}

TEST_CASE("modes of a spatial chain: the planar chain's modes, each twice", "[modal][spatial]") {
  // Without anything that acts in one plane only, swing across the travel is the planar problem
  // again: every mode of the planar chain appears twice, in the travel plane and across it.
  const std::string planar = equal_double_yaml(1.5, 40.0);
  std::string spatial = planar;
  spatial.insert(spatial.find("links:"), "motion: spatial\n");
  const ModalResult p = modal_analysis(model_from_yaml(planar));
  const ModalResult s = modal_analysis(model_from_yaml(spatial));
  REQUIRE(s.modes.size() == 2 * p.modes.size());
  for (std::size_t k = 0; k < p.modes.size(); ++k)
    for (std::size_t j : {2 * k, 2 * k + 1}) {
      CHECK(s.modes[j].frequency_hz == p.modes[k].frequency_hz);
      CHECK(s.modes[j].shape == p.modes[k].shape);
      CHECK(s.modes[j].pair == static_cast<int>(j % 2 == 0 ? j + 1 : j - 1));
    }
}
