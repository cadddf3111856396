#pragma once
// The command-line front end: one function per subcommand, each registering its options on the
// CLI11 app and returning the action to run. Exit status: 0 pass, 1 a check fails, 2 input/run error.
#include <functional>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "swaybound/spec/loader.hpp"


namespace swaybound::cli {

inline constexpr int kExitPass = 0;
inline constexpr int kExitFail = 1;
inline constexpr int kExitError = 2;

using Action = std::function<int()>;

/// The whole command line: parses argv, runs the subcommand, reports errors on stderr; returns the
/// exit status.
int run(int argc, char** argv);

Action add_validate(CLI::App& app);
Action add_simulate(CLI::App& app);
Action add_modes(CLI::App& app);
Action add_check(CLI::App& app);
Action add_diff(CLI::App& app);
Action add_size(CLI::App& app);
Action add_verify(CLI::App& app);

/// The whole file named on the command line by `option` (e.g. "SPEC"), as bytes: UsageError when
/// there is no such file or it is a folder, RunError when it cannot be read.
std::string read_input_file(const std::string& option, const std::string& path);

/// UsageError when the file or folder named on the command line by `option` does not exist.
void require_input_path(const std::string& option, const std::string& path);

/// UsageError when the file named on the command line by `option` does not exist or is a folder.
void require_input_file(const std::string& option, const std::string& path);

/// What `check` and `size` share on the command line: the output folder, threads and the caps.
struct PacketRunOptions {
  std::string spec, out;
  int jobs = 0;
  long max_cases = kDefaultMaxCases;
  long max_samples = kDefaultMaxSamples;
  bool no_audit = false, quiet = false, force = false;
};
/// Registers --out (described by `out_help`), --jobs, --max-cases and --max-samples on `cmd`.
void add_packet_run_options(CLI::App* cmd, PacketRunOptions& options, const std::string& out_help);

/// Prints the packet writer's notices (a previous revision replaced, leftovers of a killed run
/// cleaned up) on stderr.
void print_notices(const std::vector<std::string>& notices);

}  // namespace swaybound::cli
