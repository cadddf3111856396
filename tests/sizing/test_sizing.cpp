// Sizing: the optimiser against closed forms and a bisection on the full simulation, an active
// constraint known in advance, an infeasible problem, catalogue values, and seeded determinism.
//
// The test problem throughout: a point mass m on a massless rigid link of length L (com = L,
// inertia 0) with a linear rotary damper c at the pivot, released at rest from theta0, with the
// limit residual_sway r after time T. Linearised (small angle):
//   m L^2 theta'' + c theta' + m g L theta = 0,  w_n = sqrt(g / L),  zeta = c / (2 m L^2 w_n),
//   theta(t) = theta0 e^(-zeta w_n t) [cos w_d t + zeta / sqrt(1 - zeta^2) sin w_d t],
//   w_d = w_n sqrt(1 - zeta^2)
// (Thomson & Dahleh, Theory of Vibration with Applications, 5th ed., sec. 2.6: free vibration
// with viscous damping; logarithmic decrement). The rate is proportional to
// e^(-zeta w_n t) sin(w_d t), so the extremes of theta fall at t_k = k pi / w_d, where
//   |theta(t_k)| = theta0 exp(-k pi zeta / sqrt(1 - zeta^2))       (exact, no envelope factor),
// the logarithmic decrement per half cycle. The damped free response lies inside the envelope
//   |theta(t)| <= theta0 e^(-zeta w_n t) / sqrt(1 - zeta^2).
// With theta0 = 2 deg, r = 0.5 deg, T = 9.5 s, L = 1 m: t_9 ~ 9.03 s < T < t_10 ~ 10.04 s, and T
// lies near a zero crossing, so the largest |theta| after T is the peak at t_10 (checked below).
// The least damping then has the closed form
//   10 pi zeta / sqrt(1 - zeta^2) = ln(theta0 / r)  =>  zeta* = a / sqrt(1 + a^2),
//   a = ln(theta0 / r) / (10 pi),  c* = 2 m L^2 w_n zeta*.
#include <sys/wait.h>
#include <unistd.h>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <new>
#include <numbers>
#include <set>
#include <sstream>
#include <stdexcept>

#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <nlopt.hpp>

#include "swaybound/core/hash.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/packet.hpp"
#include "swaybound/sizing/sizing.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;
using std::numbers::pi;

namespace {

constexpr double kG = 9.81, kMass = 10, kLength = 1, kTheta0Deg = 2, kLimitDeg = 0.5, kAfter = 9.5;

double deg(double d) { return d * pi / 180; }
double natural() { return std::sqrt(kG / kLength); }
double coefficient_of(double zeta) { return 2 * kMass * kLength * kLength * natural() * zeta; }
double zeta_of(double c) { return c / (2 * kMass * kLength * kLength * natural()); }

/// c* from the logarithmic decrement over 10 half cycles (see the file comment).
double closed_form_least_damping() {
  const double a = std::log(kTheta0Deg / kLimitDeg) / (10 * pi);
  return coefficient_of(a / std::sqrt(1 + a * a));
}

/// Linear response theta(t) / theta0 for damping c.
double linear_response(double c, double t) {
  const double z = zeta_of(c), wd = natural() * std::sqrt(1 - z * z);
  return std::exp(-z * natural() * t) * (std::cos(wd * t) + z / std::sqrt(1 - z * z) * std::sin(wd * t));
}

std::string pendulum(const std::string& sizing, const std::string& extra_limits = "", const std::string& extra = "",
                     double damper = 8) {
  return fmt::format(R"(
swaybound: 1
name: damped pendulum
gravity: {g}
links:
  - {{name: arm, length: {L}, mass: {m}, com: {L}, inertia: 0, pivot: {{damper: {{coefficient: {c} N m s/rad}}}}}}
{extra}
cases: {{duration: 11 s, initial: [{{single: {{theta: [{th} deg]}}}}]}}
limits:
  - {{residual_sway: {r} deg, after: {T} s}}
{limits}
sizing:
{sizing}
solver: {{rtol: 1e-10, atol: 1e-12}}
)",
                     fmt::arg("g", kG), fmt::arg("L", kLength), fmt::arg("m", kMass), fmt::arg("c", damper),
                     fmt::arg("extra", extra), fmt::arg("th", kTheta0Deg), fmt::arg("r", kLimitDeg),
                     fmt::arg("T", kAfter), fmt::arg("limits", extra_limits), fmt::arg("sizing", sizing));
}

Spec spec_file(const std::string& name, const std::string& text) {
  const fs::path path = fs::temp_directory_path() / ("swaybound-test-sizing-" + name + ".yaml");
  std::ofstream(path) << text;
  return load_spec(path.string());
}

SizingOptions quiet() {
  SizingOptions o;
  o.jobs = 2;
  o.audit = false;
  return o;
}

/// The least damper coefficient whose full check passes, by bisection on run_check.
double bisect_least_damping(const Spec& spec, double lo, double hi) {
  std::string why;
  const auto path = parse_spec_path(spec, "links[arm].pivot.damper.coefficient", why);
  REQUIRE(path);
  const auto passes = [&](double c) {
    Spec s = spec;
    set_spec_value(s, *path, c);
    CheckOptions o;
    o.audit = false;
    o.record = false;
    o.jobs = 1;
    return run_check(s, o).pass;
  };
  REQUIRE_FALSE(passes(lo));
  REQUIRE(passes(hi));
  for (int k = 0; k < 40 && hi - lo > 1e-9 * hi; ++k) {
    const double mid = 0.5 * (lo + hi);
    (passes(mid) ? hi : lo) = mid;
  }
  return hi;
}

int run_cli(const std::string& args) {
  const int status = std::system((std::string(SWAYBOUND_CLI) + " " + args + " >/dev/null 2>&1").c_str());
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

const char* kOneDamper = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}
  budget: {evaluations: 60}
)";

}  // namespace

TEST_CASE("least damper for a residual-sway limit: optimiser vs bisection vs the damped free response",
          "[sizing][reference]") {
  const double exact = closed_form_least_damping();  // about 2.7615 N m s/rad
  const double z = zeta_of(exact), wd = natural() * std::sqrt(1 - z * z);
  // The derivation's premises: T between the 9th and 10th extreme, |theta(T)| below the 10th peak.
  REQUIRE(9 * pi / wd < kAfter);
  REQUIRE(10 * pi / wd > kAfter);
  REQUIRE(std::fabs(linear_response(exact, kAfter)) < 0.2 * kLimitDeg / kTheta0Deg);

  const Spec spec = spec_file("one-damper", pendulum(kOneDamper));
  const double bisected = bisect_least_damping(spec, 0.5, 10);
  INFO("closed form " << exact << ", bisection on the full simulation " << bisected);

  SECTION("the bisection agrees with the closed form of the logarithmic decrement") {
    // The simulation is the nonlinear pendulum (sin theta): at 2 deg its period is longer by
    // theta0^2 / 16 = 7.6e-5 (from memory: the first term of the series for the large-amplitude
    // period), and the residual is the largest |theta| at an accepted step (rtol 1e-10: steps of
    // a few ms, a peak error below 1e-4). 0.2% covers both with room.
    CHECK(bisected == Approx(exact).epsilon(2e-3));
  }
  SECTION("the bisection lies between the bounds the envelope gives") {
    // Upper: the envelope theta0 e^(-zeta w_n T) / sqrt(1 - zeta^2) reaches r at T (it bounds
    // |theta| for all t >= T). Lower: the first extreme after T is at most half a damped period
    // later, and it equals theta0 e^(-zeta w_n t_k): zeta w_n (T + pi / w_d) = ln(theta0 / r).
    // Both solved for zeta by fixed-point iteration.
    const double wn = natural(), ln = std::log(kTheta0Deg / kLimitDeg);
    double zu = 0.05, zl = 0.05;
    for (int k = 0; k < 100; ++k) {
      zu = (ln + std::log(1 / std::sqrt(1 - zu * zu))) / (wn * kAfter);
      zl = ln / (wn * (kAfter + pi / (wn * std::sqrt(1 - zl * zl))));
    }
    const double upper = coefficient_of(zu), lower = coefficient_of(zl);
    INFO("envelope bounds " << lower << " .. " << upper);
    CHECK(lower <= bisected);
    CHECK(bisected <= upper);
    // The bracket is about (T + pi / w_d) / T = 1.106 wide (the sqrt factor adds ~0.07%).
    CHECK(upper / lower < 1.11);
  }
  SECTION("the optimiser finds a coefficient within 1% above the least one, verified") {
    const SizingResult r = run_sizing(spec, quiet());
    REQUIRE(r.values.size() == 1);
    INFO("optimiser " << r.values[0] << " after " << r.evaluations << " evaluations");
    CHECK(r.feasible);
    CHECK(r.after.pass);
    CHECK(r.values[0] >= bisected * (1 - 1e-9));
    CHECK(r.values[0] <= bisected * 1.01);
    CHECK(r.evaluations <= 60);
    REQUIRE(r.limits.size() == 1);
    CHECK(r.limits[0].binding);
    CHECK(r.limits[0].pass_after);
    // The design reported is the one checked: the final check's spec holds the values found.
    std::string why;
    CHECK(get_spec_value(r.sized, *parse_spec_path(r.sized, r.variables[0].path, why)) == r.values[0]);
    CHECK(r.history.back().kind == EvaluationKind::final_check);
    CHECK(r.history.front().kind == EvaluationKind::initial);
  }
}

TEST_CASE("two dampers, one cheaper per unit of effect: the constraint binds and the dearer one goes to zero",
          "[sizing]") {
  // A horizontal dashpot from the bob to a base point 50 m away adds, for small angles, a rotary
  // damping c_d a^2 (a = 1 m: the distance of the bob from the pivot; the line of action is
  // horizontal to within a theta / 50). The system then needs c_r + c_d a^2 >= c*, a linear
  // program: with cost c_r + 0.5 c_d the optimum puts everything into the dashpot,
  // c_r = 0 (its low bound), c_d = c* / a^2, and residual_sway is the active constraint.
  const std::string dashpot = R"(dashpots:
  - {name: steady, from: {link: arm, at: 1 m}, to: {base: [-50 m, -1 m]}, coefficient: 5 N s/m})";
  const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0, 10 N m s/rad], cost: 1}
    - {path: "dashpots[steady].coefficient", range: [0, 10], cost: 0.5}
  budget: {evaluations: 120}
)";
  const Spec spec = spec_file("two-dampers", pendulum(sizing, "  - {peak_angle: 10 deg}", dashpot, 5));
  const SizingResult r = run_sizing(spec, quiet());
  const double exact = closed_form_least_damping();
  INFO("rotary " << r.values[0] << ", dashpot " << r.values[1] << ", c* " << exact << ", " << r.evaluations
                 << " evaluations");
  CHECK(r.feasible);
  CHECK(r.variable_outcomes[0].at_bound == -1);
  CHECK(r.values[0] <= 0.01);
  // Within 1% above c* (plus 0.5% for the nonlinear pendulum and the dashpot's cos^2 theta).
  CHECK(r.values[1] >= exact * (1 - 5e-3));
  CHECK(r.values[1] <= exact * (1 + 1.5e-2));
  REQUIRE(r.limits.size() == 2);
  CHECK(r.limits[0].key == "residual_sway");
  CHECK(r.limits[0].binding);
  CHECK(r.limits[1].key == "peak_angle");
  CHECK_FALSE(r.limits[1].binding);
  CHECK(r.objective_after == Approx(r.values[0] + 0.5 * r.values[1]));
}

TEST_CASE("a problem with no feasible design is reported infeasible, with the binding limit and the bound",
          "[sizing]") {
  // The range stops at 1.5 N m s/rad, well below c* ~ 2.76: the best design is the high end, where
  // the residual sway is the 10th extreme of the damped free response (see the file comment).
  const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 1.5 N m s/rad], cost: 1}
  budget: {evaluations: 40}
)";
  const std::string text = pendulum(sizing, "  - {peak_angle: 10 deg}", "", 1);
  const Spec spec = spec_file("infeasible", text);
  const SizingResult r = run_sizing(spec, quiet());
  CHECK_FALSE(r.feasible);
  CHECK_FALSE(r.after.pass);
  REQUIRE(r.values.size() == 1);
  CHECK(r.values[0] == Approx(1.5).epsilon(1e-3));
  CHECK(r.variable_outcomes[0].at_bound == +1);
  REQUIRE(r.limits.size() == 2);
  const LimitOutcome& sway = r.limits[0];
  CHECK(sway.key == "residual_sway");
  CHECK_FALSE(sway.pass_after);
  CHECK(sway.binding);
  const double expected = deg(kTheta0Deg) * std::exp(-10 * pi * zeta_of(1.5) / std::sqrt(1 - std::pow(zeta_of(1.5), 2)));
  INFO("residual at c = 1.5: " << sway.worst_after << " rad, closed form " << expected);
  CHECK(sway.worst_after == Approx(expected).epsilon(5e-3));
  CHECK(sway.shortfall == Approx(sway.worst_after - deg(kLimitDeg)).epsilon(1e-9));
  CHECK(r.limits[1].pass_after);
  CHECK_FALSE(r.limits[1].binding);
  const std::string table = sizing_table_markdown(spec, r);
  CHECK(table.find("No design within the ranges") != std::string::npos);
  CHECK(table.find("at the high end") != std::string::npos);
  // The command line: exit 1, and the files are written.
  const fs::path file = fs::temp_directory_path() / "swaybound-test-sizing-infeasible.yaml";
  const fs::path out = fs::temp_directory_path() / "swaybound-test-size-infeasible";
  fs::remove_all(out);
  CHECK(run_cli(fmt::format("size {} --out {} --jobs 1", file.string(), out.string())) == 1);
  CHECK(fs::exists(out / "sizing.md"));
}

TEST_CASE("catalogue values are respected", "[sizing]") {
  SECTION("one catalogue damper: the least catalogue value above c*") {
    const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", catalogue: [1 N m s/rad, 2 N m s/rad, 2.5 N m s/rad, 3 N m s/rad, 4 N m s/rad, 6 N m s/rad], cost: 1}
  budget: {evaluations: 40}
)";
    const Spec spec = spec_file("catalogue", pendulum(sizing, "", "", 6));
    const SizingResult r = run_sizing(spec, quiet());
    CHECK(r.feasible);
    CHECK(r.values[0] == 3.0);  // c* ~ 2.76 (file comment)
    CHECK(r.catalogue_method.find("enumeration") != std::string::npos);
  }
  SECTION("a catalogue damper with a continuous dashpot: the dearer dashpot makes up the rest") {
    // As in the two-damper case, but the rotary damper is cheaper (0.5 per unit) and comes only
    // in {0, 1, 2}: the optimum takes 2 and the dashpot c* - 2.
    const std::string dashpot = R"(dashpots:
  - {name: steady, from: {link: arm, at: 1 m}, to: {base: [-50 m, -1 m]}, coefficient: 5 N s/m})";
    const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", catalogue: [0, 1 N m s/rad, 2 N m s/rad], cost: 0.5}
    - {path: "dashpots[steady].coefficient", range: [0, 10], cost: 1}
  budget: {evaluations: 150}
)";
    const Spec spec = spec_file("catalogue-mixed", pendulum(sizing, "", dashpot, 1));
    const SizingResult r = run_sizing(spec, quiet());
    const double exact = closed_form_least_damping();
    INFO("rotary " << r.values[0] << ", dashpot " << r.values[1] << ", c* " << exact);
    CHECK(r.feasible);
    CHECK(r.values[0] == 2.0);
    CHECK(r.values[0] + r.values[1] >= exact * (1 - 5e-3));
    CHECK(r.values[0] + r.values[1] <= exact * (1 + 1.5e-2));
  }
}

TEST_CASE("the same seed gives the same design", "[sizing][determinism]") {
  const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}
  mode: global
  seed: 42
  budget: {evaluations: 60}
)";
  const Spec spec = spec_file("seeded", pendulum(sizing));
  SizingOptions one = quiet(), two = quiet();
  two.jobs = 1;
  const SizingResult a = run_sizing(spec, one);
  const SizingResult b = run_sizing(spec, two);
  CHECK(a.algorithm.find("ISRES") != std::string::npos);
  CHECK(a.values == b.values);
  REQUIRE(a.history.size() == b.history.size());
  for (std::size_t k = 0; k < a.history.size(); ++k) CHECK(a.history[k].values == b.history[k].values);
  CHECK(a.feasible);
  CHECK(a.values[0] <= closed_form_least_damping() * 1.01);
}

TEST_CASE("swaybound size: files, the sized spec and its check, exit status 2 without a sizing section",
          "[sizing][cli]") {
  const fs::path spec = fs::temp_directory_path() / "swaybound-test-size-cli.yaml";
  std::ofstream(spec) << pendulum(kOneDamper);
  const fs::path out = fs::temp_directory_path() / "swaybound-test-size-out";
  fs::remove_all(out);
  REQUIRE(run_cli(fmt::format("size {} --out {} --jobs 2", spec.string(), out.string())) == 0);
  for (const char* name : {"sized_spec.yaml", "results.json", "cases.csv", "sizing_history.csv", "sizing.md",
                           "sizing.json", "report.pdf", "report.html"})
    CHECK(fs::exists(out / name));
  // The sized spec loads, carries its header, and results.json is the check of exactly that file.
  const std::string sized = read_text(out / "sized_spec.yaml");
  CHECK(sized.find("# Sized by swaybound") != std::string::npos);
  CHECK(sized.find("licensed professional engineer") != std::string::npos);
  const Spec reloaded = load_spec((out / "sized_spec.yaml").string());
  CHECK(reloaded.links[0].pivot.dampers[0].coefficient < 2.8);
  const auto results = nlohmann::json::parse(read_text(out / "results.json"));
  CHECK(results["spec"]["sha256"] == sha256_file((out / "sized_spec.yaml").string()));
  // The review documents are those of the same check: the sized spec's hash and its verdict.
  const std::string html = read_text(out / "report.html");
  CHECK(html.find(results["spec"]["sha256"].get<std::string>()) != std::string::npos);
  CHECK(html.find(results["verdict"] == "pass" ? "verdict: pass" : "verdict: FAIL") != std::string::npos);
  CHECK(read_text(out / "report.pdf").rfind("%PDF-", 0) == 0);
  const auto summary = nlohmann::json::parse(read_text(out / "sizing.json"));
  CHECK(summary["feasible"] == true);
  CHECK(verify_manifest(out.string()).empty());
  // The same input replaces its own output without --force.
  CHECK(run_cli(fmt::format("size {} --out {} --jobs 1 --quiet", spec.string(), out.string())) == 0);
  const std::string history = read_text(out / "sizing_history.csv");
  CHECK(history.rfind("evaluation,kind,cases,links[arm].pivot.damper.coefficient [N m s/rad]", 0) == 0);
  CHECK(history.find(",final,") != std::string::npos);

  const fs::path plain = fs::temp_directory_path() / "swaybound-test-size-plain.yaml";
  std::string text = pendulum(kOneDamper);
  text.erase(text.find("sizing:"), text.find("solver:") - text.find("sizing:"));
  std::ofstream(plain) << text;
  const fs::path none = fs::temp_directory_path() / "swaybound-test-size-none";
  fs::remove_all(none);
  CHECK(run_cli(fmt::format("size {} --out {}", plain.string(), none.string())) == 2);
  CHECK_FALSE(fs::exists(none));
  CHECK_THROWS_AS(run_sizing(load_spec(plain.string())), SpecError);
}

TEST_CASE("other objectives and the time budget", "[sizing]") {
  const auto sized = [](const std::string& name, const std::string& extra) {
    const std::string sizing = std::string(R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}
  budget: {evaluations: 40}
)") + extra;
    return run_sizing(spec_file(name, pendulum(sizing, "  - {modal_damping_min: 0.01}")), quiet());
  };
  SECTION("max_margin: more damping, more margin; the high end") {
    const SizingResult r = sized("max-margin", "  objective: max_margin\n");
    CHECK(r.feasible);
    CHECK(r.variable_outcomes[0].at_bound == +1);
    CHECK(r.objective_after == Approx(r.outcome_after.least()));
    CHECK(r.objective_after > r.objective_before);
  }
  SECTION("{min: peak_rate}: the peak rate falls with damping; the high end") {
    const SizingResult r = sized("min-peak-rate", "  objective: {min: peak_rate}\n");
    CHECK(r.variable_outcomes[0].at_bound == +1);
    CHECK(r.objective_after < r.objective_before);
    CHECK(r.objective_unit == "rad/s");
  }
  SECTION("{min: modal_damping_min}, a lower-bound kind, is raised: the high end, zeta of the closed form") {
    const SizingResult r = sized("max-damping", "  objective: {min: modal_damping_min}\n");
    CHECK(r.variable_outcomes[0].at_bound == +1);
    CHECK(r.objective_after == Approx(zeta_of(10)).epsilon(1e-9));  // zeta = c / (2 m L^2 w_n)
  }
  SECTION("a spent time budget leaves the verified design as given, never an unverified one") {
    const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}
  budget: {evaluations: 40, seconds: 1 ms}
)";
    const SizingResult r = run_sizing(spec_file("time-budget", pendulum(sizing)), quiet());
    CHECK(r.stop_reason == "time budget");
    CHECK(r.feasible);
    // The design reported passed a full check before the final one (the design as given, 8, unless
    // an evaluation or two fitted into the millisecond and their best was verified).
    bool verified_before = false;
    for (const auto& e : r.history)
      verified_before |= (e.kind == EvaluationKind::initial || e.kind == EvaluationKind::verification) && e.pass &&
                         e.values == r.values;
    CHECK(verified_before);
    CHECK(r.screening_evaluations <= 5);
  }
}

TEST_CASE(
    "a required margin moves the least damper to where the residual sway is that share inside the limit",
    "[sizing][margin]") {
  // With margin m the residual sway must stay below r (1 - m): the closed form of the file comment
  // with r replaced by r (1 - m), and a bisection on the full simulation with the limit so reduced.
  constexpr double margin = 0.05;
  const double a = std::log(kTheta0Deg / (kLimitDeg * (1 - margin))) / (10 * pi);
  const double exact = coefficient_of(a / std::sqrt(1 + a * a));
  const std::string sizing = std::string(kOneDamper) + "  required_margin: 0.05\n";
  const Spec spec = spec_file("margin", pendulum(sizing));
  REQUIRE(spec.sizing->required_margin == margin);
  Spec tighter = spec;
  tighter.limits[0].value *= 1 - margin;
  const double bisected = bisect_least_damping(tighter, 0.5, 10);
  CHECK(bisected == Approx(exact).epsilon(2e-3));
  // Without the margin the least damper is clearly less (the margin is not lost in the tolerances).
  CHECK(closed_form_least_damping() < 0.98 * exact);

  const SizingResult r = run_sizing(spec, quiet());
  INFO("optimiser " << r.values[0] << ", bisection with the margin " << bisected);
  CHECK(r.required_margin == margin);
  CHECK(r.feasible);
  CHECK(r.values[0] >= bisected * (1 - 1e-9));
  CHECK(r.values[0] <= bisected * 1.01);
  REQUIRE(r.limits.size() == 1);
  // The governing figure is (at least) 5% inside the limit, and only just: the margin binds.
  CHECK(r.limits[0].worst_after <= deg(kLimitDeg) * (1 - margin));
  CHECK(r.limits[0].worst_after >= deg(kLimitDeg) * (1 - margin) * 0.99);
  CHECK(r.limits[0].ratio_after >= margin);
  CHECK(r.limits[0].binding);
  // The sized spec records the margin it was sized with; the table and the header say so.
  CHECK(r.sized.sizing->required_margin == margin);
  const std::string table = sizing_table_markdown(spec, r);
  CHECK(table.find("Required margin 5%") != std::string::npos);
  CHECK(sized_spec_header(r).find("with 5% to spare") != std::string::npos);
}

TEST_CASE("a margin that cannot be met is reported, with the limit that holds but not by the margin",
          "[sizing][margin]") {
  // The most damping the range allows, 3 N m s/rad (zeta = 3 / (2 m L^2 w_n) = 0.0479), leaves
  // |theta(t_10)| = theta0 exp(-10 pi zeta / sqrt(1 - zeta^2)) = 0.222 theta0 = 0.444 deg: inside
  // the 0.5 deg limit by 11%, not by the 20% required.
  const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 3 N m s/rad], cost: 1}
  budget: {evaluations: 30}
  required_margin: 0.2
)";
  const SizingResult r = run_sizing(spec_file("margin-too-big", pendulum(sizing)), quiet());
  const double z = zeta_of(3);
  const double expected = 1 - kTheta0Deg * std::exp(-10 * pi * z / std::sqrt(1 - z * z)) / kLimitDeg;
  CHECK_FALSE(r.feasible);
  CHECK(r.after.pass);  // the check itself passes: only the margin is missed
  REQUIRE(r.limits.size() == 1);
  CHECK(r.limits[0].pass_after);
  CHECK(r.values[0] == 3.0);
  CHECK(r.limits[0].ratio_after == Approx(expected).margin(0.01));
  const std::string table = sizing_table_markdown(r.sized, r);
  CHECK(table.find("short of margin") != std::string::npos);
  CHECK(table.find("holds, by") != std::string::npos);
  CHECK(r.limits[0].binding);
}

TEST_CASE("a required margin on a limit of 0 (rope_tension_min: 0 N) is measured against the chain's weight",
          "[sizing][margin]") {
  // A point mass on a rope released at rest from 70 deg: the tension at the top is
  // m (g cos theta + L theta'^2), least at the release, m g cos 70 deg = 0.342 m g, and it only
  // grows as the damper takes energy out. With the chain's weight m g as the scale, the margin
  // ratio is cos 70 deg: a required margin of 30% holds, 40% does not (though the limit does).
  const auto sized = [](const std::string& name, double margin) {
    const std::string text = fmt::format(R"(
swaybound: 1
name: rope pendulum
gravity: {g}
links:
  - {{name: rope, kind: rope, length: 1, mass: 10, com: 1, inertia: 0, pivot: {{damper: {{coefficient: 8 N m s/rad}}}}}}
cases: {{duration: 3 s, initial: [{{single: {{theta: [70 deg]}}}}]}}
limits:
  - {{rope_tension_min: 0 N}}
sizing:
  variables:
    - {{path: "links[rope].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}}
  budget: {{evaluations: 20}}
  required_margin: {margin}
solver: {{rtol: 1e-10, atol: 1e-12}}
)",
                                         fmt::arg("g", kG), fmt::arg("margin", margin));
    return run_sizing(spec_file(name, text), quiet());
  };
  const double ratio = std::cos(deg(70));
  const SizingResult holds = sized("rope-margin-30", 0.3);
  REQUIRE(holds.limits.size() == 1);
  CHECK(holds.limits[0].ratio_after == Approx(ratio).margin(1e-3));
  CHECK(holds.limits[0].worst_after == Approx(ratio * 10 * kG).epsilon(1e-3));
  CHECK(holds.feasible);
  const SizingResult short_of = sized("rope-margin-40", 0.4);
  CHECK(short_of.after.pass);
  CHECK(short_of.limits[0].pass_after);
  CHECK_FALSE(short_of.feasible);
}

TEST_CASE("a step rounds the damper to a multiple of it and the rounded design is verified",
          "[sizing][step]") {
  // c* ~ 2.76 N m s/rad: rounding down to 2.5 fails (below the least damper), 3.0 passes.
  const char* stepped = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1, step: 0.5 N m s/rad}
  budget: {evaluations: 60}
)";
  const Spec spec = spec_file("step", pendulum(stepped));
  REQUIRE(spec.sizing->variables[0].step == 0.5);
  const double least = closed_form_least_damping();
  REQUIRE(least > 2.5);
  REQUIRE(least < 3.0);
  const SizingResult r = run_sizing(spec, quiet());
  REQUIRE(r.values.size() == 1);
  INFO("found " << r.unrounded_values[0] << ", rounded " << r.values[0]);
  CHECK(r.values[0] == 3.0);
  CHECK(std::fabs(r.values[0] / 0.5 - std::round(r.values[0] / 0.5)) < 1e-12);
  CHECK(r.unrounded_values[0] == Approx(least).epsilon(0.012));
  CHECK(r.feasible);
  CHECK(r.after.pass);
  CHECK(r.variable_outcomes[0].step == 0.5);
  CHECK(r.variable_outcomes[0].unrounded == r.unrounded_values[0]);
  // The cheaper multiple was tried on every case first and failed.
  bool lower_failed = false;
  for (const auto& e : r.history)
    lower_failed |= e.kind == EvaluationKind::verification && e.values[0] == 2.5 && !e.pass;
  CHECK(lower_failed);
  // The sized spec holds the rounded value and keeps the step.
  std::string why;
  CHECK(get_spec_value(r.sized, *parse_spec_path(r.sized, r.variables[0].path, why)) == 3.0);
  CHECK(r.sized.sizing->variables[0].step == 0.5);
  CHECK(sizing_table_markdown(spec, r).find("to multiples of 0.5 N m s/rad") != std::string::npos);
}

TEST_CASE("a step rounds down when the multiple above lies beyond the range", "[sizing][step]") {
  // {min: peak_rate}: the peak rate falls with damping, so the search ends at the high end, 10;
  // with a step of 3 the multiples next to it are 9 and 12, and 12 lies beyond the range.
  const char* stepped = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1, step: 3 N m s/rad}
  budget: {evaluations: 30}
  objective: {min: peak_rate}
)";
  const SizingResult r = run_sizing(spec_file("step-high-end", pendulum(stepped)), quiet());
  CHECK(r.unrounded_values[0] == 10.0);
  CHECK(r.values[0] == 9.0);
  CHECK(r.feasible);
}

TEST_CASE("sizing margin and step: bad input names the line and the fix", "[sizing][spec]") {
  const auto error_of = [](const std::string& name, const std::string& sizing) {
    try {
      spec_file(name, pendulum(sizing));
    } catch (const SpecError& e) {
      std::string all;
      for (const auto& d : e.diagnostics()) all += SpecError::format(e.file(), d) + "\n";
      return all;
    }
    return std::string("no error");
  };
  const std::string half = error_of("margin-half", std::string(kOneDamper) + "  required_margin: 0.5\n");
  CHECK(half.find("sizing.required_margin") != std::string::npos);
  CHECK(half.find("swaybound-test-sizing-margin-half.yaml:") != std::string::npos);  // file:line:col
  const std::string catalogue = error_of("step-catalogue", R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", catalogue: [1 N m s/rad, 2 N m s/rad], step: 1 N m s/rad}
)");
  CHECK(catalogue.find("catalogue variable takes its values from the catalogue") != std::string::npos);
  const std::string none = error_of("step-none", R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [1.1 N m s/rad, 1.9 N m s/rad], step: 1 N m s/rad}
)");
  CHECK(none.find("no multiple of the step") != std::string::npos);
  CHECK(error_of("step-zero", R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [1 N m s/rad, 2 N m s/rad], step: 0 N m s/rad}
)")
            .find("step") != std::string::npos);
}

TEST_CASE(
    "swaybound size --margin: the packet's report shows the sizing and names the sized spec where it lies",
    "[sizing][cli]") {
  const fs::path spec =
      fs::temp_directory_path() / fmt::format("swaybound-test-size-margin-{}.yaml", ::getpid());
  std::ofstream(spec) << pendulum(kOneDamper);
  const fs::path out =
      fs::temp_directory_path() / fmt::format("swaybound-test-size-margin-out-{}", ::getpid());
  fs::remove_all(out);
  REQUIRE(run_cli(fmt::format("size {} --out {} --jobs 2 --margin 5%", spec.string(), out.string())) == 0);
  const auto summary = nlohmann::json::parse(read_text(out / "sizing.json"));
  CHECK(summary["search"]["required_margin"] == 0.05);
  CHECK(load_spec((out / "sized_spec.yaml").string()).sizing->required_margin == 0.05);
  const std::string final_path = (out / "sized_spec.yaml").string();
  // The report names the file the user gets, not the temporary folder it was written in.
  const std::string html = read_text(out / "report.html");
  CHECK(html.find(final_path) != std::string::npos);
  CHECK(html.find(".partial") == std::string::npos);
  // The sizing section: the summary and the before/after tables, in the HTML and the PDF.
  CHECK(html.find("Sizing: the design as given and as sized") != std::string::npos);
  CHECK(html.find("Required margin: 5%") != std::string::npos);
  CHECK(html.find("sizing-variables") != std::string::npos);
  CHECK(html.find("sizing-checks") != std::string::npos);
  const fs::path text = out.string() + ".txt";
  REQUIRE(std::system(
              fmt::format("pdftotext -layout {} {}", (out / "report.pdf").string(), text.string()).c_str()) ==
          0);
  const std::string pdf = read_text(text);
  fs::remove(text);
  CHECK(pdf.find("Sizing: the design as given and as sized") != std::string::npos);
  CHECK(pdf.find("Required margin: 5%") != std::string::npos);
  CHECK(pdf.find("worst before") != std::string::npos);
  CHECK(pdf.find(".partial") == std::string::npos);
  // A margin out of range is refused before anything is written.
  const fs::path bad = out.string() + "-bad";
  fs::remove_all(bad);
  CHECK(run_cli(fmt::format("size {} --out {} --margin 50%", spec.string(), bad.string())) == 2);
  CHECK(run_cli(fmt::format("size {} --out {} --margin five", spec.string(), bad.string())) == 2);
  CHECK_FALSE(fs::exists(bad));
  fs::remove_all(out);
  fs::remove(spec);
}

TEST_CASE("every NLopt result and exception maps to its named stop reason", "[sizing][stop]") {
  struct ResultRow {
    nlopt::result code;
    StopReason reason;
    std::string_view name;
  };
  const ResultRow results[] = {
      {nlopt::SUCCESS, StopReason::success, "success"},
      {nlopt::STOPVAL_REACHED, StopReason::stopval_reached, "stopval_reached"},
      {nlopt::FTOL_REACHED, StopReason::ftol_reached, "ftol_reached"},
      {nlopt::XTOL_REACHED, StopReason::xtol_reached, "xtol_reached"},
      {nlopt::MAXEVAL_REACHED, StopReason::maxeval_reached, "maxeval_reached"},
      {nlopt::MAXTIME_REACHED, StopReason::maxtime_reached, "maxtime_reached"},
      {nlopt::FAILURE, StopReason::failure, "failure"},
      {nlopt::INVALID_ARGS, StopReason::invalid_args, "invalid_args"},
      {nlopt::OUT_OF_MEMORY, StopReason::out_of_memory, "out_of_memory"},
      {nlopt::ROUNDOFF_LIMITED, StopReason::roundoff_limited, "roundoff_limited"},
      {nlopt::FORCED_STOP, StopReason::forced_stop, "forced_stop"},
  };
  std::set<std::string_view> names, meanings;
  for (const auto& row : results) {
    INFO(row.name);
    CHECK(stop_reason_of_nlopt_result(row.code) == row.reason);
    CHECK(stop_reason_name(row.reason) == row.name);
    CHECK_FALSE(stop_reason_meaning(row.reason).empty());
    names.insert(stop_reason_name(row.reason));
    meanings.insert(stop_reason_meaning(row.reason));
  }
  // The stops the search forces when a budget is spent have their own names.
  for (StopReason r : {StopReason::evaluation_budget, StopReason::time_budget, StopReason::stage_budget}) {
    names.insert(stop_reason_name(r));
    meanings.insert(stop_reason_meaning(r));
  }
  CHECK(names.size() == 14);
  CHECK(meanings.size() == 14);
  // A value NLopt does not define as a result is a failure, not a success.
  CHECK(stop_reason_of_nlopt_result(0) == StopReason::failure);
  CHECK(stop_reason_of_nlopt_result(-6) == StopReason::failure);

  struct ExceptionRow {
    std::exception_ptr error;
    StopReason reason;
  };
  const ExceptionRow exceptions[] = {
      {std::make_exception_ptr(nlopt::roundoff_limited()), StopReason::roundoff_limited},
      {std::make_exception_ptr(nlopt::forced_stop()), StopReason::forced_stop},
      {std::make_exception_ptr(std::runtime_error("nlopt failure")), StopReason::failure},
      {std::make_exception_ptr(std::invalid_argument("nlopt invalid argument")), StopReason::invalid_args},
      {std::make_exception_ptr(std::bad_alloc()), StopReason::out_of_memory},
  };
  for (const auto& row : exceptions) {
    INFO(stop_reason_name(row.reason));
    CHECK(stop_reason_of_nlopt_exception(row.error) == row.reason);
  }
}

TEST_CASE("each search stage records why NLopt stopped: a spent budget, or convergence", "[sizing][stop]") {
  SECTION("an evaluation budget too small for the search ends it, and the last stage says so") {
    const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}
  budget: {evaluations: 3}
)";
    const Spec spec = spec_file("stop-budget", pendulum(sizing));
    const SizingResult r = run_sizing(spec, quiet());
    CHECK(r.stop_reason == "evaluation budget");
    REQUIRE_FALSE(r.stages.empty());
    CHECK(r.stages.front().algorithm == "COBYLA");
    CHECK(r.stages.back().reason == StopReason::evaluation_budget);
    long stage_evaluations = 0;
    for (const auto& st : r.stages) stage_evaluations += st.evaluations;
    CHECK(stage_evaluations <= r.evaluations);
    // sizing.json lists every stage with its reason and meaning; sizing.md and the report show them.
    const auto j = nlohmann::json::parse(sizing_summary_json(spec, r));
    REQUIRE(j["search"]["stages"].size() == r.stages.size());
    CHECK(j["search"]["stages"].back()["stopped_by"] == "evaluation_budget");
    CHECK(j["search"]["stages"].back()["meaning"] ==
          std::string(stop_reason_meaning(StopReason::evaluation_budget)));
    CHECK(sizing_table_markdown(spec, r).find("`evaluation_budget`") != std::string::npos);
    ReportMeta meta;
    meta.sizing = &r;
    meta.sizing_input = &spec;
    const std::string html = report_html(r.sized, r.after, meta);
    CHECK(html.find("sizing-stages") != std::string::npos);
    CHECK(html.find("evaluation_budget") != std::string::npos);
  }
  SECTION("a search with room to converge ends on a tolerance") {
    const std::string sizing = R"(  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}
  budget: {evaluations: 200}
)";
    const SizingResult r = run_sizing(spec_file("stop-converged", pendulum(sizing)), quiet());
    CHECK(r.stop_reason == "converged");
    REQUIRE_FALSE(r.stages.empty());
    const SearchStage& first = r.stages.front();
    CHECK(first.algorithm == "COBYLA");
    CHECK(first.goal == "objective");
    CHECK((first.reason == StopReason::xtol_reached || first.reason == StopReason::ftol_reached));
    CHECK(first.evaluations < first.budget);
  }
}
