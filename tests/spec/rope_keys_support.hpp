#pragma once
// Helpers of the rope-key tests (test_rope_keys.cpp, test_rope_sizing_keys.cpp): the loader's
// diagnostics of a spec text and a small rope chain's spec.
#include <string>
#include <vector>

#include <catch2/catch.hpp>
#include <fmt/format.h>

#include "swaybound/spec.hpp"

namespace swaybound::testing::rope_keys {

using namespace swaybound;

/// The diagnostics of loading `text`; empty when it loads.
inline std::vector<Diagnostic> problems(const std::string& text) {
  try {
    load_spec_text(text, "rope.yaml");
  } catch (const SpecError& e) {
    return e.diagnostics();
  }
  return {};
}

/// The one diagnostic of loading `text`, which must fail with exactly one at `path`.
inline Diagnostic only_problem(const std::string& text, const std::string& path) {
  const auto all = problems(text);
  INFO(text);
  REQUIRE(all.size() == 1);
  CHECK(all[0].path == path);
  CHECK(all[0].mark.line > 0);
  CHECK_FALSE(all[0].fix.empty());
  return all[0];
}

inline bool contains(const std::string& text, const std::string& part) {
  return text.find(part) != std::string::npos;
}

inline bool defaulted(const Spec& spec, const std::string& path) {
  return std::find(spec.defaults_filled.begin(), spec.defaults_filled.end(), path) !=
         spec.defaults_filled.end();
}

/// A rope over a hook block: `rope` is the rope link's extra keys, `scenario` the scenario's extra
/// keys (both flow-map contents), `duration` the case duration.
inline std::string rope_spec(const std::string& rope, const std::string& scenario = "",
                      const std::string& duration = "10 s", const std::string& rope_length = "6 m") {
  return fmt::format(R"(swaybound: 1
name: rope keys
links:
  - {{name: rope, kind: rope, length: {}, mass: 30 kg{}}}
  - {{name: hook, length: 1 m, mass: 2 t}}
base:
  scenarios:
    - {{name: lift{}}}
cases: {{duration: {}, initial: [{{single: {{theta: [5 deg, 0 deg]}}}}]}}
)",
                     rope_length, rope.empty() ? "" : ", " + rope, scenario.empty() ? "" : ", " + scenario,
                     duration);
}

inline std::string strip_comments(const std::string& yaml) {
  return std::regex_replace(yaml, std::regex(" *#[^\n]*"), "");
}

inline constexpr double kGravity = 9.80665;  // the loader's default gravity (CGPM 1901 standard gravity)

}  // namespace swaybound::testing::rope_keys
