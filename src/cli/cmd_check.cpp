// swaybound check: every case of the spec against its limits; results.json and cases.csv in DIR.
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace fs = std::filesystem;

namespace {

/// An SI value in the unit an engineer reads: deg for angles, kN for forces.
std::string engineering(double v, const std::string& unit) {
  if (std::isnan(v)) return "-";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  if (unit == "rad") return fmt::format("{:.3f} deg", v * 180 / M_PI);
  if (unit == "rad/s") return fmt::format("{:.3f} deg/s", v * 180 / M_PI);
  if (unit == "N") return fmt::format("{:.2f} kN", v / 1000);
  if (unit.empty()) return fmt::format("{:.4g}", v);
  return fmt::format("{:.4g} {}", v, unit);
}

void print_summary(const CheckReport& r, std::ostream& out) {
  out << fmt::format("{:<46} {:>14} {:>14} {:>14} {:>8}  {:<8} {}\n", "check", "limit", "worst", "margin", "ratio",
                     "verdict", "governing case");
  for (const auto& c : r.checks) {
    std::string name = c.key + " (" + c.subject + ")";
    if (name.size() > 46) name = name.substr(0, 45) + "~";
    out << fmt::format("{:<46} {:>14} {:>14} {:>14} {:>8}  {:<8} {}\n", name, engineering(c.limit_value, c.unit),
                       engineering(c.worst, c.unit), engineering(c.margin, c.unit),
                       std::isfinite(c.margin_ratio) ? fmt::format("{:+.1f}%", 100 * c.margin_ratio) : "-",
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

}  // namespace

Action add_check(CLI::App& app) {
  auto* cmd = app.add_subcommand("check", "Run every case of a spec against its limits and write results to DIR");
  struct Options {
    std::string spec, out = "reports/check";
    int jobs = 0;
    long max_cases = kDefaultMaxCases;
    bool no_audit = false, quiet = false;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("SPEC", o->spec, "YAML design spec")->required();
  cmd->add_option("--out", o->out, "Output folder (written whole, replaced only when complete)")->capture_default_str();
  cmd->add_option("--jobs", o->jobs, "Threads (default: every core)")->check(CLI::NonNegativeNumber);
  cmd->add_option("--max-cases", o->max_cases, "Cap on the number of cases")->check(CLI::PositiveNumber)->capture_default_str();
  cmd->add_flag("--no-audit", o->no_audit, "Skip re-running governing cases at a tighter tolerance");
  cmd->add_flag("--quiet", o->quiet, "No progress on stderr");
  return [cmd, o]() {
    if (!cmd->parsed()) return -1;
    const Spec spec = load_spec(o->spec, LoadOptions{o->max_cases});
    const CaseSpace space(spec);
    std::cerr << fmt::format("{}: {} cases ({} starts x {} scenarios), {:g} s each\n", o->spec, space.size(),
                             space.starts(), spec.scenarios.size(), spec.cases.duration);

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
      if (!csv) throw RunError(fmt::format("writing {} failed", (temp / "cases.csv").string()));
      {
        std::ofstream json(temp / "results.json", std::ios::binary);
        json << results_json(spec, report);
        if (!json) throw RunError(fmt::format("writing {} failed", (temp / "results.json").string()));
      }
      fs::copy_file(spec.source_file, temp / "spec.yaml", fs::copy_options::overwrite_existing);
      // Replace the previous output only now that the new one is complete.
      const fs::path old = parent / fmt::format(".{}.old-{}", target.filename().string(), ::getpid());
      if (fs::exists(target)) fs::rename(target, old);
      fs::rename(temp, target);
      fs::remove_all(old, ec);
      print_summary(report, std::cout);
      std::cerr << fmt::format("wrote {}/results.json and cases.csv (cases {:.1f} s, modes and chaos {:.1f} s, "
                               "accuracy audit {:.1f} s)\n",
                               target.string(), report.seconds_cases, report.seconds_chaos, report.seconds_audit);
      return report.pass ? kExitPass : kExitFail;
    } catch (...) {
      fs::remove_all(temp, ec);
      throw;
    }
  };
}

}  // namespace swaybound::cli
