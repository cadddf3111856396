// Check-pipeline benchmark (not a test): a demo check of 2,000 cases of 30 s with a per-case FTLE,
// its wall time on 2 threads, the pipeline against the bare engine on the same cases, the speed-up
// from 1 to 2 threads, and peak memory for 1,000 vs 10,000 cases (separate processes).
// Run: build/release/tests/bench/bench_check [--quick | --speedup N] (N interleaved runs, medians)
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/cases/runner.hpp"
#include "swaybound/chaos/ftle.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using Clock = std::chrono::steady_clock;

namespace {

/// Demo data (invented): a rope and hook block on a braking or starting trolley.
std::string bench_spec(long starts, bool ftle) {
  return fmt::format(R"(
swaybound: 1
name: bench gantry (invented data)
links:
  - {{name: rope, kind: rope, length: 6 m, mass: 35 kg, pivot: {{friction: {{pin_radius: 40 mm, mu: 0.12}}}}}}
  - {{name: hook, length: 1.8 m, mass: 8.5 t, com: 1.5 m, inertia: 950 kg m^2,
      pivot: {{damper: {{coefficient: 40 kN m s/rad}}}}}}
base:
  scenarios:
    - {{name: brake, initial_velocity: {{x: 1.2 m/s}}, accel: [{{for: 1.5 s, x: -0.8 m/s^2}}]}}
    - {{name: start, accel: [{{for: 1.5 s, x: 0.8 m/s^2}}]}}
cases:
  duration: 30 s
  initial:
    - random: {{count: {}, seed: 11, theta: [[-10 deg, 10 deg], [-20 deg, 20 deg]]}}
limits:
  - {{peak_angle: 25 deg}}
  - {{pivot_load: 200 kN}}
  - {{residual_sway: 5 deg, after: 20 s}}
  {}
)",
                     starts, ftle ? "- {ftle_max: 0.05 /s, horizon: 20 s}" : "");
}

Spec write_spec(const std::string& name, const std::string& text) {
  const auto path = std::filesystem::temp_directory_path() / ("swaybound-bench-" + name + ".yaml");
  std::ofstream(path) << text;
  return load_spec(path.string(), LoadOptions{100'000});
}

double seconds(Clock::time_point start) { return std::chrono::duration<double>(Clock::now() - start).count(); }

double pipeline(const Spec& spec, int jobs) {
  CheckOptions o;
  o.jobs = jobs;
  o.audit = false;
  const auto start = Clock::now();
  run_check(spec, o);
  return seconds(start);
}

/// The bare engine on the same cases: simulate_case without observers (and the FTLE when asked).
double bare(const Spec& spec, int jobs, bool ftle) {
  const Model model = build_model(spec);
  const CaseSpace space(spec);
  RunSettings run = RunSettings::from_spec(spec);
  run.output_rate = 0;
  FtleSettings fs;
  fs.horizon = 20;
  fs.rtol = run.rtol;
  fs.atol = run.atol;
  RunnerOptions ro;
  ro.jobs = jobs;
  const auto start = Clock::now();
  run_ordered<long>(
      space.size(), ro, [&] { return Workspace(model); },
      [&](long i, Workspace& ws) {
        const CaseDef def = space.at(i);
        simulate_case(model, ws, def.scenario, def.initial, run);
        if (ftle) chain_ftle(model, ws, def.scenario, def.initial, fs);
        return i;
      },
      [](long&&) {});
  return seconds(start);
}

long peak_memory_kib(const char* self, long starts) {
  const pid_t pid = fork();
  if (pid == 0) {
    const std::string n = std::to_string(starts);
    execl(self, self, "--memory", n.c_str(), static_cast<char*>(nullptr));
    _exit(127);
  }
  int status = 0;
  rusage usage{};
  wait4(pid, &status, 0, &usage);
  return usage.ru_maxrss;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc == 3 && std::string(argv[1]) == "--memory") {
    const Spec spec = write_spec("memory", bench_spec(std::atol(argv[2]) / 2, false));
    CheckOptions o;
    o.jobs = 2;
    o.audit = false;
    run_check(spec, o);
    return 0;
  }
  if (argc == 3 && std::string(argv[1]) == "--speedup") {
    // The thread speed-up alone, measured as medians of interleaved 1- and 2-thread runs of the
    // full pipeline with per-case FTLE (one run of each is easily disturbed by other load).
    const int repeats = std::max(1, std::atoi(argv[2]));
    const Spec spec = write_spec("speedup", bench_spec(1000, true));
    std::vector<double> one, two, ratio;
    for (int k = 0; k < repeats; ++k) {
      one.push_back(pipeline(spec, 1));
      two.push_back(pipeline(spec, 2));
      ratio.push_back(one.back() / two.back());
      std::printf("run %d: 1 thread %.2f s, 2 threads %.2f s, %.3fx\n", k + 1, one.back(), two.back(), ratio.back());
    }
    const auto median = [](std::vector<double> v) {
      std::sort(v.begin(), v.end());
      const std::size_t n = v.size();
      return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
    };
    std::printf("2,000 cases, %d interleaved runs each: median 1 thread %.2f s, median 2 threads %.2f s; "
                "ratio of medians %.3fx, median of pairwise ratios %.3fx\n",
                repeats, median(one), median(two), median(one) / median(two), median(ratio));
    return 0;
  }
  const bool quick = argc > 1 && std::string(argv[1]) == "--quick";
  const long starts = quick ? 100 : 1000;  // x 2 scenarios
  const Spec with_ftle = write_spec("ftle", bench_spec(starts, true));
  const Spec plain = write_spec("plain", bench_spec(starts, false));
  const long cases = 2 * starts;

  const double p2 = pipeline(with_ftle, 2), p1 = pipeline(with_ftle, 1);
  const double b1 = bare(with_ftle, 1, true);
  const double q1 = pipeline(plain, 1), c1 = bare(plain, 1, false);
  std::printf("Demo check, %ld cases of 30 s (2 scenarios x %ld random starts), dopri5 rtol 1e-8\n\n", cases, starts);
  std::printf("| run | wall time | cases per second |\n|---|---|---|\n");
  std::printf("| full pipeline with per-case FTLE, 2 threads | %.1f s | %.1f |\n", p2, cases / p2);
  std::printf("| full pipeline with per-case FTLE, 1 thread | %.1f s | %.1f |\n", p1, cases / p1);
  std::printf("| bare engine + FTLE on the same cases, 1 thread | %.1f s | %.1f |\n", b1, cases / b1);
  std::printf("| pipeline without FTLE, 1 thread | %.1f s | %.1f |\n", q1, cases / q1);
  std::printf("| bare engine without FTLE, 1 thread | %.1f s | %.1f |\n", c1, cases / c1);
  std::printf("\npipeline / bare engine throughput: %.0f%% with FTLE, %.0f%% without\n", 100 * b1 / p1, 100 * c1 / q1);
  std::printf("speed-up from 1 to 2 threads: %.2fx\n", p1 / p2);
  if (!quick) {
    const long m1 = peak_memory_kib(argv[0], 1000), m10 = peak_memory_kib(argv[0], 10000);
    std::printf("peak memory (max RSS), pipeline without FTLE, 2 threads: 1,000 cases %ld KiB, 10,000 cases %ld KiB "
                "(+%.1f%%)\n",
                m1, m10, 100.0 * (m10 - m1) / m1);
  }
  return 0;
}
