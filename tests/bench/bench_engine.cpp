// Engine benchmark (not a test): time per trajectory of the general engine against a hand-written
// closed-form double pendulum on the same Odeint stepper, against SciPy's DOP853, and the cost of
// one right-hand-side evaluation for N = 2, 3, 5, 10. Run: cmake --build --preset bench
// (or build/release/tests/bench/bench_engine [--quick]). Figures are medians of interleaved runs.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <functional>
#include <numbers>
#include <random>
#include <string>
#include <vector>

#include <boost/numeric/odeint.hpp>
#include <fmt/format.h>

#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace odeint = boost::numeric::odeint;
using State = std::vector<double>;
using Clock = std::chrono::steady_clock;

namespace {

constexpr double kG = 9.81, kL = 1.0, kM = 1.0;
constexpr double kTol = 1e-9, kDuration = 20.0;
const double kStart = 120.0 * std::numbers::pi / 180.0;

/// Closed-form equal point-mass double pendulum (the classical textbook form, written out for
/// m1 = m2 = m, L1 = L2 = L; cross-checked against the engine below).
struct ClosedForm {
  void operator()(const State& x, State& dxdt, double) const {
    const double d = x[1] - x[0], s = std::sin(d), c = std::cos(d);
    const double w1 = x[2], w2 = x[3];
    const double den = 2.0 - c * c;  // (m1 + m2 - m2 cos^2 d) / m
    dxdt[0] = w1;
    dxdt[1] = w2;
    dxdt[2] = (w1 * w1 * s * c + kG / kL * std::sin(x[1]) * c + w2 * w2 * s - 2.0 * kG / kL * std::sin(x[0])) / den;
    dxdt[3] = (-w2 * w2 * s * c + 2.0 * (kG / kL * std::sin(x[0]) * c - w1 * w1 * s - kG / kL * std::sin(x[1]))) / den;
  }
};

std::string chain_yaml(int n) {
  std::string links;
  for (int i = 0; i < n; ++i)
    links += fmt::format("  - {{name: l{}, length: {}, mass: {}, com: {}, inertia: 0}}\n", i, kL, kM, kL);
  return fmt::format("swaybound: 1\nname: bench chain\ngravity: {}\nlinks:\n{}cases: {{duration: 20 s, initial: "
                     "[{{single: {{theta: [0.1 rad]}}}}]}}\n",
                     kG, links);
}

template <class System>
double integrate_once(System& system, State& x, double t_end) {
  auto stepper = odeint::make_dense_output(kTol, kTol, odeint::runge_kutta_dopri5<State>());
  const auto start = Clock::now();
  odeint::integrate_adaptive(stepper, std::ref(system), x, 0.0, t_end, 1e-3);
  return std::chrono::duration<double>(Clock::now() - start).count();
}

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  return v[v.size() / 2];
}

struct EngineSystem {
  const Model* model;
  Workspace* ws;
  void operator()(const State& x, State& dxdt, double t) {
    evaluate(*model, *ws, model->scenarios[0].phases[0], x.data(), t, dxdt.data());
  }
};

}  // namespace

int main(int argc, char** argv) {
  const bool quick = argc > 1 && std::string(argv[1]) == "--quick";
  const int repeats = quick ? 5 : 31;
  const Model model2 = build_model(load_spec_text(chain_yaml(2), "bench.yaml"));

  // Cross-check: the closed form and the engine give the same accelerations.
  {
    Workspace ws(model2);
    std::mt19937_64 rng(5);
    std::uniform_real_distribution<double> u(-3, 3);
    double worst = 0;
    for (int k = 0; k < 1000; ++k) {
      State x = {u(rng), u(rng), u(rng), u(rng), 0, 0}, a(6), b(4);
      evaluate(model2, ws, model2.scenarios[0].phases[0], x.data(), 0, a.data());
      ClosedForm{}(State(x.begin(), x.begin() + 4), b, 0);
      worst = std::max({worst, std::fabs(a[2] - b[2]) / (1 + std::fabs(b[2])), std::fabs(a[3] - b[3]) / (1 + std::fabs(b[3]))});
    }
    std::printf("closed form vs engine accelerations, 1000 random states: max relative difference %.2e\n", worst);
  }

  // 1. Time per trajectory, interleaved: closed form / bare engine / full driver (observers, audit).
  std::vector<double> t_closed, t_engine, t_driver;
  State x_closed, x_engine;
  for (int r = 0; r < repeats; ++r) {
    ClosedForm closed;
    x_closed = {kStart, kStart, 0, 0};
    t_closed.push_back(integrate_once(closed, x_closed, kDuration));
    Workspace ws(model2);
    ws.lazy_reactions = true;  // as the driver runs it: reactions only where observed
    EngineSystem engine{&model2, &ws};
    x_engine = {kStart, kStart, 0, 0, 0, 0};
    t_engine.push_back(integrate_once(engine, x_engine, kDuration));
    RunSettings s;
    s.duration = kDuration;
    s.rtol = s.atol = kTol;
    double peak = 0;
    const Observer on_step = [&](const StepView& v) { peak = std::max(peak, std::fabs(v.x[1])); };
    const auto start = Clock::now();
    simulate_case(model2, ws, 0, {{kStart, kStart}, {}}, s, on_step);
    t_driver.push_back(std::chrono::duration<double>(Clock::now() - start).count());
  }
  const double mc = median(t_closed), me = median(t_engine), md = median(t_driver);
  std::printf("\nEqual double pendulum, 120 deg, %g s, dopri5 rtol = atol = %g, median of %d interleaved runs\n",
              kDuration, kTol, repeats);
  std::printf("| formulation | time per trajectory | ratio to closed form |\n|---|---|---|\n");
  std::printf("| hand-written closed form (4 states) | %.3f ms | 1.00 |\n", mc * 1e3);
  std::printf("| swaybound engine, bare (6 states incl. energy audit) | %.3f ms | %.2f |\n", me * 1e3, me / mc);
  std::printf("| swaybound driver: engine + per-step observer + energy audit | %.3f ms | %.2f |\n", md * 1e3, md / mc);

  // 2. Accuracy at t = 5 s against a tight reference, and SciPy DOP853 at the same tolerance.
  State ref = {kStart, kStart, 0, 0};
  {
    ClosedForm closed;
    auto stepper = odeint::make_controlled(1e-13, 1e-13, odeint::runge_kutta_fehlberg78<State>());
    odeint::integrate_adaptive(stepper, std::ref(closed), ref, 0.0, 5.0, 1e-4);
  }
  State at5 = {kStart, kStart, 0, 0, 0, 0};
  {
    Workspace ws(model2);
    EngineSystem engine{&model2, &ws};
    integrate_once(engine, at5, 5.0);
  }
  const double err_engine = std::hypot(at5[0] - ref[0], at5[1] - ref[1]);
  std::printf("\nAt t = 5 s against an RKF78 reference at rtol = atol = 1e-13: theta = (%.12f, %.12f) rad\n", ref[0],
              ref[1]);
  std::printf("| solver at rtol = atol = %g | time per trajectory (20 s) | angle error at 5 s |\n|---|---|---|\n", kTol);
  std::printf("| swaybound engine, Odeint dopri5 | %.3f ms | %.2e rad |\n", me * 1e3, err_engine);
  const std::string script = std::string(SWAYBOUND_SOURCE_DIR) + "/tests/bench/scipy_dop853.py";
  const std::string cmd = fmt::format("{} {} {} {} {:.17g} {:.17g} {}", SWAYBOUND_PYTHON, script, kTol, kDuration,
                                      ref[0], ref[1], quick ? 3 : 7);
  if (FILE* pipe = popen(cmd.c_str(), "r")) {
    char line[512];
    double scipy_time = 0, scipy_err = 0;
    if (std::fgets(line, sizeof line, pipe) && std::sscanf(line, "%lf %lf", &scipy_time, &scipy_err) == 2) {
      std::printf("| SciPy solve_ivp DOP853 (Python right-hand side) | %.3f ms | %.2e rad |\n", scipy_time * 1e3,
                  scipy_err);
      std::printf("SciPy / swaybound time ratio: %.1f\n", scipy_time / me);
    } else {
      std::printf("| SciPy solve_ivp DOP853 | not available (python3-scipy missing?) | |\n");
    }
    pclose(pipe);
  }

  // 3. Cost of one right-hand-side evaluation.
  {
    ClosedForm closed;
    State x = {0.3, -0.2, 0.1, 0.5}, dxdt(4);
    std::vector<double> per;
    for (int r = 0; r < 5; ++r) {
      const auto start = Clock::now();
      for (long k = 0; k < 1'000'000; ++k) {
        x[0] = 1e-7 * static_cast<double>(k & 1023);
        closed(x, dxdt, 0.0);
      }
      per.push_back(std::chrono::duration<double>(Clock::now() - start).count() / 1e6);
    }
    std::printf("\nright-hand side of the hand-written closed form: %.0f ns\n", median(per) * 1e9);
  }
  std::printf("\n| links N | right-hand side | with dampers + friction at every pivot |\n|---|---|---|\n");
  for (int n : {2, 3, 5, 10}) {
    double cost[2];
    for (int variant = 0; variant < 2; ++variant) {
      std::string yaml = chain_yaml(n);
      if (variant == 1) {
        std::string with;
        for (int i = 0; i < n; ++i)
          with += fmt::format("  - {{name: l{}, length: 1, mass: 1, com: 1, inertia: 0, pivot: {{damper: "
                              "{{coefficient: 0.5 N m s/rad, exponent: 0.7}}, friction: {{torque: 0.1, pin_radius: 0.01, mu: 0.2}}}}}}\n",
                              i);
        yaml = fmt::format("swaybound: 1\nname: b\nlinks:\n{}cases: {{duration: 1 s, initial: [{{single: {{theta: [0.1 rad]}}}}]}}\n", with);
      }
      const Model model = build_model(load_spec_text(yaml, "bench.yaml"));
      Workspace ws(model);
      std::mt19937_64 rng(11);
      std::uniform_real_distribution<double> u(-1, 1);
      std::vector<State> states(256, State(static_cast<std::size_t>(model.state_size())));
      for (auto& s : states)
        for (auto& v : s) v = u(rng);
      State dxdt(static_cast<std::size_t>(model.state_size()));
      const long calls = quick ? 100'000 : 1'000'000;
      std::vector<double> per;
      for (int r = 0; r < 5; ++r) {
        const auto start = Clock::now();
        for (long k = 0; k < calls; ++k) evaluate(model, ws, model.scenarios[0].phases[0], states[static_cast<std::size_t>(k & 255)].data(), 0.0, dxdt.data());
        per.push_back(std::chrono::duration<double>(Clock::now() - start).count() / static_cast<double>(calls));
      }
      cost[variant] = median(per);
    }
    std::printf("| %d | %.0f ns | %.0f ns |\n", n, cost[0] * 1e9, cost[1] * 1e9);
  }
  return 0;
}
