// swaybound size: NLopt searches the spec's design variables; the sized spec, the full check of
// the final design, the sizing history and the before/after table in DIR (report/size_packet.hpp).
#include <unistd.h>

#include <cmath>
#include <cstdlib>
#include <iostream>
#include <optional>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/case_farm.hpp"
#include "swaybound/report/size_packet.hpp"
#include "swaybound/sizing/sizing.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace {
/// A share written "5%" or "0.05", in [0, 0.5); nullopt otherwise.
std::optional<double> parse_margin(const std::string& text) {
  std::string t = text;
  double scale = 1;
  if (!t.empty() && t.back() == '%') {
    t.pop_back();
    scale = 0.01;
  }
  if (t.empty()) return std::nullopt;
  char* end = nullptr;
  const double v = std::strtod(t.c_str(), &end);
  if (end != t.c_str() + t.size() || !std::isfinite(v)) return std::nullopt;
  const double share = v * scale;
  if (!(share >= 0 && share < 0.5)) return std::nullopt;
  return share;
}
}  // namespace

Action add_size(CLI::App& app) {
  auto* cmd = app.add_subcommand("size", "Search the spec's design variables for the least cost (or the objective "
                                         "given) with every limit holding; write the sized spec and its check to DIR");
  struct Options : PacketRunOptions {
    long screening = 64;
    bool no_search = false;
    std::string margin;  ///< "5%" or "0.05"; empty: the spec's sizing.required_margin
  };
  auto o = std::make_shared<Options>();
  o->out = "reports/size";
  cmd->add_option("SPEC", o->spec, "YAML design spec with a sizing section")->required();
  add_packet_run_options(cmd, *o, "Output folder (written whole, replaced only when complete)");
  cmd->add_option("--screen", o->screening, "About this many every-k-th cases screen designs during the search "
                                            "(plus the governing cases); 0: every case")
      ->check(CLI::NonNegativeNumber)
      ->capture_default_str();
  cmd->add_option("--margin", o->margin,
                  "Every limit must hold with this share to spare, e.g. 5% or 0.05 (overrides "
                  "sizing.required_margin; 0 to 50%, 50% excluded)")
      ->check(CLI::Validator(
          [](std::string& text) {
            return parse_margin(text) ? std::string()
                                      : std::string(
                                            "expected a share such as 5% or 0.05, at "
                                            "least 0 and below 50%");
          },
          "SHARE"));
  cmd->add_flag("--no-audit", o->no_audit, "Final check without re-running governing cases at a tighter tolerance");
  cmd->add_flag("--no-search", o->no_search,
                "No search for the worst case between the samples, in the final check or elsewhere (the verdicts "
                "are the samples' alone)");
  cmd->add_flag("--force", o->force,
                "Replace the packet of another design (a spec with another name); never deletes files "
                "swaybound did not write");
  cmd->add_flag("--quiet", o->quiet, "No progress on stderr");
  return [cmd, o]() {
    if (!cmd->parsed()) return -1;
    std::string spec_text = read_input_file("SPEC", o->spec);
    Spec spec = load_spec(o->spec, LoadOptions{o->max_cases, o->max_samples});
    // Input errors (no sizing section, an objective that cannot be computed) before anything is written.
    design_variables(spec);
    // The sized spec records the margin used (its sizing section), so its check can be repeated.
    if (!o->margin.empty()) spec.sizing->required_margin = *parse_margin(o->margin);
    objective_metric(spec);
    // Every output problem (the overwrite rule, a folder that cannot be written, another run
    // writing it) is reported here, before any work is done.
    SizingPacket packet(spec, std::move(spec_text), PacketOptions{o->out, o->force, !o->no_audit, {}, describe_execution(o->jobs)});
    print_notices(packet.take_notices());
    const CaseSpace space(spec);
    const SizingSpec& s = *spec.sizing;
    std::cerr << fmt::format(
        "{}: {} design variable(s), {} cases ({} starts x {} scenarios), {:g} s each; budget "
        "{} evaluations, {:g} s; {} search, seed {}; required margin {:g}%\n",
        o->spec, s.variables.size(), space.size(), space.starts(), spec.scenarios.size(), spec.cases.duration,
        s.max_evaluations, s.max_seconds, s.mode == SearchMode::local ? "local" : "global", s.seed,
        100 * s.required_margin);

    SizingOptions options;
    options.jobs = o->jobs;
    options.screening_cases = o->screening;
    options.audit = !o->no_audit;
    options.search = !o->no_search;
    options.load = LoadOptions{o->max_cases, o->max_samples};
    packet.attach(options);
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
    packet.finish(result);
    print_notices(packet.take_notices());
    std::cout << sizing_table_markdown(spec, result);
    std::cerr << fmt::format("wrote {}: sized_spec.yaml, report.pdf, report.html, results.json, cases.csv, "
                             "sizing_history.csv, sizing.md, sizing.json ({} evaluations, {:.1f} s)\n",
                             packet.target(), result.evaluations, result.seconds);
    return result.feasible ? kExitPass : kExitFail;
  };
}

}  // namespace swaybound::cli
