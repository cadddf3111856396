// Sizing benchmark (not a test): the demo spec (specs/gantry_hook_block.yaml, invented data) with
// three design variables (the rope sheave damper, the hook damper and the hook pivot's friction
// torque) and at least 500 cases, sized for the least cost on 2 threads. Prints the wall time,
// the evaluations (screening and full checks) and the evaluations per second.
// Run: build/release/tests/bench/bench_size [--quick] [--global]
#include <sys/resource.h>

#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>
#include <string>

#include <fmt/format.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/sizing/sizing.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using Clock = std::chrono::steady_clock;

namespace {

constexpr long kMinCases = 500;

const char* kSizing = R"(sizing:
  variables:
    - {path: "links[hoist rope].pivot.damper.coefficient", range: [5 kN m s/rad, 120 kN m s/rad], cost: 1}
    - {path: "links[hook and payload].pivot.damper.coefficient", range: [0.5 kN m s/rad, 20 kN m s/rad], cost: 1}
    - {path: "links[hook and payload].pivot.friction.torque", range: [0 N m, 2 kN m], cost: 2}
  objective: min_cost
  budget: {evaluations: EVALUATIONS, seconds: 1800 s}
  mode: MODE
)";

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// The demo spec's text with the sizing section above in place of its own.
std::string with_sizing(const std::string& text, const std::string& sizing) {
  std::istringstream in(text);
  std::string line, out;
  bool skipping = false;
  while (std::getline(in, line)) {
    const bool top_key = !line.empty() && line[0] != ' ' && line[0] != '#' && line[0] != '-';
    if (top_key) skipping = line.rfind("sizing:", 0) == 0;
    if (!skipping) out += line + "\n";
  }
  return out + sizing;
}

double seconds(Clock::time_point start) { return std::chrono::duration<double>(Clock::now() - start).count(); }

/// CPU time of the process so far, every thread, user + system [s].
double cpu_seconds() {
  rusage u{};
  getrusage(RUSAGE_SELF, &u);
  return static_cast<double>(u.ru_utime.tv_sec + u.ru_stime.tv_sec) +
         1e-6 * static_cast<double>(u.ru_utime.tv_usec + u.ru_stime.tv_usec);
}

Spec write_spec(const std::string& text) {
  const auto path = std::filesystem::temp_directory_path() / "swaybound-bench-size.yaml";
  std::ofstream(path) << text;
  return load_spec(path.string());
}

}  // namespace

int main(int argc, char** argv) {
  bool quick = false, global = false;
  for (int i = 1; i < argc; ++i) {
    quick |= std::string(argv[i]) == "--quick";
    global |= std::string(argv[i]) == "--global";
  }
  std::string sizing = kSizing;
  sizing.replace(sizing.find("EVALUATIONS"), 11, quick ? "20" : "150");
  sizing.replace(sizing.find("MODE"), 4, global ? "global" : "local");
  std::string text = with_sizing(read_text(SWAYBOUND_SOURCE_DIR "/specs/gantry_hook_block.yaml"), sizing);
  Spec spec = write_spec(text);
  if (const long cases = case_count(spec); cases < kMinCases) {
    // Raise the first random set's count until the case set reaches 500.
    const long more = (kMinCases - cases + static_cast<long>(spec.scenarios.size()) - 1) /
                      static_cast<long>(spec.scenarios.size());
    const std::regex count(R"(random: \{count: (\d+))");
    std::smatch m;
    if (std::regex_search(text, m, count))
      text.replace(static_cast<std::size_t>(m.position(1)), static_cast<std::size_t>(m.length(1)),
                   std::to_string(std::stol(m[1].str()) + more));
    spec = write_spec(text);
  }
  const CaseSpace space(spec);
  std::printf("Sizing benchmark: demo spec with 3 design variables, %ld cases (%ld starts x %zu scenarios) of %g s, "
              "%s search, 2 threads\n",
              space.size(), space.starts(), spec.scenarios.size(), spec.cases.duration, global ? "global" : "local");

  // One full check of the design as given, for scale (no audit, as the search's verifications).
  CheckOptions check;
  check.jobs = 2;
  check.audit = false;
  check.record = false;
  const auto check_start = Clock::now();
  run_check(spec, check);
  const double full_check = seconds(check_start);

  SizingOptions options;
  options.jobs = 2;
  const auto start = Clock::now();
  const double cpu_start = cpu_seconds();
  const SizingResult r = run_sizing(spec, options);
  const double wall = seconds(start), cpu = cpu_seconds() - cpu_start;

  double screening_seconds = 0;
  long screening_cases_run = 0;
  for (std::size_t k = 1; k < r.history.size(); ++k)
    if (r.history[k].kind == EvaluationKind::screening) {
      screening_seconds += r.history[k].seconds - r.history[k - 1].seconds;
      screening_cases_run += r.history[k].cases;
    }
  std::printf("\n| quantity | value |\n|---|---|\n");
  std::printf("| cases in the full set | %ld |\n", r.case_count);
  std::printf("| screening set | %ld cases |\n", r.screening_size);
  std::printf("| one full check (no audit) | %.1f s |\n", full_check);
  std::printf("| sizing wall time | %.1f s |\n", wall);
  std::printf("| sizing CPU time, both threads | %.1f s (%.2f cores busy on average) |\n", cpu, cpu / wall);
  std::printf("| evaluations (budgeted) | %ld: %ld screening + %ld verification |\n", r.evaluations,
              r.screening_evaluations, r.evaluations - r.screening_evaluations);
  std::printf("| full checks (initial, verifications, final with audit) | %ld |\n", r.full_checks);
  std::printf("| evaluations per second (all, over the wall time) | %.2f |\n", r.evaluations / wall);
  std::printf("| screening evaluations per second | %.2f (%.2f s each, %.0f cases/s) |\n",
              r.screening_evaluations / screening_seconds, screening_seconds / r.screening_evaluations,
              screening_cases_run / screening_seconds);
  std::printf("| search ended by | %s |\n", r.stop_reason.c_str());
  std::printf("| result | %s, cost %.0f -> %.0f |\n", r.feasible ? "feasible, verified" : "NOT feasible",
              r.objective_before, r.objective_after);
  for (const auto& v : r.variable_outcomes)
    std::printf("| %s | %.6g -> %.6g %s%s |\n", v.path.c_str(), v.before, v.after, v.unit.c_str(),
                v.at_bound < 0 ? " (low end)" : v.at_bound > 0 ? " (high end)" : "");
  for (const auto& l : r.limits)
    if (l.binding) std::printf("| binding | %s (%s), margin %+.2f%% |\n", l.key.c_str(), l.subject.c_str(), 100 * l.ratio_after);
  return 0;
}
