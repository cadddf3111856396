// What a number means in a spec: angles carry a unit, values stay in their documented ranges, names
// read as they compare, and the YAML forms the loader would misread (tags, tab indentation) are
// refused. The positions of these errors are in the bad-spec corpus (tests/bad_specs/085..105);
// these tests cover what the corpus cannot: every angle-valued key, the fix lines, the round trip of
// the normalised spec and the simulate command line.
#include <unistd.h>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <regex>

#include <fmt/format.h>

#include "../support/process.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {
constexpr double kDeg = std::numbers::pi / 180;

/// The diagnostics of loading `text`; empty when it loads.
std::vector<Diagnostic> problems(const std::string& text) {
  try {
    load_spec_text(text, "inputs.yaml");
  } catch (const SpecError& e) {
    return e.diagnostics();
  }
  return {};
}

const Diagnostic* find_path(const std::vector<Diagnostic>& all, const std::string& path) {
  for (const auto& d : all)
    if (d.path == path) return &d;
  return nullptr;
}

/// A two-link spec with every angle-valued key written as `angle` (`wide` where it must be larger),
/// `rate` and `damping`, so one substitution of bare numbers reaches them all.
std::string every_angle_key(const std::string& angle, const std::string& wide, const std::string& rate,
                            const std::string& damping) {
  return fmt::format(R"(swaybound: 1
name: every angle-valued key
links:
  - name: upper
    length: 2 m
    mass: 20 kg
    pivot:
      friction: {{torque: 5 N m, transition_rate: {rate}}}
      damper: {{coefficient: {damping}, exponent: 0.8, linear_below: {rate}}}
  - {{name: lower, length: 1 m, mass: 10 kg}}
cases:
  duration: 10 s
  settling_band: {angle}
  initial:
    - single: {{theta: [{angle}, -{angle}], rate: [{rate}]}}
    - grid: {{theta: [[-{angle}, {angle}, 3]], rate: [[-{rate}, {rate}, 2]]}}
    - random: {{count: 4, seed: 1, theta: [[-{angle}, {angle}]], rate: [[-{rate}, {rate}]]}}
    - corners: {{theta: [[-{angle}, {angle}]], rate: [[-{rate}, {rate}]]}}
    - ladder: {{from: {{theta: [{angle}, {angle}]}}, absolute: [{angle}]}}
limits:
  - {{peak_angle: {angle}, link: lower}}
  - {{relative_angle: {angle}, link: lower}}
  - {{peak_rate: {rate}, link: lower}}
  - {{residual_sway: {angle}, after: 5 s}}
chaos:
  uncertainty: {angle}
  tolerance: {wide}
  onset: {{max: {angle}, resolution: {angle}}}
  map: {{theta: [[-{angle}, {angle}, 3], [-{angle}, {angle}, 3]]}}
sizing:
  variables:
    - {{path: "links[upper].pivot.damper.coefficient", range: [0, {damping}], cost: 1}}
)",
                     fmt::arg("angle", angle), fmt::arg("wide", wide), fmt::arg("rate", rate),
                     fmt::arg("damping", damping));
}
}  // namespace

TEST_CASE("a bare number is refused at every key whose unit holds an angle", "[spec][units]") {
  // With units the spec loads (a check that the template itself is valid).
  REQUIRE(problems(every_angle_key("0.2 deg", "5 deg", "1 deg/s", "300 N m s/rad")).empty());
  const auto all = problems(every_angle_key("0.2", "5", "1", "300"));
  const char* paths[] = {
      "links[0].pivot.friction.transition_rate",
      "links[0].pivot.damper.coefficient",
      "links[0].pivot.damper.linear_below",
      "cases.settling_band",
      "cases.initial[0].single.theta[0]",
      "cases.initial[0].single.theta[1]",
      "cases.initial[0].single.rate[0]",
      "cases.initial[1].grid.theta[0][0]",
      "cases.initial[1].grid.rate[0][1]",
      "cases.initial[2].random.theta[0][1]",
      "cases.initial[2].random.rate[0][0]",
      "cases.initial[3].corners.theta[0][0]",
      "cases.initial[3].corners.rate[0][1]",
      "cases.initial[4].ladder.from.theta[1]",
      "cases.initial[4].ladder.absolute[0]",
      "limits[0].peak_angle",
      "limits[1].relative_angle",
      "limits[2].peak_rate",
      "limits[3].residual_sway",
      "chaos.uncertainty",
      "chaos.tolerance",
      "chaos.onset.max",
      "chaos.onset.resolution",
      "chaos.map.theta[0][0]",
      "chaos.map.theta[1][1]",
      "sizing.variables[0].range[1]",
  };
  for (const char* path : paths) {
    INFO(path);
    const Diagnostic* d = find_path(all, path);
    REQUIRE(d != nullptr);
    CHECK(d->message.find("has no unit") != std::string::npos);
    CHECK(d->mark.line > 0);
  }
}

TEST_CASE("the fix line for a bare angle offers both readings", "[spec][units]") {
  // The issue's three cases: peak_angle 12 was 687.5 deg, theta 30 was 1719 deg (x 180/pi).
  const auto all = problems(
      "swaybound: 1\nname: n\nlinks: [{name: arm, length: 2 m, mass: 10 kg}]\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [30], rate: [5]}}]}\n"
      "limits: [{peak_angle: 12}]\n");
  REQUIRE(all.size() == 3);
  CHECK(find_path(all, "limits[0].peak_angle")->fix == "write `12 deg` or `12 rad` (= 687.5 deg)");
  CHECK(find_path(all, "cases.initial[0].single.theta[0]")->fix == "write `30 deg` or `30 rad` (= 1719 deg)");
  CHECK(find_path(all, "cases.initial[0].single.rate[0]")->fix ==
        "write `5 deg/s` or `5 rad/s` (= 286.5 deg/s)");
}

TEST_CASE("zero, and quantities without an angle, stay bare", "[spec][units]") {
  // 0 is 0 in deg and in rad. An FTLE limit and chaos threshold (1/s), an output rate (1/s), a
  // dashpot coefficient (N s/m), a torque and a length hold no angle: bare numbers are SI.
  const Spec spec = load_spec_text(R"(swaybound: 1
name: bare where it is unambiguous
links:
  - {name: arm, length: 2, mass: 10, pivot: {damper: {coefficient: 0, max_torque: 50}}}
dashpots:
  - {from: {link: arm, at: 1}, to: {base: [1, -1]}, coefficient: 300}
cases:
  duration: 5
  output_rate: 20
  initial: [{single: {theta: [0], rate: [0]}}, {corners: {theta: [[0, 0.1 rad]], rate: [[0, 0]]}}]
limits: [{ftle_max: 0.05, horizon: 4}]
chaos: {threshold: 0.01}
)",
                                   "bare.yaml");
  CHECK(spec.cases.initial[0].theta[0].lo == 0);
  CHECK(spec.cases.initial[1].theta[0].hi == Approx(0.1));
  CHECK(spec.links[0].pivot.dampers[0].coefficient == 0);
  CHECK(spec.links[0].pivot.dampers[0].max_torque == 50);
  CHECK(spec.dashpots[0].coefficient == 300);
  CHECK(spec.cases.output_rate == 20);
  CHECK(spec.limits[0].value == 0.05);
  CHECK(spec.chaos.threshold == 0.01);
}

TEST_CASE("the normalised spec writes every angle with its unit and loads back to the same values",
          "[spec][units]") {
  const Spec spec =
      load_spec_text(every_angle_key("3 deg", "10 deg", "2 deg/s", "0.4 kN m s/rad"), "angles.yaml");
  const std::string once = normalised_yaml(spec);
  INFO(once);
  CHECK(once.find("0.0523598775598 rad") != std::string::npos);  // 3 deg = 3 pi / 180 rad
  CHECK(once.find("400 N m s/rad") != std::string::npos);
  const Spec again = load_spec_text(once, "normalised.yaml");
  // The same text but for the comments, which mark the defaults of the first load.
  const auto strip_comments = [](const std::string& yaml) {
    return std::regex_replace(yaml, std::regex(" *#[^\n]*"), "");
  };
  CHECK(strip_comments(normalised_yaml(again)) == strip_comments(once));
  CHECK(again.limits[0].value == Approx(3 * kDeg).epsilon(1e-12));
  CHECK(again.limits[2].value == Approx(2 * kDeg).epsilon(1e-12));
  CHECK(again.cases.initial[4].steps[0] == Approx(3 * kDeg).epsilon(1e-6));  // written to 6 digits
  CHECK(again.chaos.onset_max == Approx(3 * kDeg).epsilon(1e-12));
  CHECK(again.chaos.map_y.lo == Approx(-3 * kDeg).epsilon(1e-12));
  CHECK(again.sizing->variables[0].hi == Approx(400).epsilon(1e-12));
  CHECK(again.links[0].pivot.friction->transition_rate == Approx(2 * kDeg).epsilon(1e-12));
}

TEST_CASE("simulate --theta and --rate refuse a bare angle with both readings", "[spec][units][cli]") {
  const fs::path spec =
      fs::temp_directory_path() / fmt::format("swaybound_simulate_units_{}.yaml", ::getpid());
  {
    std::ofstream(spec) << "swaybound: 1\nname: arm\nlinks: [{name: arm, length: 2 m, mass: 10 kg}]\n"
                           "cases: {duration: 1 s, initial: [{single: {theta: [1 deg]}}]}\n";
  }
  const auto run = [&](const std::string& options) {
    return swaybound::testing::run_command(fmt::format("{} simulate '{}' --duration 0.05 {} 2>&1 >/dev/null",
                                                       SWAYBOUND_CLI, spec.string(), options));
  };
  const auto bare = run("--theta 10");  // was a start at 573 deg
  CHECK(bare.status == 2);
  CHECK(bare.out.find("write `10 deg` or `10 rad` (= 573 deg)") != std::string::npos);
  const auto bare_rate = run("--rate '0.5'");
  CHECK(bare_rate.status == 2);
  CHECK(bare_rate.out.find("`0.5 deg/s` or `0.5 rad/s`") != std::string::npos);
  CHECK(run("--theta '10 deg' --rate '0.5 rad/s'").status == 0);
  CHECK(run("--theta 0 --rate 0").status == 0);
  fs::remove(spec);
}

TEST_CASE("gravity, link length and mass outside their ranges: the fix states the range", "[spec]") {
  const auto with = [](const std::string& gravity, const std::string& length, const std::string& mass) {
    return problems(
        fmt::format("swaybound: 1\nname: n\ngravity: {}\nlinks: [{{name: arm, length: {}, mass: {}}}]\n"
                    "cases: {{duration: 5 s, initial: [{{single: {{theta: [1 deg]}}}}]}}\n",
                    gravity, length, mass));
  };
  REQUIRE(with("1.62 m/s^2", "10 km", "100000 t").empty());  // the ends of the ranges load
  const auto all = with("1e-320", "1e154 m", "1e9 kg");
  REQUIRE(all.size() == 3);
  CHECK(find_path(all, "gravity")->fix.find("[0.1 m/s^2, 100 m/s^2]") != std::string::npos);
  CHECK(find_path(all, "links[0].length")->fix.find("10000 m]") != std::string::npos);
  CHECK(find_path(all, "links[0].mass")->fix.find("1e+08 kg]") != std::string::npos);
}

TEST_CASE("a link whose own pendulum period is outside 1 ms .. 1 day is refused at the key to check",
          "[spec]") {
  const auto link = [](const std::string& extra) {
    return problems(
        fmt::format("swaybound: 1\nname: n\nlinks: [{{name: arm, length: 2 m, mass: 10 kg{}}}]\n"
                    "cases: {{duration: 5 s, initial: [{{single: {{theta: [1 deg]}}}}]}}\n",
                    extra));
  };
  // A uniform 2 m rod: J = m L^2 / 3 about the pivot, h = m L / 2, period 2 pi sqrt(2 L / (3 g)) = 2.3 s.
  CHECK(link("").empty());
  // Inertia 1e300 kg m^2: period 2 pi sqrt((1e300 + 10) / (9.81 x 10)) = 6.3e149 s.
  const auto heavy = link(", inertia: 1e300 kg m^2");
  REQUIRE(heavy.size() == 1);
  CHECK(heavy[0].path == "links[0].inertia");
  CHECK(heavy[0].message.find("6.34e+149 s") != std::string::npos);
  // A point mass 1 nm below the pivot: period 2 pi sqrt(c / g) = 6.3e-5 s.
  const auto stiff = link(", com: 1e-9 m, inertia: 0");
  REQUIRE(stiff.size() == 1);
  CHECK(stiff[0].path == "links[0].com");
  // A link hanging from its centre of mass (h = 0) has no pendulum period and is not refused.
  CHECK(link(", com: 0, inertia: 3 kg m^2").empty());
}

TEST_CASE("names that read alike are one name; what the comparison does not catch", "[spec]") {
  const auto two_links = [](const std::string& a, const std::string& b) {
    return problems(
        fmt::format("swaybound: 1\nname: n\nlinks:\n  - {{name: \"{}\", length: 2 m, mass: 10 kg}}\n"
                    "  - {{name: \"{}\", length: 1 m, mass: 5 kg}}\n"
                    "cases: {{duration: 5 s, initial: [{{single: {{theta: [1 deg]}}}}]}}\n",
                    a, b));
  };
  // e with dot below and circumflex: precomposed U+1EC7, and e + the two marks in either order.
  const std::string precomposed = "\xE1\xBB\x87", below_first = "e\xCC\xA3\xCC\x82",
                    above_first = "e\xCC\x82\xCC\xA3";
  for (const auto& other : {below_first, above_first}) {
    const auto all = two_links("b" + precomposed + "n", "b" + other + "n");
    REQUIRE(all.size() == 1);
    CHECK(all[0].path == "links[1].name");
    CHECK(all[0].fix.find("how an accented letter is encoded") != std::string::npos);
  }
  // No-break space inside a name folds to a space.
  CHECK(two_links("hook block",
                  "hook\xC2\xA0"
                  "block")
            .size() == 1);
  // Not caught (documented): a Cyrillic a (U+0430) against a Latin a, and case.
  CHECK(two_links("arm", "\xD0\xB0rm").empty());
  CHECK(two_links("arm", "Arm").empty());
}

TEST_CASE("a reference to a name written in another encoding finds the link", "[spec]") {
  // The link is "café" with U+00E9; the limit names it with e + U+0301.
  const Spec spec = load_spec_text(
      "swaybound: 1\nname: n\nlinks: [{name: \"caf\xC3\xA9\", length: 2 m, mass: 10 kg}]\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [1 deg]}}]}\n"
      "limits: [{peak_angle: 10 deg, link: \"cafe\xCC\x81\"}]\n",
      "refs.yaml");
  CHECK(spec.limits[0].link == 0);
}

TEST_CASE("a tab in the indentation is reported as a tab; a tab YAML allows is not", "[spec][bad]") {
  for (const char* name : {"103_tab_indenting_a_list_item.yaml", "104_tab_indenting_a_key.yaml"}) {
    INFO(name);
    try {
      load_spec(std::string(SWAYBOUND_SOURCE_DIR) + "/tests/bad_specs/" + name);
      FAIL("loaded");
    } catch (const SpecError& e) {
      REQUIRE(e.diagnostics().size() == 1);
      CHECK(e.diagnostics()[0].message.find("tab") != std::string::npos);
    }
  }
  // Inside brackets a tab is separating white space, and a tab in a comment line harms nothing.
  CHECK(problems("swaybound: 1\nname: n\nlinks: [{name: arm,\n\tlength: 2 m, mass: 10 kg}]\n\t# note\n"
                 "cases: {duration: 5 s, initial: [{single: {theta: [1 deg]}}]}\n")
            .empty());
}

TEST_CASE("a YAML tag is refused, not dropped; quoted values are not tags", "[spec][bad]") {
  const auto all = problems(
      "swaybound: 1\nname: !!str tagged\nlinks: [{name: \"arm\", length: !!float 2, mass: '10 kg'}]\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [1 deg]}}]}\n");
  REQUIRE(all.size() == 2);
  CHECK(find_path(all, "name")->message.find("'!!str'") != std::string::npos);
  CHECK(find_path(all, "links[0].length")->message.find("'!!float'") != std::string::npos);
}

TEST_CASE("a dashpot whose ends meet at rest is refused", "[spec][bad]") {
  const auto dashpot = [](const std::string& from, const std::string& to) {
    return problems(
        fmt::format("swaybound: 1\nname: n\nlinks:\n  - {{name: upper, length: 2 m, mass: 10 kg}}\n"
                    "  - {{name: lower, length: 1 m, mass: 5 kg}}\n"
                    "dashpots: [{{from: {}, to: {}, coefficient: 1 kN s/m}}]\n"
                    "cases: {{duration: 5 s, initial: [{{single: {{theta: [1 deg]}}}}]}}\n",
                    from, to));
  };
  // The same point of one link; the lower end of one link and the top of the next (the pivot).
  CHECK(find_path(dashpot("{link: upper, at: 1 m}", "{link: upper, at: 1 m}"), "dashpots[0].to") != nullptr);
  CHECK(find_path(dashpot("{link: upper, at: 2 m}", "{link: lower, at: 0 m}"), "dashpots[0].to") != nullptr);
  // 1 mm apart at rest is a dashpot.
  CHECK(dashpot("{link: lower, at: 0.5 m}", "{base: [0.001 m, -2.5 m]}").empty());
}

TEST_CASE("a wrong sizing objective: the fix lists every form, the map form too", "[spec][bad][sizing]") {
  const std::string text = R"(swaybound: 1
name: objective forms
links:
  - {name: hook, length: 2 m, mass: 20 kg, pivot: {damper: {coefficient: 10 N m s/rad}}}
cases: {duration: 5 s, initial: [{single: {theta: [5 deg]}}]}
limits: [{peak_angle: 10 deg}]
sizing:
  variables: [{path: "links[hook].pivot.damper.coefficient", range: [1 N m s/rad, 100 N m s/rad]}]
  objective: min_costs
)";
  const auto all = problems(text);
  const Diagnostic* d = find_path(all, "sizing.objective");
  REQUIRE(d != nullptr);
  CHECK(d->mark.line == 9);
  CHECK(d->message.find("min_costs") != std::string::npos);
  for (const char* form : {"min_cost", "max_margin", "{min: LIMIT_KIND}", "link: LINK"}) {
    INFO(form << " in: " << d->fix);
    CHECK(d->fix.find(form) != std::string::npos);
  }
  CHECK(d->fix.find("did you mean 'min_cost'") != std::string::npos);
}
