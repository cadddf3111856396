// The search for the worst case between the samples (checks/worst_search.hpp): it finds a worst
// start that the samples miss, to a closed form where one exists, and a design that passes on the
// samples but fails on the searched worst fails the check.
#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <sys/wait.h>
#include <unistd.h>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/worst_search.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"
#include "../support/close_to.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;
namespace fs = std::filesystem;

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kG = 9.81;

CheckOptions searching() {
  CheckOptions o;
  o.audit = false;
  o.record = false;
  o.search = search_worst;
  return o;
}

/// A point mass m = 250 kg on a rope of L = 4 m (massless: all the mass at its end), released from
/// starts in `initial`, with a pivot-load limit of `limit` newtons.
std::string released_pendulum(const std::string& initial, double limit, const std::string& search) {
  return fmt::format(R"(
swaybound: 1
name: released pendulum
gravity: 9.81
links:
  - {{name: rope, kind: rope, length: 4, mass: 250, com: 4, inertia: 0}}
cases:
  duration: 3 s
  search: {}
  initial:
    - {}
limits:
  - {{pivot_load: {} N, link: rope}}
solver: {{rtol: 1e-12, atol: 1e-13}}
)",
                     search, initial, limit);
}

/// Peak rope tension of a point pendulum started at theta0 with rate omega0 (|theta0| < 90 deg, so it
/// passes the bottom): energy from the start to the bottom, v^2 = L^2 omega0^2 + 2 g L (1 - cos
/// theta0), and the normal equation there, T - m g = m v^2 / L, give T = m g (3 - 2 cos theta0) +
/// m L omega0^2; T(theta) = m g (3 cos theta - 2 cos theta0) + m L omega0^2 along the swing is
/// largest at the bottom (Meriam & Kraige, Engineering Mechanics: Dynamics, ch. 3, work-energy and
/// normal-tangential coordinates).
double peak_tension(double m, double length, double theta0, double omega0) {
  return m * kG * (3 - 2 * std::cos(theta0)) + m * length * omega0 * omega0;
}

}  // namespace

TEST_CASE("the search finds the peak rope tension at the edge of the start box that random samples miss",
          "[checks][search][reference]") {
  const double m = 250, length = 4;
  SECTION("angle and rate: BOBYQA in two dimensions") {
    // Box theta0 in [20, 60] deg, omega0 in [0.1, 0.5] rad/s: T rises with theta0 and omega0^2, so
    // the worst start is the corner (60 deg, 0.5 rad/s); 4 random starts do not reach it.
    const Spec spec = load_spec_text(
        released_pendulum("random: {count: 4, seed: 11, theta: [[20 deg, 60 deg]], rate: [[0.1 rad/s, 0.5 rad/s]]}",
                          1e6, "{evaluations: 40, starts: 1}"),
        "pendulum.yaml");
    const CheckReport r = run_check(spec, searching());
    REQUIRE(r.search.size() == 1);
    const LimitSearch& s = r.search[0];
    const double expected = peak_tension(m, length, 60 * kPi / 180, 0.5);
    CHECK(s.searched);
    CHECK(s.sampled_worst < expected * (1 - 1e-3));  // the samples miss the corner
    CHECK(s.found_worse);
    CHECK_THAT(s.searched_worst, IsCloseTo(expected, 0, 1e-6));
    CHECK_THAT(s.theta[0], IsCloseTo(60 * kPi / 180, 0, 1e-6));
    CHECK_THAT(s.omega[0], IsCloseTo(0.5, 0, 1e-6));
    CHECK(s.evaluations <= 40);
    CHECK(s.evaluations > 0);
    REQUIRE(s.methods.size() == 1);
    CHECK(s.methods[0] == "BOBYQA");
    CHECK_THAT(s.raise, IsCloseTo(s.searched_worst - s.sampled_worst, 1e-9, 0));
    CHECK_THAT(s.raise_of_margin, IsCloseTo(s.raise / (1e6 - s.sampled_worst), 0, 1e-12));
    CHECK(s.pass);
    CHECK(r.checks[0].worst == s.sampled_worst);  // the sampled figures stay as they were
  }
  SECTION("angle only (released from rest): a one-dimensional box") {
    const Spec spec = load_spec_text(
        released_pendulum("random: {count: 4, seed: 11, theta: [[20 deg, 60 deg]]}", 1e6, "{evaluations: 30, starts: 1}"),
        "pendulum.yaml");
    const CheckReport r = run_check(spec, searching());
    REQUIRE(r.search.size() == 1);
    const LimitSearch& s = r.search[0];
    const double expected = peak_tension(m, length, 60 * kPi / 180, 0);  // 2 m g
    CHECK(s.sampled_worst < expected * (1 - 1e-3));
    CHECK_THAT(s.searched_worst, IsCloseTo(expected, 0, 1e-6));
    CHECK_THAT(s.theta[0], IsCloseTo(60 * kPi / 180, 0, 1e-6));
    CHECK(s.omega[0] == 0);  // no set gives rates: they stay at 0
    CHECK(s.evaluations <= 30);
  }
}

TEST_CASE("the search finds the vertex peak of a linear damped pendulum's free response", "[checks][search][reference]") {
  // A point mass m on a massless arm L with a linear pivot damper c, at amplitudes of 1e-3 rad
  // where sin(theta) = theta to 2e-7: m L^2 theta'' + c theta' + m g L theta = 0, omega_n = sqrt(g / L),
  // zeta = c / (2 m L^2 omega_n). Free response (Rao, Mechanical Vibrations, ch. 2, underdamped free
  // vibration with viscous damping): theta(t) = exp(-zeta omega_n t) (theta0 cos(omega_d t) +
  // (omega0 + zeta omega_n theta0) / omega_d sin(omega_d t)), omega_d = omega_n sqrt(1 - zeta^2).
  // It is linear in the start, so max over t of |theta| is convex in (theta0, omega0) and its
  // largest value over a box of starts is at a vertex.
  const double m = 10, length = 2, zeta = 0.1;
  const double wn = std::sqrt(kG / length), wd = wn * std::sqrt(1 - zeta * zeta);
  const double c = 2 * zeta * m * length * length * wn;
  const double duration = 6;
  const auto theta_at = [&](double theta0, double omega0, double t) {
    return std::exp(-zeta * wn * t) * (theta0 * std::cos(wd * t) + (omega0 + zeta * wn * theta0) / wd * std::sin(wd * t));
  };
  // Peak |theta| over [0, duration]: a scan at 1e-3 s, then golden-section on the bracket around the
  // largest sample.
  const auto peak = [&](double theta0, double omega0) {
    double best_t = 0, best = 0;
    for (double t = 0; t <= duration; t += 1e-3)
      if (std::fabs(theta_at(theta0, omega0, t)) > best) best = std::fabs(theta_at(theta0, omega0, best_t = t));
    double a = std::max(0.0, best_t - 1e-3), b = std::min(duration, best_t + 1e-3);
    const double r = (std::sqrt(5.0) - 1) / 2;
    for (int k = 0; k < 80; ++k) {
      const double x1 = b - r * (b - a), x2 = a + r * (b - a);
      if (std::fabs(theta_at(theta0, omega0, x1)) > std::fabs(theta_at(theta0, omega0, x2)))
        b = x2;
      else
        a = x1;
    }
    return std::max(best, std::fabs(theta_at(theta0, omega0, 0.5 * (a + b))));
  };
  const double theta_lo = -0.5e-3, theta_hi = 1e-3, rate_lo = -1e-3, rate_hi = 2e-3;
  double reference = 0, ref_theta = 0, ref_rate = 0;
  for (double th : {theta_lo, theta_hi})
    for (double w : {rate_lo, rate_hi})
      if (peak(th, w) > reference) {
        reference = peak(th, w);
        ref_theta = th;
        ref_rate = w;
      }
  const Spec spec = load_spec_text(fmt::format(R"(
swaybound: 1
name: linear damped pendulum
gravity: 9.81
links:
  - {{name: arm, length: {}, mass: {}, com: {}, inertia: 0, pivot: {{damper: {{coefficient: {} N m s/rad}}}}}}
cases:
  duration: {} s
  search: {{evaluations: 40, starts: 2}}
  initial:
    - random: {{count: 6, seed: 3, theta: [[{} rad, {} rad]], rate: [[{} rad/s, {} rad/s]]}}
limits:
  - {{peak_angle: 1 deg}}
solver: {{rtol: 1e-12, atol: 1e-16}}
)",
                                                   length, m, length, c, duration, theta_lo, theta_hi, rate_lo,
                                                   rate_hi),
                                       "linear.yaml");
  const CheckReport r = run_check(spec, searching());
  REQUIRE(r.search.size() == 1);
  const LimitSearch& s = r.search[0];
  CHECK(s.sampled_worst < reference * (1 - 1e-3));  // no random start is at the vertex
  CHECK_THAT(s.searched_worst, IsCloseTo(reference, 0, 1e-6));
  CHECK_THAT(s.theta[0], IsCloseTo(ref_theta, 1e-12, 0));
  CHECK_THAT(s.omega[0], IsCloseTo(ref_rate, 1e-12, 0));
  CHECK(s.evaluations <= 40);
}

TEST_CASE("from a 5 x 5 grid the search reaches the worst of a 100 x 100 reference grid with a tenth of its runs",
          "[checks][search]") {
  // A rope and a hook load under a braking trolley; the residual sway after 3 s is smooth in the
  // start angles and largest on an edge of the box, between the nodes of a 5 x 5 grid. The
  // reference is the worst of 10^4 starts (a 100 x 100 grid, about 6 s on 2 threads).
  const auto spec_text = [](int count, const std::string& search) {
    return fmt::format(R"(
swaybound: 1
name: two links under a braking trolley
gravity: 9.81
links:
  - {{name: upper, kind: rope, length: 3, mass: 20}}
  - {{name: lower, length: 1.2, mass: 300, com: 0.8, inertia: 30}}
base: {{scenarios: [{{name: brake, initial_velocity: {{x: 1}}, accel: [{{for: 1.0 s, x: -1}}]}}]}}
cases:
  duration: 4 s
  search: {}
  initial:
    - grid: {{theta: [[-10 deg, 10 deg, {}], [-20 deg, 20 deg, {}]]}}
limits:
  - {{residual_sway: 60 deg, after: 3 s}}
solver: {{rtol: 1e-9, atol: 1e-11}}
)",
                       search, count, count);
  };
  CheckOptions reference_options;
  reference_options.audit = false;
  reference_options.record = false;
  const Spec dense = load_spec_text(spec_text(100, "false"), "dense.yaml");
  const CheckReport reference = run_check(dense, reference_options);
  REQUIRE(reference.case_count == 10000);
  const double worst = reference.checks[0].worst;

  const Spec coarse = load_spec_text(spec_text(5, "{evaluations: 60, starts: 3}"), "coarse.yaml");
  const CheckReport r = run_check(coarse, searching());
  REQUIRE(r.search.size() == 1);
  const LimitSearch& s = r.search[0];
  INFO("reference " << worst << " rad, sampled " << s.sampled_worst << " rad, searched " << s.searched_worst
                    << " rad after " << s.evaluations << " evaluations");
  CHECK(s.sampled_worst < worst * (1 - 1e-3));  // the 5 x 5 grid misses it
  CHECK(s.searched_worst >= worst * (1 - 1e-4));
  CHECK(s.searched_worst <= worst * (1 + 1e-3));  // and what it found is a start of the same box
  CHECK(r.case_count + s.evaluations < reference.case_count / 10);
}

namespace {

fs::path temp_folder(const std::string& name) {
  const fs::path dir = fs::temp_directory_path() / fmt::format("swaybound-test-search-{}-{}", name, ::getpid());
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

int run_cli(const std::string& args, const fs::path& output) {
  const int status = std::system(fmt::format("{} {} >{} 2>&1", SWAYBOUND_CLI, args, output.string()).c_str());
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

std::string read_text(const fs::path& path) {
  std::ifstream in(path);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

}  // namespace

TEST_CASE("a design that passes on the samples but fails on the searched worst fails the check",
          "[checks][search][cli]") {
  // The pendulum of the first test with a pivot-load limit between its sampled worst and its
  // closed-form worst over the box, m g (3 - 2 cos 60 deg) + m L (0.5 rad/s)^2.
  const double expected = peak_tension(250, 4, 60 * kPi / 180, 0.5);
  const double limit = expected * (1 - 5e-4);
  const std::string initial = "random: {count: 4, seed: 11, theta: [[20 deg, 60 deg]], rate: [[0.1 rad/s, 0.5 rad/s]]}";
  const std::string text = released_pendulum(initial, limit, "{evaluations: 40, starts: 2}");
  const Spec spec = load_spec_text(text, "pendulum.yaml");
  const CheckReport r = run_check(spec, searching());
  REQUIRE(r.search.size() == 1);
  CHECK(r.checks[0].margin > 0);  // the samples pass
  CHECK(r.search[0].sampled_pass);
  CHECK_FALSE(r.search[0].pass);
  CHECK(r.search[0].sampling_missed());
  CHECK(r.search[0].margin < 0);
  CHECK_FALSE(r.checks[0].pass);
  CHECK_FALSE(r.pass);

  // The CLI: exit 1, the statement in the summary and in results.json, a packet verify accepts;
  // --no-search passes it, as sampling alone does.
  const fs::path dir = temp_folder("missed");
  std::ofstream(dir / "spec.yaml") << text;
  CHECK(run_cli(fmt::format("check {} --out {} --quiet --jobs 2", (dir / "spec.yaml").string(), (dir / "packet").string()),
                dir / "out.txt") == 1);
  CHECK(read_text(dir / "out.txt").find("sampling alone would have passed this check") != std::string::npos);
  const auto j = nlohmann::json::parse(read_text(dir / "packet" / "results.json"));
  CHECK(j["verdict"] == "fail");
  CHECK(j["checks"][0]["verdict"] == "fail");
  CHECK(j["checks"][0]["search"]["verdict"] == "fail");
  CHECK(j["checks"][0]["search"]["sampling_alone_would_pass"] == true);
  CHECK(run_cli(fmt::format("verify {}", (dir / "packet").string()), dir / "verify.txt") == 0);
  INFO(read_text(dir / "verify.txt"));
  CHECK(run_cli(fmt::format("check {} --out {} --quiet --jobs 2 --no-search", (dir / "spec.yaml").string(),
                            (dir / "sampled").string()),
                dir / "out2.txt") == 0);
  fs::remove_all(dir);
}

TEST_CASE("check --no-search writes the results of the check without the search and the search adds a section per "
          "per-case check to results.json",
          "[checks][search][cli]") {
  std::string text = released_pendulum(
      "random: {count: 4, seed: 11, theta: [[20 deg, 60 deg]], rate: [[0.1 rad/s, 0.5 rad/s]]}", 1e6,
      "{evaluations: 12, starts: 2}");
  text.replace(text.find("limits:\n"), 8, "limits:\n  - {modal_damping_min: 0}\n");  // a global check first
  const fs::path dir = temp_folder("keys");
  std::ofstream(dir / "spec.yaml") << text;
  const std::string spec_path = (dir / "spec.yaml").string();
  REQUIRE(run_cli(fmt::format("check {} --out {} --quiet --no-search", spec_path, (dir / "plain").string()),
                  dir / "out.txt") == 0);
  REQUIRE(run_cli(fmt::format("check {} --out {} --quiet", spec_path, (dir / "searched").string()), dir / "out.txt") == 0);

  // --no-search: what run_check gives without a search stage, key for key.
  const Spec spec = load_spec(spec_path);
  CheckOptions plain;
  const auto expected = nlohmann::json::parse(results_json(spec, run_check(spec, plain)));
  const auto without = nlohmann::json::parse(read_text(dir / "plain" / "results.json"));
  CHECK(without == expected);
  CHECK_FALSE(without.contains("search"));
  CHECK_FALSE(without["checks"][1].contains("search"));

  const auto with = nlohmann::json::parse(read_text(dir / "searched" / "results.json"));
  REQUIRE(with.contains("search"));
  CHECK(with["search"]["evaluations_per_limit"] == 12);
  CHECK(with["search"]["starts_per_limit"] == 2);
  // The keys of the check without the search are all there, unchanged in meaning.
  for (const auto& [key, value] : without["checks"][1].items()) CHECK(with["checks"][1].contains(key));
  CHECK(with["checks"][1]["worst"] == without["checks"][1]["worst"]);
  const auto& search = with["checks"][1]["search"];
  for (const char* key : {"searched", "sampled_worst", "searched_worst", "found_worse", "start", "raise",
                          "raise_of_margin", "margin", "evaluations", "methods", "failed_run",
                          "local_worst_statistical_not_a_bound", "ftle_per_s", "verdict", "sampling_alone_would_pass"})
    CHECK(search.contains(key));
  for (const char* key : {"scenario", "theta_rad", "rate_rad_per_s", "from_case"}) CHECK(search["start"].contains(key));
  CHECK(search["sampled_worst"] == without["checks"][1]["worst"]);
  CHECK(search["searched_worst"].get<double>() > search["sampled_worst"].get<double>());
  CHECK(search["evaluations"].get<int>() <= 12);
  CHECK(search["start"]["scenario"] == "still");  // the scenario of a spec without a base
  CHECK_FALSE(with["checks"][0].contains("search"));  // modal damping is not per case
  fs::remove_all(dir);
}

TEST_CASE("a searched worst whose FTLE is above chaos.threshold is marked a local worst and not a bound",
          "[checks][search][chaos]") {
  // The flag follows the FTLE of the case the search ends on: a threshold below every FTLE of the
  // box marks it, one above every FTLE does not.
  const auto text = [](const std::string& threshold) {
    return fmt::format(R"(
swaybound: 1
name: flagged pendulum
links:
  - {{name: rope, kind: rope, length: 4, mass: 250, com: 4, inertia: 0}}
cases:
  duration: 3 s
  search: {{evaluations: 8, starts: 1}}
  initial:
    - random: {{count: 3, seed: 2, theta: [[20 deg, 60 deg]]}}
limits:
  - {{pivot_load: 1 MN, link: rope}}
  - {{ftle_max: 100 /s, horizon: 3 s}}
chaos: {{threshold: {}}}
)",
                       threshold);
  };
  const Spec low = load_spec_text(text("-100 /s"), "low.yaml");
  const Spec high = load_spec_text(text("100 /s"), "high.yaml");
  const CheckReport a = run_check(low, searching());
  const CheckReport b = run_check(high, searching());
  REQUIRE(a.search.size() == 2);
  REQUIRE(b.search.size() == 2);
  CHECK(a.search[0].chaotic);
  CHECK_FALSE(std::isnan(a.search[0].ftle));
  CHECK_FALSE(b.search[0].chaotic);
  CHECK(results_json(low, a).find("\"local_worst_statistical_not_a_bound\": true") != std::string::npos);
}

TEST_CASE("the search gives the same results.json on 1 and 2 threads", "[checks][search][determinism]") {
  // Two limits share their starts (and so the runs cached between their searches); the result must
  // not depend on which thread ran a point first.
  std::string text = released_pendulum(
      "random: {count: 5, seed: 4, theta: [[20 deg, 60 deg]], rate: [[-0.2 rad/s, 0.5 rad/s]]}", 1e6,
      "{evaluations: 20, starts: 3}");
  text.replace(text.find("limits:\n"), 8, "limits:\n  - {peak_angle: 80 deg}\n  - {peak_rate: 100 deg/s}\n");
  const Spec spec = load_spec_text(text, "threads.yaml");
  CheckOptions one = searching(), two = searching();
  one.jobs = 1;
  two.jobs = 2;
  const CheckReport a = run_check(spec, one);
  CHECK(a.search.size() == 3);
  CHECK(results_json(spec, a) == results_json(spec, run_check(spec, two)));
}

TEST_CASE("check --no-search takes no value", "[checks][search][cli][usage]") {
  const fs::path dir = temp_folder("usage");
  std::ofstream(dir / "spec.yaml") << released_pendulum("single: {theta: [10 deg]}", 1e6, "true");
  CHECK(run_cli(fmt::format("check {} --out {} --no-search=maybe", (dir / "spec.yaml").string(),
                            (dir / "packet").string()),
                dir / "out.txt") == 2);
  CHECK_FALSE(fs::exists(dir / "packet"));
  fs::remove_all(dir);
}

TEST_CASE("a run that fails during the search fails the limit and is reported with its start",
          "[checks][search][faults]") {
  // A point mass on an inextensible rope (L = 4 m) started between 60 and 80 deg with an outward
  // rate of 0 to 1.2 rad/s. Along the swing theta'^2 = omega0^2 - 2 g / L (cos theta0 - cos theta) and
  // the tension is T = m g (3 cos theta - 2 cos theta0) + m L omega0^2 (energy and the normal
  // equation, Meriam & Kraige, Dynamics, ch. 3). At (80 deg, 1.2 rad/s) the swing reaches 97 deg and
  // T = 0 at 94.6 deg: the rope goes slack, which fails the run. The two sampled starts, (60 deg,
  // 0.6 rad/s) and (80 deg, 0.6 rad/s), swing to 84 deg at most and stay taut.
  const Spec spec = load_spec_text(R"(
swaybound: 1
name: a rope that goes slack between the samples
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 4, mass: 250, com: 4, inertia: 0}
cases:
  duration: 4 s
  search: {evaluations: 30, starts: 1}
  initial:
    - grid: {theta: [[60 deg, 80 deg, 2]], rate: [[0, 1.2 rad/s, 1]]}
limits:
  - {peak_angle: 120 deg}
solver: {rtol: 1e-10, atol: 1e-12}
)",
                                   "slack.yaml");
  const CheckReport r = run_check(spec, searching());
  CHECK(r.failed_total == 0);  // every sampled case ran
  REQUIRE(r.search.size() == 1);
  const LimitSearch& s = r.search[0];
  CHECK(s.sampled_pass);
  CHECK(s.failed_run);
  CHECK(s.failure.find("rope_slack") != std::string::npos);
  CHECK_FALSE(s.pass);
  CHECK(s.sampling_missed());
  CHECK_FALSE(r.checks[0].pass);
  CHECK_FALSE(r.pass);
  // The reported start fails when run again.
  const CheckPlan plan = plan_check(spec);
  CaseDef def = plan.space.at(0);
  def.initial.theta = s.theta;
  def.initial.omega = s.omega;
  Workspace ws(plan.model);
  const CaseMetrics m = run_case(plan.model, spec, ws, def, plan.streaming, plan.case_options);
  CHECK_FALSE(m.ok());
  const auto j = nlohmann::json::parse(results_json(spec, r));
  CHECK(j["checks"][0]["search"]["failed_run"] == true);
  CHECK(j["checks"][0]["search"]["searched_worst"].is_null());
}

TEST_CASE("cases.search loads as false, true or a budget, and round-trips through the normalised spec", "[spec][search]") {
  const auto with = [](const std::string& search) {
    return load_spec_text(released_pendulum("single: {theta: [10 deg]}", 1e6, search), "search.yaml");
  };
  const Spec off = with("false"), on = with("true"), budget = with("{evaluations: 7, starts: 2}");
  CHECK_FALSE(off.cases.search.enabled);
  CHECK(on.cases.search.enabled);
  CHECK(on.cases.search.evaluations == 40);
  CHECK(on.cases.search.starts == 3);
  CHECK(budget.cases.search.evaluations == 7);
  CHECK(budget.cases.search.starts == 2);
  const Spec again = load_spec_text(normalised_yaml(budget), "again.yaml");
  CHECK(again.cases.search.evaluations == 7);
  CHECK(again.cases.search.starts == 2);
  CHECK_FALSE(load_spec_text(normalised_yaml(off), "again.yaml").cases.search.enabled);
  // Off in the spec, run_check does not search even with the stage given.
  CHECK_FALSE(run_check(off, searching()).searched);
}
