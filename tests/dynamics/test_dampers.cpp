// Several dampers at one pivot act side by side: their torques add. Two linear dampers c1 and c2
// in parallel are one damper c1 + c2 (parallel viscous elements, e.g. Den Hartog, Mechanical
// Vibrations, 1.5), so the two specs must give the same motion, modes and energy balance.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "swaybound/dynamics/forces.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"
#include "swaybound/spec/paths.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {
std::string chain(const std::string& lower_pivot, const std::string& extra = "") {
  return R"(
swaybound: 1
name: damper pair
links:
  - {name: hanger, length: 2 m, mass: 40 kg}
  - {name: load, length: 1.2 m, mass: 600 kg, com: 0.9 m, inertia: 60 kg m^2, pivot: )" +
         lower_pivot + R"(}
cases: {duration: 8 s, initial: [{single: {theta: [15 deg, 30 deg]}}]}
)" + extra;
}

/// Final state of 8 s from (15 deg, 30 deg) at a tight tolerance, and the run's outcome.
std::vector<double> final_state(const Spec& spec, RunOutcome& outcome) {
  const Model model = build_model(spec);
  Workspace ws(model);
  RunSettings s = RunSettings::from_spec(spec);
  s.rtol = 1e-12;
  s.atol = 1e-14;
  std::vector<double> last;
  const Observer on_step = [&](const StepView& v) { last.assign(v.x, v.x + model.state_size()); };
  outcome = simulate_case(model, ws, 0, {{15 * M_PI / 180, 30 * M_PI / 180}, {}}, s, on_step);
  return last;
}
}  // namespace

TEST_CASE("two linear dampers side by side move the chain as one damper of their sum", "[dynamics][dampers]") {
  const Spec pair = load_spec_text(
      chain("{dampers: [{coefficient: 300 N m s/rad}, {coefficient: 450 N m s/rad}]}"), "pair.yaml");
  const Spec single = load_spec_text(chain("{damper: {coefficient: 750 N m s/rad}}"), "single.yaml");
  REQUIRE(pair.links[1].pivot.dampers.size() == 2);
  RunOutcome a, b;
  const auto xa = final_state(pair, a), xb = final_state(single, b);
  REQUIRE(a.status == RunStatus::ok);
  REQUIRE(b.status == RunStatus::ok);
  for (std::size_t k = 0; k < xa.size(); ++k) CHECK_THAT(xa[k], IsCloseTo(xb[k], 1e-12, 1e-9));
  CHECK(xa[4] > 0);  // energy was dissipated
  const ModalResult ma = modal_analysis(build_model(pair)), mb = modal_analysis(build_model(single));
  REQUIRE(ma.modes.size() == mb.modes.size());
  for (std::size_t k = 0; k < ma.modes.size(); ++k) CHECK_THAT(ma.modes[k].damping_ratio, IsCloseTo(mb.modes[k].damping_ratio, 0, 1e-12));
}

TEST_CASE("a viscous and a power-law damper at one pivot: torques add, energy balances", "[dynamics][dampers]") {
  const Spec spec = load_spec_text(
      chain("{dampers: [{coefficient: 300 N m s/rad}, {coefficient: 900 N m s/rad, exponent: 0.6, max_torque: 2 kN m}]}"),
      "mixed.yaml");
  const Model model = build_model(spec);
  const PivotModel& p = model.pivots[1];
  REQUIRE(p.dampers.size() == 2);
  for (double w : {-2.0, -0.3, -1e-4, 0.0, 2e-4, 0.5, 3.0}) {
    INFO("w = " << w);
    // Each law by hand: linear -c w; power law -C |w|^0.6 sign(w) above linear_below (1e-3 rad/s),
    // the secant -C w0^(alpha - 1) w below it, capped at 2 kN m.
    const double aw = std::fabs(w);
    double power = aw < 1e-3 ? 900 * std::pow(1e-3, -0.4) * aw : 900 * std::pow(aw, 0.6);
    power = std::min(power, 2000.0);
    CHECK_THAT(damper_torque(p, w), IsCloseTo(-300 * w - (w >= 0 ? power : -power), 1e-12, 0));
  }
  RunOutcome out;
  final_state(spec, out);
  REQUIRE(out.status == RunStatus::ok);
  CHECK(out.max_audit_residual / out.audit_scale < 1e-9);
}

TEST_CASE("dampers: the spec forms, sizing paths and the normalised round trip", "[spec][dampers]") {
  const std::string two = "{dampers: [{coefficient: 300 N m s/rad}, {coefficient: 900 N m s/rad, exponent: 0.6}]}";
  const Spec spec = load_spec_text(chain(two), "two.yaml");
  std::string why;
  const auto second = parse_spec_path(spec, "links[load].pivot.dampers[1].exponent", why);
  REQUIRE(second);
  CHECK(get_spec_value(spec, *second) == 0.6);
  CHECK_FALSE(parse_spec_path(spec, "links[load].pivot.damper.coefficient", why));
  CHECK(why.find("name one as pivot.dampers[K].coefficient") != std::string::npos);
  CHECK_FALSE(parse_spec_path(spec, "links[load].pivot.dampers[2].coefficient", why));
  CHECK(why.find("K runs from 0 to 1") != std::string::npos);

  const Spec again = load_spec_text(normalised_yaml(spec), "normalised.yaml");
  REQUIRE(again.links[1].pivot.dampers.size() == 2);
  CHECK(again.links[1].pivot.dampers[1].exponent == 0.6);
  CHECK(again.links[1].pivot.dampers[0].coefficient == 300);

  const auto diagnostic = [](const std::string& text) {
    try {
      load_spec_text(text, "bad.yaml");
    } catch (const SpecError& e) {
      return e.diagnostics().at(0);
    }
    FAIL("loaded: " << text);
    return Diagnostic{};
  };
  const Diagnostic both =
      diagnostic(chain("{damper: {coefficient: 1 N m s/rad}, dampers: [{coefficient: 2 N m s/rad}]}"));
  CHECK(both.path == "links[1].pivot.dampers");
  CHECK(both.message.find("both 'damper' and 'dampers'") != std::string::npos);
  CHECK(diagnostic(chain("{dampers: []}")).path == "links[1].pivot.dampers");
  CHECK(diagnostic(chain("{dampers: [{coefficient: 2 N m s/rad}, {exponent: 0.5}]}")).path ==
        "links[1].pivot.dampers[1].coefficient");
}
