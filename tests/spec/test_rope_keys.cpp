// The rope keys of the spec (issue 14): parts_of_line and elastic on rope links, hoist and lift_off
// per scenario. Values in SI, the defaults recorded, every error's message and fix, the thresholds
// of the loader's checks from their closed forms, and the round trip through the normalised spec.
// The positions of these errors are in the bad-spec corpus (tests/bad_specs/200..221).
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

TEST_CASE("the unit parser reads spring rates and jerks", "[spec][units][rope]") {
  std::string why;
  const auto k = units::parse_quantity("3 MN/m", why);
  REQUIRE(k);
  CHECK(k->value == 3e6);
  CHECK(k->dim == units::stiffness);
  const auto kn = units::parse_quantity("450 kN/m", why);
  REQUIRE(kn);
  CHECK(kn->value == 450e3);
  CHECK(kn->dim == units::stiffness);
  const auto j = units::parse_quantity("0.5 m/s^3", why);
  REQUIRE(j);
  CHECK(j->dim == units::jerk);
  CHECK(units::si_unit(units::stiffness) == "N/m");
  CHECK(units::si_unit(units::jerk) == "m/s^3");
}

TEST_CASE("rope keys read into SI, with their defaults recorded", "[spec][rope]") {
  const Spec spec = load_spec_text(R"(swaybound: 1
name: two falls
links:
  - name: main rope
    kind: rope
    length: 12 m
    mass: 60 kg
    parts_of_line: 4
    elastic: {ea: 90 MN, damping_ratio: 0.02}
  - {name: hook, length: 1.5 m, mass: 800 kg}
  - {name: sling, kind: rope, length: 3 m, mass: 8 kg, elastic: {stiffness: 450 kN/m, damping: 20 kN s/m}}
  - {name: load, length: 2 m, mass: 4 t}
  - {name: tag line, kind: rope, length: 2 m, mass: 2 kg}
base:
  scenarios:
    - name: lift
      hoist:
        rope: main rope
        drum_speed: -12 m/min
        moves:
          - {at: 500 ms, to: 36 m/min, accel: 0.4 m/s^2, jerk: 0.5 m/s^3}
          - {at: 8 s, to: 0, accel: 0.3 m/s^2}
      lift_off: {slack: 5 cm}
    - name: lift taut
      lift_off: {}
    - name: still
cases: {duration: 20 s, initial: [{single: {theta: [5 deg]}}]}
)",
                                   "rope.yaml");
  REQUIRE(spec.links.size() == 5);
  const LinkSpec& main = spec.links[0];
  CHECK(main.parts_of_line == 4);
  REQUIRE(main.elastic);
  CHECK(main.elastic->ea == 90e6);
  CHECK(main.elastic->stiffness == 0);
  CHECK(main.elastic->damping_ratio == 0.02);
  CHECK(main.elastic->damping == 0);
  CHECK_FALSE(defaulted(spec, "links[0].parts_of_line"));
  CHECK_FALSE(defaulted(spec, "links[0].elastic.damping"));

  const LinkSpec& sling = spec.links[2];
  CHECK(sling.parts_of_line == 1);
  CHECK(defaulted(spec, "links[2].parts_of_line"));
  REQUIRE(sling.elastic);
  CHECK(sling.elastic->ea == 0);
  CHECK(sling.elastic->stiffness == 450e3);
  CHECK(sling.elastic->damping == 20e3);
  CHECK(sling.elastic->damping_ratio == -1);  // not given

  // A rope without `elastic` stays inextensible; its damping default belongs to `elastic` only.
  const LinkSpec& tag = spec.links[4];
  CHECK_FALSE(tag.elastic);
  CHECK(defaulted(spec, "links[4].parts_of_line"));
  CHECK_FALSE(defaulted(spec, "links[4].elastic.damping"));
  // parts_of_line is a rope key: no default recorded for a rigid link.
  CHECK_FALSE(defaulted(spec, "links[1].parts_of_line"));
  CHECK(spec.links[1].parts_of_line == 1);

  REQUIRE(spec.scenarios.size() == 3);
  const ScenarioSpec& lift = spec.scenarios[0];
  REQUIRE(lift.hoist);
  CHECK(lift.hoist->link == 0);
  CHECK_FALSE(defaulted(spec, "base.scenarios[0].hoist.rope"));
  CHECK_THAT(lift.hoist->initial_speed, IsCloseTo(-0.2, 0, 1e-15));  // 12 m/min
  REQUIRE(lift.hoist->moves.size() == 2);
  const DrumMoveSpec& first = lift.hoist->moves[0];
  CHECK(first.at == 0.5);
  CHECK_THAT(first.to, IsCloseTo(0.6, 0, 1e-15));  // 36 m/min
  CHECK(first.accel == 0.4);
  CHECK(first.jerk == 0.5);
  CHECK(first.mark.line == 21);
  CHECK_FALSE(defaulted(spec, "base.scenarios[0].hoist.moves[0].jerk"));
  CHECK(lift.hoist->moves[1].to == 0);
  CHECK(lift.hoist->moves[1].jerk == 0);
  CHECK(defaulted(spec, "base.scenarios[0].hoist.moves[1].jerk"));
  REQUIRE(lift.lift_off);
  CHECK_THAT(lift.lift_off->slack, IsCloseTo(0.05, 0, 1e-15));
  CHECK_FALSE(defaulted(spec, "base.scenarios[0].lift_off.slack"));

  REQUIRE(spec.scenarios[1].lift_off);
  CHECK(spec.scenarios[1].lift_off->slack == 0);
  CHECK(defaulted(spec, "base.scenarios[1].lift_off.slack"));
  CHECK_FALSE(spec.scenarios[1].hoist);
  CHECK_FALSE(spec.scenarios[2].hoist);
  CHECK_FALSE(spec.scenarios[2].lift_off);
}

TEST_CASE("a hoist winds the only rope when it names none, and starts at drum speed 0", "[spec][rope]") {
  const Spec spec = load_spec_text(rope_spec("", "hoist: {}"), "rope.yaml");
  REQUIRE(spec.scenarios[0].hoist);
  CHECK(spec.scenarios[0].hoist->link == 0);
  CHECK(spec.scenarios[0].hoist->initial_speed == 0);
  CHECK(spec.scenarios[0].hoist->moves.empty());
  CHECK(defaulted(spec, "base.scenarios[0].hoist.rope"));
  CHECK(defaulted(spec, "base.scenarios[0].hoist.drum_speed"));
  // An elastic rope without damping: damping 0, recorded as a default.
  const Spec damped = load_spec_text(rope_spec("elastic: {ea: 90 MN}"), "rope.yaml");
  REQUIRE(damped.links[0].elastic);
  CHECK(damped.links[0].elastic->damping == 0);
  CHECK(damped.links[0].elastic->damping_ratio == -1);
  CHECK(defaulted(damped, "links[0].elastic.damping"));
}

TEST_CASE("rope keys on a rigid link are refused and name kind: rope", "[spec][rope][bad]") {
  const std::string rigid = R"(swaybound: 1
name: rigid arm
links:
  - {name: arm, length: 2 m, mass: 10 kg, KEY}
cases: {duration: 5 s, initial: [{single: {theta: [5 deg]}}]}
)";
  for (const std::string key : {"parts_of_line", "elastic"}) {
    const std::string value = key == "elastic" ? "elastic: {ea: 90 MN}" : "parts_of_line: 2";
    const Diagnostic d = only_problem(std::regex_replace(rigid, std::regex("KEY"), value), "links[0]." + key);
    CHECK(contains(d.message, "needs kind: rope"));
    CHECK(contains(d.fix, "set kind: rope"));
  }
}

TEST_CASE("parts_of_line is a whole number from 1 to 64", "[spec][rope][bad]") {
  CHECK(load_spec_text(rope_spec("parts_of_line: 64"), "rope.yaml").links[0].parts_of_line == 64);
  for (const std::string bad : {"0", "65", "2.5", "2 m"}) {
    INFO(bad);
    const Diagnostic d = only_problem(rope_spec("parts_of_line: " + bad), "links[0].parts_of_line");
    CHECK(d.fix == "give a whole number from 1 to 64");
  }
}

TEST_CASE("elastic needs exactly one stiffness, at most one damping, in their units", "[spec][rope][bad]") {
  struct Bad {
    std::string elastic, path, message, fix;
  };
  const Bad cases[] = {
      {"{ea: 90 MN, stiffness: 3 MN/m}", "links[0].elastic.stiffness", "both 'ea' and 'stiffness'",
       "EA of one part of line"},
      {"{damping: 2 kN s/m}", "links[0].elastic", "neither 'ea' nor 'stiffness'", "'3 MN/m'"},
      {"{ea: 90 kN m}", "links[0].elastic.ea", "expects a force", "bare numbers are in N"},
      {"{ea: 0 N}", "links[0].elastic.ea", "out of range", "1e+12 N"},
      {"{ea: 2e12 N}", "links[0].elastic.ea", "out of range", "EA of one part of line"},
      {"{stiffness: 3 MN}", "links[0].elastic.stiffness", "expects a stiffness", "N/m"},
      {"{stiffness: 0 N/m}", "links[0].elastic.stiffness", "out of range", "> 0"},
      {"{ea: 90 MN, damping: 2 kN s/m, damping_ratio: 0.1}", "links[0].elastic.damping_ratio",
       "both 'damping' and 'damping_ratio'", "damping ratio of the load's bounce"},
      {"{ea: 90 MN, damping: -1 N s/m}", "links[0].elastic.damping", "out of range", ">= 0"},
      {"{ea: 90 MN, damping: 1 N m s/rad}", "links[0].elastic.damping", "expects a linear damping", "N s/m"},
      {"{ea: 90 MN, damping_ratio: 1}", "links[0].elastic.damping_ratio", "out of range", "[0, 1)"},
      {"{ea: 90 MN, damping_ratio: -0.1}", "links[0].elastic.damping_ratio", "out of range", "[0, 1)"},
      {"{ea: 90 MN, dampng: 2 kN s/m}", "links[0].elastic.dampng", "unknown key", "did you mean 'damping'"},
  };
  for (const Bad& bad : cases) {
    INFO(bad.elastic);
    const Diagnostic d = only_problem(rope_spec("elastic: " + bad.elastic), bad.path);
    CHECK(contains(d.message, bad.message));
    CHECK(contains(d.fix, bad.fix));
  }
  // The ends of the ranges that are allowed.
  CHECK(load_spec_text(rope_spec("elastic: {ea: 90 MN, damping_ratio: 0}"), "rope.yaml")
            .links[0]
            .elastic->damping_ratio == 0);
  CHECK(
      load_spec_text(rope_spec("elastic: {ea: 90 MN, damping: 0}"), "rope.yaml").links[0].elastic->damping ==
      0);
}

TEST_CASE("an elastic rope whose bounce period is below 10 us is refused as too stiff", "[spec][rope][bad]") {
  // A 1 m single-part rope of 1 kg with nothing below: the load's bounce period 2 pi sqrt(m / k)
  // with k = EA / length is 1e-5 s at EA = m (2 pi / 1e-5 s)^2 x 1 m = 3.948e11 N.
  const std::string one = R"(swaybound: 1
name: stiff sling
links:
  - {name: sling, kind: rope, length: 1 m, mass: 1 kg, elastic: {ea: EA}}
cases: {duration: 1 s, initial: [{single: {theta: [5 deg]}}]}
)";
  const double threshold = std::pow(2 * std::numbers::pi / 1e-5, 2);
  REQUIRE_THAT(threshold, IsCloseTo(3.948e11, 0, 1e-3));
  const auto with = [&](double ea) {
    return std::regex_replace(one, std::regex("EA"), fmt::format("{:.6g} N", ea));
  };
  CHECK(problems(with(threshold * 0.99)).empty());
  const Diagnostic d = only_problem(with(threshold * 1.01), "links[0].elastic.ea");
  CHECK(contains(d.message, "so stiff"));
  CHECK(d.fix == "give EA of one part of line in N (e.g. 90 MN); check the value's unit");
  // The stiffness counts the parts of line: 4 parts at a quarter of the EA are the same fall.
  const std::string four = std::regex_replace(one, std::regex("elastic"), "parts_of_line: 4, elastic");
  CHECK(problems(std::regex_replace(four, std::regex("EA"), fmt::format("{:.6g} N", threshold * 0.99 / 4)))
            .empty());
  CHECK(problems(std::regex_replace(four, std::regex("EA"), fmt::format("{:.6g} N", threshold * 1.01 / 4)))
            .size() == 1);
}

TEST_CASE("an elastic rope the load would stretch by more than half its length is refused as too soft",
          "[spec][rope][bad]") {
  // Rope 10 m, 10 kg, with 990 kg below: m g / k <= 5 m needs k >= 1000 kg x g / 5 m = 1961.33 N/m,
  // EA >= k x 10 m / parts.
  const std::string text = R"(swaybound: 1
name: soft rope
links:
  - {name: rope, kind: rope, length: 10 m, mass: 10 kg, ELASTIC}
  - {name: load, length: 1 m, mass: 990 kg}
cases: {duration: 1 s, initial: [{single: {theta: [5 deg, 0 deg]}}]}
)";
  const double k = 1000 * kGravity / 5;
  const auto with = [&](const std::string& elastic) {
    return std::regex_replace(text, std::regex("ELASTIC"), elastic);
  };
  CHECK(problems(with(fmt::format("elastic: {{ea: {:.6g} N}}", k * 10 * 1.01))).empty());
  CHECK(problems(with(fmt::format("parts_of_line: 2, elastic: {{ea: {:.6g} N}}", k * 5 * 1.01))).empty());
  CHECK(problems(with(fmt::format("elastic: {{stiffness: {:.6g} N/m}}", k * 1.01))).empty());
  const Diagnostic by_ea =
      only_problem(with(fmt::format("elastic: {{ea: {:.6g} N}}", k * 10 * 0.99)), "links[0].elastic.ea");
  CHECK(contains(by_ea.message, "so soft that the load would stretch it by more than half its length"));
  CHECK(contains(by_ea.fix, "EA of one part of line in N (e.g. 90 MN)"));
  CHECK(only_problem(with(fmt::format("parts_of_line: 2, elastic: {{ea: {:.6g} N}}", k * 5 * 0.99)),
                     "links[0].elastic.ea")
            .message.find("so soft") != std::string::npos);
  const Diagnostic by_k = only_problem(with(fmt::format("elastic: {{stiffness: {:.6g} N/m}}", k * 0.99)),
                                       "links[0].elastic.stiffness");
  CHECK(contains(by_k.fix, "spring rate of the whole fall in N/m"));
  // EA given in N where MN was meant is caught here: 90 N on a 6 m rope under 2 t.
  CHECK(contains(only_problem(rope_spec("elastic: {ea: 90 N}"), "links[0].elastic.ea").message, "so soft"));
}

TEST_CASE("a hoist must wind a rope: the errors name the ropes there are", "[spec][rope][bad]") {
  const Diagnostic rigid = only_problem(rope_spec("", "hoist: {rope: hook}"), "base.scenarios[0].hoist.rope");
  CHECK(rigid.message == "link 'hook' is rigid, and a drum winds a rope");
  CHECK(contains(rigid.fix, "ropes: 'rope'"));
  const Diagnostic unknown =
      only_problem(rope_spec("", "hoist: {rope: rpoe}"), "base.scenarios[0].hoist.rope");
  CHECK(contains(unknown.fix, "did you mean 'rope'"));
  const std::string two_ropes = R"(swaybound: 1
name: two ropes
links:
  - {name: main, kind: rope, length: 6 m, mass: 30 kg}
  - {name: sling, kind: rope, length: 2 m, mass: 5 kg}
  - {name: load, length: 1 m, mass: 2 t}
base:
  scenarios:
    - {name: lift, hoist: {drum_speed: 0.1 m/s}}
cases: {duration: 5 s, initial: [{single: {theta: [5 deg]}}]}
)";
  const Diagnostic two = only_problem(two_ropes, "base.scenarios[0].hoist");
  CHECK(contains(two.message, "('main', 'sling')"));
  CHECK(two.fix == "add rope: NAME, the rope link the drum winds");
  CHECK(load_spec_text(std::regex_replace(two_ropes, std::regex("drum_speed"), "rope: sling, drum_speed"),
                       "rope.yaml")
            .scenarios[0]
            .hoist->link == 1);
  const Diagnostic none =
      only_problem(std::regex_replace(rope_spec("", "hoist: {}"), std::regex("kind: rope, "), ""),
                   "base.scenarios[0].hoist");
  CHECK(contains(none.message, "no link is of kind rope"));
}

TEST_CASE("a drum move that cannot be built is reported at the move with the profile's reason",
          "[spec][rope][bad]") {
  // moves[0]: 0 -> 0.5 m/s at 0.25 m/s^2 from 1 s reaches its speed at 3 s.
  const std::string early = rope_spec(
      "",
      "hoist: {moves: [{at: 1 s, to: 0.5 m/s, accel: 0.25 m/s^2}, {at: 2 s, to: 0 m/s, accel: 0.25 m/s^2}]}");
  const Diagnostic d = only_problem(early, "base.scenarios[0].hoist.moves[1]");
  CHECK(d.message == "starts at 2 s, before moves[0] reaches its speed at 3 s");
  CHECK(d.fix == "start it at 3 s or later, or raise the accel or jerk of moves[0]");
  CHECK(problems(std::regex_replace(early, std::regex("at: 2 s"), "at: 3 s")).empty());
  // The loader's own ranges come first, with the key.
  CHECK(contains(only_problem(rope_spec("", "hoist: {moves: [{at: 1 s, to: 0.5 m/s, accel: 0}]}"),
                              "base.scenarios[0].hoist.moves[0].accel")
                     .message,
                 "out of range"));
  CHECK(contains(only_problem(rope_spec("", "hoist: {moves: [{at: -1 s, to: 0.5 m/s, accel: 1 m/s^2}]}"),
                              "base.scenarios[0].hoist.moves[0].at")
                     .message,
                 "out of range"));
  CHECK(contains(
      only_problem(rope_spec("", "hoist: {moves: [{at: 1 s, to: 0.5 m/s, accel: 1 m/s^2, jerk: 1 m/s^2}]}"),
                   "base.scenarios[0].hoist.moves[0].jerk")
          .message,
      "expects a jerk"));
  CHECK(contains(
      only_problem(rope_spec("", "hoist: {moves: {at: 1 s}}"), "base.scenarios[0].hoist.moves").message,
      "expected a list"));
}

TEST_CASE("a hoisted rope stays between 5% and 10 times its length over the run", "[spec][rope][bad]") {
  // Drum from 0 to 1 m/s at 1 m/s^2 from 1 s: s(t) = (t - 1)^2 / 2 to t = 2 s, then 0.5 + (t - 2).
  // Rope 10 m in 2 parts: length 10 - s / 2 reaches 0.5 m (5%) at s = 19 m, t = 20.5 s.
  const std::string in = "hoist: {moves: [{at: 1 s, to: 1 m/s, accel: 1 m/s^2}]}";
  CHECK(problems(rope_spec("parts_of_line: 2", in, "20.4 s", "10 m")).empty());
  const Diagnostic shortened =
      only_problem(rope_spec("parts_of_line: 2", in, "21 s", "10 m"), "base.scenarios[0].hoist");
  CHECK(contains(shortened.message, "less than 0.5 m, 5% of its length 10 m, at t = 20.5 s"));
  CHECK(contains(shortened.message, "2 parts of line"));
  CHECK(contains(shortened.message, "reaches 0.25 m at t = 21 s"));  // 10 - 19.5 / 2
  CHECK(contains(shortened.fix, "cases.duration (21 s)"));

  // Paying out at 1 m/s from the start: a 1 m rope reaches 10 m (10 times) at t = 9 s.
  const std::string out = "hoist: {drum_speed: -1 m/s}";
  CHECK(problems(rope_spec("", out, "8.9 s", "1 m")).empty());
  const Diagnostic lengthened = only_problem(rope_spec("", out, "9.5 s", "1 m"), "base.scenarios[0].hoist");
  CHECK(contains(lengthened.message, "more than 10 m, 10 times its length 1 m, at t = 9 s"));

  // The shortest length can lie inside a move, where the drum reverses: +2 m/s, then from 1 s a move
  // to -2 m/s at 1 m/s^2 (4 s). s(t) = 2t to 1 s, then 2 + 2d - d^2/2 with d = t - 1: its largest
  // value, 4 m at t = 3 s, is between the breakpoints (1 s and 5 s, where s = 2 m).
  const std::string reverse = "hoist: {drum_speed: 2 m/s, moves: [{at: 1 s, to: -2 m/s, accel: 1 m/s^2}]}";
  CHECK(problems(rope_spec("", reverse, "5 s", "4.3 m")).empty());  // shortest 0.3 m >= 0.215 m
  const Diagnostic inside = only_problem(rope_spec("", reverse, "5 s", "4.2 m"), "base.scenarios[0].hoist");
  // 4.2 - s = 0.21 at 2 + 2d - d^2/2 = 3.99: d = 2 - sqrt(0.02).
  CHECK(contains(inside.message, fmt::format("at t = {:.6g} s", 3 - std::sqrt(0.02))));
  CHECK(contains(inside.message, "reaches 0.2 m at t = 3 s"));
}

TEST_CASE("lift-off needs an elastic rope as links[0] with a load below it", "[spec][rope][bad]") {
  const Spec ok = load_spec_text(rope_spec("elastic: {ea: 90 MN}", "lift_off: {slack: 10 cm}"), "rope.yaml");
  CHECK_THAT(ok.scenarios[0].lift_off->slack, IsCloseTo(0.1, 0, 1e-15));

  const Diagnostic inextensible = only_problem(rope_spec("", "lift_off: {}"), "base.scenarios[0].lift_off");
  CHECK(contains(inextensible.message, "rope 'rope' has no 'elastic'"));
  CHECK(contains(inextensible.fix, "elastic: {ea:"));

  const Diagnostic rigid =
      only_problem(std::regex_replace(rope_spec("", "lift_off: {}"), std::regex("kind: rope, "), ""),
                   "base.scenarios[0].lift_off");
  CHECK(contains(rigid.message, "links[0] 'rope' is rigid"));

  const std::string single = R"(swaybound: 1
name: rope alone
links:
  - {name: rope, kind: rope, length: 6 m, mass: 2 t, elastic: {ea: 90 MN}}
base:
  scenarios:
    - {name: lift, lift_off: {}}
cases: {duration: 5 s, initial: [{single: {theta: [5 deg]}}]}
)";
  CHECK(contains(only_problem(single, "base.scenarios[0].lift_off").message, "the chain has one link"));

  const Diagnostic slack = only_problem(rope_spec("elastic: {ea: 90 MN}", "lift_off: {slack: 6 m}"),
                                        "base.scenarios[0].lift_off.slack");
  CHECK(contains(slack.message, "not less than the length of links[0] 'rope', 6 m"));
  CHECK(contains(only_problem(rope_spec("elastic: {ea: 90 MN}", "lift_off: {slack: -1 cm}"),
                              "base.scenarios[0].lift_off.slack")
                     .message,
                 "out of range"));
  CHECK(problems(rope_spec("elastic: {ea: 90 MN}", "lift_off: {slack: 5.99 m}")).empty());
}

TEST_CASE("the normalised spec writes the rope keys and loads back to the same spec", "[spec][rope]") {
  const std::string text = R"(swaybound: 1
name: round trip
links:
  - {name: main rope, kind: rope, length: 12 m, mass: 60 kg, parts_of_line: 4, elastic: {ea: 90 MN, damping_ratio: 0.02}}
  - {name: hook, length: 1.5 m, mass: 800 kg}
  - {name: sling, kind: rope, length: 3 m, mass: 8 kg, elastic: {stiffness: 450 kN/m, damping: 20 kN s/m}}
  - {name: load, length: 2 m, mass: 4 t}
base:
  scenarios:
    - name: lift
      initial_velocity: {x: 0.5 m/s}
      hoist:
        rope: main rope
        drum_speed: -12 m/min
        moves:
          - {at: 500 ms, to: 36 m/min, accel: 0.4 m/s^2, jerk: 0.5 m/s^3}
          - {at: 8 s, to: 0, accel: 0.3 m/s^2}
      lift_off: {slack: 5 cm}
    - name: taut
      lift_off: {}
    - name: travel
      accel: [{for: 2 s, x: 0.3 m/s^2}]
cases: {duration: 20 s, initial: [{single: {theta: [5 deg]}}]}
)";
  const Spec spec = load_spec_text(text, "rope.yaml");
  const std::string once = normalised_yaml(spec);
  INFO(once);
  const Spec again = load_spec_text(once, "normalised.yaml");
  REQUIRE(again.links.size() == spec.links.size());
  for (std::size_t i = 0; i < spec.links.size(); ++i) {
    INFO(spec.links[i].name);
    CHECK(again.links[i].kind == spec.links[i].kind);
    CHECK(again.links[i].parts_of_line == spec.links[i].parts_of_line);
    REQUIRE(again.links[i].elastic.has_value() == spec.links[i].elastic.has_value());
    if (!spec.links[i].elastic) continue;
    const RopeElasticSpec &a = *again.links[i].elastic, &b = *spec.links[i].elastic;
    CHECK_THAT(a.ea, IsCloseTo(b.ea, 0, 1e-12));
    CHECK_THAT(a.stiffness, IsCloseTo(b.stiffness, 0, 1e-12));
    CHECK_THAT(a.damping, IsCloseTo(b.damping, 0, 1e-12));
    CHECK_THAT(a.damping_ratio, IsCloseTo(b.damping_ratio, 0, 1e-12));
  }
  REQUIRE(again.scenarios.size() == spec.scenarios.size());
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i) {
    const ScenarioSpec &a = again.scenarios[i], &b = spec.scenarios[i];
    INFO(b.name);
    REQUIRE(a.hoist.has_value() == b.hoist.has_value());
    if (b.hoist) {
      CHECK(a.hoist->link == b.hoist->link);
      CHECK_THAT(a.hoist->initial_speed, IsCloseTo(b.hoist->initial_speed, 0, 1e-12));
      REQUIRE(a.hoist->moves.size() == b.hoist->moves.size());
      for (std::size_t k = 0; k < b.hoist->moves.size(); ++k) {
        CHECK_THAT(a.hoist->moves[k].at, IsCloseTo(b.hoist->moves[k].at, 0, 1e-12));
        CHECK_THAT(a.hoist->moves[k].to, IsCloseTo(b.hoist->moves[k].to, 0, 1e-12));
        CHECK_THAT(a.hoist->moves[k].accel, IsCloseTo(b.hoist->moves[k].accel, 0, 1e-12));
        CHECK_THAT(a.hoist->moves[k].jerk, IsCloseTo(b.hoist->moves[k].jerk, 0, 1e-12));
      }
    }
    REQUIRE(a.lift_off.has_value() == b.lift_off.has_value());
    if (b.lift_off) CHECK_THAT(a.lift_off->slack, IsCloseTo(b.lift_off->slack, 0, 1e-12));
  }
  // The normalised form is a fixed point, and the keys a spec leaves out stay out.
  CHECK(strip_comments(normalised_yaml(again)) == strip_comments(once));
  CHECK(contains(once, "parts_of_line: 4"));
  CHECK(contains(once, "rope: main rope"));
  const std::string plain = normalised_yaml(load_spec_text(rope_spec(""), "rope.yaml"));
  for (const char* key : {"parts_of_line", "elastic", "hoist", "lift_off"}) {
    INFO(key);
    CHECK_FALSE(contains(plain, key));
  }
}

