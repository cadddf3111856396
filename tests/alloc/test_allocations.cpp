// Heap allocations inside the integration loop, counted. A separate executable
// (swaybound_alloc_tests) because it replaces malloc, calloc, realloc and free for the whole
// process with counting wrappers around glibc's own (__libc_malloc, ...): that sees operator new
// (libstdc++ calls malloc) and Eigen's dynamic matrices (Eigen calls malloc directly), which a
// replaced operator new alone would miss. Not built under the sanitizers, which own malloc.
//
// DEVELOPERS.md: "Nothing in `evaluate` allocates". Asserted here for N = 1, 2, 3, 5 and 10 links
// with dampers, Coulomb and pin friction, wind with a gust, dashpots and a moving base, and for
// the per-step work of the driver (finish_reactions, energy, tensions). The count for a whole
// simulate_case (the stepper allocates its state buffers once per phase) is printed for README.md.
#define CATCH_CONFIG_MAIN
#include <catch2/catch.hpp>

#include <atomic>
#include <cmath>
#include <cstddef>
#include <cstdio>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

extern "C" {
void* __libc_malloc(std::size_t);
void* __libc_calloc(std::size_t, std::size_t);
void* __libc_realloc(void*, std::size_t);
void __libc_free(void*);
}

namespace {
std::atomic<bool> counting{false};
std::atomic<long> allocations{0};
}  // namespace

extern "C" {
void* malloc(std::size_t size) {
  if (counting.load(std::memory_order_relaxed)) allocations.fetch_add(1, std::memory_order_relaxed);
  return __libc_malloc(size);
}
void* calloc(std::size_t count, std::size_t size) {
  if (counting.load(std::memory_order_relaxed)) allocations.fetch_add(1, std::memory_order_relaxed);
  return __libc_calloc(count, size);
}
void* realloc(void* pointer, std::size_t size) {
  if (counting.load(std::memory_order_relaxed)) allocations.fetch_add(1, std::memory_order_relaxed);
  return __libc_realloc(pointer, size);
}
void free(void* pointer) { __libc_free(pointer); }
}

namespace {

using namespace swaybound;

/// Counts the heap allocations made while `f` runs.
template <class F>
long count_allocations(F&& f) {
  allocations = 0;
  counting = true;
  f();
  counting = false;
  return allocations.load();
}

/// A chain of n links with every force element: a damper (power law) and Coulomb plus pin friction
/// at every pivot, wind with a gust on the last link, a link-to-link and a link-to-base dashpot,
/// and a base scenario that starts moving and brakes (so the reactions are needed every time).
/// With `ropes`, link 0 is an elastic rope that a drum hoists, and link 2 (if any) a second elastic
/// rope, soft enough to go slack and snatch taut again.
std::string spec_text(int n, bool ropes = false) {
  std::string links;
  for (int i = 0; i < n; ++i) {
    const std::string rope = !ropes ? "" : i == 0 ? ", kind: rope, elastic: {ea: 2 MN, damping: 50 N s/m}"
                                      : i == 2    ? ", kind: rope, elastic: {ea: 5 kN, damping: 2 N s/m}"
                                                  : "";
    links += fmt::format(
        "  - {{name: l{}, length: {} m, mass: {} kg{}, pivot: {{damper: {{coefficient: 30 N m s/rad, exponent: {}}}, "
        "friction: {{torque: 2 N m, pin_radius: 10 mm, mu: 0.1}}}}}}\n",
        i, 1.0 + 0.1 * i, 20.0 + 5 * i, rope, i % 2 ? 0.7 : 1.3);
  }
  const std::string hoist =
      ropes ? ", hoist: {rope: l0, moves: [{at: 0.2 s, to: 0.3 m/s, accel: 1 m/s^2, jerk: 5 m/s^3}, {at: 1 s, to: 0, accel: 1 m/s^2}]}" : "";
  return fmt::format(R"(swaybound: 1
name: every force element, {} links
links:
{}dashpots:
  - {{from: {{link: l0, at: 0.5 m}}, to: {{link: l{}, at: 0.9 m}}, coefficient: 50 N s/m}}
  - {{from: {{link: l{}, at: 0.2 m}}, to: {{base: [1 m, -1 m]}}, coefficient: 80 N s/m}}
wind: {{speed: 8 m/s, link: l{}, drag_area: 1 m^2, drag_coefficient: 1.2, gust: {{start: 0.5 s, for: 0.5 s, speed: 6 m/s}}}}
base: {{scenarios: [{{name: brake, initial_velocity: {{x: 1 m/s}}, accel: [{{for: 0.7 s, x: -1.4 m/s^2}}]{}}}]}}
cases: {{duration: 2 s, initial: [{{single: {{theta: [20 deg], rate: [0.3 rad/s]}}}}]}}
)",
                     n, links, n - 1, n - 1, n - 1, hoist);
}

}  // namespace

TEST_CASE("the counter sees operator new and Eigen's dynamic matrices", "[alloc]") {
  const long count = count_allocations([] {
    std::vector<double> v(10);
    Eigen::VectorXd e(10);
    v[0] = e.size();
  });
  CHECK(count >= 2);
}

TEST_CASE("evaluate allocates nothing once the Workspace is built", "[alloc]") {
  for (const auto& [n, ropes] : {std::pair{1, false}, std::pair{2, false}, std::pair{3, false}, std::pair{5, false},
                                 std::pair{10, false}, std::pair{1, true}, std::pair{3, true}, std::pair{5, true}}) {
    INFO(n << " links" << (ropes ? ", elastic ropes and a hoist" : ""));
    const Spec spec = load_spec_text(spec_text(n, ropes), "alloc.yaml");
    const Model model = build_model(spec);
    REQUIRE(model.any_pin_friction);
    REQUIRE(model.wind.size() == 1);
    REQUIRE(model.dashpots.size() == 2);
    const auto size = static_cast<std::size_t>(model.state_size());
    std::vector<double> x(size), dxdt(size);
    Workspace ws(model);
    const auto& phases = model.scenarios[0].phases;
    REQUIRE(phases.size() >= 3);  // braking, then the gust, then steady
    const long count = count_allocations([&] {
      for (int k = 0; k < 2000; ++k) {
        for (std::size_t i = 0; i < size; ++i) x[i] = 0.3 * std::sin(0.7 * k + static_cast<double>(i));
        const double t = 0.001 * k;
        const Phase& phase = phases[static_cast<std::size_t>(model.scenarios[0].phase_at(t))];
        ws.lazy_reactions = (k % 2) == 0;
        for (std::size_t r = 0; r < ws.rope_slack.size(); ++r) ws.rope_slack[r] = (k / 3 + r) % 2;
        for (int link : model.elastic_links)  // rope lengths near their own
          x[static_cast<std::size_t>(model.length_coordinate[static_cast<std::size_t>(link)])] +=
              model.length[static_cast<std::size_t>(link)];
        evaluate(model, ws, phase, x.data(), t, dxdt.data());
        finish_reactions(model, ws);
        double top, bottom;
        for (int i = 0; i < n; ++i) link_tension(model, ws, i, top, bottom);
        (void)mechanical_energy(model, ws);
      }
    });
    CHECK(ws.friction_unconverged == 0);
    CHECK(count == 0);
  }
}

TEST_CASE("allocations of a whole simulate_case (figures for README.md)", "[alloc]") {
  // The Odeint stepper and its state vectors are made once per phase; a run has a fixed number of
  // allocations, independent of its length. Printed, and bounded so that a per-step allocation
  // (thousands of steps) would fail.
  for (const auto& [n, ropes] : {std::pair{2, false}, std::pair{3, false}, std::pair{5, false}, std::pair{3, true}}) {
    const Spec spec = load_spec_text(spec_text(n, ropes), "alloc.yaml");
    const Model model = build_model(spec);
    Workspace ws(model);
    RunSettings settings = RunSettings::from_spec(spec);
    settings.duration = 20;
    const InitialState start{{0.35}, {0.3}};
    RunOutcome outcome;
    const long count = count_allocations([&] { outcome = simulate_case(model, ws, 0, start, settings); });
    REQUIRE(outcome.status == RunStatus::ok);
    std::printf("alloc: simulate_case, %d links%s, %zu phases, %ld steps, %ld evaluations, %ld switches: %ld "
                "allocations\n",
                n, ropes ? " (elastic ropes, hoisted)" : "", model.scenarios[0].phases.size(), outcome.steps,
                outcome.evaluations, outcome.switches, count);
    // Each segment (a phase, or a stretch between switches of a rope's law) starts a stepper: a
    // fixed number of allocations per segment, none per step.
    const auto segments = static_cast<long>(model.scenarios[0].phases.size()) + outcome.switches;
    CHECK(count < 25 * segments + 30);
    CHECK(outcome.steps > 1000);
    // The same case through the check pipeline's per-case metrics (figure only).
    const CaseSpace space(spec);
    const CaseDef def = space.at(0);
    RunSettings streaming = settings;
    streaming.output_rate = 0;
    const long per_case = count_allocations([&] { (void)run_case(model, spec, ws, def, streaming, {}); });
    std::printf("alloc: run_case (check pipeline), %d links: %ld allocations\n", n, per_case);
  }
}
