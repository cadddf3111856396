// A shaped travel drive on a pendulum, through the spec keys, the model's phases and the solver.
// The references:
//  - small-amplitude pendulum theta'' + w^2 theta = -a(t) / L, w^2 = g / L for a point mass (any
//    dynamics text); its free motion after the drive's acceleration has ended has the constant
//    amplitude sqrt(theta^2 + (theta' / w)^2).
//  - an accelerating move of A lasting tau = T/2 leaves the largest residual amplitude 2 A / g
//    (test_travel.cpp, Duhamel's integral).
//  - shaping is a convolution with impulses; for a linear mode the residual of the shaped command is
//    the unshaped residual times the percentage vibration V(f / f_design) (Singer & Seering, ASME J.
//    Dyn. Sys. Meas. Control 112, 1990): so the ratio of the two simulated amplitudes is V, which
//    residual_vibration computes in closed form.
//  - a stop at D from speed v lasts v / D and covers v^2 / (2 D) (rectilinear kinematics).
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <string>

#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/model/shaper.hpp"
#include "swaybound/spec.hpp"
#include "swaybound/spec/paths.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kG = 9.81;
constexpr double kAccel = 0.05;  // small against g: the linear pendulum holds to theta^2 / 16, about 6e-6
const double kDesignLength = 9.81;  // w = 1 rad/s
const double kDesignFrequency = 1 / (2 * std::numbers::pi);  // [Hz]

struct Run {
  double amplitude = 0;  ///< sqrt(theta^2 + (theta' / w)^2) at the end [rad]
  double x_end = 0, v_end = 0;
};

/// A point-mass pendulum of length `length` whose base accelerates at kAccel from t = 1 s for half
/// the design period (a move to kAccel T / 2), shaped by `shaper` (a YAML flow map, or "" for none).
Run run(double length, const std::string& shaper, const std::string& stop = "") {
  const double period = 2 * std::numbers::pi, speed = kAccel * period / 2;
  std::string extra;
  if (!shaper.empty()) extra += ", shaper: " + shaper;
  if (!stop.empty()) extra += ", stop: " + stop;
  const Spec spec = load_spec_text(fmt::format(R"(swaybound: 1
name: shaped travel
gravity: {g}
links:
  - {{name: rope, kind: rope, length: {L:.17g} m, mass: 100 kg, com: {L:.17g} m, inertia: 0}}
base:
  scenarios:
    - name: move
      travel: {{speed: 0, moves: [{{at: 1 s, to: {v:.17g} m/s, accel: {a} m/s^2}}]{extra}}}
cases: {{duration: 40 s, initial: [{{single: {{theta: [0 deg]}}}}]}}
solver: {{rtol: 1e-11, atol: 1e-13}}
)",
                                               fmt::arg("g", kG), fmt::arg("L", length), fmt::arg("v", speed),
                                               fmt::arg("a", kAccel), fmt::arg("extra", extra)),
                                   "shaped.yaml");
  const Model model = build_model(spec);
  Workspace ws(model);
  const double w = std::sqrt(kG / length);
  Run r;
  RunSettings settings = RunSettings::from_spec(spec);
  settings.output_rate = 0;
  const RunOutcome out = simulate_case(model, ws, 0, {}, settings, [&](const StepView& v) {
    r.amplitude = std::hypot(v.x[0], v.x[1] / w);
    r.x_end = v.ws->base_x;
    r.v_end = v.ws->base_vx;
  });
  REQUIRE(out.status == RunStatus::ok);
  return r;
}

std::string shaper_text(const char* kind, const char* tolerance = "") {
  return fmt::format("{{kind: {}, frequency: {:.17g} Hz{}}}", kind, kDesignFrequency, tolerance);
}

}  // namespace

TEST_CASE("a ZV-shaped travel move leaves no sway on the pendulum it was designed for", "[travel][shaper][reference]") {
  const Run plain = run(kDesignLength, "");
  const Run shaped = run(kDesignLength, shaper_text("zv"));
  CHECK_THAT(plain.amplitude, IsCloseTo(2 * kAccel / kG, 0, 1e-4));
  // Zero to the solver tolerance and the pendulum's nonlinearity.
  // Measured 1.95e-8 rad against 1.02e-2 rad unshaped (1.9e-6 of it), the order of the pendulum's
  // nonlinearity theta^2 / 16 that test_travel.cpp sees on its unshaped moves.
  CHECK(shaped.amplitude < 1e-5 * plain.amplitude);
  // Same end speed; the shaped command is the mean of the command and the command half a period
  // (pi s) later, so the base lags by v pi / 2 once both have reached their speed.
  CHECK_THAT(shaped.v_end, IsCloseTo(plain.v_end, 1e-12, 1e-12));
  CHECK_THAT(plain.x_end - shaped.x_end, IsCloseTo(plain.v_end * std::numbers::pi / 2, 1e-9, 1e-9));
}

TEST_CASE("ZVD and EI shaping on a mistuned pendulum leave the closed-form percentage vibration",
          "[travel][shaper][reference]") {
  const InputShaper zvd = design_shaper(ShaperKind::zvd, kDesignFrequency, 0);
  const InputShaper ei = design_shaper(ShaperKind::ei, kDesignFrequency, 0, 0.05);
  for (const double ratio : {0.8, 0.9, 1.1, 1.2}) {
    // f = ratio f_design: L = g / (ratio w_design)^2.
    const double length = kG / (ratio * ratio);
    INFO("frequency ratio " << ratio);
    const Run plain = run(length, "");
    REQUIRE(plain.amplitude > 0.5 * kAccel / kG);
    const Run with_zvd = run(length, shaper_text("zvd"));
    const Run with_ei = run(length, shaper_text("ei", ", vibration_tolerance: 5 %"));
    CHECK_THAT(with_zvd.amplitude / plain.amplitude,
               IsCloseTo(residual_vibration(zvd, ratio * kDesignFrequency, 0), 2e-5, 1e-3));
    CHECK_THAT(with_ei.amplitude / plain.amplitude,
               IsCloseTo(residual_vibration(ei, ratio * kDesignFrequency, 0), 2e-5, 1e-3));
  }
}

TEST_CASE("a stop on a travel drive: the model's phases hold its corners and the base stops where it should",
          "[travel][shaper]") {
  // The move reaches 0.157 m/s at 1 + pi s; stop at 6 s at 0.2 m/s^2: 0 at 6 + v / 0.2 s.
  const double v = kAccel * std::numbers::pi;
  const Run stopped = run(kDesignLength, "", "{at: 6 s, decel: 0.2 m/s^2}");
  CHECK(stopped.v_end == 0);
  const double x_at_stop = v * v / (2 * kAccel) + v * (6 - 1 - std::numbers::pi);
  CHECK_THAT(stopped.x_end, IsCloseTo(x_at_stop + v * v / (2 * 0.2), 1e-12, 1e-12));
  // A stop of a shaped command: the stop's corner is a phase boundary of the model.
  const Spec spec = load_spec_text(R"(swaybound: 1
name: stop
links:
  - {name: rope, kind: rope, length: 6 m, mass: 30 kg}
base:
  scenarios:
    - name: move
      travel:
        moves: [{at: 1 s, to: 1 m/s, accel: 0.5 m/s^2}]
        shaper: {kind: zvd, period: 4 s}
        stop: {at: 5.5 s, decel: 0.8 m/s^2}
cases: {duration: 12 s, initial: [{single: {theta: [0 deg]}}]}
)",
                                   "stop.yaml");
  const Model model = build_model(spec);
  const auto& phases = model.scenarios[0].phases;
  // ZVD at 4 s: impulses at 0, 2, 4 s; the move's corners 1 and 3 s give 1, 3, 5 (and 7, 9 cut by
  // the stop), then the stop at 5.5 s.
  std::vector<double> starts;
  for (const Phase& p : phases) starts.push_back(p.t0);
  REQUIRE(starts.size() == 6);
  const double expected[] = {0, 1, 3, 5, 5.5};
  for (std::size_t k = 0; k < 5; ++k) CHECK_THAT(starts[k], IsCloseTo(expected[k], 1e-14, 0));
  // At 5.5 s the shaped speed is 1/4 + 1/2 (the first two impulses' moves are done) + 1/4 * 0.25 =
  // 0.8125 m/s (the third started at 5 s): the stop lasts 0.8125 / 0.8 s.
  CHECK_THAT(phases[4].vx0, IsCloseTo(0.8125, 1e-14, 0));
  CHECK(phases[4].ax == -0.8);
  CHECK_THAT(starts[5], IsCloseTo(5.5 + 0.8125 / 0.8, 1e-14, 0));
  CHECK(phases[5].ax == 0);
  CHECK(phases[5].vx0 == 0);
}

TEST_CASE("a travel drive's shaper and stop are read into SI, written back and sized", "[travel][shaper][spec][sizing]") {
  const std::string text = R"(swaybound: 1
name: shaper keys
links:
  - {name: rope, kind: rope, length: 6 m, mass: 30 kg}
base:
  scenarios:
    - name: move
      travel:
        moves: [{at: 1 s, to: 1 m/s, accel: 0.3 m/s^2}]
        shaper: {kind: ei, period: 4 s, damping_ratio: 0.05, vibration_tolerance: 8 %}
        stop: {at: 5 s, decel: 0.9 m/s^2, jerk: 2 m/s^3}
    - name: plain
      travel:
        moves: [{at: 1 s, to: 1 m/s, accel: 0.3 m/s^2}]
        shaper: {kind: zv, frequency: 300 mHz}
cases: {duration: 12 s, initial: [{single: {theta: [5 deg]}}]}
limits: [{peak_angle: 30 deg}]
)";
  std::string with_unit = text;
  // mHz is not a unit the loader knows: the bare SI number is 1/s (= Hz).
  with_unit.replace(with_unit.find("300 mHz"), 7, "0.3");
  const Spec spec = load_spec_text(with_unit, "keys.yaml");
  const auto& t = spec.scenarios[0].travel.value();
  REQUIRE(t.shaper);
  CHECK(t.shaper->kind == ShaperKind::ei);
  CHECK(t.shaper->frequency == 0.25);
  CHECK(t.shaper->damping_ratio == 0.05);
  CHECK(t.shaper->vibration_tolerance == 0.08);
  REQUIRE(t.stop);
  CHECK(t.stop->at == 5);
  CHECK(t.stop->decel == 0.9);
  CHECK(t.stop->jerk == 2);
  const auto& plain = spec.scenarios[1].travel.value();
  REQUIRE(plain.shaper);
  CHECK(plain.shaper->frequency == 0.3);
  CHECK(plain.shaper->damping_ratio == 0);           // default
  CHECK(plain.shaper->vibration_tolerance == 0.05);  // default, not read by zv
  CHECK_FALSE(plain.stop);

  const Spec again = load_spec_text(normalised_yaml(spec), "normalised.yaml");
  const auto& u = again.scenarios[0].travel.value();
  REQUIRE(u.shaper);
  REQUIRE(u.stop);
  CHECK(u.shaper->kind == t.shaper->kind);
  CHECK(u.shaper->frequency == t.shaper->frequency);
  CHECK(u.shaper->damping_ratio == t.shaper->damping_ratio);
  CHECK(u.shaper->vibration_tolerance == t.shaper->vibration_tolerance);
  CHECK(u.stop->at == t.stop->at);
  CHECK(u.stop->decel == t.stop->decel);
  CHECK(u.stop->jerk == t.stop->jerk);
  CHECK(again.scenarios[1].travel->shaper->kind == ShaperKind::zv);

  std::string why;
  const auto frequency = parse_spec_path(spec, "scenarios[move].travel.shaper.frequency", why);
  REQUIRE(frequency);
  CHECK(get_spec_value(spec, *frequency) == 0.25);
  Spec sized = spec;
  set_spec_value(sized, *frequency, 0.4);
  CHECK(sized.scenarios[0].travel->shaper->frequency == 0.4);
  const auto decel = parse_spec_path(spec, "scenarios[move].travel.stop.decel", why);
  REQUIRE(decel);
  CHECK(get_spec_value(spec, *decel) == 0.9);
  REQUIRE(parse_spec_path(spec, "scenarios[move].travel.shaper.damping_ratio", why));
  CHECK_FALSE(parse_spec_path(spec, "scenarios[plain].travel.stop.decel", why));
  CHECK(why.find("no travel stop") != std::string::npos);
}
