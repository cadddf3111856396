#pragma once
// The command-line front end: one function per subcommand, each registering its options on the
// CLI11 app and returning the action to run. Exit status: 0 pass, 1 a check fails, 2 input/run error.
#include <functional>
#include <string>

#include <CLI/CLI.hpp>

#include "swaybound/report/document.hpp"

namespace swaybound {
class PacketWriter;
struct CheckReport;
struct Spec;
}  // namespace swaybound

namespace swaybound::cli {

inline constexpr int kExitPass = 0;
inline constexpr int kExitFail = 1;
inline constexpr int kExitError = 2;

using Action = std::function<int()>;

Action add_validate(CLI::App& app);
Action add_simulate(CLI::App& app);
Action add_modes(CLI::App& app);
Action add_check(CLI::App& app);
Action add_diff(CLI::App& app);
Action add_size(CLI::App& app);
Action add_verify(CLI::App& app);

/// The whole file as bytes (the spec copy in a packet); RunError if it cannot be read.
std::string read_file_text(const std::string& path);

/// Prints the packet writer's notices (a previous revision replaced, leftovers of a killed run
/// cleaned up) on stderr.
void print_notices(PacketWriter& packet);

/// report.pdf and report.html of `report` into the packet, dated `date_utc` (ISO 8601); the
/// packet's cases.csv must be complete (the envelope plots read it).
void write_review_documents(PacketWriter& packet, const Spec& spec, const CheckReport& report,
                            const std::string& date_utc, ReportMeta meta = {});

}  // namespace swaybound::cli
