// Luffing (slew.luff) and the boom-frame energy audit: the pivot's kinematics against closed forms
// and finite differences, the equations of a point pendulum on a slewing and luffing boom against a
// hand derivation, luffing without slewing against the same motion as travel, and the Jacobi
// integral of an undamped chain under steady slewing.
#include <catch2/catch.hpp>

#include <array>
#include <cmath>
#include <numbers>
#include <random>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/model/profile.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"
#include "../support/python_reference.hpp"

using namespace swaybound;

namespace {

constexpr double kG = 9.81;
using V3 = std::array<double, 3>;

RunSettings tight(double duration, double rate = 0) {
  RunSettings s;
  s.duration = duration;
  s.rtol = 1e-11;
  s.atol = 1e-13;
  s.output_rate = rate;
  return s;
}

Model model_of(const std::string& body, const std::string& cases = "cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}\n") {
  return build_model(load_spec_text("swaybound: 1\nname: luffing\nmotion: spatial\ngravity: 9.81\n" + body + cases, "luff.yaml"));
}

/// A point mass (2 kg) on a massless rod of length L, under the given base section.
Model point_pendulum(double length, const std::string& base) {
  return model_of("links:\n  - {name: rod, length: " + std::to_string(length) +
                  ", mass: 2, com: " + std::to_string(length) + ", inertia: 0}\n" + base);
}

/// The workspace evaluated at state (e, e') of a one-link model at time t; e'' into `accel`.
void evaluate_at(const Model& model, Workspace& ws, int scenario, const V3& e, const V3& rate, double t, V3& accel) {
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0), dxdt(x.size(), 0.0);
  for (int i = 0; i < 3; ++i) {
    x[static_cast<std::size_t>(i)] = e[static_cast<std::size_t>(i)];
    x[static_cast<std::size_t>(model.dof + i)] = rate[static_cast<std::size_t>(i)];
  }
  const ScenarioModel& s = model.scenarios[static_cast<std::size_t>(scenario)];
  evaluate(model, ws, s.phases[static_cast<std::size_t>(s.phase_at(t))], x.data(), t, dxdt.data());
  finish_reactions(model, ws);
  for (int i = 0; i < 3; ++i) accel[static_cast<std::size_t>(i)] = dxdt[static_cast<std::size_t>(model.dof + i)];
}

/// A random unit vector e (within 80 deg of hanging) and a random rate e' perpendicular to it.
void random_state(std::mt19937_64& rng, V3& e, V3& rate) {
  std::uniform_real_distribution<double> angle(-1.4, 1.4), spin(-1.5, 1.5);
  const double a = angle(rng), b = angle(rng) * 0.5;
  e = {std::sin(a) * std::cos(b), -std::cos(a) * std::cos(b), std::sin(b)};
  V3 w{spin(rng), spin(rng), spin(rng)};
  rate = {w[1] * e[2] - w[2] * e[1], w[2] * e[0] - w[0] * e[2], w[0] * e[1] - w[1] * e[0]};
}

/// A point mass on a massless rod of length L whose pivot accelerates at a_p (Newton on the mass in
/// the ground frame, the rod's pull along e: hand derivation):
///   L e'' = (I - e e^T)(g - a_p) - L |e'|^2 e,   g = (0, -g, 0);
/// the rod's pull on the mass and so the pivot's force on the chain, T = m (a_p + L e'' - g).
void point_mass_reference(double length, double mass, const V3& e, const V3& rate, const V3& a_p, V3& accel, V3& force) {
  const V3 g{0.0, -kG, 0.0};
  V3 f{g[0] - a_p[0], g[1] - a_p[1], g[2] - a_p[2]};
  const double along = f[0] * e[0] + f[1] * e[1] + f[2] * e[2];
  const double w2 = rate[0] * rate[0] + rate[1] * rate[1] + rate[2] * rate[2];
  for (int i = 0; i < 3; ++i) {
    const auto k = static_cast<std::size_t>(i);
    accel[k] = (f[k] - along * e[k]) / length - w2 * e[k];
    force[k] = mass * (a_p[k] + length * accel[k] - g[k]);
  }
}

double relative_error(const V3& a, const V3& b) {
  const double scale = std::max({1.0, std::fabs(b[0]), std::fabs(b[1]), std::fabs(b[2])});
  return std::max({std::fabs(a[0] - b[0]), std::fabs(a[1] - b[1]), std::fabs(a[2] - b[2])}) / scale;
}

}  // namespace

TEST_CASE("Luffing in without slewing equals the same motion given as travel", "[integrate][spatial][luff]") {
  // At slewing angle 0 the radial direction is +x: radial luffing moves the pivot along x by the
  // luffing profile, which here is the trapezoid of the travel's acceleration segments.
  const Model model = model_of(R"(links:
  - {name: rope, kind: rope, length: 5, mass: 10}
  - {name: hook, length: 1, mass: 200, com: 0.6, inertia: 8, pivot: {damper: {coefficient: 300 N m s/rad}}}
base:
  scenarios:
    - name: luff in
      slew: {radius: 20 m, luff: {moves: [{at: 1 s, to: -0.5 m/s, accel: 0.25 m/s^2}, {at: 5 s, to: 0 m/s, accel: 0.25 m/s^2}]}}
    - name: the same as travel
      accel: [{for: 1 s, x: 0}, {for: 2 s, x: -0.25}, {for: 2 s, x: 0}, {for: 2 s, x: 0.25}]
)");
  InitialState start;
  start.theta = {0.1, -0.05};
  start.phi = {0.04, 0.08};
  start.omega = {0.0, 0.2};
  start.phi_rate = {-0.1, 0.0};
  const auto dof = static_cast<std::size_t>(model.dof);
  std::vector<std::vector<double>> rows[2];
  for (int s = 0; s < 2; ++s) {
    Workspace ws(model);
    const Observer record = [&](const StepView& v) {
      std::vector<double> row(v.x, v.x + 2 * dof);
      for (int k = 0; k < 2; ++k) row.insert(row.end(), {v.ws->reaction_x[k], v.ws->reaction_y[k], v.ws->reaction_z[k]});
      row.insert(row.end(), {v.ws->base_x, v.ws->base_vx, v.ws->base_ax});
      rows[s].push_back(row);
    };
    REQUIRE(simulate_case(model, ws, s, start, tight(12, 10), {}, record).status == RunStatus::ok);
  }
  REQUIRE(rows[0].size() == rows[1].size());
  REQUIRE(rows[0].size() == 121);
  CHECK(rows[0][80][2 * dof + 6] == Approx(-2.0).epsilon(1e-12));  // 2 m in at t = 8 s
  double worst_state = 0, worst_load = 0;
  for (std::size_t r = 0; r < rows[0].size(); ++r) {
    for (std::size_t k = 0; k < 2 * dof; ++k) worst_state = std::max(worst_state, std::fabs(rows[0][r][k] - rows[1][r][k]));
    for (std::size_t k = 2 * dof; k < 2 * dof + 6; ++k)
      worst_load = std::max(worst_load, std::fabs(rows[0][r][k] - rows[1][r][k]) / 2000.0);
  }
  INFO("state " << worst_state << ", load " << worst_load << " of the weight");
  CHECK(worst_state < 1e-9);
  CHECK(worst_load < 1e-9);
}

TEST_CASE("Steady slewing with the radius held: luffing at speed 0 changes nothing", "[integrate][spatial][luff]") {
  // Regression: a luff section that holds the radius (radial speed 0, or a boom held at its angle)
  // gives the very run of the slewing scenario without one, bit for bit.
  const Model model = model_of(R"(links:
  - {name: rope, kind: rope, length: 4, mass: 8}
  - {name: load, length: 1.5, mass: 300, com: 0.9, inertia: 20, pivot: {damper: {coefficient: 500 N m s/rad}}}
base:
  scenarios:
    - {name: slew, slew: {radius: 8 m, speed: 0.3 rad/s}}
    - {name: radius held, slew: {radius: 8 m, speed: 0.3 rad/s, luff: {speed: 0 m/s}}}
    - {name: boom held, slew: {radius: 8 m, speed: 0.3 rad/s, luff: {boom: 10 m, angle: 60 deg, speed: 0 rad/s}}}
)");
  InitialState start;
  start.theta = {0.2, 0.1};
  start.phi = {-0.1, 0.05};
  std::vector<std::vector<double>> rows[3];
  for (int s = 0; s < 3; ++s) {
    Workspace ws(model);
    const Observer record = [&](const StepView& v) {
      std::vector<double> row(v.x, v.x + model.state_size());
      row.insert(row.end(), {v.ws->reaction_x[0], v.ws->reaction_y[0], v.ws->reaction_z[0], v.audit_residual,
                             v.boom_audit_residual});
      rows[s].push_back(row);
    };
    REQUIRE(simulate_case(model, ws, s, start, tight(10, 10), {}, record).status == RunStatus::ok);
  }
  CHECK(rows[1] == rows[0]);
  CHECK(rows[2] == rows[0]);
}

TEST_CASE("Point pendulum on a boom slewing at W and luffing at u: the engine's equations against a hand derivation",
          "[integrate][spatial][luff]") {
  // Pivot p(t) = ((R0 + u t) cos Wt - R0, 0, (R0 + u t) sin Wt), differentiated twice by hand:
  //   a_p = (-(R0 + u t) W^2 cos Wt - 2 u W sin Wt, 0, -(R0 + u t) W^2 sin Wt + 2 u W cos Wt)
  // (centripetal and Coriolis terms); the mass then follows point_mass_reference. 200 random
  // states and times, accelerations and pivot force to 1e-9 relative.
  const double L = 3.0, R0 = 12.0, W = 0.25, u = -0.4;
  const Model model = point_pendulum(L, "base:\n  scenarios:\n    - {name: slew and luff, slew: {radius: 12 m, speed: 0.25 rad/s, luff: {speed: -0.4 m/s}}}\n");
  Workspace ws(model);
  std::mt19937_64 rng(15);
  std::uniform_real_distribution<double> time(0.0, 20.0);
  double worst_accel = 0, worst_force = 0;
  for (int k = 0; k < 200; ++k) {
    V3 e, rate, accel, want, force;
    random_state(rng, e, rate);
    const double t = time(rng), r = R0 + u * t, c = std::cos(W * t), s = std::sin(W * t);
    const V3 a_p{-r * W * W * c - 2 * u * W * s, 0.0, -r * W * W * s + 2 * u * W * c};
    evaluate_at(model, ws, 0, e, rate, t, accel);
    point_mass_reference(L, 2.0, e, rate, a_p, want, force);
    worst_accel = std::max(worst_accel, relative_error(accel, want));
    worst_force = std::max(worst_force, relative_error({ws.reaction_x[0], ws.reaction_y[0], ws.reaction_z[0]}, force));
    CHECK(ws.base_x == Approx(r * c - R0).margin(1e-12));
    CHECK(ws.base_z == Approx(r * s).margin(1e-12));
  }
  INFO("accel " << worst_accel << ", force " << worst_force);
  CHECK(worst_accel < 1e-9);
  CHECK(worst_force < 1e-9);

  // A whole run: both energy audits close (the boom frame's with the luffing's work).
  InitialState start;
  start.theta = {0.3};
  start.phi = {0.2};
  start.omega = {-0.4};
  const RunOutcome out = simulate_case(model, ws, 0, start, tight(20), {}, {});
  REQUIRE(out.status == RunStatus::ok);
  INFO("inertial " << out.max_audit_residual << " J, boom frame " << out.max_boom_audit_residual << " J of "
                   << out.audit_scale << " J");
  CHECK(out.max_audit_residual < 1e-8 * out.audit_scale);
  CHECK(out.max_boom_audit_residual < 1e-8 * out.audit_scale);
}

TEST_CASE("Boom luffing: the tip's kinematics against the closed form and its finite differences, and the equations",
          "[integrate][spatial][luff]") {
  // Tip of a boom of length b at angle beta(t) above the horizontal, its foot at radius
  // rf = R0 - b cos beta0, slewing angle psi(t):
  //   p(t) = ((rf + b cos beta) cos psi - R0, b (sin beta - sin beta0), (rf + b cos beta) sin psi).
  // Velocity and acceleration against 4th-order central differences of p (away from the profiles'
  // corners); e'' and the pivot force against point_mass_reference with that acceleration.
  const double L = 2.5, R0 = 18.0, b = 20.0, beta0 = 40 * std::numbers::pi / 180;
  const Model model = point_pendulum(L, R"(base:
  scenarios:
    - name: slew and luff up
      slew:
        radius: 18 m
        speed: 0.2 rad/s
        moves: [{at: 2 s, to: 0.35 rad/s, accel: 0.05 rad/s^2, jerk: 0.05 rad/s^3}]
        luff: {boom: 20 m, angle: 40 deg, moves: [{at: 1 s, to: 0.04 rad/s, accel: 0.02 rad/s^2, jerk: 0.05 rad/s^3},
                                                 {at: 9 s, to: -0.03 rad/s, accel: 0.02 rad/s^2}]}
)");
  const SpeedProfile slew = SpeedProfile::build(0.2, {SpeedMove{2, 0.35, 0.05, 0.05}});
  const SpeedProfile luff = SpeedProfile::build(0.0, {SpeedMove{1, 0.04, 0.02, 0.05}, SpeedMove{9, -0.03, 0.02, 0}});
  const auto tip = [&](double t) {
    const double beta = beta0 + luff.position(t), psi = slew.position(t), rf = R0 - b * std::cos(beta0);
    const double r = rf + b * std::cos(beta);
    return V3{r * std::cos(psi) - R0, b * (std::sin(beta) - std::sin(beta0)), r * std::sin(psi)};
  };
  std::vector<double> corners = luff.breakpoints();
  for (double t : slew.breakpoints()) corners.push_back(t);
  Workspace ws(model);
  std::mt19937_64 rng(16);
  std::uniform_real_distribution<double> time(0.05, 19.0);
  double worst_p = 0, worst_v = 0, worst_a = 0, worst_accel = 0, worst_force = 0;
  int checked = 0;
  while (checked < 200) {
    const double t = time(rng);
    bool near = false;
    for (double c : corners) near |= std::fabs(t - c) < 0.05;
    if (near) continue;
    ++checked;
    V3 e, rate, accel, want, force;
    random_state(rng, e, rate);
    evaluate_at(model, ws, 0, e, rate, t, accel);
    const V3 p = tip(t);
    const double hv = 1e-3, ha = 1e-2;
    V3 v_fd, a_fd;
    for (std::size_t i = 0; i < 3; ++i) {
      v_fd[i] = (tip(t - 2 * hv)[i] - 8 * tip(t - hv)[i] + 8 * tip(t + hv)[i] - tip(t + 2 * hv)[i]) / (12 * hv);
      a_fd[i] = (-tip(t - 2 * ha)[i] + 16 * tip(t - ha)[i] - 30 * p[i] + 16 * tip(t + ha)[i] - tip(t + 2 * ha)[i]) /
                (12 * ha * ha);
    }
    worst_p = std::max(worst_p, relative_error({ws.base_x, ws.base_y, ws.base_z}, p));
    worst_v = std::max(worst_v, relative_error({ws.base_vx, ws.base_vy, ws.base_vz}, v_fd));
    worst_a = std::max(worst_a, relative_error({ws.base_ax, ws.base_ay, ws.base_az}, a_fd));
    point_mass_reference(L, 2.0, e, rate, a_fd, want, force);
    worst_accel = std::max(worst_accel, relative_error(accel, want));
    worst_force = std::max(worst_force, relative_error({ws.reaction_x[0], ws.reaction_y[0], ws.reaction_z[0]}, force));
  }
  INFO("position " << worst_p << ", velocity " << worst_v << ", acceleration " << worst_a << "; e'' " << worst_accel
                   << ", force " << worst_force);
  CHECK(worst_p < 1e-12);
  CHECK(worst_v < 1e-9);
  CHECK(worst_a < 1e-8);
  CHECK(worst_accel < 1e-8);
  CHECK(worst_force < 1e-8);
}

TEST_CASE("Undamped chain under steady slewing: the Jacobi integral is conserved", "[integrate][spatial][luff]") {
  // In a frame turning at constant W about a fixed axis, an undamped chain on a pivot fixed in that
  // frame conserves the Jacobi integral E - W H (E the energy, H the angular momentum about the axis;
  // Goldstein, Classical Mechanics, 3rd ed., sec. 8.2 / the energy function h of a time-independent
  // Lagrangian in the rotating frame) = relative kinetic + gravity potential - centrifugal
  // potential, to the solver tolerance over 20 s, while E itself changes.
  const double R = 6.0, W = 0.5;
  const Model model = model_of(R"(links:
  - {name: a, length: 1.2, mass: 3, inertia: 0.2}
  - {name: b, length: 0.8, mass: 5, com: 0.5, inertia: 0.05}
base:
  scenarios:
    - {name: steady slew, slew: {radius: 6 m, speed: 0.5 rad/s}}
)");
  Workspace ws(model);
  InitialState start;
  start.theta = {0.6, -0.9};
  start.phi = {0.3, 0.8};
  start.omega = {0.5, -1.0};
  start.phi_rate = {-1.2, 0.4};
  // H_y about the axis through (-R, ., 0), from the state and the pivot (this test's own sum).
  const auto momentum = [&](const StepView& v) {
    double h = 0, p[3] = {v.ws->base_x + R, v.ws->base_y, v.ws->base_z}, vel[3] = {v.ws->base_vx, v.ws->base_vy, v.ws->base_vz};
    for (int k = 0; k < model.n; ++k) {
      const double* e = v.x + 3 * k;
      const double* r = v.x + model.dof + 3 * k;
      const double c = model.com[k];
      const double rc[3] = {p[0] + c * e[0], p[1] + c * e[1], p[2] + c * e[2]};
      const double vc[3] = {vel[0] + c * r[0], vel[1] + c * r[1], vel[2] + c * r[2]};
      h += model.mass[k] * (rc[2] * vc[0] - rc[0] * vc[2]) + model.inertia[k] * (e[2] * r[0] - e[0] * r[2]);
      for (int i = 0; i < 3; ++i) {
        p[i] += model.length[k] * e[i];
        vel[i] += model.length[k] * r[i];
      }
    }
    return h;
  };
  double jacobi0 = 0, worst_jacobi = 0, energy_lo = 1e300, energy_hi = -1e300;
  bool first = true;
  const Observer on_sample = [&](const StepView& v) {
    const double jacobi = v.energy - (-W) * momentum(v);  // the frame turns at -W about +y
    if (first) jacobi0 = jacobi;
    first = false;
    worst_jacobi = std::max(worst_jacobi, std::fabs(jacobi - jacobi0));
    energy_lo = std::min(energy_lo, v.energy);
    energy_hi = std::max(energy_hi, v.energy);
    CHECK(boom_frame_energy(model, *v.ws) - jacobi == Approx(0.0).margin(1e-9 * model.energy_scale));
  };
  const RunOutcome out = simulate_case(model, ws, 0, start, tight(20, 50), {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  INFO("Jacobi drift " << worst_jacobi << " J; energy range " << energy_hi - energy_lo << " J; boom-frame audit "
                       << out.max_boom_audit_residual << " J of " << out.audit_scale << " J");
  CHECK(energy_hi - energy_lo > 1e-2 * out.audit_scale);  // the energy itself is not conserved
  CHECK(worst_jacobi < 1e-8 * out.audit_scale);
  CHECK(out.max_boom_audit_residual < 1e-8 * out.audit_scale);
}

TEST_CASE("Boom-frame energy audit closes with the Euler and luffing works, damping and wind", "[integrate][spatial][luff]") {
  // Slewing speeds up and slows down, the boom luffs up and down, a pivot damper and wind act:
  // relative kinetic + gravity - centrifugal energy + dissipated = the work of the base's force
  // through the luffing velocity and of the wind, both relative to the boom, + the work of the
  // Euler forces (-W' H). Both works are large against the residual, so neither could be dropped.
  // The friction between the links also tests the net moment of a pivot torque whose share along
  // each link's axis is not transmitted (no twist): without its boom-frame work the residual was
  // 0.056 J here (2e-6 of the scale).
  const Model model = model_of(R"(links:
  - {name: rope, kind: rope, length: 6, mass: 12, pivot: {damper: {coefficient: 200 N m s/rad}}}
  - {name: load, length: 1.2, mass: 400, com: 0.7, inertia: 30, pivot: {friction: {torque: 20 N m}}}
wind: {speed: 10 m/s, direction: 30 deg, link: load, drag_area: 2 m^2, drag_coefficient: 1.2}
base:
  scenarios:
    - name: slew and luff
      slew:
        radius: 18 m
        moves: [{at: 0.5 s, to: 0.3 rad/s, accel: 0.1 rad/s^2, jerk: 0.2 rad/s^3}, {at: 8 s, to: 0 rad/s, accel: 0.15 rad/s^2}]
        luff: {boom: 25 m, angle: 50 deg, moves: [{at: 1 s, to: 0.05 rad/s, accel: 0.03 rad/s^2}, {at: 6 s, to: -0.05 rad/s, accel: 0.03 rad/s^2, jerk: 0.1 rad/s^3}, {at: 11 s, to: 0 rad/s, accel: 0.03 rad/s^2}]}
)");
  Workspace ws(model);
  InitialState start;
  start.theta = {0.1, 0.2};
  start.phi = {0.05, -0.1};
  std::vector<double> last;
  const Observer on_sample = [&](const StepView& v) { last.assign(v.x, v.x + model.state_size()); };
  RunSettings settings = tight(16, 10);
  settings.rtol = 1e-10;
  settings.atol = 1e-12;
  const RunOutcome out = simulate_case(model, ws, 0, start, settings, {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  const auto f = static_cast<std::size_t>(2 * model.dof);
  INFO("boom-frame residual " << out.max_boom_audit_residual << " J, inertial " << out.max_audit_residual << " J of "
                              << out.audit_scale << " J; works: dissipated " << last[f] << ", base and wind (boom frame) "
                              << last[f + 2] << ", Euler " << last[f + 3] << " J");
  CHECK(out.max_boom_audit_residual < 1e-8 * out.audit_scale);
  CHECK(out.max_audit_residual < 1e-8 * out.audit_scale);
  CHECK(std::fabs(last[f + 2]) > 1e4 * out.max_boom_audit_residual);
  CHECK(std::fabs(last[f + 3]) > 1e4 * out.max_boom_audit_residual);
  CHECK(last[f] > 0);
}

TEST_CASE("The luffing pivot's position, velocity and acceleration against SymPy's derivatives",
          "[integrate][spatial][luff]") {
  // tests/reference/sympy_luffing_pivot.py differentiates p(t) symbolically (no hand-written
  // centripetal, Coriolis or Euler term); the slewing and the luffing accelerate at constant rates
  // (one long move each, so both angles and the radius are quadratics in t over the 20 s).
  const double beta0 = 40 * std::numbers::pi / 180;
  const std::string radial = R"(base:
  scenarios:
    - name: radial
      slew: {radius: 12 m, speed: 0.1 rad/s, moves: [{at: 0 s, to: 5 rad/s, accel: 0.03 rad/s^2}],
             luff: {speed: -0.2 m/s, moves: [{at: 0 s, to: 20 m/s, accel: 0.05 m/s^2}]}}
)";
  const std::string boom = R"(base:
  scenarios:
    - name: boom
      slew: {radius: 18 m, speed: 0.1 rad/s, moves: [{at: 0 s, to: 5 rad/s, accel: 0.03 rad/s^2}],
             luff: {boom: 20 m, angle: 40 deg, speed: 0.01 rad/s, moves: [{at: 0 s, to: 1 rad/s, accel: 0.002 rad/s^2}]}}
)";
  std::vector<double> times;
  for (int k = 0; k < 12; ++k) times.push_back(0.37 + 1.6 * k);
  for (int kind = 0; kind < 2; ++kind) {
    const Model model = point_pendulum(2.0, kind == 0 ? radial : boom);
    nlohmann::json input = {{"R0", kind == 0 ? 12.0 : 18.0}, {"psi", {0.0, 0.1, 0.03}}, {"times", times}};
    if (kind == 0) input["radial"] = {-0.2, 0.05};
    else input["boom"] = {{"b", 20.0}, {"beta", {beta0, 0.01, 0.002}}};
    const nlohmann::json out = swaybound::testing::run_python_reference("sympy_luffing_pivot.py", input);
    Workspace ws(model);
    double worst[3] = {0, 0, 0};
    for (std::size_t k = 0; k < times.size(); ++k) {
      V3 accel;
      evaluate_at(model, ws, 0, {0.0, -1.0, 0.0}, {0.0, 0.0, 0.0}, times[k], accel);
      const V3 got[3] = {{ws.base_x, ws.base_y, ws.base_z}, {ws.base_vx, ws.base_vy, ws.base_vz},
                         {ws.base_ax, ws.base_ay, ws.base_az}};
      const char* keys[3] = {"position", "velocity", "acceleration"};
      for (int q = 0; q < 3; ++q) {
        const auto& row = out.at(keys[q]).at(k);
        worst[q] = std::max(worst[q], relative_error(got[q], {row.at(0).get<double>(), row.at(1).get<double>(),
                                                              row.at(2).get<double>()}));
      }
    }
    INFO((kind == 0 ? "radial" : "boom") << ": position " << worst[0] << ", velocity " << worst[1] << ", acceleration "
                                         << worst[2]);
    CHECK(worst[0] < 1e-12);
    CHECK(worst[1] < 1e-12);
    CHECK(worst[2] < 1e-12);
  }
}

TEST_CASE("A check of a slewing spec reports the boom-frame energy audit beside the inertial one",
          "[integrate][spatial][luff][packet]") {
  // Per case (CaseMetrics::boom_audit_relative) and in results.json (cases.
  // energy_audit_boom_frame_max_relative and its case); a spec that does not slew has neither.
  const std::string links = R"(links:
  - {name: rope, kind: rope, length: 5, mass: 10, pivot: {damper: {coefficient: 300 N m s/rad}}}
  - {name: hook, length: 1, mass: 200, com: 0.6, inertia: 8}
)";
  const std::string rest = R"(cases: {duration: 8 s, initial: [{single: {theta: [5 deg, 2 deg], phi: [1 deg, 0 deg]}}]}
limits: [{pivot_load: 100 kN}]
solver: {rtol: 1e-10, atol: 1e-12}
)";
  const auto run = [](const std::string& yaml, std::vector<CaseMetrics>& cases, nlohmann::json& results) {
    const Spec spec = load_spec_text(yaml, "audit.yaml");
    CheckOptions o;
    o.audit = false;
    o.jobs = 1;
    o.on_case = [&cases](const CaseMetrics& m) { cases.push_back(m); };
    const CheckReport report = run_check(spec, o);
    results = nlohmann::json::parse(results_json(spec, report));
  };
  std::vector<CaseMetrics> cases;
  nlohmann::json results;
  run("swaybound: 1\nname: slewing\nmotion: spatial\n" + links + R"(base:
  scenarios:
    - name: slew and luff
      slew: {radius: 14 m, moves: [{at: 0 s, to: 0.2 rad/s, accel: 0.05 rad/s^2}],
             luff: {boom: 16 m, angle: 45 deg, moves: [{at: 1 s, to: -0.03 rad/s, accel: 0.02 rad/s^2}]}}
    - {name: travel, initial_velocity: {x: 1 m/s}, accel: [{for: 2 s, x: -0.5 m/s^2}]}
)" + rest, cases, results);
  REQUIRE(cases.size() == 2);
  for (const CaseMetrics& m : cases) {
    INFO(m.id << ": inertial " << m.audit_relative << ", boom frame " << m.boom_audit_relative);
    REQUIRE(m.ok());
    CHECK(m.boom_audit_relative < 1e-8);
    CHECK(m.audit_relative < 1e-8);
  }
  // The travel scenario's boom frame is the ground frame: the same audit.
  CHECK(cases[1].boom_audit_relative == Approx(cases[1].audit_relative).epsilon(1e-6));
  const auto& c = results.at("cases");
  const double largest = std::max(cases[0].boom_audit_relative, cases[1].boom_audit_relative);
  CHECK(c.at("energy_audit_boom_frame_max_relative").get<double>() == largest);
  CHECK(c.at("energy_audit_boom_frame_max_case").get<std::string>() ==
        (largest == cases[0].boom_audit_relative ? cases[0].id : cases[1].id));

  cases.clear();
  run("swaybound: 1\nname: travelling\nmotion: spatial\n" + links + R"(base:
  scenarios:
    - {name: travel, initial_velocity: {x: 1 m/s}, accel: [{for: 2 s, x: -0.5 m/s^2}]}
)" + rest, cases, results);
  REQUIRE(cases.size() == 1);
  CHECK(std::isnan(cases[0].boom_audit_relative));
  CHECK_FALSE(results.at("cases").contains("energy_audit_boom_frame_max_relative"));
}
