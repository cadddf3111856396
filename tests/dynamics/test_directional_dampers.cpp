// Directional pivot dampers (spec `axis`): a damper that acts about its shaft only, against closed
// forms of the damped oscillator, the modes per swing plane, the energy audits and the planar engine.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <regex>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "../../src/report/report_model.hpp"
#include "../support/close_to.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/dynamics/forces.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/sizing/evaluate.hpp"
#include "swaybound/spec.hpp"
#include "swaybound/spec/paths.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kG = 9.81, kPi = std::numbers::pi;

/// A spherical pendulum: a point mass `mass` on a light rod `length`, a damper `damper` (the map's
/// body) at its pivot.
std::string point_pendulum(double length, double mass, const std::string& damper, const std::string& motion = "spatial") {
  return fmt::format(R"(swaybound: 1
name: directional damper
motion: {}
gravity: {}
links:
  - {{name: rod, length: {} m, mass: {} kg, com: {} m, inertia: 0, pivot: {{damper: {{{}}}}}}}
cases: {{duration: 1 s, initial: [{{single: {{theta: [1 deg]}}}}]}}
)",
                     motion, kG, length, mass, length, damper);
}

/// A normalised spec without its comments (which mark the values filled in by default).
std::string without_comments(const std::string& yaml) { return std::regex_replace(yaml, std::regex(" *#[^\n]*"), ""); }

Model model_of(const std::string& yaml) { return build_model(load_spec_text(yaml, "inline.yaml")); }

RunSettings tight(double duration, double rate) {
  RunSettings s;
  s.duration = duration;
  s.rtol = 1e-11;
  s.atol = 1e-13;
  s.output_rate = rate;
  return s;
}

/// Positive peaks of a sampled signal, each at the vertex of the parabola through three samples.
struct PeakFinder {
  std::vector<double> last, peaks;
  void add(double value) {
    last.push_back(value);
    if (last.size() > 3) last.erase(last.begin());
    if (last.size() < 3 || !(last[1] > last[0] && last[1] >= last[2]) || last[1] <= 0) return;
    const double c0 = last[0], c1 = last[1], c2 = last[2];
    const double u = 0.5 * (c0 - c2) / (c0 - 2 * c1 + c2);
    peaks.push_back(c1 - 0.25 * (c0 - c2) * u);
  }
  /// Mean logarithmic decrement over `cycles` peaks from the first.
  double decrement(std::size_t cycles) const { return std::log(peaks.at(0) / peaks.at(cycles)) / static_cast<double>(cycles); }
};

/// Logarithmic decrements of a spherical pendulum's swing along two horizontal directions.
struct Decrements {
  double damped = 0, free = 0;  ///< of the swing along `damped` and along `free` [-]
  double expected = 0;          ///< the damped oscillator's 2 pi zeta / sqrt(1 - zeta^2) [-]
};

/// A spherical pendulum (L = 2 m, m = 100 kg) with a linear damper `axis` of damping ratio 0.03
/// about its shaft, released at 1 deg in the horizontal direction (damped + free) / sqrt 2 (unit
/// vectors, x and z components): the mean decrements over 10 periods of the swing along each.
Decrements swing_decrements(const std::string& axis, const double damped[2], const double free[2]) {
  const double L = 2.0, m = 100.0, zeta = 0.03;
  const double wn = std::sqrt(kG / L), c = 2 * zeta * m * L * L * wn;
  const Model model = model_of(point_pendulum(L, m, fmt::format("coefficient: {} N m s/rad, axis: {}", c, axis)));
  Workspace ws(model);
  // e = (sin a u_x, -cos a, sin a u_z) = (sin theta cos phi, -cos theta cos phi, sin phi).
  const double a = kPi / 180, ux = (damped[0] + free[0]) / std::sqrt(2.0), uz = (damped[1] + free[1]) / std::sqrt(2.0);
  const double e[3] = {std::sin(a) * ux, -std::cos(a), std::sin(a) * uz};
  InitialState start;
  start.phi = {std::asin(e[2])};
  start.theta = {std::atan2(e[0], -e[1])};
  start.omega = {0.0};
  start.phi_rate = {0.0};
  PeakFinder along_damped, along_free;
  const Observer on_sample = [&](const StepView& v) {
    along_damped.add(v.x[0] * damped[0] + v.x[2] * damped[1]);
    along_free.add(v.x[0] * free[0] + v.x[2] * free[1]);
  };
  const RunOutcome out = simulate_case(model, ws, 0, start, tight(12 * 2 * kPi / wn, 200), {}, on_sample);
  REQUIRE(out.status == RunStatus::ok);
  REQUIRE(along_damped.peaks.size() > 10);
  REQUIRE(along_free.peaks.size() > 10);
  return {along_damped.decrement(10), along_free.decrement(10), 2 * kPi * zeta / std::sqrt(1 - zeta * zeta)};
}

}  // namespace

// A linear damper c about a horizontal shaft a at the pivot of a spherical pendulum: linearised,
// the swing that turns about a (the bob moving along a x (-y), across the shaft) is
// m L^2 x'' + c x' + m g L x = 0, the swing along the shaft m L^2 z'' + m g L z = 0 (the damper's
// rate w . a is zero for it). The damped oscillator (Thomson & Dahleh, Theory of Vibration with
// Applications, 5th ed., sec. 2.6) has zeta = c / (2 m L^2 w_n), w_n = sqrt(g / L), decay rate
// zeta w_n and logarithmic decrement 2 pi zeta / sqrt(1 - zeta^2); the undamped one none. At 1 deg
// the nonlinear terms change these by O(1e-4).
TEST_CASE("a damper about the axis across the travel decays the in-plane swing only", "[dynamics][dampers][spatial]") {
  // Shaft across (z): the swing in the travel plane (x) is damped; released at azimuth 45 deg.
  const double x[2] = {1, 0}, z[2] = {0, 1};
  const Decrements d = swing_decrements("across", x, z);
  INFO("decrement in the travel plane " << d.damped << " (closed form " << d.expected << "), across " << d.free);
  CHECK(std::fabs(d.damped - d.expected) < 0.01 * d.expected);
  CHECK(std::fabs(d.free) < 0.01 * d.expected);
}

TEST_CASE("a damper along the travel decays the swing across it only", "[dynamics][dampers][spatial]") {
  const double x[2] = {1, 0}, z[2] = {0, 1};
  const Decrements d = swing_decrements("along", z, x);
  INFO("decrement across the travel plane " << d.damped << " (closed form " << d.expected << "), in it " << d.free);
  CHECK(std::fabs(d.damped - d.expected) < 0.01 * d.expected);
  CHECK(std::fabs(d.free) < 0.01 * d.expected);
}

TEST_CASE("a damper with an oblique shaft decays the swing across its shaft only", "[dynamics][dampers][spatial]") {
  // Shaft at 30 deg from +x towards +z: a = (cos 30, 0, sin 30); the damped swing moves the bob
  // along a x (-y) = (sin 30, 0, -cos 30), the free one along a.
  const double b = kPi / 6;
  const double across_shaft[2] = {std::sin(b), -std::cos(b)}, along_shaft[2] = {std::cos(b), std::sin(b)};
  const Decrements d = swing_decrements("30 deg", across_shaft, along_shaft);
  INFO("decrement across the shaft " << d.damped << " (closed form " << d.expected << "), along it " << d.free);
  CHECK(std::fabs(d.damped - d.expected) < 0.01 * d.expected);
  CHECK(std::fabs(d.free) < 0.01 * d.expected);
}

TEST_CASE("modes: a damper with an axis damps the plane its shaft is normal to", "[modal][dampers][spatial]") {
  // Each plane of the spherical pendulum is the damped oscillator of Thomson & Dahleh sec. 2.6,
  // zeta = c / (2 m L^2 w_n): the isotropic damper c_i acts in both planes, one across the travel
  // c_a in the travel plane only, one along it c_l across only.
  const double L = 4.0, m = 500.0, ci = 300, ca = 900, cl = 500;
  const double wn = std::sqrt(kG / L);
  const auto zeta = [&](double c) { return c / (2 * m * L * L * wn); };
  const std::string yaml = fmt::format(R"(swaybound: 1
name: dampers with axes
motion: spatial
gravity: {}
links:
  - name: rod
    length: {} m
    mass: {} kg
    com: {} m
    inertia: 0
    pivot:
      dampers:
        - {{coefficient: {} N m s/rad}}
        - {{coefficient: {} N m s/rad, axis: across}}
        - {{coefficient: {} N m s/rad, axis: along}}
cases: {{duration: 1 s, initial: [{{single: {{theta: [1 deg]}}}}]}}
)",
                                       kG, L, m, L, ci, ca, cl);
  const ModalResult r = modal_analysis(model_of(yaml));
  REQUIRE(r.modes.size() == 2);
  CHECK(r.modes[0].plane == SwayPlane::travel);
  CHECK(r.modes[1].plane == SwayPlane::across);
  CHECK_THAT(r.modes[0].damping_ratio, IsCloseTo(zeta(ci + ca), 0, 1e-10));
  CHECK_THAT(r.modes[1].damping_ratio, IsCloseTo(zeta(ci + cl), 0, 1e-10));
  // One damper across the travel: the travel-plane mode has its ratio, the mode across none.
  const ModalResult one = modal_analysis(model_of(point_pendulum(L, m, fmt::format("coefficient: {} N m s/rad, axis: across", ca))));
  CHECK_THAT(one.modes[0].damping_ratio, IsCloseTo(zeta(ca), 0, 1e-10));
  CHECK(one.modes[1].damping_ratio == 0.0);
  CHECK(one.least_damping_ratio == 0.0);
  // An oblique shaft couples the planes: the per-plane modes leave it out and say so.
  const ModalResult oblique = modal_analysis(model_of(point_pendulum(L, m, "coefficient: 900 N m s/rad, axis: 30 deg")));
  CHECK(oblique.modes[0].damping_ratio == 0.0);
  CHECK(oblique.modes[1].damping_ratio == 0.0);
  bool noted = false;
  for (const auto& note : oblique.notes) noted |= note.find("shaft at 30 deg") != std::string::npos;
  CHECK(noted);
}

TEST_CASE("a planar chain's damper with axis across is the same damper", "[dynamics][dampers]") {
  // A planar damper acts about the axis across the travel: saying so changes nothing, bit for bit.
  const std::string body = R"(links:
  - {name: rope, kind: rope, length: 6 m, mass: 35 kg}
  - {name: hook, length: 1.8 m, mass: 850 kg, com: 1.5 m, inertia: 95 kg m^2, pivot: {damper: {coefficient: 4 kN m s/rad, exponent: 0.6, max_torque: 20 kN m%s}}}
base:
  scenarios:
    - {name: brake, initial_velocity: {x: 1.0 m/s}, accel: [{for: 1.5 s, x: -0.8 m/s^2}, {for: 8.5 s, x: 0 m/s^2}]}
cases: {duration: 10 s, initial: [{single: {theta: [5 deg, -10 deg]}}]}
)";
  const auto spec_with = [&](const std::string& axis) {
    std::string text = body;
    text.replace(text.find("%s"), 2, axis);
    return load_spec_text("swaybound: 1\nname: planar damper\n" + text, "planar.yaml");
  };
  const Spec plain = spec_with(""), across = spec_with(", axis: across");
  REQUIRE(across.links[1].pivot.dampers[0].axis == kDamperAcross);
  const auto final_state = [](const Spec& spec) {
    const Model model = build_model(spec);
    Workspace ws(model);
    std::vector<double> last;
    const Observer on_step = [&](const StepView& v) { last.assign(v.x, v.x + model.state_size()); };
    InitialState start;
    start.theta = {5 * kPi / 180, -10 * kPi / 180};
    REQUIRE(simulate_case(model, ws, 0, start, RunSettings::from_spec(spec), on_step).status == RunStatus::ok);
    return last;
  };
  CHECK(final_state(across) == final_state(plain));
  const ModalResult a = modal_analysis(build_model(across)), p = modal_analysis(build_model(plain));
  REQUIRE(a.modes.size() == p.modes.size());
  for (std::size_t k = 0; k < a.modes.size(); ++k) CHECK(a.modes[k].damping_ratio == p.modes[k].damping_ratio);
}

TEST_CASE("the travel plane's damper torque counts the dampers that act in that plane", "[dynamics][dampers]") {
  // The planar law (forces.hpp), which a spatial chain's modes use for each plane: a damper without
  // an axis or across the travel acts in the travel plane; one along the travel turns the link about
  // x, which a swing in that plane does not; an oblique one is left out (modes.cpp notes it).
  const Model model = model_of(R"(swaybound: 1
name: four dampers
motion: spatial
links:
  - name: rod
    length: 2 m
    mass: 100 kg
    pivot:
      dampers:
        - {coefficient: 100 N m s/rad}
        - {coefficient: 20 N m s/rad, axis: across}
        - {coefficient: 3 N m s/rad, axis: along}
        - {coefficient: 0.4 N m s/rad, axis: 30 deg}
cases: {duration: 1 s, initial: [{single: {theta: [1 deg]}}]}
)");
  CHECK(damper_torque(model.pivots[0], 0.5) == -(100 + 20) * 0.5);
  CHECK(isotropic_damper_torque(model.pivots[0], 0.5) == -100 * 0.5);
}

TEST_CASE("a directional damper's torque: about its shaft, which turns with a slewing boom", "[dynamics][dampers][spatial]") {
  // The law of chain_spatial.cpp: tau = tau_d(w_rel . a) a, with w_rel the swing relative to the
  // boom (its part across the link) and a = a_x e_r + a_z e_t the shaft turned with the boom to
  // its slewing angle psi. A linear damper across the boom: a = e_t = (-sin psi, 0, cos psi). The
  // workspace holds the torque on link 0, the part across it (along it, it would twist the link).
  const double c = 700, psi = 0.7, rate = 0.3;
  const Model model = model_of(R"(swaybound: 1
name: slewing directional damper
motion: spatial
links:
  - {name: rod, length: 3 m, mass: 200 kg, com: 3 m, inertia: 0, pivot: {damper: {coefficient: 700 N m s/rad, axis: across}}}
base:
  scenarios:
    - {name: slew, slew: {radius: 10 m, speed: 0.3 rad/s}}
cases: {duration: 1 s, initial: [{single: {theta: [1 deg]}}]}
)");
  Workspace ws(model);
  Phase phase = model.scenarios[0].phases[0];
  phase.slew_angle0 = psi;
  REQUIRE(phase.slew_rate0 == rate);
  // A link swung out of both planes and moving in both.
  InitialState start;
  start.theta = {0.4};
  start.phi = {-0.25};
  start.omega = {0.6};
  start.phi_rate = {-0.9};
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0), dxdt(x.size());
  write_start(model, start, x);
  evaluate(model, ws, phase, x.data(), phase.t0, dxdt.data());
  const double e[3] = {ws.dir[0], ws.dir[1], ws.dir[2]}, r[3] = {ws.dir_rate[0], ws.dir_rate[1], ws.dir_rate[2]};
  // w = e x e' less the boom's spin -rate y, without its part along e.
  double w[3] = {e[1] * r[2] - e[2] * r[1], e[2] * r[0] - e[0] * r[2] + rate, e[0] * r[1] - e[1] * r[0]};
  const double along = w[0] * e[0] + w[1] * e[1] + w[2] * e[2];
  for (int k = 0; k < 3; ++k) w[k] -= along * e[k];
  const double a[3] = {-std::sin(psi), 0.0, std::cos(psi)};
  const double w_a = w[0] * a[0] + w[2] * a[2];
  REQUIRE(std::fabs(w_a) > 0.1);
  const double a_e = a[0] * e[0] + a[2] * e[2];
  REQUIRE(std::fabs(a_e) > 0.1);  // the shaft is not across the link: the projection matters
  for (int k = 0; k < 3; ++k)
    CHECK_THAT(ws.torque[static_cast<std::size_t>(k)], IsCloseTo(-c * w_a * (a[k] - a_e * e[k]), 1e-12, 1e-12));
}

TEST_CASE("energy audits close with directional dampers, travelling and slewing", "[dynamics][dampers][spatial]") {
  // Energy in = energy out + dissipated in the inertial frame and, under a slewing boom, in the
  // boom frame (specs/README.md, "Spatial chains"): each damper's power -tau . w_rel is what it
  // dissipates whatever its axis, and a slewing boom works through pivot 0's torque across the
  // link. The packet's figure (largest residual / energy scale over the cases) stays at the
  // solver's tolerance.
  const Spec spec = load_spec_text(R"(swaybound: 1
name: directional dampers audit
motion: spatial
links:
  - name: rope
    kind: rope
    length: 6 m
    mass: 35 kg
    pivot:
      dampers:
        - {coefficient: 3 kN m s/rad, exponent: 0.6, max_torque: 8 kN m, axis: across}
        - {coefficient: 1 kN m s/rad, axis: along}
  - name: hook
    length: 1.8 m
    mass: 850 kg
    com: 1.5 m
    inertia: 95 kg m^2
    pivot:
      friction: {pin_radius: 40 mm, mu: 0.12, transition_rate: 0.05 rad/s}
      dampers:
        - {coefficient: 2 kN m s/rad, axis: 30 deg}
        - {coefficient: 500 N m s/rad}
base:
  scenarios:
    - {name: brake both ways, initial_velocity: {x: 1.0 m/s, z: 0.6 m/s}, accel: [{for: 1.25 s, x: -0.8 m/s^2, z: -0.48 m/s^2}, {for: 10 s, x: 0 m/s^2}]}
    - name: slew out
      slew: {radius: 18 m, moves: [{at: 0 s, to: 0.15 rad/s, accel: 0.05 rad/s^2, jerk: 0.05 rad/s^3}]}
cases: {duration: 12 s, initial: [{single: {theta: [5 deg, -8 deg], phi: [3 deg, 6 deg], rate: [0.1 rad/s, 0 rad/s], phi_rate: [0 rad/s, -0.2 rad/s]}}]}
solver: {rtol: 1e-10, atol: 1e-12}
)",
                                   "audit.yaml");
  CheckOptions options;
  options.jobs = 1;
  options.audit = false;
  options.record = false;
  const CheckReport r = run_check(spec, options);
  REQUIRE(r.failed_total == 0);
  INFO("inertial " << r.max_audit_relative << " (" << r.max_audit_case << "), boom frame " << r.max_boom_audit_relative
                   << " (" << r.max_boom_audit_case << ")");
  CHECK(r.max_audit_relative < 1e-8);
  REQUIRE_FALSE(r.max_boom_audit_case.empty());
  CHECK(r.max_boom_audit_relative < 1e-8);
}

TEST_CASE("damper axis: spec forms, normalised round trip and sizing paths", "[spec][dampers]") {
  const auto spec_with = [](const std::string& axis, const std::string& motion = "spatial") {
    return load_spec_text(point_pendulum(2, 100, "coefficient: 400 N m s/rad, axis: " + axis, motion), "axis.yaml");
  };
  CHECK(spec_with("across").links[0].pivot.dampers[0].axis == kDamperAcross);
  CHECK(spec_with("along").links[0].pivot.dampers[0].axis == 0.0);
  CHECK(spec_with("30 deg").links[0].pivot.dampers[0].axis == Approx(kPi / 6).epsilon(1e-15));
  CHECK(spec_with("-180 deg").links[0].pivot.dampers[0].axis == -kPi);
  CHECK(spec_with("across", "planar").links[0].pivot.dampers[0].axis == kDamperAcross);
  CHECK_FALSE(load_spec_text(point_pendulum(2, 100, "coefficient: 400 N m s/rad"), "none.yaml").links[0].pivot.dampers[0].axis);
  // A shaft at 180 deg is the line along the travel; -90 deg the line across (the law is odd in the rate).
  const Model half_turn = build_model(spec_with("180 deg")), minus_quarter = build_model(spec_with("-90 deg"));
  CHECK((half_turn.pivots[0].dampers[0].axis_x == 1.0 && half_turn.pivots[0].dampers[0].axis_z == 0.0));
  CHECK((minus_quarter.pivots[0].dampers[0].axis_x == 0.0 && minus_quarter.pivots[0].dampers[0].axis_z == 1.0));

  // The normalised spec writes the axis back; re-loaded it is the same axis and writes the same text.
  for (const char* axis : {"across", "along", "30 deg"}) {
    INFO(axis);
    const Spec spec = spec_with(axis);
    const std::string once = normalised_yaml(spec);
    CHECK(once.find("axis: ") != std::string::npos);
    const Spec again = load_spec_text(once, "normalised.yaml");
    REQUIRE(again.links[0].pivot.dampers[0].axis);
    CHECK_THAT(*again.links[0].pivot.dampers[0].axis, IsCloseTo(*spec.links[0].pivot.dampers[0].axis, 0, 1e-11));
    CHECK(without_comments(normalised_yaml(again)) == without_comments(once));  // the comments mark defaults
  }
  CHECK(normalised_yaml(spec_with("across")).find("axis: across") != std::string::npos);
  CHECK(normalised_yaml(spec_with("along")).find("axis: along") != std::string::npos);

  // A sizing path to the coefficient of a damper with an axis changes the coefficient and keeps the axis.
  Spec spec = spec_with("along");
  std::string why;
  const auto path = parse_spec_path(spec, "links[rod].pivot.damper.coefficient", why);
  REQUIRE(path);
  set_spec_value(spec, *path, 900);
  CHECK(spec.links[0].pivot.dampers[0].coefficient == 900);
  CHECK(spec.links[0].pivot.dampers[0].axis == 0.0);
  CHECK(build_model(spec).pivots[0].dampers[0].c == 900);
  // And through `size`'s designs: a sizing variable on it gives designs with the axis kept.
  const Spec sized = load_spec_text(point_pendulum(2, 100, "coefficient: 400 N m s/rad, axis: along") +
                                        "sizing:\n  variables:\n    - {path: 'links[rod].pivot.damper.coefficient', "
                                        "range: [100 N m s/rad, 800 N m s/rad]}\n",
                                    "sized.yaml");
  const std::vector<DesignVariable> variables = design_variables(sized);
  REQUIRE(variables.size() == 1);
  const Spec design = DesignEvaluator(sized, variables, 1).design({650});
  CHECK(design.links[0].pivot.dampers[0].coefficient == 650);
  CHECK(design.links[0].pivot.dampers[0].axis == 0.0);
  const Model designed = build_model(load_spec_text(normalised_yaml(design), "design.yaml"));
  CHECK(designed.pivots[0].dampers[0].c == 650);
  CHECK((designed.pivots[0].dampers[0].directional && designed.pivots[0].dampers[0].axis_x == 1.0));

  // The refusals name the key and say what to write.
  const auto diagnostic = [](const std::string& text) {
    try {
      load_spec_text(text, "bad.yaml");
    } catch (const SpecError& e) {
      return e.diagnostics().at(0);
    }
    FAIL("loaded: " << text);
    return Diagnostic{};
  };
  const Diagnostic typo = diagnostic(point_pendulum(2, 100, "coefficient: 1 N m s/rad, axis: accross"));
  CHECK(typo.path == "links[0].pivot.damper.axis");
  CHECK(typo.fix.find("did you mean 'across'?") != std::string::npos);
  const Diagnostic planar = diagnostic(point_pendulum(2, 100, "coefficient: 1 N m s/rad, axis: along", "planar"));
  CHECK(planar.message.find("planar chain") != std::string::npos);
  CHECK(planar.fix.find("motion: spatial") != std::string::npos);
  CHECK(diagnostic(point_pendulum(2, 100, "coefficient: 1 N m s/rad, axis: 181 deg")).fix.find("-180 to 180 deg") !=
        std::string::npos);
}

TEST_CASE("the packet and results.json state each damper's axis", "[report][dampers]") {
  const auto packet = [](const std::string& dampers) {
    const Spec spec = load_spec_text(R"(swaybound: 1
name: shafts in the packet
motion: spatial
links:
  - {name: rope, kind: rope, length: 6 m, mass: 35 kg}
  - name: hook
    length: 1.8 m
    mass: 850 kg
    pivot:
      dampers: )" + dampers + R"(
cases: {duration: 2 s, initial: [{single: {theta: [5 deg, 0 deg]}}]}
)",
                                     "packet.yaml");
    CheckOptions options;
    options.jobs = 1;
    options.audit = false;
    const CheckReport r = run_check(spec, options);
    const report_doc::Document d = report_doc::build_document(spec, r, {"2025-02-03", "", ""}, nullptr);
    std::string text;  // every paragraph, bullet and table cell, with the tables' column titles
    for (const auto& section : d.sections)
      for (const auto& block : section.blocks) {
        for (const auto& span : block.text) text += span.text + "\n";
        for (const auto& item : block.items)
          for (const auto& span : item) text += span.text + "\n";
        for (const auto& column : block.table.columns) text += "column " + column.title + "\n";
        for (const auto& row : block.table.rows)
          for (const auto& cell : row.cells) text += cell + "\n";
      }
    return std::pair{text, results_json(spec, r)};
  };
  const auto [with, json_with] = packet("[{coefficient: 2 kN m s/rad, axis: across}, {coefficient: 1 kN m s/rad}]");
  CHECK(with.find("column shaft\n") != std::string::npos);
  CHECK(with.find("\nacross, any\n") != std::string::npos);
  CHECK(with.find("'hook' (damper 1) shaft across the travel, damping the swing in the travel plane") != std::string::npos);
  CHECK(json_with.find("'hook' (damper 1) shaft across the travel") != std::string::npos);
  const auto [oblique, json_oblique] = packet("[{coefficient: 2 kN m s/rad, axis: -30 deg}]");
  CHECK(oblique.find("\n-30 deg\n") != std::string::npos);
  CHECK(oblique.find("'hook' shaft at -30 deg to the travel") != std::string::npos);
  // Without an axis the packet is as before: no shaft column, no sentence.
  const auto [without, json_without] = packet("[{coefficient: 2 kN m s/rad}]");
  CHECK(without.find("column shaft") == std::string::npos);
  CHECK(without.find("Dampers with an axis") == std::string::npos);
  CHECK(json_without.find("Dampers with an axis") == std::string::npos);
  CHECK(json_with.find("Dampers with an axis") != std::string::npos);
}
