#include <iostream>

#include "commands.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

Action add_validate(CLI::App& app) {
  auto* cmd = app.add_subcommand("validate", "Check a design spec and print it normalised to SI units");
  auto spec_path = std::make_shared<std::string>();
  auto max_cases = std::make_shared<long>(kDefaultMaxCases);
  auto max_samples = std::make_shared<long>(kDefaultMaxSamples);
  cmd->add_option("SPEC", *spec_path, "YAML design spec")->required();
  cmd->add_option("--max-cases", *max_cases, "Cap on the number of cases a spec may define")
      ->default_val(kDefaultMaxCases)
      ->check(CLI::PositiveNumber);
  cmd->add_option("--max-samples", *max_samples,
                  "Cap on the output samples per case (cases.duration x cases.output_rate)")
      ->default_val(kDefaultMaxSamples)
      ->check(CLI::PositiveNumber);
  return [cmd, spec_path, max_cases, max_samples]() {
    if (!cmd->parsed()) return -1;
    require_input_file("SPEC", *spec_path);
    const Spec spec = load_spec(*spec_path, LoadOptions{*max_cases, *max_samples});
    std::cout << normalised_yaml(spec);
    std::cerr << spec_path->c_str() << ": valid (" << spec.links.size() << " links, " << case_count(spec)
              << " cases, " << spec.limits.size() << " limits)\n";
    return kExitPass;
  };
}

}  // namespace swaybound::cli
