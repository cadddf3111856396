// A travel drive's speed moves drive the base exactly, and the sway they leave behind follows the
// closed form of the small-amplitude pendulum. With theta'' + w^2 theta = -a(t) / L (w^2 = g / L),
// from rest, the sway left after the acceleration a(t) has ended has the amplitude
//   |A(w)| / (L w),   A(w) = integral a(t) exp(i w t) dt   (Duhamel's integral; e.g. Thomson &
// Dahleh, Theory of Vibration with Applications, ch. 4). A trapezoidal speed move of acceleration A
// lasting tau = dv / A is a rectangular pulse: |A(w)| = 2 A |sin(w tau / 2)| / w, so the residual
// amplitude is (2 A / g) |sin(w tau / 2)|: largest for tau = T/2, none for tau = T. An S-curve with
// jerk J is that pulse convolved with a unit box of width t_j = A / J, which multiplies |A(w)| by
// |sin(w t_j / 2) / (w t_j / 2)| (derived here from the convolution theorem).
#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "swaybound/integrate/extremes.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"
#include "swaybound/spec/paths.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kG = 9.81, kL = 9.81;  // w = 1 rad/s, period 2 pi s
constexpr double kAccel = 0.05;         // small against g: the linear pendulum holds to theta^2 / 16, about 6e-6

/// Largest |theta| after the drive's move has ended, for a move to speed `v` at `accel` (and
/// `jerk`, 0 for none) starting at t = 1 s; also the base's final position and speed.
struct Swing {
  double residual = 0, x_end = 0, v_end = 0;
};

Swing residual_after_move(double v, double jerk) {
  const std::string jerk_text = jerk > 0 ? fmt::format(", jerk: {} m/s^3", jerk) : "";
  const Spec spec = load_spec_text(fmt::format(R"(swaybound: 1
name: travel drive
gravity: {g}
links:
  - {{name: rope, kind: rope, length: {L} m, mass: 100 kg, com: {L} m, inertia: 0}}
base:
  scenarios:
    - name: move
      travel: {{speed: 0, moves: [{{at: 1 s, to: {v} m/s, accel: {a} m/s^2{jerk}}}]}}
cases: {{duration: 40 s, initial: [{{single: {{theta: [0 deg]}}}}]}}
solver: {{rtol: 1e-11, atol: 1e-13}}
)",
                                               fmt::arg("g", kG), fmt::arg("L", kL), fmt::arg("v", v),
                                               fmt::arg("a", kAccel), fmt::arg("jerk", jerk_text)),
                                   "travel.yaml");
  const double move_end = 1 + v / kAccel + (jerk > 0 ? kAccel / jerk : 0.0);
  const Model model = build_model(spec);
  Workspace ws(model);
  ExtremeFinder sway(1, [](const StepView& w, double* q) { q[0] = std::fabs(w.x[0]); }, {move_end});
  Swing s;
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 0;
  const RunOutcome out = simulate_case(model, ws, 0, {}, settings, [&](const StepView& w) {
    sway.observe(w);
    s.x_end = w.ws->base_x;
    s.v_end = w.ws->base_vx;
  });
  REQUIRE(out.status == RunStatus::ok);
  CHECK(out.max_audit_residual / out.audit_scale < 1e-9);
  s.residual = sway.max(0).value;
  return s;
}

}  // namespace

TEST_CASE("a trapezoidal travel move leaves the sway of a rectangular acceleration pulse", "[travel][reference]") {
  const double w = std::sqrt(kG / kL), period = 2 * M_PI / w;
  // Accelerating for half a period leaves the most sway, 2 A / g.
  const Swing half = residual_after_move(kAccel * period / 2, 0);
  CHECK_THAT(half.residual, IsCloseTo(2 * kAccel / kG, 0, 1e-4));  // measured -8.7e-6
  // Accelerating for a whole period leaves none (to the pendulum's nonlinearity, of order theta^2 / 16).
  const Swing whole = residual_after_move(kAccel * period, 0);
  CHECK(whole.residual < 1e-4 * 2 * kAccel / kG);  // measured 1.5e-5
  // The base ends at the drive's speed, having covered v^2 / (2 A) during the move.
  const double v = kAccel * period, t_end = 40;
  CHECK_THAT(whole.v_end, IsCloseTo(v, 1e-12, 1e-12));
  CHECK_THAT(whole.x_end, IsCloseTo(v * v / (2 * kAccel) + v * (t_end - 1 - period), 1e-9, 1e-12));
}

TEST_CASE("an S-curve travel move: the jerk limit multiplies the residual sway by a sinc", "[travel][reference]") {
  const double w = std::sqrt(kG / kL), period = 2 * M_PI / w;
  // t_j < tau: the move reaches its acceleration limit (a full S-curve, not a triangular one).
  const double tau = 0.7 * period, jerk = kAccel / (0.25 * period), t_j = kAccel / jerk;
  const Swing s = residual_after_move(kAccel * tau, jerk);
  const double expected =
      2 * kAccel / kG * std::fabs(std::sin(w * tau / 2)) * std::fabs(std::sin(w * t_j / 2) / (w * t_j / 2));
  CHECK_THAT(s.residual, IsCloseTo(expected, 0, 1e-4));  // measured -1.5e-5
  // Without the jerk limit the same move leaves more sway: the sinc is below 1.
  const Swing sharp = residual_after_move(kAccel * tau, 0);
  CHECK(sharp.residual > s.residual * 1.1);
}

TEST_CASE("a travel drive is read into SI and written back by the normalised spec", "[travel][spec]") {
  const Spec spec = load_spec_text(R"(swaybound: 1
name: travel keys
links:
  - {name: rope, kind: rope, length: 6 m, mass: 30 kg}
base:
  scenarios:
    - name: move
      travel: {speed: -6 m/min, moves: [{at: 500 ms, to: 60 m/min, accel: 0.3 m/s^2, jerk: 0.6 m/s^3}, {at: 12 s, to: 0, accel: 0.4 m/s^2}]}
cases: {duration: 20 s, initial: [{single: {theta: [5 deg]}}]}
limits: [{peak_angle: 30 deg}]
)",
                                   "travel.yaml");
  REQUIRE(spec.scenarios[0].travel);
  const auto& t = *spec.scenarios[0].travel;
  CHECK(t.initial_speed == Approx(-0.1).epsilon(1e-15));
  REQUIRE(t.moves.size() == 2);
  CHECK(t.moves[0].at == 0.5);
  CHECK(t.moves[0].to == Approx(1.0).epsilon(1e-15));
  CHECK(t.moves[0].jerk == 0.6);
  CHECK(t.moves[1].jerk == 0);
  CHECK(spec.scenarios[0].accel.empty());
  const Spec again = load_spec_text(normalised_yaml(spec), "normalised.yaml");
  REQUIRE(again.scenarios[0].travel);
  CHECK(again.scenarios[0].travel->initial_speed == t.initial_speed);
  REQUIRE(again.scenarios[0].travel->moves.size() == 2);
  for (std::size_t k = 0; k < 2; ++k) {
    CHECK(again.scenarios[0].travel->moves[k].at == t.moves[k].at);
    CHECK(again.scenarios[0].travel->moves[k].to == t.moves[k].to);
    CHECK(again.scenarios[0].travel->moves[k].accel == t.moves[k].accel);
    CHECK(again.scenarios[0].travel->moves[k].jerk == t.moves[k].jerk);
  }
}

TEST_CASE("sizing paths address a travel drive, and a range must build its profile at both ends", "[travel][sizing]") {
  const std::string text = R"(swaybound: 1
name: travel sizing
links:
  - {name: rope, kind: rope, length: 6 m, mass: 30 kg}
base:
  scenarios:
    - name: move
      travel: {speed: 0.2 m/s, moves: [{at: 1 s, to: 1 m/s, accel: 0.4 m/s^2, jerk: 1 m/s^3}, {at: 6 s, to: 0, accel: 0.4 m/s^2}]}
cases: {duration: 12 s, initial: [{single: {theta: [5 deg]}}]}
limits: [{peak_angle: 30 deg}]
sizing:
  variables: [VARIABLE]
  objective: min_cost
)";
  const auto with = [&](const std::string& variable) {
    std::string t = text;
    t.replace(t.find("VARIABLE"), 8, variable);
    return t;
  };
  Spec spec = load_spec_text(with("{path: 'scenarios[move].travel.moves[0].accel', range: [0.3 m/s^2, 1 m/s^2]}"),
                             "sized.yaml");
  std::string why;
  const auto accel = parse_spec_path(spec, "scenarios[move].travel.moves[0].accel", why);
  REQUIRE(accel);
  CHECK(get_spec_value(spec, *accel) == 0.4);
  set_spec_value(spec, *accel, 0.8);
  CHECK(spec.scenarios[0].travel->moves[0].accel == 0.8);
  const auto speed = parse_spec_path(spec, "scenarios[move].travel.speed", why);
  REQUIRE(speed);
  CHECK(get_spec_value(spec, *speed) == 0.2);
  CHECK_FALSE(parse_spec_path(spec, "scenarios[move].hoist.drum_speed", why));
  CHECK(why.find("no hoist") != std::string::npos);
  // At 0.1 m/s^2 the first move would still run at 6 s, when the second starts: refused at load.
  try {
    load_spec_text(with("{path: 'scenarios[move].travel.moves[0].accel', range: [0.1 m/s^2, 1 m/s^2]}"), "bad.yaml");
    FAIL("a range whose low end overlaps the moves was accepted");
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].path == "sizing.variables[0]");
    CHECK(e.diagnostics()[0].message.find("low end") != std::string::npos);
  }
}
