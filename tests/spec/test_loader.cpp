// Loader behaviour on good specs: SI conversion, defaults, round trip of the demo specs.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <regex>

#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {
constexpr const char* kMinimal = R"(
swaybound: 1
name: test pendulum
links:
  - {name: arm, length: 2 m, mass: 3 kg}
cases:
  duration: 10 s
  initial:
    - single: {theta: [30 deg]}
)";

std::string strip_comments(const std::string& yaml) {
  return std::regex_replace(yaml, std::regex(" *#[^\n]*"), "");
}
}  // namespace

TEST_CASE("a minimal spec loads with documented defaults", "[spec]") {
  const Spec spec = load_spec_text(kMinimal, "inline.yaml");
  REQUIRE(spec.links.size() == 1);
  const LinkSpec& arm = spec.links[0];
  CHECK(arm.length == 2.0);
  CHECK(arm.com == 1.0);                        // uniform rod: com at mid-length
  CHECK(arm.inertia == Approx(3.0 * 4.0 / 12)); // uniform rod: m L^2 / 12
  CHECK(spec.gravity == 9.80665);               // standard gravity (CGPM 1901)
  CHECK(spec.scenarios.size() == 1);            // a fixed top pivot
  CHECK(spec.scenarios[0].name == "still");
  CHECK(spec.cases.initial[0].theta[0].lo == Approx(std::numbers::pi / 6));
  CHECK(case_count(spec) == 1);
  CHECK(spec.solver.method == Stepper::dopri5);
}

TEST_CASE("the demo specs load and their normalised form loads to the same spec", "[spec][demo]") {
  for (const char* name : {"gantry_hook_block.yaml", "boom_tip_attachment.yaml"}) {
    INFO(name);
    const Spec spec = load_spec(std::string(SWAYBOUND_SOURCE_DIR) + "/specs/" + name);
    CHECK_FALSE(spec.links.empty());
    const std::string once = normalised_yaml(spec);
    const Spec again = load_spec_text(once, "normalised.yaml");
    CHECK(strip_comments(normalised_yaml(again)) == strip_comments(once));
    CHECK(case_count(again) == case_count(spec));
  }
}

TEST_CASE("the gantry demo spec reads into SI", "[spec][demo]") {
  const Spec spec = load_spec(std::string(SWAYBOUND_SOURCE_DIR) + "/specs/gantry_hook_block.yaml");
  REQUIRE(spec.links.size() == 2);
  CHECK(spec.links[0].kind == LinkKind::rope);
  CHECK(spec.links[0].pivot.friction->pin_radius == Approx(0.040));
  CHECK(spec.links[1].mass == Approx(8500));
  CHECK(spec.links[1].pivot.dampers[0].coefficient == Approx(4000));
  CHECK(spec.links[1].pivot.dampers[0].max_torque == Approx(20000));
  CHECK(spec.scenarios.at(0).initial_vx == Approx(1.2));
  CHECK(spec.limits.at(0).value == Approx(12 * std::numbers::pi / 180));
  // 25 grid + 200 random + 2^3 corners + 6 ladder starts, times 2 scenarios.
  CHECK(case_count(spec) == (25 + 200 + 8 + 6) * 2);
  REQUIRE(spec.sizing.has_value());
  std::string why;
  const auto path = parse_spec_path(spec, spec.sizing->variables.at(0).path, why);
  REQUIRE(path.has_value());
  CHECK(get_spec_value(spec, *path) == Approx(4000));
}

TEST_CASE("validation collects every error, not only the first", "[spec]") {
  const char* text = R"(
swaybound: 1
name: many errors
links:
  - {name: a, length: -1 m, mass: 0 kg}
  - {name: a, length: 1 m, mass: 2 kg, com: 3 m}
cases: {duration: 0 s, initial: [{single: {theta: [1 deg]}}]}
)";
  try {
    load_spec_text(text, "many.yaml");
    FAIL("expected a SpecError");
  } catch (const SpecError& e) {
    std::vector<std::string> paths;
    for (const auto& d : e.diagnostics()) paths.push_back(d.path);
    CHECK(paths == std::vector<std::string>{"links[0].length", "links[0].mass", "links[1].name",
                                            "links[1].com", "cases.duration"});
  }
}

TEST_CASE("the case cap can be lifted by the caller", "[spec]") {
  const char* text = R"(
swaybound: 1
name: big grid
links: [{name: a, length: 1 m, mass: 1 kg}]
cases: {duration: 1 s, initial: [{random: {count: 30000, seed: 1, theta: [[0, 1 deg]]}}]}
)";
  CHECK_THROWS_AS(load_spec_text(text, "big.yaml"), SpecError);
  CHECK(case_count(load_spec_text(text, "big.yaml", LoadOptions{40000})) == 30000);
}

TEST_CASE("sizing paths resolve through link names and write back", "[spec]") {
  Spec spec = load_spec(std::string(SWAYBOUND_SOURCE_DIR) + "/specs/boom_tip_attachment.yaml");
  std::string why;
  auto p = parse_spec_path(spec, "links[basket].inertia", why);
  REQUIRE(p);
  set_spec_value(spec, *p, 200.0);
  CHECK(spec.links[2].inertia == 200.0);
  CHECK(units::si_unit(spec_path_dim(*p)) == "kg m^2");
  CHECK_FALSE(parse_spec_path(spec, "links[swivel link].pivot.damper.coefficient", why));
  CHECK(why.find("no damper") != std::string::npos);
  CHECK(parse_spec_path(spec, "dashpots[basket steady].coefficient", why));
  CHECK_FALSE(parse_spec_path(spec, "links[nope].mass", why));
}
