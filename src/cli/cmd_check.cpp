// swaybound check: every case of the spec against its limits; results.json and cases.csv in DIR.
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "commands.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/report/format.hpp"
#include "swaybound/report/packet.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace fs = std::filesystem;

namespace {

void print_summary(const CheckReport& r, std::ostream& out) {
  out << fmt::format("{:<46} {:>14} {:>14} {:>14} {:>8}  {:<8} {}\n", "check", "limit", "worst", "margin", "ratio",
                     "verdict", "governing case");
  for (const auto& c : r.checks) {
    std::string name = c.key + " (" + c.subject + ")";
    if (name.size() > 46) name = name.substr(0, 45) + "~";
    out << fmt::format("{:<46} {:>14} {:>14} {:>14} {:>8}  {:<8} {}\n", name, engineering(c.limit_value, c.unit),
                       engineering(c.worst, c.unit), engineering(c.margin, c.unit),
                       ratio_percent(c.margin_ratio),
                       c.pass ? "pass" : "FAIL", c.governing_id);
    if (c.failed_cases > 0)
      out << fmt::format("    {} case(s) failed to run; first: {}\n", c.failed_cases, c.first_failure);
    if (c.audit_warning)
      out << fmt::format("    warning: at a 100x tighter tolerance the worst value moves by {}, more than the margin\n",
                         engineering(c.audit_change, c.unit));
  }
  out << fmt::format("verdict: {}{}\n", r.pass ? "all checks pass" : "a check fails",
                     r.failed_total > 0 ? fmt::format(" ({} case(s) failed to run)", r.failed_total) : "");
  out << "caution: a screening and design aid, not a certification; the design goes to a licensed engineer's review.\n";
}

/// Host-independent run settings for the MANIFEST.
std::vector<std::string> manifest_settings(const Spec& spec, const CheckReport& report) {
  std::vector<std::string> out;
  out.push_back(fmt::format("solver: {} rtol={:g} atol={:g} max_steps={} min_step={:g} s max_seconds={:g} s",
                            spec.solver.method == Stepper::dopri5 ? "dopri5" : "rkf78", spec.solver.rtol,
                            spec.solver.atol, spec.solver.max_steps, spec.solver.min_step, spec.solver.max_seconds));
  std::string seeds;
  for (const auto& set : spec.cases.initial)
    if (set.kind == InitialKind::random) seeds += fmt::format("{}{}={}", seeds.empty() ? "" : " ", set.name, set.seed);
  out.push_back("seeds: " + (seeds.empty() ? std::string("none") : seeds));
  out.push_back(fmt::format("cases: {} x {:g} s, output_rate={:g} /s", report.case_count, spec.cases.duration,
                            spec.cases.output_rate));
  std::string chaos = fmt::format("chaos: horizon={:g} s separation={:g} renormalise={:g} s", spec.chaos.horizon,
                                  spec.chaos.separation, spec.chaos.renormalise);
  if (spec.chaos.rate_weight > 0) chaos += fmt::format(" rate_weight={:g} s", spec.chaos.rate_weight);
  if (!spec.chaos.direction.empty()) chaos += fmt::format(" direction=[{:g}]", fmt::join(spec.chaos.direction, ", "));
  out.push_back(chaos);
  out.push_back("accuracy_audit: governing cases at rtol/100, atol/100");
  return out;
}

}  // namespace

Action add_check(CLI::App& app) {
  auto* cmd = app.add_subcommand("check", "Run every case of a spec against its limits and write the packet to DIR");
  struct Options {
    std::string spec, out = "reports/check";
    int jobs = 0;
    long max_cases = kDefaultMaxCases;
    long max_samples = kDefaultMaxSamples;
    bool no_audit = false, quiet = false, force = false;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("SPEC", o->spec, "YAML design spec")->required();
  cmd->add_option("--out", o->out, "Packet folder (written whole, replaced only when complete)")->capture_default_str();
  cmd->add_option("--jobs", o->jobs, "Threads (default: every core)")->check(CLI::NonNegativeNumber);
  cmd->add_option("--max-cases", o->max_cases, "Cap on the number of cases")->check(CLI::PositiveNumber)->capture_default_str();
  cmd->add_option("--max-samples", o->max_samples,
                  "Cap on the output samples per case (cases.duration x cases.output_rate)")
      ->check(CLI::PositiveNumber)
      ->capture_default_str();
  cmd->add_flag("--no-audit", o->no_audit, "Skip re-running governing cases at a tighter tolerance");
  cmd->add_flag("--force", o->force,
                "Replace the packet of another design (a spec with another name); never deletes files "
                "swaybound did not write");
  cmd->add_flag("--quiet", o->quiet, "No progress on stderr");
  return [cmd, o]() {
    if (!cmd->parsed()) return -1;
    const Spec spec = load_spec(o->spec, LoadOptions{o->max_cases, o->max_samples});
    const std::string spec_sha = sha256_file(o->spec);
    // Every output problem (the overwrite rule, a folder that cannot be written, another run
    // writing it) is reported here, before any work is done.
    PacketWriter packet(o->out, spec.name, spec_sha, o->force);
    print_notices(packet);
    const CaseSpace space(spec);
    std::cerr << fmt::format("{}: {} cases ({} starts x {} scenarios), {:g} s each\n", o->spec, space.size(),
                             space.starts(), spec.scenarios.size(), spec.cases.duration);

    std::ofstream csv(packet.path("cases.csv"), std::ios::binary);
    csv << cases_csv_header(spec);
    CheckOptions options;
    options.jobs = o->jobs;
    options.audit = !o->no_audit;
    options.on_case = [&](const CaseMetrics& m) { csv << cases_csv_row(spec, m); };
    if (!o->quiet && ::isatty(2))
      options.progress = [](const Progress& p) {
        const double rate = p.elapsed > 0 ? p.done / p.elapsed : 0;
        std::cerr << fmt::format("\r  {}/{} cases, {:.0f} cases/s, {:.0f} s left   ", p.done, p.total, rate,
                                 rate > 0 ? (p.total - p.done) / rate : 0.0)
                  << (p.done == p.total ? "\n" : "") << std::flush;
      };
    const CheckReport report = run_check(spec, options);
    csv.close();
    if (!csv) throw RunError(fmt::format("writing {} failed (disk full or not writable?)", packet.path("cases.csv")));
    packet.write("results.json", results_json(spec, report));
    packet.write("spec.yaml", read_file_text(o->spec));
    const std::string date = now_utc_iso8601();
    write_review_documents(packet, spec, report, date);
    throw_if_cancelled();
    ManifestInfo info;
    info.spec_file = "spec.yaml";
    info.spec_name = spec.name;
    info.spec_sha256 = spec_sha;
    info.date_utc = date;
    info.settings = manifest_settings(spec, report);
    packet.commit(info);
    print_notices(packet);
    print_summary(report, std::cout);
    std::cerr << fmt::format("wrote the packet {} (cases {:.1f} s, modes and chaos {:.1f} s, accuracy audit {:.1f} s)\n",
                             packet.target(), report.seconds_cases, report.seconds_chaos, report.seconds_audit);
    return report.pass ? kExitPass : kExitFail;
  };
}

}  // namespace swaybound::cli
