// Largest finite-time Lyapunov exponent (Benettin's method) against values from outside the
// project. Each reference value names its source.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include <boost/numeric/odeint.hpp>
#include <fmt/format.h>
#include <fmt/ranges.h>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "swaybound/chaos/ftle.hpp"
#include "swaybound/checks/metrics.hpp"

using namespace swaybound;
using namespace swaybound::testing;
using std::numbers::pi;

namespace {
constexpr double kG = 9.81;
double deg(double d) { return d * pi / 180; }

struct Lorenz {
  double sigma = 10, rho = 28, beta = 8.0 / 3.0;
  void operator()(const std::vector<double>& x, std::vector<double>& dxdt, double) const {
    dxdt[0] = sigma * (x[1] - x[0]);
    dxdt[1] = x[0] * (rho - x[2]) - x[1];
    dxdt[2] = x[0] * x[1] - beta * x[2];
  }
};

/// Two point masses on massless links (tests/support/pendulum.hpp).
std::string equal_double(double length, double mass) { return swaybound::testing::equal_double_yaml(length, mass, kG); }

FtleSettings ftle_settings(double horizon) {
  FtleSettings s;
  s.horizon = horizon;
  return s;
}
}  // namespace

TEST_CASE("FTLE of the Lorenz system matches the published largest exponent", "[chaos]") {
  // sigma = 10, rho = 28, beta = 8/3: largest Lyapunov exponent 0.9056 (J. C. Sprott, Chaos and
  // Time-Series Analysis, Oxford University Press 2003, appendix table of Lyapunov exponents of
  // common chaotic systems: 0.9056, 0, -14.5723).
  Lorenz lorenz;
  std::vector<double> x{1.0, 1.0, 1.0};
  namespace odeint = boost::numeric::odeint;
  // Discard the transient: start from a point on the attractor.
  odeint::integrate_adaptive(odeint::make_controlled(1e-10, 1e-10, odeint::runge_kutta_dopri5<std::vector<double>>()),
                             lorenz, x, 0.0, 50.0, 1e-3);
  const FtleResult r = finite_time_lyapunov(lorenz, x, ftle_settings(1000));
  REQUIRE(r.status == FtleStatus::ok);
  INFO("Lorenz exponent " << r.exponent << " /s, " << r.steps << " steps");
  CHECK_THAT(r.exponent, IsCloseTo(0.9056, 0, 0.02));
  CHECK(r.growth.size() == 2000);
  CHECK(r.growth.back().t == 1000.0);
}

TEST_CASE("FTLE bookkeeping: breakpoints, on_interval and the growth record are exact", "[chaos]") {
  // dx/dt = a(t) x with a = +1 before the breakpoint t_b = 3.3 s and -2 after: every separation
  // grows by exactly exp(integral of a), so the cumulative ln growth at t is that integral (closed
  // form) and lambda = (t_b - 2 (T - t_b)) / T. The rate is selected by on_interval only, so a
  // wrong phase at any interval shows in the record. Rounding budget: each measurement of d from
  // x' - x loses about eps |x| / d0 relative (here |x| <= 0.1 e^3.3 ~ 2.7: ~6e-8 per interval, 11
  // intervals), hence the 1e-6 margin on the log growth.
  int phase = 0;
  const auto system = [&phase](const std::vector<double>& x, std::vector<double>& dxdt, double) {
    dxdt[0] = (phase == 0 ? 1.0 : -2.0) * x[0];
  };
  auto sys = system;
  const double t_b = 3.3, T = 5.0;
  std::vector<double> starts;
  const FtleResult r = finite_time_lyapunov(sys, {0.1}, ftle_settings(T), {t_b, 7.0}, [&](double t) {
    starts.push_back(t);
    phase = t < t_b ? 0 : 1;
  });
  REQUIRE(r.status == FtleStatus::ok);
  const std::vector<double> expected_starts{0, 0.5, 1, 1.5, 2, 2.5, 3, 3.3, 3.5, 4, 4.5};
  CHECK(starts == expected_starts);
  REQUIRE(r.growth.size() == expected_starts.size());
  for (const auto& g : r.growth) {
    INFO("t = " << g.t);
    CHECK_THAT(g.log_growth, IsCloseTo(g.t < t_b + 1e-12 ? g.t : t_b - 2 * (g.t - t_b), 1e-6, 0));
  }
  CHECK(r.growth.back().t == T);
  CHECK_THAT(r.exponent, IsCloseTo((t_b - 2 * (T - t_b)) / T, 1e-6 / T, 0));
}

TEST_CASE("FTLE reports numerical trouble as a status, not an exception", "[chaos]") {
  // dx/dt = x^2 from x = 1 blows up at t = 1.
  const auto blow_up = [](const std::vector<double>& x, std::vector<double>& dxdt, double) { dxdt[0] = x[0] * x[0]; };
  auto sys = blow_up;
  FtleSettings s = ftle_settings(2);
  s.max_steps = 100000;
  FtleResult r;
  REQUIRE_NOTHROW(r = finite_time_lyapunov(sys, {1.0}, s));
  CHECK(r.status != FtleStatus::ok);
  CHECK_FALSE(r.reason.empty());
  CHECK(r.t_reached < 1.0);
  INFO(r.reason);
  // Bad settings are argument errors.
  CHECK_THROWS_AS(finite_time_lyapunov(sys, {1.0}, ftle_settings(0)), ArgumentError);
}

TEST_CASE("FTLE of the equal double pendulum: regular at small, chaotic at large amplitude", "[chaos]") {
  const Model model = model_from_yaml(equal_double(1.0, 1.0));
  Workspace ws(model);
  SECTION("5 deg / 5 deg: quasi-periodic, exponent near zero") {
    // Regular (quasi-periodic) motion separates nearby trajectories only linearly in time
    // (the frequencies depend on the amplitudes), so the finite-time estimate decays like
    // ln(t) / t; over 100 s it must be small.
    const FtleResult r = chain_ftle(model, ws, 0, {{deg(5), deg(5)}, {}}, ftle_settings(100));
    REQUIRE(r.status == FtleStatus::ok);
    INFO("5/5 deg exponent " << r.exponent << " /s");
    CHECK(std::fabs(r.exponent) < 0.05);
  }
  SECTION("120 deg / 120 deg: chaotic, clearly positive exponent") {
    const FtleResult r = chain_ftle(model, ws, 0, {{deg(120), deg(120)}, {}}, ftle_settings(100));
    REQUIRE(r.status == FtleStatus::ok);
    INFO("120/120 deg exponent " << r.exponent << " /s");
    CHECK(r.exponent > 0.5);
  }
}

TEST_CASE("FTLE of a damped pendulum is the decay rate -zeta omega_n", "[chaos]") {
  // Linearised about the hanging rest, I_p theta'' + c theta' + k theta = 0 with k = m g d. Its
  // eigenvalues are -zeta omega_n +- i omega_n sqrt(1 - zeta^2), omega_n = sqrt(k / I_p),
  // zeta = c / (2 sqrt(I_p k)) (Thomson & Dahleh, Theory of Vibration with Applications, 5th ed.,
  // sec. 2.6). When underdamped both have the real part -zeta omega_n = -c / (2 I_p), so every
  // separation decays like exp(-zeta omega_n t) times a bounded oscillating factor: both Lyapunov
  // exponents equal -zeta omega_n. The swing itself decays to rest, so the linearisation about it
  // tends to this one. Point mass on a 1 m link: I_p = 1 kg m^2, omega_n = sqrt(g) ~ 3.13 rad/s,
  // and with T_ref = sqrt(L / g) = 1 / omega_n the weighted norm is nearly round in the phase
  // plane, so the oscillating factor is close to 1.
  const double c = 0.4, I_p = 1.0;
  const Model model = model_from_yaml(fmt::format(R"(
swaybound: 1
name: damped pendulum
gravity: {}
links:
  - {{name: arm, length: 1, mass: 1, com: 1, inertia: 0, pivot: {{damper: {{coefficient: {} N m s/rad}}}}}}
cases: {{duration: 1 s, initial: [{{single: {{theta: [0.1 rad]}}}}]}}
base: {{scenarios: [{{name: still, accel: []}}, {{name: jolt, accel: [{{for: 3.25 s, x: 2}}]}}]}}
)",
                                                  kG, c));
  Workspace ws(model);
  const double expected = -c / (2 * I_p);  // -zeta omega_n [1/s]
  SECTION("still base") {
    const FtleResult r = chain_ftle(model, ws, 0, {{deg(5)}, {}}, ftle_settings(50));
    REQUIRE(r.status == FtleStatus::ok);
    INFO("damped exponent " << r.exponent << " /s, expected " << expected);
    CHECK_THAT(r.exponent, IsCloseTo(expected, 0, 0.05));
  }
  SECTION("a base-acceleration phase: a breakpoint, and the same decay rate") {
    // During the jolt the pendulum swings about the tilted rest -atan(a / g); the linearisation
    // there has stiffness m d sqrt(g^2 + a^2) but the same -c / (2 I_p). The swing of ~17 deg
    // about it adds a small amplitude-dependent shear, hence the same 5% band.
    REQUIRE(model.scenarios[1].phases.size() == 2);
    const FtleResult r = chain_ftle(model, ws, 1, {{deg(5)}, {}}, ftle_settings(50));
    REQUIRE(r.status == FtleStatus::ok);
    INFO("damped exponent with a jolt " << r.exponent << " /s, expected " << expected);
    CHECK_THAT(r.exponent, IsCloseTo(expected, 0, 0.05));
    // The last evaluation was under the phase after the jolt (no base acceleration).
    CHECK(ws.base_ax == 0.0);
    // The phase boundary at 3.25 s is an extra interval end (100 on the 0.5 s grid, plus one).
    CHECK(r.growth.size() == 101);
    CHECK(r.growth[6].t == 3.25);
  }
}

TEST_CASE("Divergence times of a perturbation ladder follow 1 / lambda", "[chaos]") {
  // Chaotic 120/120 deg double pendulum started from theta0 and from theta0 (1 + delta): the
  // separation grows like delta exp(lambda t), so the time to reach 0.1 rad grows like
  // ln(1 / delta) / lambda. A factor-2 band on the slope is used because the finite-time exponent
  // varies along the trajectory (common practice; no source).
  const Model model = model_from_yaml(equal_double(1.0, 1.0));
  const std::vector<double> theta0{deg(120), deg(120)};
  const double duration = 40;
  const RunSettings run = settings(duration, 1e-12, 1e-14, 100);
  const Trace reference = run_trace(model, {theta0, {}}, run);
  REQUIRE(reference.outcome.status == RunStatus::ok);

  std::vector<double> logs, times;
  for (double delta : {1e-4, 1e-6, 1e-8, 1e-10}) {
    const Trace perturbed = run_trace(model, {{theta0[0] * (1 + delta), theta0[1] * (1 + delta)}, {}}, run);
    REQUIRE(perturbed.outcome.status == RunStatus::ok);
    REQUIRE(perturbed.samples.size() == reference.samples.size());
    double first = -1;
    for (std::size_t i = 0; i < reference.samples.size() && first < 0; ++i) {
      const auto& a = reference.samples[i].x;
      const auto& b = perturbed.samples[i].x;
      if (std::max(std::fabs(a[0] - b[0]), std::fabs(a[1] - b[1])) > 0.1) first = reference.samples[i].t;
    }
    INFO("delta " << delta);
    REQUIRE(first > 0);
    logs.push_back(std::log(1 / delta));
    times.push_back(first);
  }
  for (std::size_t k = 1; k < times.size(); ++k) CHECK(times[k] > times[k - 1]);

  // Least-squares slope of the time against ln(1 / delta).
  const double n = static_cast<double>(logs.size());
  double sx = 0, sy = 0, sxx = 0, sxy = 0;
  for (std::size_t k = 0; k < logs.size(); ++k) {
    sx += logs[k];
    sy += times[k];
    sxx += logs[k] * logs[k];
    sxy += logs[k] * times[k];
  }
  const double slope = (n * sxy - sx * sy) / (n * sxx - sx * sx);

  Workspace ws(model);
  const FtleResult r = chain_ftle(model, ws, 0, {theta0, {}}, ftle_settings(100));
  REQUIRE(r.status == FtleStatus::ok);
  INFO(fmt::format("times {} s, slope {:.4g} s, 1/lambda {:.4g} s (lambda {:.4g} /s)", fmt::join(times, ", "), slope,
                   1 / r.exponent, r.exponent));
  CHECK(slope > 0.5 / r.exponent);
  CHECK(slope < 2.0 / r.exponent);
}

TEST_CASE("chaos.rate_weight and chaos.direction set the FTLE's norm and first direction", "[chaos][ftle]") {
  // A uniform rod swinging at 1e-3 rad is a harmonic oscillator, omega0 = sqrt(3 g / (2 L)). Its
  // tangent flow rotates a separation (d_theta, d_omega) = (cos w t, -w sin w t) from (1, 0) and
  // (sin w t / w, cos w t) from (0, 1); renormalising does not turn it, so over a horizon H the
  // FTLE is ln(|d(H)| / |d(0)|) / H in the norm sqrt(d_theta^2 + (T d_omega)^2):
  //   from (1, 0): 0.5 ln(cos^2 wH + (T w)^2 sin^2 wH) / H;  from (0, 1): 0.5 ln(cos^2 wH + sin^2 wH / (T w)^2) / H,
  // and 0 for T = 1 / w (closed form of the linear oscillator, e.g. Strogatz, Nonlinear Dynamics
  // and Chaos, 5.1). The default T = sqrt(L / g) gives (T w)^2 = 1.5.
  const double g = 9.81, L = 2.0, H = 20.0;
  const double w = std::sqrt(1.5 * g / L);
  const auto run = [&](const std::string& chaos) {
    const Spec spec = load_spec_text(fmt::format(R"(
swaybound: 1
name: small swing
gravity: {}
links: [{{name: rod, length: {} m, mass: 10 kg}}]
cases: {{duration: {} s, initial: [{{single: {{theta: [0.001 rad]}}}}]}}
solver: {{rtol: 1e-12, atol: 1e-14}}
chaos: {{horizon: {} s, {}}}
)",
                                                 g, L, H, H, chaos),
                                     "small.yaml");
    const Model model = build_model(spec);
    Workspace ws(model);
    const FtleResult r = chain_ftle(model, ws, 0, {{0.001}, {}}, ftle_settings(spec, RunSettings::from_spec(spec)));
    REQUIRE(r.status == FtleStatus::ok);
    return r.exponent;
  };
  const double c = std::cos(w * H), s = std::sin(w * H);
  CHECK_THAT(run("direction: {theta: [1]}"), IsCloseTo(0.5 * std::log(c * c + 1.5 * s * s) / H, 1e-6, 0));
  CHECK_THAT(run("direction: {rate: [1]}"), IsCloseTo(0.5 * std::log(c * c + s * s / 1.5) / H, 1e-6, 0));
  const std::string isotropic = fmt::format("rate_weight: {:.17g} s", 1 / w);
  CHECK(std::fabs(run(isotropic + ", direction: {theta: [1]}")) < 1e-6);
  CHECK(std::fabs(run(isotropic + ", direction: {theta: [0.3], rate: [0.7]}")) < 1e-6);
  // The two readings differ by more than the tolerance, so the keys are really used.
  CHECK(std::fabs(0.5 * std::log(c * c + 1.5 * s * s) / H) > 1e-3);

  for (const char* bad : {"direction: {theta: [0], rate: [0]}", "direction: {theta: [1, 2]}", "rate_weight: -1 s"}) {
    INFO(bad);
    CHECK_THROWS_AS(run(bad), SpecError);
  }
}

TEST_CASE("a failed FTLE run keeps its cause", "[chaos][faults]") {
  const Model model = model_from_yaml(equal_double_yaml(1.0, 1.0, kG));
  Workspace ws(model);
  const InitialState chaotic{{deg(120), deg(120)}, {}};
  SECTION("step budget") {
    FtleSettings s = ftle_settings(50);
    s.max_steps = 300;
    const FtleResult r = chain_ftle(model, ws, 0, chaotic, s);
    CHECK(r.status == FtleStatus::step_budget);
    CHECK_THAT(r.reason, Catch::Contains("more than 300 steps"));
    CHECK(r.t_reached < 50);
  }
  SECTION("wall-clock budget") {
    FtleSettings s = ftle_settings(50);
    s.max_seconds = 0;  // checked every 256 steps: out at the first check
    const FtleResult r = chain_ftle(model, ws, 0, chaotic, s);
    CHECK(r.status == FtleStatus::time_budget);
    CHECK_THAT(r.reason, Catch::Contains("wall-clock budget"));
    CHECK(r.steps == 256);
  }
  SECTION("step collapse") {
    FtleSettings s = ftle_settings(50);
    s.min_step = 0.5;  // the chaotic swing needs far shorter steps at rtol 1e-10
    const FtleResult r = chain_ftle(model, ws, 0, chaotic, s);
    CHECK(r.status == FtleStatus::step_collapse);
    CHECK_THAT(r.reason, Catch::Contains("step size fell to"));
  }
  SECTION("pin friction that does not converge") {
    // mu r / L = 2 * 0.5 m / 0.1 m = 10: the fixed point diverges (DEVELOPERS.md, "Pin friction").
    const Model pin = model_from_yaml(R"(swaybound: 1
name: pin friction that does not contract
links:
  - {name: arm, length: 0.1 m, mass: 40 kg, pivot: {friction: {pin_radius: 0.5 m, mu: 2}}}
  - {name: hook, length: 0.1 m, mass: 40 kg, pivot: {friction: {pin_radius: 0.5 m, mu: 2}}}
cases: {duration: 5 s, initial: [{single: {theta: [60 deg, -60 deg], rate: [3 rad/s, -3 rad/s]}}]}
)");
    Workspace pin_ws(pin);
    FtleSettings s = ftle_settings(5);
    s.max_steps = 20000;
    const FtleResult r = chain_ftle(pin, pin_ws, 0, {{deg(60), deg(-60)}, {3, -3}}, s);
    CHECK(r.status == FtleStatus::friction_unconverged);
    CHECK_THAT(r.reason, Catch::Contains("pin friction did not converge"));
  }
}

TEST_CASE("a case whose FTLE run fails reports the FTLE's cause, not non_finite", "[chaos][faults]") {
  // The case itself (1 s) fits the step budget; the FTLE over 50 s of a chaotic swing does not.
  const Spec spec = load_spec_text(equal_double_yaml(1.0, 1.0, kG), "inline.yaml");
  const Model model = build_model(spec);
  Workspace ws(model);
  RunSettings run = RunSettings::from_spec(spec);
  run.max_steps = 400;
  CaseOptions options;
  options.ftle = true;
  options.ftle_settings = ftle_settings(50);
  CaseDef def;
  def.initial = {{deg(120), deg(120)}, {}};
  const CaseMetrics m = run_case(model, spec, ws, def, run, options);
  CHECK(m.status == RunStatus::step_budget);
  CHECK_THAT(m.reason, Catch::Contains("FTLE run failed") && Catch::Contains("more than 400 steps"));
}
