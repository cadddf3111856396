// swaybound: design checks of planar swinging mechanisms. See README.md.
#include <iostream>
#include <vector>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/core/version.hpp"

int main(int argc, char** argv) {
  using namespace swaybound;
  CLI::App app{"swaybound: sway, load and chaos checks of planar swinging mechanisms.\n"
               "A screening and design aid: results go to a licensed engineer's review."};
  app.set_version_flag("--version", fmt::format("swaybound {} ({})", tool_version(), git_commit()));
  app.require_subcommand(1);
  std::vector<cli::Action> actions{cli::add_validate(app), cli::add_simulate(app), cli::add_modes(app), cli::add_check(app), cli::add_diff(app), cli::add_size(app), cli::add_verify(app)};
  install_cancel_handlers();  // SIGINT/SIGTERM stop long work cleanly (core/cancel.hpp)
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : cli::kExitError;
  }
  try {
    for (auto& action : actions) {
      const int status = action();
      if (status >= 0) return status;
    }
  } catch (const Interrupted& e) {
    std::cerr << "swaybound: " << e.what() << "; nothing was written and any previous output is intact\n";
    return 128 + (e.signal_number() > 0 ? e.signal_number() : 2);
  } catch (const SpecError& e) {
    for (const auto& d : e.diagnostics()) std::cerr << SpecError::format(e.file(), d) << '\n';
    std::cerr << fmt::format("{}: {} error{} in the spec; nothing was written\n", e.file(), e.diagnostics().size(),
                             e.diagnostics().size() == 1 ? "" : "s");
    return cli::kExitError;
  } catch (const UsageError& e) {
    std::cerr << fmt::format("swaybound: usage error: {}: {}\n", e.option(), e.message());
    if (!e.fix().empty()) std::cerr << "    fix: " << e.fix() << '\n';
    std::cerr << "nothing was written\n";
    return cli::kExitError;
  } catch (const Error& e) {
    std::cerr << "swaybound: error: " << e.what() << '\n';
    return cli::kExitError;
  } catch (const std::exception& e) {
    std::cerr << "swaybound: internal error: " << e.what() << '\n';
    return cli::kExitError;
  }
  return cli::kExitError;
}
