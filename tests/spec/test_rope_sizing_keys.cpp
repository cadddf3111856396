// The rope keys under sizing (issue 14): a sized length, mass, stiffness or drum move keeps every
// design the search tries loadable, and the sizing paths address the rope keys and a scenario's drum.
// Split from test_rope_keys.cpp, whose helpers are in rope_keys_support.hpp.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <regex>

#include <fmt/format.h>

#include "../support/close_to.hpp"
#include "swaybound/core/units.hpp"
#include "swaybound/spec.hpp"
#include "swaybound/spec/paths.hpp"
#include "rope_keys_support.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;


using namespace swaybound::testing::rope_keys;

TEST_CASE("sizing a link's length or mass keeps the rope checks at both ends of its range",
          "[spec][rope][bad][sizing]") {
  // Drum at 0.5 m/s for 10 s hauls in 5 m: a rope of 5.27 m or less goes below 5% (5 / 0.95 m).
  const std::string hoisted = R"(swaybound: 1
name: sized rope
links:
  - {name: rope, kind: rope, length: 6 m, mass: 30 kg, elastic: {ea: 90 MN}}
  - {name: hook, length: 1 m, mass: 2 t}
base:
  scenarios:
    - {name: lift, hoist: {drum_speed: 0.5 m/s}}
cases: {duration: 10 s, initial: [{single: {theta: [5 deg, 0 deg]}}]}
limits:
  - {peak_angle: 30 deg}
sizing:
  variables:
    - {path: "links[rope].length", VALUES}
)";
  const auto with = [&](const std::string& values) {
    return std::regex_replace(hoisted, std::regex("VALUES"), values);
  };
  CHECK(problems(with("range: [5.3 m, 12 m]")).empty());
  const Diagnostic low = only_problem(with("range: [5.2 m, 12 m]"), "sizing.variables[0]");
  CHECK(contains(low.message, "at the low end of its range, links[rope].length = 5.2 m"));
  CHECK(contains(low.message, "less than 0.26 m, 5% of its length 5.2 m"));
  CHECK(contains(low.fix, "narrow the range"));
  CHECK(contains(only_problem(with("catalogue: [5 m, 6 m]"), "sizing.variables[0]").message,
                 "at the low end of its catalogue"));
  // The load's mass at the high end: EA 90 kN on 6 m (k = 15 kN/m) holds up to 15e3 x 3 m / g - 30 kg.
  const std::string soft = std::regex_replace(std::regex_replace(hoisted, std::regex("90 MN"), "90 kN"),
                                              std::regex("links\\[rope\\].length"), "links[hook].mass");
  const double heaviest = 15e3 * 3 / kGravity - 30;
  CHECK(problems(std::regex_replace(soft, std::regex("VALUES"),
                                    fmt::format("range: [1 t, {:.6g} kg]", heaviest * 0.99)))
            .empty());
  const Diagnostic high = only_problem(
      std::regex_replace(soft, std::regex("VALUES"), fmt::format("range: [1 t, {:.6g} kg]", heaviest * 1.01)),
      "sizing.variables[0]");
  CHECK(contains(high.message, "at the high end of its range"));
  CHECK(contains(high.message, "so soft"));
}

TEST_CASE("sizing paths address the rope keys and a scenario's drum", "[spec][rope][sizing]") {
  Spec spec = load_spec_text(R"(swaybound: 1
name: paths
links:
  - {name: main rope, kind: rope, length: 12 m, mass: 60 kg, parts_of_line: 4, elastic: {ea: 90 MN, damping_ratio: 0.02}}
  - {name: sling, kind: rope, length: 3 m, mass: 8 kg, elastic: {stiffness: 450 kN/m, damping: 20 kN s/m}}
  - {name: hook, length: 1.5 m, mass: 800 kg}
base:
  scenarios:
    - name: lift
      hoist: {rope: main rope, drum_speed: 0.2 m/s, moves: [{at: 1 s, to: 0.6 m/s, accel: 0.4 m/s^2, jerk: 0.5 m/s^3}]}
cases: {duration: 5 s, initial: [{single: {theta: [5 deg]}}]}
)",
                             "paths.yaml");
  std::string why;
  const auto value = [&](const char* text) {
    const auto p = parse_spec_path(spec, text, why);
    INFO(text << ": " << why);
    REQUIRE(p);
    return get_spec_value(spec, *p);
  };
  CHECK(value("links[main rope].elastic.ea") == 90e6);
  CHECK(value("links[main rope].elastic.damping_ratio") == 0.02);
  CHECK(value("links[main rope].parts_of_line") == 4);
  CHECK(value("links[sling].elastic.stiffness") == 450e3);
  CHECK(value("links[sling].elastic.damping") == 20e3);
  CHECK(value("scenarios[lift].hoist.drum_speed") == 0.2);
  CHECK(value("scenarios[lift].hoist.moves[0].to") == 0.6);
  CHECK(value("scenarios[lift].hoist.moves[0].accel") == 0.4);
  CHECK(value("scenarios[lift].hoist.moves[0].jerk") == 0.5);
  // Writing: a count rounds to whole parts; a drum value lands in the hoist.
  set_spec_value(spec, *parse_spec_path(spec, "links[main rope].parts_of_line", why), 2.6);
  CHECK(spec.links[0].parts_of_line == 3);
  set_spec_value(spec, *parse_spec_path(spec, "scenarios[lift].hoist.moves[0].to", why), 0.45);
  CHECK(spec.scenarios[0].hoist->moves[0].to == 0.45);
  // What is not there to vary is refused with the reason.
  for (const auto& [text, reason] :
       std::vector<std::pair<const char*, const char*>>{{"links[hook].parts_of_line", "is not a rope"},
                                                        {"links[main rope].elastic.stiffness", "gives its ea instead"},
                                                        {"links[sling].elastic.damping_ratio", "gives its damping instead"},
                                                        {"scenarios[lift].hoist.moves[1].to", "1 drum move(s)"},
                                                        {"scenarios[nope].hoist.drum_speed", "no scenario is named"},
                                                        {"scenarios[lift].hoist.speed", "unknown field"}}) {
    INFO(text);
    CHECK_FALSE(parse_spec_path(spec, text, why));
    CHECK(why.find(reason) != std::string::npos);
  }
}

TEST_CASE("sizing a rope's stiffness or the drum's moves keeps every design the search tries loadable",
          "[spec][rope][sizing]") {
  const auto spec_with = [](const std::string& variable) {
    return fmt::format(R"(swaybound: 1
name: sized rope
links:
  - {{name: main rope, kind: rope, length: 12 m, mass: 60 kg, elastic: {{ea: 90 MN}}}}
  - {{name: hook, length: 1.5 m, mass: 2 t}}
base:
  scenarios:
    - name: lift
      hoist: {{moves: [{{at: 1 s, to: 0.5 m/s, accel: 0.5 m/s^2}}, {{at: 4 s, to: 0, accel: 0.5 m/s^2}}]}}
cases: {{duration: 8 s, initial: [{{single: {{theta: [5 deg]}}}}]}}
limits: [{{peak_angle: 20 deg}}]
sizing:
  variables: [{variable}]
  objective: min_cost
)",
                       fmt::arg("variable", variable));
  };
  // 2 MN of EA over 12 m under 2 t stretches more than half the length: too soft at the low end.
  const Diagnostic soft =
      only_problem(spec_with("{path: 'links[main rope].elastic.ea', range: [2 kN, 200 MN]}"), "sizing.variables[0]");
  CHECK(contains(soft.message, "low end"));
  CHECK(contains(soft.message, "soft"));
  // At 0.1 m/s^2 the first move takes 5 s and would still run when the second starts at 4 s.
  const Diagnostic overlap = only_problem(
      spec_with("{path: 'scenarios[lift].hoist.moves[0].accel', range: [0.1 m/s^2, 1 m/s^2]}"), "sizing.variables[0]");
  CHECK(contains(overlap.message, "low end"));
  CHECK(contains(overlap.message, "moves[1]"));
  // Ranges whose ends load are accepted.
  CHECK(problems(spec_with("{path: 'scenarios[lift].hoist.moves[0].accel', range: [0.2 m/s^2, 1 m/s^2]}")).empty());
  CHECK(problems(spec_with("{path: 'links[main rope].elastic.ea', range: [20 MN, 200 MN]}")).empty());
}
