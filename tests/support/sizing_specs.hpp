#pragma once
// A small sizing spec shared by the packet tests: one arm on a damped pivot, released at 2 deg, whose
// damper coefficient is sized so that the sway after 9.5 s stays under 0.5 deg.
#include <string>

#include <fmt/format.h>

namespace swaybound::testing {

/// The one-arm damper-sizing spec named `name`, with an evaluation budget of `evaluations`;
/// `gravity_line` (e.g. "gravity: 9.81") is written as given, empty for the default gravity.
inline std::string arm_damper_sizing_yaml(const std::string& name, int evaluations,
                                          const std::string& gravity_line = "") {
  return fmt::format(R"(
swaybound: 1
name: {}
{}
links:
  - {{name: arm, length: 1, mass: 1, com: 1, inertia: 0, pivot: {{damper: {{coefficient: 5 N m s/rad}}}}}}
cases: {{duration: 10 s, initial: [{{single: {{theta: [2 deg]}}}}]}}
limits:
  - {{residual_sway: 0.5 deg, after: 9.5 s}}
sizing:
  variables:
    - {{path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}}
  budget: {{evaluations: {}}}
)",
                     name, gravity_line, evaluations);
}

}  // namespace swaybound::testing
