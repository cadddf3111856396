// Whole runs of spatial chains against closed forms and conservation laws, and against the planar
// engine on motions in the travel plane.
#include <catch2/catch.hpp>

#include <array>
#include <cmath>
#include <numbers>
#include <string>
#include <vector>

#include "swaybound/checks/metrics.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {

constexpr double kG = 9.81;

/// A point mass on a massless rod of length L (inertia 0 about the mass), spatial, undamped.
Model point_pendulum(double length, const std::string& extra = "") {
  const std::string yaml = "swaybound: 1\nname: point pendulum\nmotion: spatial\ngravity: 9.81\nlinks:\n"
                           "  - {name: rod, length: " +
                           std::to_string(length) + ", mass: 2, com: " + std::to_string(length) +
                           ", inertia: 0}\n" + extra + "cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}\n";
  return build_model(load_spec_text(yaml, "pendulum.yaml"));
}

RunSettings tight(double duration, double rate = 0) {
  RunSettings s;
  s.duration = duration;
  s.rtol = 1e-11;
  s.atol = 1e-13;
  s.output_rate = rate;
  return s;
}

/// Angular momentum about the vertical through the (fixed) top pivot [kg m^2/s]:
/// sum_k m_k (r_k x v_k)_y + I_k (e_k x e_k')_y, from the state.
double vertical_momentum(const Model& model, const double* x) {
  double h = 0, p[3] = {0, 0, 0}, v[3] = {0, 0, 0};
  for (int k = 0; k < model.n; ++k) {
    const double* e = x + 3 * k;
    const double* r = x + model.dof + 3 * k;
    const double c = model.com[k], L = model.length[k];
    const double rc[3] = {p[0] + c * e[0], p[1] + c * e[1], p[2] + c * e[2]};
    const double vc[3] = {v[0] + c * r[0], v[1] + c * r[1], v[2] + c * r[2]};
    h += model.mass[k] * (rc[2] * vc[0] - rc[0] * vc[2]) + model.inertia[k] * (e[2] * r[0] - e[0] * r[2]);
    for (int i = 0; i < 3; ++i) {
      p[i] += L * e[i];
      v[i] += L * r[i];
    }
  }
  return h;
}

}  // namespace

TEST_CASE("Conical pendulum: steady circular motion at w^2 = g / (L cos a)", "[integrate][spatial]") {
  // Steady conical motion of a point pendulum (e.g. Meriam & Kraige, Dynamics, ch. 3; any
  // mechanics text): at cone angle a the bob circles at w^2 = g / (L cos a). Start on the circle:
  // theta = a, phi = 0, and the bob's velocity across the travel plane, phi' = w sin a.
  const double L = 1.7;
  const Model model = point_pendulum(L);
  Workspace ws(model);
  for (double a_deg : {10.0, 40.0, 75.0}) {
    const double a = a_deg * std::numbers::pi / 180;
    const double w = std::sqrt(kG / (L * std::cos(a)));
    InitialState start;
    start.theta = {a};
    start.phi = {0.0};
    start.omega = {0.0};
    start.phi_rate = {w * std::sin(a)};
    const double duration = 20.0;
    double worst_cone = 0, worst_azimuth = 0;
    const Observer on_sample = [&](const StepView& v) {
      worst_cone = std::max(worst_cone, std::fabs(swing_angle(model, v.x, 0) - a));
      // Azimuth of the bob in the horizontal plane, from +x towards +z, against w t.
      const double azimuth = std::atan2(v.x[2], v.x[0]);
      const double expected = std::remainder(w * v.t, 2 * std::numbers::pi);
      worst_azimuth = std::max(worst_azimuth, std::fabs(std::remainder(azimuth - expected, 2 * std::numbers::pi)));
    };
    const RunOutcome out = simulate_case(model, ws, 0, start, tight(duration, 20), {}, on_sample);
    INFO("cone angle " << a_deg << " deg");
    REQUIRE(out.status == RunStatus::ok);
    CHECK(worst_cone < 1e-8);
    CHECK(worst_azimuth < 1e-7 * w * duration);
  }
}

TEST_CASE("Spherical pendulum: apsidal precession of a small elliptical orbit", "[integrate][spatial]") {
  // A point spherical pendulum on a small elliptical orbit of angular semi-axes alpha, beta
  // precesses (its apsides turn, in the sense of the motion) at Omega = (3/8) alpha beta w0,
  // w0 = sqrt(g / L) (Olsson, "The precessing spherical pendulum", Am. J. Phys. 49, 1981; the
  // leading term of the perturbation result, relative error O(alpha^2)). Start at the end of the
  // major axis: theta = alpha, phi = 0, moving across the travel plane at phi' = beta w0.
  const double L = 1.0, alpha = 0.05, beta = 0.025;
  const double w0 = std::sqrt(kG / L);
  const double omega_expected = 3.0 / 8.0 * alpha * beta * w0;
  const Model model = point_pendulum(L);
  Workspace ws(model);
  InitialState start;
  start.theta = {alpha};
  start.phi = {0.0};
  start.omega = {0.0};
  start.phi_rate = {beta * w0};
  // Apoapses: maxima of the cone angle, located between samples by the vertex of the parabola
  // through three samples, with the bob's azimuth there by quadratic interpolation.
  struct Apsis {
    double t, azimuth;
  };
  std::vector<Apsis> apsides;
  std::vector<std::array<double, 3>> last;  // (t, cone, azimuth) of the last three samples
  const Observer on_sample = [&](const StepView& v) {
    last.push_back({v.t, swing_angle(model, v.x, 0), std::atan2(v.x[2], v.x[0])});
    if (last.size() > 3) last.erase(last.begin());
    if (last.size() < 3 || !(last[1][1] > last[0][1] && last[1][1] >= last[2][1])) return;
    const double h = last[1][0] - last[0][0];
    const double c0 = last[0][1], c1 = last[1][1], c2 = last[2][1];
    const double u = 0.5 * (c0 - c2) / (c0 - 2 * c1 + c2);  // vertex offset in steps, |u| <= 1/2
    const double a0 = std::remainder(last[0][2] - last[1][2], 2 * std::numbers::pi);
    const double a2 = std::remainder(last[2][2] - last[1][2], 2 * std::numbers::pi);
    const double azimuth = last[1][2] + 0.5 * u * (a2 - a0) + 0.5 * u * u * (a0 + a2);
    apsides.push_back({last[1][0] + u * h, azimuth});
  };
  const double period = 2 * std::numbers::pi / w0;
  const RunOutcome out = simulate_case(model, ws, 0, start, tight(120 * period, 400), {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  REQUIRE(apsides.size() > 200);
  // The apsis line turns by Omega per unit time; two apoapses per orbit, each at the far end of
  // the major axis (azimuths differ by pi). Unwrap the azimuth of the apsis line (mod pi).
  double turned = 0;
  for (std::size_t k = 1; k < apsides.size(); ++k)
    turned += std::remainder(apsides[k].azimuth - apsides[k - 1].azimuth - std::numbers::pi, std::numbers::pi);
  const double rate = turned / (apsides.back().t - apsides.front().t);
  INFO("precession " << rate << " rad/s, expected " << omega_expected << " rad/s over " << apsides.size() << " apoapses");
  CHECK(std::fabs(rate - omega_expected) < 0.01 * omega_expected);
}

TEST_CASE("Undamped spatial chain on a fixed base conserves energy and vertical angular momentum",
          "[integrate][spatial]") {
  // Energy (no dissipation, no work in) and the angular momentum about the vertical through the
  // fixed pivot (gravity and the pivot force have no moment about that axis; any dynamics text)
  // are invariants of the motion: both hold to the solver tolerance over 20 s.
  const std::string yaml = R"(swaybound: 1
name: three links
motion: spatial
links:
  - {name: a, length: 1.2, mass: 3, inertia: 0.2}
  - {name: b, length: 0.8, mass: 2, com: 0.5, inertia: 0.05}
  - {name: c, length: 1.0, mass: 5, com: 0.7, inertia: 0.3}
cases: {duration: 20 s, initial: [{single: {theta: [0.1 rad]}}]}
)";
  const Model model = build_model(load_spec_text(yaml, "three.yaml"));
  Workspace ws(model);
  InitialState start;
  start.theta = {0.6, -0.9, 1.4};
  start.phi = {0.3, 0.8, -0.5};
  start.omega = {0.5, -1.0, 2.0};
  start.phi_rate = {-1.2, 0.4, 1.5};
  std::vector<double> x0(static_cast<std::size_t>(model.state_size()), 0.0);
  write_start(model, start, x0);
  const double h0 = vertical_momentum(model, x0.data());
  REQUIRE(std::fabs(h0) > 1.0);
  double worst_h = 0;
  const Observer on_sample = [&](const StepView& v) {
    worst_h = std::max(worst_h, std::fabs(vertical_momentum(model, v.x) - h0));
  };
  const RunOutcome out = simulate_case(model, ws, 0, start, tight(20, 50), {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  INFO("energy residual " << out.max_audit_residual << " J of " << out.audit_scale << " J; momentum drift " << worst_h
                          << " of " << h0);
  CHECK(out.max_audit_residual < 1e-7 * out.audit_scale);
  CHECK(worst_h < 1e-7 * std::fabs(h0));
}

TEST_CASE("A planar motion run by the spatial engine equals the planar engine's run", "[integrate][spatial]") {
  // The same chain with dampers, pin friction, wind and a braking base, started in the travel
  // plane: the spatial run stays in the plane and its angles and pivot loads follow the planar run
  // to the solver tolerance.
  const std::string body = R"(links:
  - name: rope
    kind: rope
    length: 6
    mass: 35
    pivot: {friction: {pin_radius: 40 mm, mu: 0.12}}
  - name: hook
    length: 1.8
    mass: 850
    com: 1.5
    inertia: 95
    pivot: {damper: {coefficient: 4 kN m s/rad, exponent: 0.6, max_torque: 20 kN m}, friction: {torque: 50 N m}}
wind: {speed: 12 m/s, link: hook, drag_area: 3.2 m^2, drag_coefficient: 1.2}
base:
  scenarios:
    - {name: brake, initial_velocity: {x: 1.0}, accel: [{for: 1.5 s, x: -0.8}, {for: 8.5 s, x: 0}]}
cases: {duration: 10 s, initial: [{single: {theta: [5 deg, -10 deg], rate: [0.1 rad/s, -0.2 rad/s]}}]}
)";
  const Model planar = build_model(load_spec_text("swaybound: 1\nname: planar\n" + body, "p.yaml"));
  const Model spatial = build_model(load_spec_text("swaybound: 1\nname: spatial\nmotion: spatial\n" + body, "s.yaml"));
  InitialState start;
  start.theta = {5 * std::numbers::pi / 180, -10 * std::numbers::pi / 180};
  start.omega = {0.1, -0.2};
  std::vector<std::vector<double>> planar_rows;
  Workspace wp(planar);
  const RunSettings settings = tight(10, 10);
  const Observer record = [&](const StepView& v) {
    planar_rows.push_back({v.x[0], v.x[1], v.ws->reaction[0], v.ws->reaction[1]});
  };
  REQUIRE(simulate_case(planar, wp, 0, start, settings, {}, record).status == RunStatus::ok);
  Workspace ws(spatial);
  std::size_t row = 0;
  double worst_angle = 0, worst_load = 0, worst_z = 0;
  const Observer compare = [&](const StepView& v) {
    REQUIRE(row < planar_rows.size());
    const auto& p = planar_rows[row++];
    for (int i = 0; i < 2; ++i) {
      worst_angle = std::max(worst_angle, std::fabs(travel_plane_angle(spatial, v.x, i) - p[i]));
      worst_load = std::max(worst_load, std::fabs(v.ws->reaction[i] - p[2 + i]) / p[2 + i]);
      worst_z = std::max(worst_z, std::fabs(v.x[3 * i + 2]));
    }
  };
  start.phi = {0.0, 0.0};
  start.phi_rate = {0.0, 0.0};
  REQUIRE(simulate_case(spatial, ws, 0, start, settings, {}, compare).status == RunStatus::ok);
  CHECK(row == planar_rows.size());
  INFO("angle " << worst_angle << " rad, load " << worst_load << " relative");
  CHECK(worst_z == 0.0);  // a planar motion stays exactly in the plane
  CHECK(worst_angle < 1e-8);
  CHECK(worst_load < 1e-8);
}

TEST_CASE("Spatial metrics: the cone angle of a start out of both planes", "[integrate][spatial]") {
  // At the start e = (sin t cos p, -cos t cos p, sin p): the cone angle is acos(cos t cos p).
  const Model model = point_pendulum(2.0);
  InitialState start;
  start.theta = {0.4};
  start.phi = {0.3};
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0);
  write_start(model, start, x);
  CHECK(swing_angle(model, x.data(), 0) == Approx(std::acos(std::cos(0.4) * std::cos(0.3))).epsilon(1e-14));
  CHECK(travel_plane_angle(model, x.data(), 0) == Approx(std::atan(std::tan(0.4))).epsilon(1e-14));
  CHECK(cross_plane_angle(model, x.data(), 0) == Approx(std::atan2(std::sin(0.3), std::cos(0.4) * std::cos(0.3))).epsilon(1e-14));
}

TEST_CASE("A load under a boom slewing steadily settles at tan a = W^2 (R + L sin a) / g", "[integrate][spatial]") {
  // Steady rotation (any dynamics text, e.g. Meriam & Kraige, Dynamics, ch. 3, the conical pendulum
  // on a rotating arm): a point mass on a rod of length L hung at radius R from a vertical axis
  // turning at W hangs outwards, in the plane of the axis, at the cone angle a with
  //   tan a = W^2 (R + L sin a) / g.
  // The boom speeds up to W and a pivot damper (acting on the swing relative to the boom) settles
  // the swing it started; after 70 s the damped transient is below 1e-12 of the angle.
  const double L = 2.0, R = 5.0, W = 0.4, g = 9.81;
  const std::string yaml = R"(swaybound: 1
name: slewing boom tip
motion: spatial
gravity: 9.81
links:
  - {name: rod, length: 2, mass: 100, com: 2, inertia: 0, pivot: {damper: {coefficient: 400 N m s/rad}}}
base:
  scenarios:
    - name: slew up to 0.4 rad/s
      slew: {radius: 5 m, moves: [{at: 0 s, to: 0.4 rad/s, accel: 0.05 rad/s^2}]}
cases: {duration: 80 s, initial: [{single: {theta: [0 rad]}}]}
)";
  const Model model = build_model(load_spec_text(yaml, "slew.yaml"));
  Workspace ws(model);
  double a = W * W * R / g;  // Newton on f(a) = tan a - W^2 (R + L sin a) / g
  for (int k = 0; k < 50; ++k) {
    const double f = std::tan(a) - W * W * (R + L * std::sin(a)) / g;
    const double df = 1.0 / (std::cos(a) * std::cos(a)) - W * W * L * std::cos(a) / g;
    a -= f / df;
  }
  std::vector<double> last;
  double base_x = 0, base_z = 0;
  const Observer on_sample = [&](const StepView& v) {
    last.assign(v.x, v.x + model.state_size());
    base_x = v.ws->base_x;
    base_z = v.ws->base_z;
  };
  const RunOutcome out = simulate_case(model, ws, 0, {}, tight(80, 10), {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  const double cone = swing_angle(model, last.data(), 0);
  INFO("cone angle " << cone << " rad, closed form " << a << " rad; audit " << out.max_audit_residual << " J of "
                     << out.audit_scale << " J");
  CHECK(std::fabs(cone - a) < 1e-8 * a);
  // Outwards: the link's horizontal direction is the radial direction from the axis at (-R, y, 0).
  const double radial[2] = {(base_x + R) / R, base_z / R};
  const double h = std::hypot(last[0], last[2]);
  CHECK((last[0] * radial[0] + last[2] * radial[1]) / h == Approx(1.0).epsilon(1e-9));
  // The energy audit closes with the boom's work through the pivot force and the damper.
  CHECK(out.max_audit_residual < 1e-7 * out.audit_scale);
}
