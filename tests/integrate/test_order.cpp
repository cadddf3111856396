// Order of convergence of the two steppers on the engine's own right-hand side. A point-mass
// pendulum (L = 1 m, g = 9.81 m/s^2) released from rest at amplitude A has the closed form
//   sin(theta / 2) = k cd(omega_0 t, k),  k = sin(A / 2),  omega_0 = sqrt(g / L)
// (Jacobi's elliptic cd = cn / dn; e.g. Lawden, Elliptic Functions and Applications, sec. 5.2).
// Integrated with fixed steps h, h/2, h/4 to the same end time, the global error of a method of
// order p falls by 2^p per halving. The orders are those of the propagated solutions:
//   Dormand-Prince 5(4): order 5 (Hairer, Norsett & Wanner, Solving Ordinary Differential
//     Equations I, 2nd ed., sec. II.5, Table 5.2);
//   Runge-Kutta-Fehlberg 7(8): Odeint advances the 8th-order solution of the pair and uses the
//     7th-order one for the error estimate (E. Fehlberg, NASA TR R-287, 1968; Hairer, Norsett &
//     Wanner, sec. II.5, Table 5.4).
// The error must also be far above round-off (it is) and the ratios close to 2^p, not merely
// decreasing: a right-hand side with a kink or a wrong stage would show a lower order. Amplitude
// 1 rad over 2 s (about one period) with 20/40/80 steps (dopri5) and 10/20/40 steps (rkf78) keeps
// the errors between 1e-4 and 5e-13 rad, in the asymptotic range and above round-off.
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include <boost/math/special_functions/ellint_1.hpp>
#include <boost/math/special_functions/jacobi_elliptic.hpp>
#include <boost/numeric/odeint.hpp>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "swaybound/dynamics/chain.hpp"

using namespace swaybound;
using namespace swaybound::testing;
namespace odeint = boost::numeric::odeint;

namespace {

constexpr double kG = 9.81;

/// The closed-form angle at t of the pendulum released from rest at amplitude A [rad].
double exact_angle(double amplitude, double t) {
  const double k = std::sin(amplitude / 2);
  return 2 * std::asin(k * boost::math::jacobi_cd(k, std::sqrt(kG) * t));
}

/// |theta(T) - exact| after `steps` fixed steps of `Stepper` from rest at `amplitude`.
template <class Stepper>
double error_after(int steps, double amplitude, double T) {
  const Model model = model_from_yaml(single_link_yaml(1.0, 1.0, 1.0, 0.0, "{}", kG));
  Workspace ws(model);
  ChainSystem system(model, ws, 0);
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0);
  x[0] = amplitude;
  Stepper stepper;
  const double h = T / steps;
  for (int k = 0; k < steps; ++k) stepper.do_step(std::ref(system), x, k * h, h);
  return std::fabs(x[0] - exact_angle(amplitude, T));
}

/// log2 of the error ratios for steps n, 2n, 4n.
template <class Stepper>
std::vector<double> observed_orders(int n, double amplitude, double T) {
  const double e1 = error_after<Stepper>(n, amplitude, T), e2 = error_after<Stepper>(2 * n, amplitude, T),
               e4 = error_after<Stepper>(4 * n, amplitude, T);
  INFO("errors " << e1 << ", " << e2 << ", " << e4);
  REQUIRE(e4 > 1e-13);  // well above round-off, so the ratios measure truncation error
  return {std::log2(e1 / e2), std::log2(e2 / e4)};
}

}  // namespace

TEST_CASE("the closed form of the released pendulum is right", "[integrate][order]") {
  // At t = 0 it starts at the amplitude; a quarter period later, K(k) / omega_0, it passes 0.
  const double A = 2.0, k = std::sin(A / 2);
  CHECK_THAT(exact_angle(A, 0), IsCloseTo(A, 0, 1e-15));
  const double quarter = boost::math::ellint_1(k) / std::sqrt(kG);
  CHECK(std::fabs(exact_angle(A, quarter)) < 1e-12);
}

TEST_CASE("dopri5 converges at order 5 with fixed steps", "[integrate][order]") {
  const auto p = observed_orders<odeint::runge_kutta_dopri5<std::vector<double>>>(20, 1.0, 2.0);
  INFO("observed orders " << p[0] << ", " << p[1]);
  for (double order : p) {
    CHECK(order > 4.7);
    CHECK(order < 5.5);
  }
}

TEST_CASE("rkf78 converges at order 8 with fixed steps", "[integrate][order]") {
  const auto p = observed_orders<odeint::runge_kutta_fehlberg78<std::vector<double>>>(10, 1.0, 2.0);
  INFO("observed orders " << p[0] << ", " << p[1]);
  for (double order : p) {
    CHECK(order > 7.7);  // a 7th-order solution would show about 7
    CHECK(order < 8.8);
  }
}
