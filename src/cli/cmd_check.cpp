// swaybound check: every case of the spec against its limits; the packet (report/check_packet.hpp)
// in DIR.
#include <algorithm>
#include <unistd.h>

#include <iostream>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/case_farm.hpp"
#include "swaybound/checks/start_transient.hpp"
#include "swaybound/checks/worst_search.hpp"
#include "swaybound/report/check_packet.hpp"
#include "swaybound/report/format.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace {

/// The search's lines under a check: what it found between the samples, if anything.
void print_search(const Spec& spec, const CheckReport& r, const CheckResult& c, std::ostream& out) {
  const auto it = std::find_if(r.search.begin(), r.search.end(), [&](const LimitSearch& s) { return s.limit == c.limit; });
  if (it == r.search.end() || !it->searched) return;
  const LimitSearch& s = *it;
  const std::string scenario = s.scenario >= 0 ? spec.scenarios[static_cast<std::size_t>(s.scenario)].name : "";
  std::string start;
  for (std::size_t i = 0; i < s.theta.size(); ++i)
    start += fmt::format("{}{:.6g} deg", i ? ", " : "", s.theta[i] * 180 / 3.141592653589793);
  start += ", rate ";
  for (std::size_t i = 0; i < s.omega.size(); ++i)
    start += fmt::format("{}{:.6g} deg/s", i ? ", " : "", s.omega[i] * 180 / 3.141592653589793);
  if (!s.phi.empty()) {
    start += ", phi ";
    for (std::size_t i = 0; i < s.phi.size(); ++i)
      start += fmt::format("{}{:.6g} deg", i ? ", " : "", s.phi[i] * 180 / 3.141592653589793);
    start += ", phi rate ";
    for (std::size_t i = 0; i < s.phi_rate.size(); ++i)
      start += fmt::format("{}{:.6g} deg/s", i ? ", " : "", s.phi_rate[i] * 180 / 3.141592653589793);
  }
  for (std::size_t k = 0; k < s.uncertain.size() && k < s.uncertain_dims.size(); ++k)
    start += fmt::format(", {} {}", s.uncertain_dims.paths[k], engineering(s.uncertain[k], s.uncertain_dims.units[k]));
  // A modal or equilibrium start: the values the search moved.
  if (const std::string values = start_values_text(spec, s.worst_case.set, s.worst_case.initial.quantities); !values.empty())
    start += " (" + values + ")";
  if (s.failed_run)
    out << fmt::format("    search: a run failed between the samples ({}) from theta {} under '{}' ({} runs)\n",
                       s.failure, start, scenario, s.evaluations);
  else if (s.found_worse)
    out << fmt::format("    search: worst between the samples {} ({} by {}, {} of the margin) from theta {} "
                       "under '{}' ({} runs)\n",
                       engineering(s.searched_worst, c.unit), c.bound == Bound::lower ? "lowered" : "raised",
                       engineering(s.raise, c.unit),
                       ratio_percent(s.raise_of_margin), start, scenario, s.evaluations);
  if (s.audited && s.found_worse)
    out << fmt::format("    search: at a 100x tighter tolerance the searched worst moved by {}{}\n",
                       engineering(s.audit_change, c.unit), s.audit_warning ? ", more than the margin" : "");
  if (s.sampling_missed())
    out << "    FAIL on the searched worst: sampling alone would have passed this check\n";
  if (s.chaotic) out << "    search: local worst, statistical, not a bound (FTLE above chaos.threshold)\n";
}

void print_summary(const Spec& spec, const CheckReport& r, std::ostream& out) {
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
    if (r.searched) print_search(spec, r, c, out);
    if (c.start_transient)
      out << fmt::format("    note: start transient? the worst is at t = {:.3g} s, within the first quarter of the "
                         "lowest modal period ({:.3g} s) after the start {}\n",
                         c.time, lowest_swing_period(r.modes), c.start_note);
    if (c.audit_warning)
      out << fmt::format("    warning: at a 100x tighter tolerance the worst value moves by {}, more than the margin\n",
                         engineering(c.audit_change, c.unit));
  }
  out << fmt::format("verdict: {}{}\n", r.pass ? "all checks pass" : "a check fails",
                     r.failed_total > 0 ? fmt::format(" ({} case(s) failed to run)", r.failed_total) : "");
  const bool has_slack_limit =
      std::any_of(r.checks.begin(), r.checks.end(), [](const CheckResult& c) { return c.key == "slack_time"; });
  if (r.slack_cases > 0)
    out << fmt::format("note: an elastic rope went slack after it was taut in {} of {} case(s) (first: {}); the "
                       "snatch when it was caught again is in the rope figures{}\n",
                       r.slack_cases, r.case_count, r.first_slack_case,
                       has_slack_limit ? "" : "; no slack_time limit bounds how long it may stay slack");
  out << "caution: a screening and design aid, not a certification; the design goes to a licensed engineer's review.\n";
}

}  // namespace

Action add_check(CLI::App& app) {
  auto* cmd = app.add_subcommand("check", "Run every case of a spec against its limits and write the packet to DIR");
  auto o = std::make_shared<PacketRunOptions>();
  o->out = "reports/check";
  cmd->add_option("SPEC", o->spec, "YAML design spec")->required();
  add_packet_run_options(cmd, *o, "Packet folder (written whole, replaced only when complete)");
  cmd->add_flag("--no-audit", o->no_audit, "Skip re-running governing cases at a tighter tolerance");
  cmd->add_flag("--force", o->force,
                "Replace the packet of another design (a spec with another name); never deletes files "
                "swaybound did not write");
  cmd->add_flag("--quiet", o->quiet, "No progress on stderr");
  auto no_search = std::make_shared<bool>(false);
  cmd->add_flag("--no-search", *no_search,
                "Skip the search for the worst case between the samples (the checks are the samples' alone)");
  return [cmd, o, no_search]() {
    if (!cmd->parsed()) return -1;
    std::string spec_text = read_input_file("SPEC", o->spec);
    const Spec spec = load_spec(o->spec, LoadOptions{o->max_cases, o->max_samples});
    // Every output problem (the overwrite rule, a folder that cannot be written, another run
    // writing it) is reported here, before any work is done.
    CheckPacket packet(spec, std::move(spec_text), PacketOptions{o->out, o->force, !o->no_audit, {}, describe_execution(o->jobs)});
    print_notices(packet.take_notices());
    const CaseSpace space(spec);
    std::cerr << fmt::format("{}: {} cases ({} starts x {} scenarios), {:g} s each\n", o->spec, space.size(),
                             space.starts(), spec.scenarios.size(), spec.cases.duration);
    CheckOptions options;
    options.jobs = o->jobs;
    options.audit = !o->no_audit;
    if (!*no_search) options.search = search_worst;
    packet.attach(options);
    if (!o->quiet && ::isatty(2))
      options.progress = [](const Progress& p) {
        const double rate = p.elapsed > 0 ? p.done / p.elapsed : 0;
        std::cerr << fmt::format("\r  {}/{} cases, {:.0f} cases/s, {:.0f} s left   ", p.done, p.total, rate,
                                 rate > 0 ? (p.total - p.done) / rate : 0.0)
                  << (p.done == p.total ? "\n" : "") << std::flush;
      };
    const CheckReport report = run_check(spec, options);
    packet.finish(report);
    print_notices(packet.take_notices());
    print_summary(spec, report, std::cout);
    std::cerr << fmt::format(
        "wrote the packet {} (cases {:.1f} s, modes and chaos {:.1f} s, search {:.1f} s, accuracy audit {:.1f} s)\n",
        packet.target(), report.seconds_cases, report.seconds_chaos, report.seconds_search, report.seconds_audit);
    return report.pass ? kExitPass : kExitFail;
  };
}

}  // namespace swaybound::cli
