#pragma once
// Loading and validating a design spec. Every problem in the file is collected and thrown at once
// as a SpecError, each with file:line:column, the key path, what is wrong and what is allowed.
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// Documented caps on input size (specs/README.md, "Limits of the loader").
inline constexpr long kDefaultMaxCases = 20'000;       ///< per check run; lifted with --max-cases
inline constexpr std::size_t kMaxSpecBytes = 4u << 20; ///< 4 MiB: a design spec is a few kB
inline constexpr int kMaxLinks = 100;
/// Documented ranges of physical inputs (specs/README.md, "Limits of the loader"): inside them the
/// derived quantities (inertia about each pivot, static loads, energies) stay finite.
inline constexpr double kMinGravity = 0.1, kMaxGravity = 100;  ///< m/s^2
inline constexpr double kMaxLinkLength = 1e4;                  ///< m (10 km)
inline constexpr double kMaxLinkMass = 1e8;                    ///< kg (100 000 t)
/// Each link's own pendulum period (loader's estimate) must lie in [1 ms, 1 day].
inline constexpr double kMinPendulumPeriod = 1e-3, kMaxPendulumPeriod = 86400;  ///< s
/// A dashpot shorter than this at the hanging rest position has no usable direction.
inline constexpr double kMinDashpotLength = 1e-3;  ///< m
/// Characters (Unicode code points) in a name (any key `name`) and in any other text value
/// (report title, project, ...): the report lays them out on a page.
inline constexpr std::size_t kMaxNameChars = 200;
inline constexpr std::size_t kMaxTextChars = 500;
/// Output samples per case (cases.duration x cases.output_rate, plus the one at t = 0); a chaos
/// ladder keeps every sample of each of its starts. Lifted with --max-samples.
inline constexpr long kDefaultMaxSamples = 10'000'000;

struct LoadOptions {
  long max_cases = kDefaultMaxCases;      ///< the case cap; a larger case set is an error
  long max_samples = kDefaultMaxSamples;  ///< the cap on output samples per case
};

/// Output samples of a case of `duration` [s] at `output_rate` [1/s], the one at t = 0 included
/// (saturates at 1e18).
long samples_per_case(double duration, double output_rate);

/// Reads and validates the spec at `path`. Throws SpecError: with line 0 when the file as a whole
/// is unusable (missing, a folder, unreadable, too large, empty), with the position otherwise
/// (invalid UTF-8 byte, YAML syntax error, every content problem).
Spec load_spec(const std::string& path, const LoadOptions& options = {});

/// Same, from text in memory; `file_label` names it in diagnostics.
Spec load_spec_text(std::string_view text, const std::string& file_label,
                    const LoadOptions& options = {});

/// Number of starts an initial-condition set produces (before crossing with scenarios).
long initial_set_size(const InitialSetSpec& set);
/// Total cases of a spec: sum of initial-set sizes times the number of base scenarios.
long case_count(const Spec& spec);

/// The normalised spec as YAML in SI, with a comment on every value that came from a default.
std::string normalised_yaml(const Spec& spec);

}  // namespace swaybound

namespace swaybound {
/// The normalised spec flattened to (key path, value) pairs, list items named by their `name`
/// where they have one: ("links[hook].mass", "8500"). For comparing two revisions of a spec.
std::vector<std::pair<std::string, std::string>> flatten_spec(const Spec& spec);
}  // namespace swaybound
