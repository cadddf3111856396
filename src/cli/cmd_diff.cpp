// swaybound diff: a design revision against the last one.
#include <iostream>

#include "commands.hpp"
#include "swaybound/report/diff.hpp"

namespace swaybound::cli {

Action add_diff(CLI::App& app) {
  auto* cmd = app.add_subcommand("diff", "Compare two check results (results.json files or packet folders)");
  struct Options {
    std::string old_path, new_path;
    double tolerance = 0.01;
    bool markdown = false, require_pass = false;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("OLD", o->old_path, "Earlier results.json or packet folder")->required();
  cmd->add_option("NEW", o->new_path, "Newer results.json or packet folder")->required();
  cmd->add_option("--tolerance", o->tolerance,
                  "Largest accepted loss of margin, as a fraction of the limit (0.01 = 1% of the limit)")
      ->check(CLI::NonNegativeNumber)
      ->capture_default_str();
  cmd->add_flag("--markdown", o->markdown, "Markdown output for a pull-request comment");
  cmd->add_flag("--require-pass", o->require_pass,
                "Exit 1 also when NEW fails any check, even with no regression against OLD");
  return [cmd, o]() {
    if (!cmd->parsed()) return -1;
    require_input_path("OLD", o->old_path);
    require_input_path("NEW", o->new_path);
    const DiffResult d = diff_results(o->old_path, o->new_path, o->tolerance);
    std::cout << diff_report(d, o->markdown);
    return d.regression() || (o->require_pass && d.new_fails()) ? kExitFail : kExitPass;
  };
}

}  // namespace swaybound::cli
