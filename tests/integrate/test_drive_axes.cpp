// Shapers designed from a mode of the chain, and the other drive axes of spatial chains (cross
// travel along z, slewing) with their speed moves, shapers and stops. The references:
//  - a point-mass pendulum of length L has the one mode w = sqrt(g / L), f = w / (2 pi) (any
//    mechanics text); a ZV shaper designed at it leaves no residual swing of the linear pendulum
//    (Singer & Seering, ASME J. Dyn. Sys. Meas. Control 112, 1990; Smith's posicast, 1957).
//  - a jerk-limited move from 0 to v at acceleration limit A and jerk limit J, v >= A^2 / J, lasts
//    v / A + A / J and covers v / 2 times that (the S-curve formulas of model/profile.hpp's header,
//    rectilinear kinematics at constant jerk; from memory, checked there against the pieces).
//  - a spherical pendulum driven along z alone swings in the y-z plane as the planar pendulum
//    driven along x swings in the x-y plane: the equations are the same after a rotation of 90
//    degrees about the vertical (symmetry of the spherical pendulum).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/modal/shaper_modes.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/model/shaper.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kG = 9.81;

/// A two-link chain (rope and hook block, damped at both pivots) under a shaped travel move;
/// `shaper` is the flow map's body.
std::string two_link_spec(const std::string& shaper, const std::string& sizing = "") {
  return fmt::format(R"(swaybound: 1
name: two links
gravity: 9.81
links:
  - {{name: rope, kind: rope, length: 8 m, mass: 20 kg, pivot: {{damper: {{coefficient: 2 kN m s/rad}}}}}}
  - {{name: hook, length: 1.5 m, mass: 120 kg, pivot: {{damper: {{coefficient: 60 N m s/rad}}}}}}
base:
  scenarios:
    - name: move
      travel: {{moves: [{{at: 1 s, to: 1 m/s, accel: 0.4 m/s^2}}], shaper: {{{}}}}}
cases: {{duration: 20 s, initial: [{{single: {{theta: [0 deg, 0 deg]}}}}]}}
limits: [{{peak_angle: 30 deg}}]
{}
)",
                     shaper, sizing);
}

/// The swing of a run, sampled: time, and per sample the base position along the driven axis and the
/// top link's direction.
struct Samples {
  std::vector<double> t, base, ex, ey, ez;
};

Samples run_samples(const Spec& spec, double rate) {
  const Model model = build_model(spec);
  Workspace ws(model);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = rate;
  Samples s;
  const RunOutcome out = simulate_case(model, ws, 0, {}, settings, {}, [&](const StepView& v) {
    s.t.push_back(v.t);
    if (model.spatial) {
      s.base.push_back(v.ws->base_z);
      s.ex.push_back(v.x[0]);
      s.ey.push_back(v.x[1]);
      s.ez.push_back(v.x[2]);
    } else {
      s.base.push_back(v.ws->base_x);
      s.ex.push_back(std::sin(v.x[0]));
      s.ey.push_back(-std::cos(v.x[0]));
      s.ez.push_back(0);
    }
  });
  REQUIRE(out.status == RunStatus::ok);
  return s;
}

}  // namespace

TEST_CASE("a shaper designed from mode 1 of a two-link chain is the one given that mode's values",
          "[shaper][modes][travel]") {
  const Spec from_mode = load_spec_text(two_link_spec("kind: zvd, mode: 1"), "mode.yaml");
  const ModalResult modes = modal_analysis(build_model(from_mode));
  REQUIRE(modes.modes.size() == 2);
  const Mode& m = modes.modes[0];
  REQUIRE(m.damping_ratio > 1e-3);  // the damper makes it a damped mode
  const Spec given = load_spec_text(
      two_link_spec(fmt::format("kind: zvd, frequency: {:.17g} Hz, damping_ratio: {:.17g}",
                                m.natural_frequency_with_damping_hz, m.damping_ratio)),
      "given.yaml");
  const auto& a = from_mode.scenarios[0].travel->shaper.value();
  const auto& b = given.scenarios[0].travel->shaper.value();
  CHECK(a.mode == 1);
  CHECK_FALSE(a.damping_given);
  const InputShaper sa = design_shaper(a.kind, a.frequency, a.damping_ratio);
  const InputShaper sb = design_shaper(b.kind, b.frequency, b.damping_ratio);
  REQUIRE(sa.impulses.size() == 3);
  REQUIRE(sb.impulses.size() == 3);
  for (std::size_t k = 0; k < 3; ++k) {
    CHECK_THAT(sa.impulses[k].time, IsCloseTo(sb.impulses[k].time, 1e-12, 1e-12));
    CHECK_THAT(sa.impulses[k].amplitude, IsCloseTo(sb.impulses[k].amplitude, 1e-12, 1e-12));
  }
  // The shaper's damped period is the mode's: the last ZVD impulse at 2 pi / Im(lambda).
  CHECK_THAT(sa.impulses[2].time, IsCloseTo(2 * std::numbers::pi / m.eigenvalue.imag(), 0, 1e-12));
  // A given damping ratio is kept; the frequency still comes from the mode.
  const Spec undamped_design = load_spec_text(two_link_spec("kind: zv, mode: 2, damping_ratio: 0"), "zeta.yaml");
  const auto& c = undamped_design.scenarios[0].travel->shaper.value();
  CHECK(c.damping_ratio == 0);
  CHECK(c.frequency == modes.modes[1].natural_frequency_with_damping_hz);
  // The normalised spec keeps `mode` (and no frequency) and loads to the same shaper.
  const std::string yaml = normalised_yaml(from_mode);
  CHECK(yaml.find("mode: 1") != std::string::npos);
  const Spec again = load_spec_text(yaml, "again.yaml");
  // (the normalised spec writes com and inertia to 12 digits)
  CHECK_THAT(again.scenarios[0].travel->shaper->frequency, IsCloseTo(a.frequency, 0, 1e-10));
  CHECK(again.scenarios[0].travel->shaper->mode == 1);
}

TEST_CASE("design_for designs the shaper for another rope length, and sizing moves a mode shaper with the chain",
          "[shaper][modes][sizing]") {
  // design_for: the mode of the chain with the rope 12 m long, not 8 m.
  const Spec designed_for =
      load_spec_text(two_link_spec("kind: zv, mode: 1, design_for: {link: rope, length: 12 m}"), "for.yaml");
  Spec longer = designed_for;
  longer.links[0].length = 12;
  const double f12 = modal_analysis(build_model(longer)).modes[0].natural_frequency_with_damping_hz;
  const double f8 = modal_analysis(build_model(designed_for)).modes[0].natural_frequency_with_damping_hz;
  CHECK(designed_for.scenarios[0].travel->shaper->frequency == f12);
  CHECK(f12 < 0.9 * f8);
  CHECK(normalised_yaml(designed_for).find("design_for") != std::string::npos);

  // Sizing the rope's length: apply_design re-resolves the shaper at the sized length.
  const Spec spec = load_spec_text(
      two_link_spec("kind: zv, mode: 1",
                    "sizing: {variables: [{path: 'links[rope].length', range: [5 m, 14 m]}], objective: min_cost}"),
      "sized.yaml");
  const double before = spec.scenarios[0].travel->shaper->frequency;
  Spec sized = spec;
  apply_design(sized, design_variables(sized), {13.0});
  REQUIRE(sized.links[0].length == 13.0);
  const double after = sized.scenarios[0].travel->shaper->frequency;
  // The modes of the sized spec, computed here apart from the resolution.
  const ModalResult sized_modes = modal_analysis(build_model(sized));
  CHECK_THAT(after, IsCloseTo(sized_modes.modes[0].natural_frequency_with_damping_hz, 0, 1e-14));
  CHECK_THAT(sized.scenarios[0].travel->shaper->damping_ratio, IsCloseTo(sized_modes.modes[0].damping_ratio, 0, 1e-14));
  CHECK(after < 0.85 * before);
  // The sized spec as written keeps `mode`, and reloads to the mode of the chain it describes.
  const std::string yaml = normalised_yaml(sized);
  CHECK(yaml.find("mode: 1") != std::string::npos);
  const Spec reloaded = load_spec_text(yaml, "again.yaml");
  CHECK(reloaded.links[0].length == 13.0);
  CHECK_THAT(reloaded.scenarios[0].travel->shaper->frequency,
             IsCloseTo(modal_analysis(build_model(reloaded)).modes[0].natural_frequency_with_damping_hz, 0, 1e-14));
  // The shaper's frequency is not a sizing variable of its own while a mode sets it.
  CHECK_THROWS_AS(load_spec_text(two_link_spec("kind: zv, mode: 1",
                                               "sizing: {variables: [{path: 'scenarios[move].travel.shaper.frequency', "
                                               "range: [0.1 Hz, 0.3 Hz]}], objective: min_cost}"),
                                 "bad.yaml"),
                  SpecError);
}

TEST_CASE("a ZV shaper designed from mode 1 of an undamped pendulum leaves no residual swing",
          "[shaper][modes][travel][reference]") {
  const double length = 6.0, accel = 0.05;
  const auto spec_text = [&](const std::string& shaper) {
    return fmt::format(R"(swaybound: 1
name: pendulum
gravity: {g}
links:
  - {{name: rope, kind: rope, length: {L} m, mass: 100 kg, com: {L} m, inertia: 0}}
base:
  scenarios:
    - name: move
      travel: {{moves: [{{at: 1 s, to: 0.12 m/s, accel: {a} m/s^2}}]{shaper}}}
cases: {{duration: 30 s, initial: [{{single: {{theta: [0 deg]}}}}]}}
solver: {{rtol: 1e-11, atol: 1e-13}}
)",
                       fmt::arg("g", kG), fmt::arg("L", length), fmt::arg("a", accel), fmt::arg("shaper", shaper));
  };
  const Spec shaped = load_spec_text(spec_text(", shaper: {kind: zv, mode: 1}"), "zv.yaml");
  const double w = std::sqrt(kG / length);
  CHECK_THAT(shaped.scenarios[0].travel->shaper->frequency, IsCloseTo(w / (2 * std::numbers::pi), 0, 1e-12));
  CHECK(shaped.scenarios[0].travel->shaper->damping_ratio == 0);
  const Spec plain = load_spec_text(spec_text(""), "plain.yaml");
  // Residual amplitude sqrt(theta^2 + (theta' / w)^2) at the end (the moves end by 4.2 s).
  const auto amplitude = [&](const Spec& spec) {
    const Model model = build_model(spec);
    Workspace ws(model);
    RunSettings settings = RunSettings::from_spec(spec);
    settings.output_rate = 0;
    double a = 0;
    REQUIRE(simulate_case(model, ws, 0, {}, settings, [&](const StepView& v) { a = std::hypot(v.x[0], v.x[1] / w); })
                .status == RunStatus::ok);
    return a;
  };
  const double residual_plain = amplitude(plain), residual_shaped = amplitude(shaped);
  INFO("unshaped " << residual_plain << " rad, shaped " << residual_shaped << " rad");
  CHECK(residual_plain > 1e-3);
  CHECK(residual_shaped < 1e-5 * residual_plain);
}

TEST_CASE("a shaped cross-travel move of a spherical pendulum is the planar shaped travel move turned by 90 degrees",
          "[spatial][travel][shaper][reference]") {
  const auto spec_text = [](bool spatial) {
    return fmt::format(R"(swaybound: 1
name: turned
gravity: 9.81
{motion}
links:
  - {{name: rope, kind: rope, length: 7 m, mass: 200 kg}}
  - {{name: hook, length: 1 m, mass: 300 kg}}
base:
  scenarios:
    - name: move
      {key}: {{moves: [{{at: 0.5 s, to: 1.2 m/s, accel: 0.5 m/s^2, jerk: 1 m/s^3}}], shaper: {{kind: zvd, mode: 1}},
               stop: {{at: 9 s, decel: 0.8 m/s^2}}}}
cases: {{duration: 20 s, initial: [{{single: {{theta: [0 deg, 0 deg]}}}}]}}
solver: {{rtol: 1e-11, atol: 1e-13}}
)",
                       fmt::arg("motion", spatial ? "motion: spatial" : ""),
                       fmt::arg("key", spatial ? "cross_travel" : "travel"));
  };
  const Spec planar = load_spec_text(spec_text(false), "planar.yaml");
  const Spec spatial = load_spec_text(spec_text(true), "spatial.yaml");
  REQUIRE(spatial.scenarios[0].cross_travel);
  CHECK(spatial.scenarios[0].cross_travel->shaper->frequency == planar.scenarios[0].travel->shaper->frequency);
  const Samples p = run_samples(planar, 20), s = run_samples(spatial, 20);
  REQUIRE(p.t.size() == s.t.size());
  double largest = 0, worst = 0, worst_x = 0, worst_base = 0;
  for (std::size_t k = 0; k < p.t.size(); ++k) {
    largest = std::max(largest, std::fabs(p.ex[k]));
    worst = std::max({worst, std::fabs(s.ez[k] - p.ex[k]), std::fabs(s.ey[k] - p.ey[k])});
    worst_x = std::max(worst_x, std::fabs(s.ex[k]));
    worst_base = std::max(worst_base, std::fabs(s.base[k] - p.base[k]));
  }
  INFO("largest swing component " << largest << ", largest difference " << worst);
  CHECK(largest > 0.01);
  CHECK(worst < 1e-7 * std::max(1.0, largest) + 1e-9);
  CHECK(worst_x == 0);  // nothing drives it along x
  CHECK(worst_base < 1e-12);
}

TEST_CASE("a jerk-limited cross-travel move covers the closed-form S-curve distance in the closed-form time",
          "[spatial][travel][profile][reference]") {
  const double v = 1.5, a = 0.5, j = 0.8, at = 2;  // v >= a^2 / j: an S-curve with a plateau
  const Spec spec = load_spec_text(fmt::format(R"(swaybound: 1
name: s-curve
motion: spatial
links:
  - {{name: rope, kind: rope, length: 5 m, mass: 40 kg}}
base:
  scenarios:
    - name: move
      cross_travel: {{moves: [{{at: {at} s, to: {v} m/s, accel: {a} m/s^2, jerk: {j} m/s^3}}]}}
cases: {{duration: 12 s, initial: [{{single: {{theta: [0 deg]}}}}]}}
)",
                                               fmt::arg("at", at), fmt::arg("v", v), fmt::arg("a", a),
                                               fmt::arg("j", j)),
                                   "scurve.yaml");
  const double duration = v / a + a / j, end = at + duration, distance = v * duration / 2;
  const Model model = build_model(spec);
  // Every corner of the S-curve is a phase boundary, exactly.
  std::vector<double> starts;
  for (const Phase& p : model.scenarios[0].phases) starts.push_back(p.t0);
  REQUIRE(starts.size() == 5);
  const double corners[] = {0, at, at + a / j, end - a / j, end};
  for (std::size_t k = 0; k < 5; ++k) CHECK_THAT(starts[k], IsCloseTo(corners[k], 1e-14, 1e-15));
  // Through the solver's base kinematics: position, speed and the peak speed.
  Workspace ws(model);
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 8;  // a sample at the end of the move, 5.625 s
  double z_end = 0, peak = 0, z_at_end = std::nan("");
  REQUIRE(simulate_case(model, ws, 0, {}, settings, {}, [&](const StepView& view) {
            peak = std::max(peak, view.ws->base_vz);
            z_end = view.ws->base_z;
            if (std::fabs(view.t - end) < 1e-9) z_at_end = view.ws->base_z;
            CHECK(view.ws->base_vx == 0);
          }).status == RunStatus::ok);
  CHECK_THAT(peak, IsCloseTo(v, 1e-12, 0));
  CHECK_THAT(z_end, IsCloseTo(distance + v * (12 - end), 1e-10, 1e-12));
  CHECK_THAT(z_at_end, IsCloseTo(distance, 1e-10, 1e-12));
}

TEST_CASE("a shaped slewing move leaves less residual sway than the unshaped one", "[spatial][slew][shaper]") {
  // A boom of radius R slews 0 -> 0.05 rad/s -> 0; after the moves the pivot is still, so the
  // residual sway is the largest swing angle afterwards.
  const auto run = [](double radius, double rate, const std::string& shaper) {
    const Spec spec = load_spec_text(fmt::format(R"(swaybound: 1
name: slewing
motion: spatial
gravity: 9.81
links:
  - {{name: rope, kind: rope, length: 6 m, mass: 100 kg, com: 6 m, inertia: 0}}
base:
  scenarios:
    - name: slew
      slew: {{radius: {r} m, moves: [{{at: 1 s, to: {w} rad/s, accel: 0.02 rad/s^2}},
                                    {{at: 8 s, to: 0 rad/s, accel: 0.02 rad/s^2}}]{shaper}}}
cases: {{duration: 40 s, initial: [{{single: {{theta: [0 deg]}}}}]}}
solver: {{rtol: 1e-11, atol: 1e-13}}
)",
                                                 fmt::arg("r", radius), fmt::arg("w", rate), fmt::arg("shaper", shaper)),
                                     "slew.yaml");
    const Model model = build_model(spec);
    const double end = slew_drive_profile(*spec.scenarios[0].slew).end_of_moves();
    Workspace ws(model);
    RunSettings settings = RunSettings::from_spec(spec);
    settings.output_rate = 200;
    double residual = 0, peak = 0;
    REQUIRE(simulate_case(model, ws, 0, {}, settings, {}, [&](const StepView& v) {
              const double angle = swing_angle(model, v.x, 0);
              peak = std::max(peak, angle);
              if (v.t > end) residual = std::max(residual, angle);
            }).status == RunStatus::ok);
    return std::pair{peak, residual};
  };
  // The pivot's acceleration is R psi'' along the boom's tangent (linear in the command, which the
  // shaper cancels) and R psi'^2 towards the axis (quadratic, which it does not): the shaped residual
  // over the unshaped one goes with psi'^2 / psi'', not with the radius. Measured (rtol 1e-11):
  // 0.05 rad/s at 0.02 rad/s^2: ratio 0.0234 at R = 20 m and at R = 0.5 m; 0.005 rad/s at 20 m:
  // 0.0026 (residual 6.6e-5 rad against 2.5e-2 rad unshaped).
  double slow_ratio = 0;
  for (const auto& [radius, rate] : {std::pair{20.0, 0.05}, std::pair{0.5, 0.05}, std::pair{20.0, 0.005}}) {
    const auto [peak_plain, plain] = run(radius, rate, "");
    const auto [peak_shaped, shaped] = run(radius, rate, ", shaper: {kind: zv, mode: 1}");
    WARN("slewing radius " << radius << " m to " << rate << " rad/s: residual unshaped " << plain << " rad (peak "
                           << peak_plain << "), ZV from mode 1 " << shaped << " rad (peak " << peak_shaped
                           << "), ratio " << shaped / plain);
    CHECK(plain > 1e-3 * radius * rate);
    CHECK(shaped < 0.05 * plain);
    if (rate < 0.01) slow_ratio = shaped / plain;
  }
  // Where the quadratic part is small (psi'^2 / psi'' = 1.25e-3), the ZV residual is small with it.
  CHECK(slow_ratio < 5e-3);
}

TEST_CASE("a slewing stop and a cross-travel stop are read in their units and written back", "[spatial][slew][spec]") {
  const Spec spec = load_spec_text(R"(swaybound: 1
name: stops
motion: spatial
links:
  - {name: rope, kind: rope, length: 6 m, mass: 30 kg}
base:
  scenarios:
    - name: slew
      slew: {radius: 12 m, moves: [{at: 1 s, to: 0.1 rad/s, accel: 0.05 rad/s^2}],
             shaper: {kind: zvd, period: 5 s}, stop: {at: 6 s, decel: 0.04 rad/s^2, jerk: 0.1 rad/s^3}}
    - name: both
      travel: {moves: [{at: 1 s, to: 1 m/s, accel: 0.5 m/s^2}]}
      cross_travel: {speed: 0.2 m/s, moves: [{at: 2 s, to: 0.6 m/s, accel: 0.3 m/s^2}],
                     stop: {at: 5 s, decel: 0.7 m/s^2}}
cases: {duration: 12 s, initial: [{single: {theta: [0 deg]}}]}
)",
                                   "stops.yaml");
  const auto& slew = spec.scenarios[0].slew.value();
  REQUIRE(slew.stop);
  CHECK(slew.stop->decel == 0.04);
  CHECK(slew.stop->jerk == 0.1);
  CHECK(slew.shaper->frequency == 0.2);
  // The slewing speed reaches 0 at the stop's end and stays there.
  const SpeedProfile rate = slew_drive_profile(slew);
  CHECK(rate.speed(rate.end_of_moves() + 1) == 0);
  CHECK(rate.end_of_moves() > 6);
  const auto& cross = spec.scenarios[1].cross_travel.value();
  CHECK(spec.scenarios[1].initial_vz == 0.2);
  // Every corner of both axes is a phase boundary: the travel's 1 and 3 s, the cross travel's 2 s,
  // its stop at 5 s (0.2 + 0.3 x 3 = ... it reached 0.6 m/s at 3.33 s) and the stop's end.
  const Model model = build_model(spec);
  std::vector<double> starts;
  for (const Phase& p : model.scenarios[1].phases) starts.push_back(p.t0);
  const double stop_end = 5 + 0.6 / 0.7;
  for (const double corner : {1.0, 2.0, 3.0, 2 + 0.4 / 0.3, 5.0, stop_end})
    CHECK(std::any_of(starts.begin(), starts.end(), [&](double t) { return std::fabs(t - corner) < 1e-12; }));
  CHECK(model.scenarios[1].phases.back().vz0 == 0);
  CHECK(cross.stop->decel == 0.7);
  const Spec again = load_spec_text(normalised_yaml(spec), "again.yaml");
  CHECK(again.scenarios[0].slew->stop->decel == 0.04);
  CHECK(again.scenarios[0].slew->shaper->frequency == 0.2);
  CHECK(again.scenarios[1].cross_travel->stop->decel == 0.7);
  CHECK(again.scenarios[1].cross_travel->initial_speed == 0.2);
}
