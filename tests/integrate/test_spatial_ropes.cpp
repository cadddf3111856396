// Spatial chains with ropes of variable length (an elastic rope is a spherical pivot plus an axial
// coordinate; an inextensible rope a drum hoists has a prescribed length): against Newton's second
// law for a hoisted load, the planar engine on motions in a vertical plane (the same spec turned by
// 90 degrees about the vertical, so the spatial engine's z axis carries the planar x), a steady
// conical motion on a stretched rope, and the conservation of energy and of angular momentum about
// the vertical.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <string>
#include <vector>

#include "swaybound/checks/metrics.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"
#include "../support/componentwise.hpp"
#include "../support/run_settings.hpp"

using namespace swaybound;
using swaybound::testing::relative_gap;

namespace {

constexpr double kG = 9.81;

/// A rope (elastic or not) with a hook below, hoisted by a drum with acceleration phases, on a base
/// travelling along `axis` (x or z); `motion` planar or spatial; test data, not a design.
std::string hoist_spec(const std::string& motion, const std::string& axis, bool elastic, bool lift_off, bool wind = true) {
  std::string yaml = "swaybound: 1\nname: hoisted hook\nmotion: " + motion +
                     "\ngravity: 9.81\nlinks:\n"
                     "  - name: rope\n    kind: rope\n    length: 12 m\n    mass: 40 kg\n    parts_of_line: 2\n";
  if (elastic) yaml += "    elastic: {ea: 9 MN, damping_ratio: 0.04}\n";
  yaml += "    pivot: {damper: {coefficient: 30 kN m s/rad}}\n"
          "  - {name: hook, length: 1.5 m, mass: 2.5 t, com: 1.1 m, inertia: 300 kg m^2,"
          " pivot: {friction: {torque: 20 N m, pin_radius: 30 mm, mu: 0.1}}}\n";
  if (wind) {
    yaml += "wind: {speed: 9 m/s, link: hook, drag_area: 2 m^2, drag_coefficient: 1.2";
    if (motion == "spatial") yaml += ", direction: " + std::string(axis == "x" ? "0 deg" : "90 deg");
    yaml += "}\n";
  }
  yaml += "base:\n  scenarios:\n    - name: hoist\n";
  if (lift_off) yaml += "      lift_off: {slack: 20 mm}\n";
  else yaml += "      accel: [{for: 2 s, " + axis + ": 0.5 m/s^2}, {for: 3 s, " + axis + ": 0}, {for: 2 s, " + axis +
               ": -0.5 m/s^2}]\n";
  yaml += "      hoist:\n        moves:\n          - {at: 0.5 s, to: 0.8 m/s, accel: 0.6 m/s^2, jerk: 2 m/s^3}\n"
          "          - {at: 6 s, to: 0, accel: 0.6 m/s^2}\n"
          "cases: {duration: 10 s, output_rate: 20 /s, initial: [{single: {theta: [3 deg, -2 deg]}}]}\n"
          "solver: {method: dopri5, rtol: 1e-10, atol: 1e-12}\n";
  return yaml;
}

RunSettings settings(double duration, double rate) { return testing::run_settings(duration, rate); }

struct Sampled {
  std::vector<double> t, angle0, angle1, rope_force, length, reaction_h, reaction_y;
};

/// Samples of a run: the links' angles in the plane of the motion (planar theta; spatial: the angle
/// in the vertical plane through `axis`), the rope's force, its length and the top pivot's reaction
/// along the motion and up.
Sampled run(const Model& model, const std::string& axis, const InitialState& start) {
  Workspace ws(model);
  Sampled s;
  const bool along_z = axis == "z";
  const Observer on_sample = [&](const StepView& v) {
    s.t.push_back(v.t);
    for (int i = 0; i < 2; ++i) {
      double angle = v.x[i];
      if (model.spatial) {
        const double* e = v.x + 3 * i;
        angle = std::atan2(along_z ? e[2] : e[0], -e[1]);
      }
      (i == 0 ? s.angle0 : s.angle1).push_back(angle);
    }
    const double tension = model.elastic_links.empty() ? v.ws->drum_force[0] : v.ws->rope_force[0];
    s.rope_force.push_back(tension);
    s.length.push_back(v.ws->len[0]);
    s.reaction_h.push_back(along_z ? v.ws->reaction_z[0] : v.ws->reaction_x[0]);
    s.reaction_y.push_back(v.ws->reaction_y[0]);
  };
  const RunOutcome out = simulate_case(model, ws, 0, start, settings(10.0, 20.0), {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  return s;
}

}  // namespace

TEST_CASE("A hoisted inextensible rope: the load rises at the drum's acceleration over the parts of line",
          "[integrate][spatial][rope]") {
  // A chain hanging straight down from a fixed pivot, its rope wound by a drum accelerating at a:
  // the rope shortens at l'' = -a / parts, so the hook rises at a / parts and the rope's centre of
  // mass (at its fraction phi of the length) at phi a / parts. Newton's second law for the whole
  // chain: the pivot carries sum m (g + a_k) upwards (any mechanics text). Planar and spatial alike.
  for (const std::string motion : {"planar", "spatial"}) {
    // No wind: the rising hook would meet the still air's drag.
    const Model model = build_model(load_spec_text(hoist_spec(motion, "x", false, false, false), "hoist.yaml"));
    REQUIRE(model.length_kind[0] == LengthKind::prescribed);
    Workspace ws(model);
    Phase phase = model.scenarios[0].phases[0];
    phase.ax = phase.ay = phase.vx0 = phase.vy0 = 0;
    phase.drum_link = 0;
    phase.drum_s0 = 0.3;
    phase.drum_v0 = 0.4;
    phase.drum_a0 = 0.6;
    phase.drum_jerk = 0;
    std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0), dxdt(x.size());
    InitialState hanging;
    write_start(model, hanging, x);
    evaluate(model, ws, phase, x.data(), phase.t0, dxdt.data());
    finish_reactions(model, ws);
    const double a = phase.drum_a0 / 2;  // 2 parts of line
    const double phi = model.com[0] / model.length[0];
    const double expected = model.mass[0] * (kG + phi * a) + model.mass[1] * (kG + a);
    INFO(motion);
    CHECK(ws.acc_y[1] == Approx(a).epsilon(1e-12));
    CHECK(ws.acc_y[0] == Approx(phi * a).epsilon(1e-12));
    CHECK(ws.reaction_y[0] == Approx(expected).epsilon(1e-12));
  }
}

TEST_CASE("Ropes of variable length in the spatial engine = the planar engine on a motion in a vertical plane",
          "[integrate][spatial][rope]") {
  // The same spec in both engines, the spatial one travelling along z with its wind from z: every
  // sampled angle, rope force, length and support reaction to solver tolerance, for an elastic rope
  // hoisted while travelling, an inextensible rope hoisted while travelling, and a lift-off on an
  // elastic rope (grounded, then lifted: the event at the same time).
  for (const auto& [elastic, lift_off] : {std::pair{true, false}, std::pair{false, false}, std::pair{true, true}}) {
    INFO("elastic " << elastic << ", lift-off " << lift_off);
    const Model planar = build_model(load_spec_text(hoist_spec("planar", "x", elastic, lift_off), "planar.yaml"));
    const Model spatial = build_model(load_spec_text(hoist_spec("spatial", "z", elastic, lift_off), "spatial.yaml"));
    InitialState start_planar, start_spatial;
    start_planar.theta = {0.05, -0.03};
    start_planar.omega = {0.01, 0.02};
    // Turned by 90 degrees: the planar angles become angles across the x-y plane.
    start_spatial.theta = {0.0, 0.0};
    start_spatial.phi = start_planar.theta;
    start_spatial.phi_rate = start_planar.omega;
    const Sampled p = run(planar, "x", start_planar), s = run(spatial, "z", start_spatial);
    REQUIRE(p.t.size() == s.t.size());
    // Measured: angles 1e-13..5e-12, rope force and reactions 8e-13..1.7e-10, length 2.5e-13.
    CHECK(relative_gap(s.angle0, p.angle0) < 1e-9);
    CHECK(relative_gap(s.angle1, p.angle1) < 1e-9);
    CHECK(relative_gap(s.rope_force, p.rope_force) < 2e-9);
    CHECK(relative_gap(s.length, p.length) < 1e-11);
    CHECK(relative_gap(s.reaction_h, p.reaction_h) < 2e-9);
    CHECK(relative_gap(s.reaction_y, p.reaction_y) < 2e-9);
  }
}

TEST_CASE("Conical motion on an elastic rope: w^2 = g / (l cos a) at the length the tension stretches it to",
          "[integrate][spatial][rope]") {
  // A point mass m on an elastic rope of unstretched length l0 and stiffness k circling at cone
  // angle a: the tension T = k (l - l0) holds the weight, T cos a = m g, and turns the mass,
  // T = m w^2 l (the conical pendulum, Meriam & Kraige, Dynamics, ch. 3, with the rope's law for T).
  const double l0 = 6.0, m = 500.0, ea = 2.0e6;  // rope mass 1e-9 of the load: a point mass on a massless rope
  const double k = ea / l0;
  const std::string yaml = "swaybound: 1\nname: conical\nmotion: spatial\ngravity: 9.81\nlinks:\n"
                           "  - {name: rope, kind: rope, length: 6 m, mass: 500 kg, com: 6 m, inertia: 0,"
                           " elastic: {ea: 2 MN}}\n"
                           "cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}\n";
  const Model model = build_model(load_spec_text(yaml, "conical.yaml"));
  Workspace ws(model);
  for (const double a_deg : {15.0, 50.0}) {
    const double a = a_deg * std::numbers::pi / 180;
    const double l = l0 + m * kG / (k * std::cos(a));
    const double w = std::sqrt(kG / (l * std::cos(a)));
    InitialState start;
    start.theta = {a};
    start.phi = {0.0};
    start.omega = {0.0};
    start.phi_rate = {w * std::sin(a)};
    start.rope_length = {l};
    start.rope_rate = {0.0};
    double worst_cone = 0, worst_length = 0, worst_azimuth = 0;
    const double duration = 15.0;
    const Observer on_sample = [&](const StepView& v) {
      worst_cone = std::max(worst_cone, std::fabs(swing_angle(model, v.x, 0) - a));
      worst_length = std::max(worst_length, std::fabs(v.ws->len[0] - l));
      const double azimuth = std::atan2(v.x[2], v.x[0]);
      worst_azimuth = std::max(worst_azimuth, std::fabs(std::remainder(azimuth - w * v.t, 2 * std::numbers::pi)));
    };
    const RunOutcome out = simulate_case(model, ws, 0, start, settings(duration, 20.0), {}, on_sample);
    INFO("cone angle " << a_deg << " deg");
    REQUIRE(out.status == RunStatus::ok);
    // Measured: cone angle 2.6e-12 rad, length 1.3e-14 l, azimuth 2.3e-12 rad over 15 s.
    CHECK(worst_cone < 1e-10);
    CHECK(worst_length < 1e-12 * l);
    CHECK(worst_azimuth < 1e-9);
  }
}

TEST_CASE("An undamped spatial chain on an elastic rope keeps its energy and its angular momentum about the vertical",
          "[integrate][spatial][rope]") {
  // On a fixed base with no dissipation, gravity and the rope's elastic force are conservative and
  // exert no moment about the vertical through the pivot: energy (with the rope's strain energy)
  // and the angular momentum about that vertical are constants of the motion (Goldstein, Classical
  // Mechanics, 3rd ed., sec. 1.2), here over 20 s of a swing in both directions with the rope
  // bouncing.
  const std::string yaml = "swaybound: 1\nname: bouncing\nmotion: spatial\ngravity: 9.81\nlinks:\n"
                           "  - {name: rope, kind: rope, length: 8 m, mass: 30 kg, elastic: {ea: 3 MN}}\n"
                           "  - {name: hook, length: 1.2 m, mass: 900 kg, com: 0.8 m, inertia: 90 kg m^2}\n"
                           "cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}\n";
  const Model model = build_model(load_spec_text(yaml, "bouncing.yaml"));
  Workspace ws(model);
  InitialState start;
  start.theta = {0.3, -0.2};
  start.phi = {0.1, 0.25};
  start.omega = {0.1, 0.0};
  start.phi_rate = {0.2, -0.3};
  start.rope_length = {8.02};  // stretched beyond the static stretch: it bounces
  start.rope_rate = {0.05};
  double e0 = 0, h0 = 0, worst_e = 0, worst_h = 0, scale_h = 0;
  bool first = true;
  const Observer on_sample = [&](const StepView& v) {
    const double e = mechanical_energy(model, *v.ws), h = axis_momentum(model, *v.ws);
    if (first) {
      e0 = e;
      h0 = h;
      first = false;
    }
    worst_e = std::max(worst_e, std::fabs(e - e0));
    worst_h = std::max(worst_h, std::fabs(h - h0));
    scale_h = std::max(scale_h, std::fabs(h));
  };
  RunSettings s = settings(20.0, 50.0);
  s.rtol = 1e-11;
  s.atol = 1e-13;
  const RunOutcome out = simulate_case(model, ws, 0, start, s, {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  INFO("energy drift " << worst_e << " J of " << model.energy_scale << " J; momentum drift " << worst_h << " of "
                       << scale_h);
  // Measured: energy 2.9e-12 of the energy scale, momentum 1.1e-11 of its largest value.
  CHECK(worst_e < 1e-10 * model.energy_scale);
  CHECK(worst_h < 1e-10 * scale_h);
}

TEST_CASE("Modes of a spatial chain on an elastic rope: the planar chain's sway modes in pairs and one vertical bounce",
          "[modal][spatial][rope]") {
  // At rest the chain's swing in the travel plane and across it are each the planar chain's, and the
  // rope's bounce is one vertical mode; for a point mass on a massless elastic rope its frequency is
  // sqrt(k / m) (Thomson & Dahleh, Theory of Vibration, sec. 2.1) and the sway's sqrt(g / l) at the
  // stretched length l = l0 + m g / k (sec. 2.6's pendulum).
  const std::string base = "gravity: 9.81\nlinks:\n"
                           "  - {name: rope, kind: rope, length: 6 m, mass: 400 kg, com: 6 m, inertia: 0,"
                           " elastic: {ea: 2 MN, damping_ratio: 0.05}, pivot: {damper: {coefficient: 5 kN m s/rad}}}\n"
                           "cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}\n";
  const Model planar = build_model(load_spec_text("swaybound: 1\nname: p\n" + base, "p.yaml"));
  const Model spatial = build_model(load_spec_text("swaybound: 1\nname: s\nmotion: spatial\n" + base, "s.yaml"));
  const ModalResult p = modal_analysis(planar), s = modal_analysis(spatial);
  REQUIRE(p.modes.size() == 2);
  REQUIRE(s.modes.size() == 3);
  const double k = 2e6 / 6.0, m = 400.0, l = 6.0 + m * kG / k;
  int sway = 0, vertical = 0;
  for (const Mode& mode : s.modes) {
    const double w = 2 * std::numbers::pi * mode.frequency_hz;
    if (mode.plane == SwayPlane::vertical) {
      ++vertical;
      CHECK(mode.axial);
      CHECK(w == Approx(std::sqrt(k / m)).epsilon(1e-9));
      CHECK(mode.damping_ratio == Approx(p.modes[1].damping_ratio).epsilon(1e-9));
    } else {
      ++sway;
      CHECK(w == Approx(std::sqrt(kG / l)).epsilon(1e-9));
      CHECK(mode.damping_ratio == Approx(p.modes[0].damping_ratio).epsilon(1e-9));
      CHECK(mode.pair >= 0);
    }
  }
  CHECK(sway == 2);
  CHECK(vertical == 1);
}
