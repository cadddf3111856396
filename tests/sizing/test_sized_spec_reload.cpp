// The normalised spec of a sized design reloads to the same chain: a centre of mass and inertia the
// spec left to their defaults follow a sized length and mass (the uniform rod: c = L / 2,
// I = m L^2 / 12, as build_model takes them).
#include <catch2/catch.hpp>

#include "swaybound/model/model.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/spec/loader.hpp"

using namespace swaybound;

TEST_CASE("a sized link length and mass carry their default centre of mass and inertia into the sized spec",
          "[sizing]") {
  Spec spec = load_spec_text(R"(
swaybound: 1
name: sized rod
links:
  - {name: rod, length: 4 m, mass: 120 kg, pivot: {damper: {coefficient: 50 N m s/rad}}}
  - {name: hook, length: 1 m, mass: 300 kg, com: 0.6 m}
cases: {duration: 5 s, initial: [{single: {theta: [5 deg, 0 deg]}}]}
limits: [{peak_angle: 30 deg}]
sizing:
  variables:
    - {path: "links[rod].length", range: [2 m, 6 m], cost: 1}
    - {path: "links[rod].mass", range: [80 kg, 200 kg], cost: 1}
    - {path: "links[hook].length", range: [0.8 m, 2 m], cost: 1}
)",
                             "sized.yaml");
  const std::vector<DesignVariable> variables = design_variables(spec);
  REQUIRE(variables.size() == 3);
  apply_design(spec, variables, {5.5, 90.0, 1.7});
  const Model sized = build_model(spec);
  const Model reloaded = build_model(load_spec_text(normalised_yaml(spec), "sized_spec.yaml"));
  // The rod: both follow 5.5 m and 90 kg; the hook's given centre of mass stays where it was given.
  CHECK(sized.com[0] == 5.5 / 2);
  CHECK(sized.inertia[0] == 90.0 * 5.5 * 5.5 / 12);
  CHECK(sized.com[1] == 0.6);
  for (std::size_t i = 0; i < 2; ++i) {
    CHECK(reloaded.length[i] == sized.length[i]);
    CHECK(reloaded.mass[i] == sized.mass[i]);
    CHECK(reloaded.com[i] == Approx(sized.com[i]).epsilon(1e-11));
    CHECK(reloaded.inertia[i] == Approx(sized.inertia[i]).epsilon(1e-11));
  }
}
