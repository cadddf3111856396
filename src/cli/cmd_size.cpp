// swaybound size: NLopt searches the spec's design variables; the sized spec, the full check of
// the final design, the sizing history and the before/after table in DIR.
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/sizing/sizing.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace fs = std::filesystem;

namespace {

void write_text(const fs::path& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
  out.close();
  if (!out) throw RunError(fmt::format("writing {} failed", path.string()));
}

}  // namespace

Action add_size(CLI::App& app) {
  auto* cmd = app.add_subcommand("size", "Search the spec's design variables for the least cost (or the objective "
                                         "given) with every limit holding; write the sized spec and its check to DIR");
  struct Options {
    std::string spec, out = "reports/size";
    int jobs = 0;
    long max_cases = kDefaultMaxCases;
    long screening = 64;
    bool no_audit = false, quiet = false;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("SPEC", o->spec, "YAML design spec with a sizing section")->required();
  cmd->add_option("--out", o->out, "Output folder (written whole, replaced only when complete)")->capture_default_str();
  cmd->add_option("--jobs", o->jobs, "Threads (default: every core)")->check(CLI::NonNegativeNumber);
  cmd->add_option("--max-cases", o->max_cases, "Cap on the number of cases")->check(CLI::PositiveNumber)->capture_default_str();
  cmd->add_option("--screen", o->screening, "About this many every-k-th cases screen designs during the search "
                                            "(plus the governing cases); 0: every case")
      ->check(CLI::NonNegativeNumber)
      ->capture_default_str();
  cmd->add_flag("--no-audit", o->no_audit, "Final check without re-running governing cases at a tighter tolerance");
  cmd->add_flag("--quiet", o->quiet, "No progress on stderr");
  return [cmd, o]() {
    if (!cmd->parsed()) return -1;
    const Spec spec = load_spec(o->spec, LoadOptions{o->max_cases});
    // Input errors (no sizing section, an objective that cannot be computed) before anything is written.
    design_variables(spec);
    objective_metric(spec);
    const CaseSpace space(spec);
    const SizingSpec& s = *spec.sizing;
    std::cerr << fmt::format("{}: {} design variable(s), {} cases ({} starts x {} scenarios), {:g} s each; budget "
                             "{} evaluations, {:g} s; {} search, seed {}\n",
                             o->spec, s.variables.size(), space.size(), space.starts(), spec.scenarios.size(),
                             spec.cases.duration, s.max_evaluations, s.max_seconds,
                             s.mode == SearchMode::local ? "local" : "global", s.seed);

    const fs::path target(o->out);
    const fs::path parent = target.has_parent_path() ? target.parent_path() : fs::path(".");
    std::error_code ec;
    fs::create_directories(parent, ec);
    const fs::path temp = parent / fmt::format(".{}.partial-{}", target.filename().string(), ::getpid());
    fs::remove_all(temp, ec);
    if (!fs::create_directories(temp, ec) || ec)
      throw RunError(fmt::format("cannot create the output folder {}: {}", temp.string(), ec.message()));
    try {
      std::ofstream csv(temp / "cases.csv", std::ios::binary);
      SizingOptions options;
      options.jobs = o->jobs;
      options.screening_cases = o->screening;
      options.audit = !o->no_audit;
      options.load = LoadOptions{o->max_cases};
      bool header_written = false;
      options.on_final_case = [&](const CaseMetrics& m) {
        if (!header_written) csv << cases_csv_header(spec);
        header_written = true;
        csv << cases_csv_row(spec, m);
      };
      options.write_sized_spec = [&](const std::string& text) {
        write_text(temp / "sized_spec.yaml", text);
        return (temp / "sized_spec.yaml").string();
      };
      const bool terminal = !o->quiet && ::isatty(2);
      if (terminal)
        options.progress = [](const SizingProgress& p) {
          std::cerr << fmt::format("\r  {:>4}/{} evaluations  best {}{}  least margin {}  {:.0f} s left  [{}]     ",
                                   p.evaluations, p.max_evaluations,
                                   std::isnan(p.best_objective) ? std::string("-") : fmt::format("{:.6g}", p.best_objective),
                                   std::isnan(p.best_objective) ? "" : p.best_verified ? " (verified)" : " (screened)",
                                   std::isnan(p.best_least) ? std::string("-") : fmt::format("{:+.2f}%", 100 * p.best_least),
                                   p.seconds_left, p.phase)
                    << std::flush;
        };
      const SizingResult result = run_sizing(spec, options);
      if (terminal) std::cerr << '\n';
      csv.close();
      if (!csv) throw RunError(fmt::format("writing {} failed", (temp / "cases.csv").string()));
      write_text(temp / "results.json", results_json(result.sized, result.after));
      write_text(temp / "sizing_history.csv", sizing_history_csv(spec, result));
      const std::string table = sizing_table_markdown(spec, result);
      write_text(temp / "sizing.md", table);
      write_text(temp / "sizing.json", sizing_summary_json(spec, result));
      fs::copy_file(spec.source_file, temp / "input_spec.yaml", fs::copy_options::overwrite_existing);
      // Replace the previous output only now that the new one is complete.
      const fs::path old = parent / fmt::format(".{}.old-{}", target.filename().string(), ::getpid());
      if (fs::exists(target)) fs::rename(target, old);
      fs::rename(temp, target);
      fs::remove_all(old, ec);
      std::cout << table;
      std::cerr << fmt::format("wrote {}/sized_spec.yaml, results.json, cases.csv, sizing_history.csv, sizing.md, "
                               "sizing.json ({} evaluations, {:.1f} s)\n",
                               target.string(), result.evaluations, result.seconds);
      return result.feasible ? kExitPass : kExitFail;
    } catch (...) {
      fs::remove_all(temp, ec);
      throw;
    }
  };
}

}  // namespace swaybound::cli
