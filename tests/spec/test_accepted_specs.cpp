// "validate is the whole truth": every spec the loader accepts must pass the preparation stages of
// every command (check, size, simulate, modes) without an exception. A spec those stages cannot
// use must be refused by the loader, with its position and a fix.
//
// The corpus: the demo specs (specs/*.yaml), every file of the fuzz corpus (tests/fuzz/corpus/)
// that the loader accepts, and the specs written inline in this file's neighbours' style below.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <optional>
#include <sstream>

#include <fmt/format.h>
#include <yaml-cpp/yaml.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/checks.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/sizing/evaluate.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

/// The preparation each command does before its first case runs, in the commands' order.
void prepare_every_command(const Spec& spec) {
  // check (src/checks/check_run.cpp, run_check) and simulate (src/cli/cmd_simulate.cpp)
  const Model model = build_model(spec);
  const CaseSpace space(spec);
  if (space.size() > 0) {
    (void)space.at(0);
    (void)space.at(space.size() - 1);
  }
  const RunSettings run = RunSettings::from_spec(spec);
  CHECK(run.duration > 0);
  CHECK(run.output_rate > 0);
  const CheckSet checks(spec);
  const CaseExtremes extremes(model, spec);
  // modes (src/cli/cmd_modes.cpp) and the modal checks of `check`
  (void)modal_analysis(model);
  // size (src/cli/cmd_size.cpp): the design vector, the objective, the evaluator, and the model of
  // the designs at both ends of every range (the search starts from clamped bounds).
  // `size` writes its designs as normalised YAML and re-loads them (Sizer::round_trip in
  // src/sizing/sizer_ledger.cpp): the normalised form of an accepted spec must load again.
  (void)load_spec_text(normalised_yaml(spec), "normalised.yaml");
  if (spec.sizing) {
    const std::vector<DesignVariable> variables = design_variables(spec);
    (void)objective_metric(spec);
    const DesignEvaluator evaluator(spec, variables, 1);
    for (const bool high : {false, true}) {
      std::vector<double> values;
      for (const auto& v : variables) values.push_back(high ? v.hi : v.lo);
      Spec design = evaluator.design(values);
      (void)build_model(design);
    }
  }
}

std::string read_bytes(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// Loads `text`; true and the spec when the loader accepts it.
bool accepted(const std::string& text, const std::string& label, Spec& out) {
  try {
    out = load_spec_text(text, label);
    return true;
  } catch (const SpecError&) {
    return false;
  }
}

}  // namespace

TEST_CASE("every demo spec passes every command's preparation", "[spec][truth]") {
  int count = 0;
  for (const auto& entry : fs::directory_iterator(fs::path(SWAYBOUND_SOURCE_DIR) / "specs")) {
    if (entry.path().extension() != ".yaml") continue;
    INFO(entry.path().filename().string());
    const Spec spec = load_spec(entry.path().string());
    CHECK_NOTHROW(prepare_every_command(spec));
    ++count;
  }
  CHECK(count >= 2);
}

TEST_CASE("every fuzz-corpus spec the loader accepts passes every command's preparation",
          "[spec][truth][fuzz]") {
  int accepted_count = 0, total = 0;
  for (const auto& entry : fs::directory_iterator(fs::path(SWAYBOUND_SOURCE_DIR) / "tests/fuzz/corpus")) {
    if (!entry.is_regular_file()) continue;
    ++total;
    Spec spec;
    if (!accepted(read_bytes(entry.path()), entry.path().filename().string(), spec)) continue;
    ++accepted_count;
    INFO(entry.path().filename().string());
    CHECK_NOTHROW(prepare_every_command(spec));
  }
  INFO(accepted_count << " of " << total << " accepted");
  CHECK(total > 100);
  CHECK(accepted_count > 0);
}

namespace {
// A small valid chain; the sizing sections below are appended to it.
constexpr const char* kChain = R"(swaybound: 1
name: two links
links:
  - {name: upper, length: 2 m, mass: 50 kg, pivot: {damper: {coefficient: 200 N m s/rad, max_torque: 5 kN m}}}
  - {name: hook, length: 3 m, mass: 400 kg, pivot: {damper: {coefficient: 100 N m s/rad}}}
cases:
  duration: 2 s
  initial:
    - single: {theta: [5 deg]}
limits:
  - {peak_angle: 30 deg}
)";
}  // namespace

TEST_CASE("inline specs with sizing sections the loader accepts pass every command's preparation",
          "[spec][truth][sizing]") {
  const char* sizings[] = {
      "sizing:\n  variables:\n    - {path: 'links[upper].pivot.damper.coefficient', range: [50 N m s/rad, "
      "500 N m s/rad]}\n",
      "sizing:\n  variables:\n    - {path: 'links[upper].pivot.damper.max_torque', range: [1 kN m, 9 kN "
      "m]}\n",
      "sizing:\n  variables:\n    - {path: 'links[hook].length', range: [2 m, 4 m]}\n  objective: {min: "
      "peak_angle}\n",
      "sizing:\n  variables:\n    - {path: 'links[hook].pivot.damper.coefficient', catalogue: [50 N m s/rad, "
      "80 N m s/rad]}\n"
      "  objective: {min: peak_angle, link: hook}\n",
  };
  for (const char* sizing : sizings) {
    INFO(sizing);
    const Spec spec = load_spec_text(std::string(kChain) + sizing, "inline.yaml");
    CHECK_NOTHROW(prepare_every_command(spec));
  }
}

TEST_CASE("inline specs with the rope keys the loader accepts pass every command's preparation",
          "[spec][truth][rope]") {
  const char* specs[] = {
      // an elastic rope of 4 parts, hoisted with an S-curve move, its load lifted off the ground
      "swaybound: 1\nname: lift\nlinks:\n"
      "  - {name: rope, kind: rope, length: 10 m, mass: 50 kg, parts_of_line: 4, elastic: {ea: 90 MN, "
      "damping_ratio: 0.02}}\n"
      "  - {name: hook, length: 1 m, mass: 5 t}\n"
      "base:\n  scenarios:\n    - name: lift\n      hoist:\n"
      "        moves: [{at: 1 s, to: 0.8 m/s, accel: 0.4 m/s^2, jerk: 0.5 m/s^3}]\n"
      "      lift_off: {slack: 5 cm}\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [0 deg, 0 deg]}}]}\n",
      // an inextensible rope lowered by the drum, beside a scenario without a hoist
      "swaybound: 1\nname: lower\nlinks:\n"
      "  - {name: rope, kind: rope, length: 6 m, mass: 30 kg}\n"
      "  - {name: hook, length: 1 m, mass: 2 t}\n"
      "base:\n  scenarios:\n    - {name: lower, hoist: {drum_speed: -0.3 m/s}}\n    - {name: still}\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [5 deg, 0 deg]}}]}\n",
      // an elastic sling given by its spring rate below a rigid link
      "swaybound: 1\nname: sling\nlinks:\n"
      "  - {name: boom tip, length: 1 m, mass: 100 kg}\n"
      "  - {name: sling, kind: rope, length: 3 m, mass: 8 kg,"
      " elastic: {stiffness: 450 kN/m, damping: 2 kN s/m}}\n"
      "  - {name: load, length: 2 m, mass: 4 t}\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [5 deg]}}]}\n",
  };
  for (const char* text : specs) {
    INFO(text);
    const Spec spec = load_spec_text(text, "inline.yaml");
    CHECK_NOTHROW(prepare_every_command(spec));
  }
}

namespace {
/// Every value line of `normalised` (block-style YAML as normalised_yaml writes it) whose key is not
/// in `source` and that does not say "default" in its comment, as "line N: TEXT". Values inside a
/// block the normaliser marked as a default, and list items written in flow style, are not looked into.
std::optional<YAML::Node> child(const std::optional<YAML::Node>& node, const std::string& key) {
  if (!node || !node->IsMap()) return std::nullopt;
  for (auto it = node->begin(); it != node->end(); ++it)
    if (it->first.Scalar() == key) return it->second;
  return std::nullopt;
}

std::vector<std::string> unmarked_defaults(const std::string& normalised, const YAML::Node& source) {
  struct Frame {
    int indent;
    std::optional<YAML::Node> source;
    bool defaulted;
    std::size_t items = 0;
  };
  std::vector<Frame> stack{{-1, source, false}};
  std::vector<std::string> out;
  std::istringstream in(normalised);
  std::string line;
  for (int number = 1; std::getline(in, line); ++number) {
    int indent = 0;
    while (indent < static_cast<int>(line.size()) && line[static_cast<std::size_t>(indent)] == ' ') ++indent;
    std::string rest = line.substr(static_cast<std::size_t>(indent));
    if (rest.empty() || rest[0] == '#') continue;
    if (rest.rfind("- ", 0) == 0) {  // a block-list item: a frame for the item, then its first key
      while (stack.back().indent >= indent) stack.pop_back();
      Frame& list = stack.back();
      std::optional<YAML::Node> item;
      if (list.source && list.source->IsSequence() && list.items < list.source->size())
        item = (*list.source)[list.items];
      ++list.items;
      if (rest[2] == '{' || rest[2] == '[') continue;  // a flow item
      stack.push_back({indent, item, list.defaulted});
      indent += 2;
      rest = rest.substr(2);
    }
    const auto colon = rest.find(':');
    if (colon == std::string::npos) continue;
    const std::string key = rest.substr(0, colon);
    const auto hash = rest.find("  #");
    const std::string comment = hash == std::string::npos ? "" : rest.substr(hash);
    const std::string value =
        rest.substr(colon + 1, (hash == std::string::npos ? rest.size() : hash) - colon - 1);
    while (stack.back().indent >= indent) stack.pop_back();
    const Frame& parent = stack.back();
    const std::optional<YAML::Node> given = child(parent.source, key);
    const bool absent = !given;
    const bool marked = comment.find("default") != std::string::npos;
    const bool blank = value.find_first_not_of(' ') == std::string::npos;
    if (!parent.defaulted && absent && !marked && !blank)
      out.push_back(fmt::format("line {}: {}", number, line));
    if (blank) stack.push_back({indent, given, parent.defaulted || marked});
  }
  return out;
}
}  // namespace

TEST_CASE("validate marks every value it filled in as a default", "[spec][truth]") {
  const std::string specs[] = {
      // nearly everything left out
      "swaybound: 1\nname: minimal\nlinks:\n  - {name: hook, length: 3 m, mass: 400 kg}\n"
      "cases:\n  duration: 2 s\n  initial:\n    - single: {theta: [5 deg]}\n",
      // parts of the optional blocks given
      "swaybound: 1\nname: partial\nlinks:\n  - {name: upper, length: 2 m, mass: 50 kg}\n"
      "  - {name: hook, length: 3 m, mass: 400 kg, pivot: {damper: {coefficient: 100 N m s/rad}}}\n"
      "cases:\n  duration: 2 s\n  initial:\n    - single: {theta: [5 deg, 0 deg]}\n"
      "limits:\n  - {peak_angle: 30 deg}\n"
      "chaos:\n  separation: 1e-9\n  onset: {resolution: 1 deg}\n"
      "sizing:\n  variables:\n    - {path: 'links[hook].pivot.damper.coefficient', range: [50 N m s/rad, 500 "
      "N m s/rad]}\n"
      "solver: {rtol: 1e-7}\n"
      "report: {project: P-1}\n",
      // the rope keys with their defaults: parts_of_line, the rope's damping, the hoisted rope,
      // the drum's initial speed, a move's jerk and the lift-off slack
      "swaybound: 1\nname: rope defaults\nlinks:\n"
      "  - {name: rope, kind: rope, length: 6 m, mass: 30 kg, elastic: {ea: 90 MN}}\n"
      "  - {name: hook, length: 1 m, mass: 2 t}\n"
      "base:\n  scenarios:\n    - name: lift\n      initial_velocity: {x: 0 m/s}\n"
      "      hoist:\n        moves: [{at: 1 s, to: 0.2 m/s, accel: 0.1 m/s^2}]\n"
      "      lift_off: {}\n"
      "cases:\n  duration: 2 s\n  initial:\n    - single: {theta: [5 deg, 0 deg]}\n",
  };
  for (const auto& text : specs) {
    const Spec spec = load_spec_text(text, "inline.yaml");
    const std::string normalised = normalised_yaml(spec);
    INFO(normalised);
    CHECK(unmarked_defaults(normalised, YAML::Load(text)) == std::vector<std::string>{});
  }
}

TEST_CASE("the chaos.onset.max fix states the range the loader allows", "[spec][bad]") {
  const std::string base =
      "swaybound: 1\nname: onset\nlinks:\n  - {name: arm, length: 2 m, mass: 10 kg}\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [10 deg]}}]}\nchaos:\n  onset: {max: ";
  // Just inside the range the fix states is accepted; the ends are refused with that fix.
  CHECK(load_spec_text(base + "179.999 deg}\n", "inline.yaml").chaos.onset_max ==
        Approx(179.999 * std::numbers::pi / 180));
  CHECK(load_spec_text(base + "0.001 deg}\n", "inline.yaml").chaos.onset_max > 0);
  for (const char* bad : {"180 deg}\n", "0 deg}\n", "3.1416 rad}\n"}) {
    INFO(bad);
    try {
      load_spec_text(base + bad, "inline.yaml");
      FAIL("accepted");
    } catch (const SpecError& e) {
      REQUIRE(e.diagnostics().size() == 1);
      CHECK(e.diagnostics()[0].fix.find("above 0 and below 180 deg") != std::string::npos);
    }
  }
}
