#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/core/error.hpp"

namespace swaybound::cli {

namespace fs = std::filesystem;

void require_input_path(const std::string& option, const std::string& path) {
  std::error_code ec;
  if (path.empty()) throw UsageError(option, "empty", "name a file");
  if (!fs::exists(path, ec))
    throw UsageError(option, fmt::format("no file or folder '{}'", path), "check the path and the working folder");
}

void require_input_file(const std::string& option, const std::string& path) {
  require_input_path(option, path);
  std::error_code ec;
  if (fs::is_directory(path, ec)) throw UsageError(option, fmt::format("'{}' is a folder", path), "name a file");
}

std::string read_input_file(const std::string& option, const std::string& path) {
  require_input_file(option, path);
  std::ifstream in(path, std::ios::binary);
  if (!in) throw RunError(fmt::format("cannot read {}", path));
  std::ostringstream s;
  s << in.rdbuf();
  if (!in && !in.eof()) throw RunError(fmt::format("cannot read {}", path));
  return s.str();
}

void print_notices(const std::vector<std::string>& notices) {
  for (const auto& notice : notices) std::cerr << "swaybound: " << notice << '\n';
}

void add_packet_run_options(CLI::App* cmd, PacketRunOptions& o, const std::string& out_help) {
  cmd->add_option("--out", o.out, out_help)->capture_default_str();
  cmd->add_option("--jobs", o.jobs, "Threads (default: every core)")->check(CLI::NonNegativeNumber);
  cmd->add_option("--max-cases", o.max_cases, "Cap on the number of cases")->check(CLI::PositiveNumber)->capture_default_str();
  cmd->add_option("--max-samples", o.max_samples,
                  "Cap on the output samples per case (cases.duration x cases.output_rate)")
      ->check(CLI::PositiveNumber)
      ->capture_default_str();
}

}  // namespace swaybound::cli
