// "validate is the whole truth": every spec the loader accepts must pass the preparation stages of
// every command (check, size, simulate, modes) without an exception. A spec those stages cannot
// use must be refused by the loader, with its position and a fix.
//
// The corpus: the demo specs (specs/*.yaml), every file of the fuzz corpus (tests/fuzz/corpus/)
// that the loader accepts, and the specs written inline in this file's neighbours' style below.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <sstream>

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

TEST_CASE("every fuzz-corpus spec the loader accepts passes every command's preparation", "[spec][truth][fuzz]") {
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
      "sizing:\n  variables:\n    - {path: 'links[upper].pivot.damper.coefficient', range: [50 N m s/rad, 500 N m s/rad]}\n",
      "sizing:\n  variables:\n    - {path: 'links[upper].pivot.damper.max_torque', range: [1 kN m, 9 kN m]}\n",
      "sizing:\n  variables:\n    - {path: 'links[hook].length', range: [2 m, 4 m]}\n  objective: {min: peak_angle}\n",
      "sizing:\n  variables:\n    - {path: 'links[hook].pivot.damper.coefficient', catalogue: [50 N m s/rad, 80 N m s/rad]}\n"
      "  objective: {min: peak_angle, link: hook}\n",
  };
  for (const char* sizing : sizings) {
    INFO(sizing);
    const Spec spec = load_spec_text(std::string(kChain) + sizing, "inline.yaml");
    CHECK_NOTHROW(prepare_every_command(spec));
  }
}
