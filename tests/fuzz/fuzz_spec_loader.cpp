// libFuzzer target for the spec loader (built only with -DSWAYBOUND_FUZZ=ON and clang; preset `fuzz`).
//
// The loader's contract (specs/README.md, "Diagnostics"): any byte string either loads or throws a
// SpecError whose diagnostics each carry a message and a fix. Anything else (another exception, a
// crash, a sanitizer report, a hang or unbounded memory) is a finding. A spec that loads must also
// keep the loader's other promises, so they are checked too:
//   - the normalised spec (`swaybound validate` output) loads again, to the same case count;
//   - the model builds from it and the case space gives its first and last case.
// Run: .ci/fuzz-short [SECONDS], or build/fuzz/tests/fuzz/fuzz_spec_loader with a corpus folder.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <string_view>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

namespace {

[[noreturn]] void finding(const char* what, const std::string& detail) {
  std::fprintf(stderr, "FINDING: %s: %s\n", what, detail.c_str());
  std::abort();  // libFuzzer saves the input as crash-*
}

void check_diagnostics(const swaybound::SpecError& e) {
  if (e.diagnostics().empty()) finding("SpecError without diagnostics", e.what());
  for (const auto& d : e.diagnostics())
    if (d.message.empty() || d.fix.empty()) finding("diagnostic without message or fix", e.what());
}

void check_loaded(const swaybound::Spec& spec) {
  const long cases = swaybound::case_count(spec);
  if (cases <= 0 || cases > swaybound::kDefaultMaxCases) finding("case count outside (0, cap]", std::to_string(cases));
  const std::string normalised = swaybound::normalised_yaml(spec);
  try {
    const swaybound::Spec again = swaybound::load_spec_text(normalised, "normalised.yaml");
    if (swaybound::case_count(again) != cases) finding("normalised spec has another case count", normalised);
  } catch (const swaybound::SpecError& e) {
    finding("normalised spec does not load", std::string(e.what()) + "\n--- normalised ---\n" + normalised);
  }
  const swaybound::Model model = swaybound::build_model(spec);
  if (model.n != static_cast<int>(spec.links.size())) finding("model link count", std::to_string(model.n));
  const swaybound::CaseSpace space(spec);
  if (space.size() != cases) finding("case space size differs from case_count", std::to_string(space.size()));
  (void)space.at(0);
  (void)space.at(space.size() - 1);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  try {
    const swaybound::Spec spec = swaybound::load_spec_text(text, "fuzz.yaml");
    check_loaded(spec);
  } catch (const swaybound::SpecError& e) {
    check_diagnostics(e);  // the expected way to refuse input
  } catch (const std::exception& e) {
    finding("unexpected exception", e.what());
  } catch (...) {
    finding("unexpected exception", "(not a std::exception)");
  }
  return 0;
}
