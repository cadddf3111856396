// The command line as one function, shared by the plain build's main (main.cpp) and the MPI
// build's (src/cluster/mpi_main.cpp).
#include <iostream>
#include <vector>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/core/version.hpp"

namespace swaybound::cli {

int run(int argc, char** argv) {
  CLI::App app{"swaybound: sway, load and chaos checks of swinging mechanisms.\n"
               "A screening and design aid: results go to a licensed engineer's review."};
  app.set_version_flag("--version", fmt::format("swaybound {} ({})", tool_version(), git_commit()));
  app.require_subcommand(1);
  std::vector<Action> actions{add_validate(app), add_simulate(app), add_modes(app), add_check(app),
                             add_diff(app),     add_size(app),     add_verify(app)};
  install_cancel_handlers();  // SIGINT/SIGTERM stop long work cleanly (core/cancel.hpp)
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : kExitError;
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
    return kExitError;
  } catch (const UsageError& e) {
    std::cerr << fmt::format("swaybound: usage error: {}: {}\n", e.option(), e.message());
    if (!e.fix().empty()) std::cerr << "    fix: " << e.fix() << '\n';
    std::cerr << "nothing was written\n";
    return kExitError;
  } catch (const Error& e) {
    std::cerr << "swaybound: error: " << e.what() << '\n';
    return kExitError;
  } catch (const std::exception& e) {
    std::cerr << "swaybound: internal error: " << e.what() << '\n';
    return kExitError;
  }
  return kExitError;
}

}  // namespace swaybound::cli
