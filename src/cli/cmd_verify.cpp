// swaybound verify: a packet's MANIFEST hashes, spec copies and results.json consistency.
#include <iostream>

#include "commands.hpp"
#include "swaybound/report/verify.hpp"

namespace swaybound::cli {

Action add_verify(CLI::App& app) {
  auto* cmd = app.add_subcommand("verify",
                                 "Verify a packet folder: every MANIFEST hash, the spec copy against "
                                 "results.json, and results.json's margins and verdicts against its limits");
  auto path = std::make_shared<std::string>();
  cmd->add_option("DIR", *path, "Packet folder written by check or size (or a results.json file)")
      ->required();
  return [cmd, path]() {
    if (!cmd->parsed()) return -1;
    require_input_path("DIR", *path);
    const VerifyResult r = verify_packet(*path);
    std::cout << verify_report(r);
    return r.intact() ? kExitPass : kExitFail;
  };
}

}  // namespace swaybound::cli
