// The limits of a spatial chain by direction and by component (in-plane and out-of-plane sway,
// pivot load components in the ground and the boom frame), their recordings and packet figures,
// against closed forms; and their meaning on a planar chain.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "../../src/report/report_model.hpp"
#include "../support/close_to.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kG = 9.81;

/// A check run's metrics of every case and its report (recorded, no audit).
struct Checked {
  Spec spec;
  std::vector<CaseMetrics> cases;
  CheckReport report;
};

Checked check(const std::string& yaml) {
  Checked c;
  c.spec = load_spec_text(yaml, "spatial_limits.yaml");
  CheckOptions o;
  o.audit = false;
  o.jobs = 1;
  o.on_case = [&c](const CaseMetrics& m) { c.cases.push_back(m); };
  c.report = run_check(c.spec, o);
  return c;
}

/// The limits of every new kind but those a spec without slewing refuses.
const char* kGroundLimits = R"(limits:
  - {in_plane_sway: 89 deg}
  - {out_of_plane_sway: 89 deg}
  - {pivot_load_x: 1 MN}
  - {pivot_load_z: 1 MN}
  - {pivot_load_vertical: 1 MN}
solver: {rtol: 1e-11, atol: 1e-13}
)";

/// The largest |hypot(a_k, b_k) - radius| over the samples.
double worst_off_circle(const std::vector<double>& a, const std::vector<double>& b, double radius) {
  double worst = 0;
  for (std::size_t k = 0; k < a.size() && k < b.size(); ++k)
    worst = std::max(worst, std::fabs(std::hypot(a[k], b[k]) - radius));
  return worst;
}

}  // namespace

TEST_CASE("Conical pendulum: plan-view circle of radius L sin a, in- and out-of-plane sway both a",
          "[checks][spatial]") {
  // Steady conical motion of a point pendulum (any mechanics text, e.g. Meriam & Kraige, Dynamics,
  // ch. 3): at cone angle a it circles at w^2 = g / (L cos a), so the bob's plan-view path is the
  // circle of radius L sin a about the pivot. Derived here: e = (sin a cos wt, -cos a, sin a sin wt);
  // the link's shadow on the travel plane x-y makes atan2(sin a cos wt, cos a) with the vertical,
  // largest (= a) at wt = 0, and its shadow on the plane z-y likewise at wt = pi/2: both peaks are a.
  // The pivot force on the bob is m (acceleration - gravity): horizontal m w^2 L sin a = m g tan a
  // in every direction in turn (so |R_x| and |R_z| both peak at m g tan a), vertical m g.
  const double L = 1.7, m = 2.0, a = 40.0 * std::numbers::pi / 180;
  const double w = std::sqrt(kG / (L * std::cos(a)));
  const Checked c = check(fmt::format(R"(swaybound: 1
name: conical pendulum
motion: spatial
gravity: 9.81
links:
  - {{name: rod, length: {} m, mass: {} kg, com: {} m, inertia: 0}}
cases:
  duration: 6 s
  output_rate: 50 Hz
  initial: [{{single: {{theta: [{} rad], phi: [0 rad], rate: [0 rad/s], phi_rate: [{} rad/s]}}}}]
{})",
                                      L, m, L, a, w * std::sin(a), kGroundLimits));
  REQUIRE(c.cases.size() == 1);
  const CaseMetrics& cm = c.cases[0];
  REQUIRE(cm.ok());
  CHECK_THAT(cm.peak_in_plane[0].value, IsCloseTo(a, 0, 1e-7));
  CHECK_THAT(cm.peak_out_of_plane[0].value, IsCloseTo(a, 0, 1e-7));
  CHECK_THAT(cm.peak_load_x[0].value, IsCloseTo(m * kG * std::tan(a), 0, 1e-7));
  CHECK_THAT(cm.peak_load_z[0].value, IsCloseTo(m * kG * std::tan(a), 0, 1e-7));
  CHECK_THAT(cm.peak_load_vertical[0].value, IsCloseTo(m * kG, 0, 1e-7));
  // The recording's plan view: relative to the (fixed) pivot, and over the ground.
  REQUIRE(c.report.recorded.size() == 1);
  const RecordedCase& rc = c.report.recorded[0];
  REQUIRE(rc.hook_x.size() == rc.t.size());
  REQUIRE(rc.t.size() > 250);
  CHECK_FALSE(rc.slewing);
  CHECK(worst_off_circle(rc.hook_radial, rc.hook_tangential, L * std::sin(a)) < 1e-8 * L);
  CHECK(worst_off_circle(rc.hook_x, rc.hook_z, L * std::sin(a)) < 1e-8 * L);
  // Without slewing the boom frame is the ground's: radial = x, tangential = z.
  for (std::size_t k = 0; k < rc.t.size(); k += 50) {
    CHECK(rc.hook_radial[k] == rc.hook_x[k]);
    CHECK(rc.hook_tangential[k] == rc.hook_z[k]);
  }
  // The located peaks of the recording are those of the checks.
  CHECK_THAT(rc.peak_in_plane[0].value, IsCloseTo(a, 0, 1e-7));
  CHECK_THAT(rc.peak_out_of_plane[0].value, IsCloseTo(a, 0, 1e-7));
}

namespace {

/// A point load under a boom slewing at W from t = 0 at radius R, started in its steady rotation
/// at cone angle a, outwards (+x at t = 0) and turning with the boom (phi' = W sin a).
std::string slewing_yaml(double L, double m, double R, double W, double a, const std::string& limits) {
  return fmt::format(R"(swaybound: 1
name: steady slewing
motion: spatial
gravity: 9.81
links:
  - {{name: rod, length: {} m, mass: {} kg, com: {} m, inertia: 0, pivot: {{damper: {{coefficient: 400 N m s/rad}}}}}}
base:
  scenarios:
    - name: slewing steadily
      slew: {{radius: {} m, speed: {} rad/s}}
cases:
  duration: 10 s
  output_rate: 20 Hz
  initial: [{{single: {{theta: [{} rad], phi: [0 rad], rate: [0 rad/s], phi_rate: [{} rad/s]}}}}]
{}solver: {{rtol: 1e-11, atol: 1e-13}}
)",
                     L, m, L, R, W, a, W * std::sin(a), limits);
}

/// The steady cone angle: tan a = W^2 (R + L sin a) / g, by Newton's method.
double steady_angle(double L, double R, double W) {
  double a = W * W * R / kG;
  for (int k = 0; k < 50; ++k) {
    const double f = std::tan(a) - W * W * (R + L * std::sin(a)) / kG;
    const double df = 1.0 / (std::cos(a) * std::cos(a)) - W * W * L * std::cos(a) / kG;
    a -= f / df;
  }
  return a;
}

}  // namespace

TEST_CASE("Steady slewing: boom-frame pivot load radial m W^2 (R + L sin a), vertical m g", "[checks][spatial]") {
  // Steady rotation (any dynamics text, e.g. Meriam & Kraige, Dynamics, ch. 3): a point mass on a
  // rod of length L hung at radius R from a vertical axis turning at W hangs outwards at the cone
  // angle a with tan a = W^2 (R + L sin a) / g. It circles at radius R + L sin a, so the rod pulls
  // it inwards with m W^2 (R + L sin a) and holds it up with m g; the boom tip feels the opposite:
  // radial (outwards) m W^2 (R + L sin a), tangential 0, vertical m g down. In the boom frame the
  // link stays in the boom's plane: in-plane sway a, out-of-plane 0.
  const double L = 2.0, m = 100.0, R = 5.0, W = 0.4;
  const double a = steady_angle(L, R, W);
  const Checked c = check(slewing_yaml(L, m, R, W, a, R"(limits:
  - {in_plane_sway: 89 deg}
  - {out_of_plane_sway: 89 deg}
  - {pivot_load_radial: 1 MN}
  - {pivot_load_tangential: 1 MN}
  - {pivot_load_vertical: 1 MN}
)"));
  REQUIRE(c.cases.size() == 1);
  const CaseMetrics& cm = c.cases[0];
  REQUIRE(cm.ok());
  const double radial = m * W * W * (R + L * std::sin(a));
  INFO("cone angle " << a << " rad, radial force " << radial << " N");
  CHECK_THAT(cm.peak_load_radial[0].value, IsCloseTo(radial, 0, 1e-6));
  CHECK_THAT(cm.peak_load_vertical[0].value, IsCloseTo(m * kG, 0, 1e-7));
  CHECK(cm.peak_load_tangential[0].value < 1e-6 * m * kG);
  CHECK_THAT(cm.peak_in_plane[0].value, IsCloseTo(a, 0, 1e-7));
  CHECK(cm.peak_out_of_plane[0].value < 1e-7);
  // The recording: the force on the boom tip points outwards, the hook hangs at L sin a out along
  // the boom, and the boom tip runs on its circle about the axis at (-R, 0).
  REQUIRE(c.report.recorded.size() == 1);
  const RecordedCase& rc = c.report.recorded[0];
  CHECK(rc.slewing);
  REQUIRE(rc.support_radial.size() == rc.t.size());
  for (std::size_t k = 0; k < rc.t.size(); k += 20) {
    INFO("t = " << rc.t[k] << " s");
    CHECK_THAT(rc.support_radial[k], IsCloseTo(radial, 0, 1e-6));
    CHECK(std::fabs(rc.support_tangential[k]) < 1e-6 * m * kG);
    CHECK_THAT(rc.hook_radial[k], IsCloseTo(L * std::sin(a), 0, 1e-7));
    CHECK(std::fabs(rc.hook_tangential[k]) < 1e-7 * L);
    CHECK_THAT(std::hypot(rc.pivot_x[k] + R, rc.pivot_z[k]), IsCloseTo(R, 0, 1e-12));
  }
  // The hook circles the axis at R + L sin a over the ground.
  std::vector<double> from_axis(rc.hook_x.size());
  for (std::size_t k = 0; k < from_axis.size(); ++k) from_axis[k] = rc.hook_x[k] + R;
  CHECK(worst_off_circle(from_axis, rc.hook_z, R + L * std::sin(a)) < 1e-7 * R);

  SECTION("the packet: plan views, sway by direction, support force by component, base in x and z") {
    const report_doc::Document d = report_doc::build_document(c.spec, c.report, {"2025-02-03", "", ""}, nullptr);
    std::vector<const report_doc::Figure*> all;
    for (const auto& s : d.sections)
      if (s.id == "governing")
        for (const auto& b : s.blocks)
          for (const auto& f : b.figures) all.push_back(&f);
    const auto titled = [&](const std::string& title) {
      std::vector<const report_doc::Figure*> out;
      for (const auto* f : all)
        if (f->plot.title.rfind(title, 0) == 0) out.push_back(f);
      return out;
    };
    const auto relative = titled("Hook relative to the top pivot");
    REQUIRE(relative.size() == 1);
    const plot::Series& hook = relative[0]->plot.series.at(0);
    CHECK(relative[0]->plot.equal_aspect);
    // Seen from above in the boom frame: tangential across the page, radial up it.
    CHECK(hook.x == rc.hook_tangential);
    CHECK(hook.y == rc.hook_radial);
    REQUIRE(titled("Hook and top pivot over the ground").size() == 1);
    REQUIRE(titled("In-plane sway").size() == 1);
    REQUIRE(titled("Out-of-plane sway").size() == 1);
    const auto horizontal = titled("Horizontal force on the support");
    REQUIRE(horizontal.size() == 1);
    REQUIRE(horizontal[0]->plot.series.size() == 2);
    CHECK(horizontal[0]->plot.series[0].label == "radial");
    // The pivot_load_radial limit is drawn (at +-1000 kN).
    CHECK(std::any_of(horizontal[0]->plot.refs.begin(), horizontal[0]->plot.refs.end(),
                      [](const plot::RefLine& r) { return r.value == 1000.0; }));
    const auto base = titled("Base (top pivot) motion");
    REQUIRE(base.size() == 1);
    CHECK(base[0]->caption.find("only") == std::string::npos);
    CHECK(std::any_of(base[0]->plot.series.begin(), base[0]->plot.series.end(),
                      [](const plot::Series& s) { return s.label == "speed z [m/s]"; }));
  }
}

TEST_CASE("In-plane motion of a spatial chain: no out-of-plane sway, the planar engine's in-plane peak",
          "[checks][spatial]") {
  // The same double pendulum under the same trolley brake, planar and spatial, started in the
  // travel plane: the spatial chain stays in it (its out-of-plane sway and z loads are 0), and its
  // in-plane sway is the planar chain's |theta| to the solver tolerance. On the planar chain the
  // in-plane sway is |theta| itself (the peak_angle figure) and pivot_load_x of the top link the
  // horizontal_support_force figure.
  const std::string body = R"(gravity: 9.81
links:
  - {name: rope, length: 6 m, mass: 20 kg}
  - {name: hook, length: 1.2 m, mass: 400 kg, pivot: {damper: {coefficient: 300 N m s/rad}}}
base:
  scenarios:
    - name: brake
      initial_velocity: {x: 1.2 m/s}
      accel: [{for: 1.5 s, x: -0.8 m/s^2}, {for: 10 s, x: 0}]
cases:
  duration: 12 s
  initial: [{grid: {theta: [[-3 deg, 3 deg, 3], [2 deg, 2 deg, 1]]}}]
solver: {rtol: 1e-11, atol: 1e-13}
limits:
  - {peak_angle: 89 deg}
  - {in_plane_sway: 89 deg}
  - {pivot_load_x: 1 MN}
  - {pivot_load_vertical: 1 MN}
  - {horizontal_support_force: 1 MN}
)";
  const Checked planar = check("swaybound: 1\nname: planar\n" + body);
  const Checked spatial = check("swaybound: 1\nname: spatial\nmotion: spatial\n" + body +
                                "  - {out_of_plane_sway: 89 deg}\n  - {pivot_load_z: 1 MN}\n");
  REQUIRE(planar.cases.size() == 3);
  REQUIRE(spatial.cases.size() == 3);
  for (std::size_t k = 0; k < 3; ++k) {
    const CaseMetrics& p = planar.cases[k];
    const CaseMetrics& s = spatial.cases[k];
    REQUIRE(p.ok());
    REQUIRE(s.ok());
    for (std::size_t i = 0; i < 2; ++i) {
      INFO("case " << k << ", link " << i);
      CHECK(p.peak_in_plane[i].value == p.peak_angle[i].value);
      CHECK_THAT(s.peak_in_plane[i].value, IsCloseTo(p.peak_angle[i].value, 1e-9, 1e-7));
      CHECK(s.peak_out_of_plane[i].value < 1e-12);
      CHECK(s.peak_load_z[i].value < 1e-9);
      CHECK_THAT(s.peak_load_x[i].value, IsCloseTo(p.peak_load_x[i].value, 1e-6, 1e-7));
      CHECK_THAT(s.peak_load_vertical[i].value, IsCloseTo(p.peak_load_vertical[i].value, 1e-6, 1e-7));
    }
    CHECK(p.peak_load_x[0].value == p.support_force_x.value);
  }
}

TEST_CASE("The on-demand figures cost nothing without their limits, and have cases.csv columns with them",
          "[checks][spatial]") {
  const std::string head = R"(swaybound: 1
name: on demand
motion: spatial
links:
  - {name: rope, length: 6 m, mass: 20 kg}
cases: {duration: 2 s, initial: [{single: {theta: [3 deg], phi: [2 deg]}}]}
)";
  const Checked without = check(head + "limits: [{peak_angle: 30 deg}]\n");
  CHECK(without.cases.at(0).peak_in_plane.empty());
  CHECK(without.cases.at(0).peak_load_z.empty());
  CHECK(cases_csv_header(without.spec).find("in_plane") == std::string::npos);
  const Checked with = check(head + "limits: [{out_of_plane_sway: 30 deg}]\n");
  CHECK(with.cases.at(0).peak_out_of_plane.size() == 1);
  const std::string header = cases_csv_header(with.spec);
  CHECK(header.find("\"peak_out_of_plane_sway(rope) [rad]\"") != std::string::npos);
  CHECK(header.find("peak_in_plane_sway") == std::string::npos);
  // Started at phi = 2 deg and let go, the link's shadow across the travel swings to at least 2 deg.
  CHECK(with.cases.at(0).peak_out_of_plane[0].value >= std::atan2(std::sin(2 * std::numbers::pi / 180),
                                                                  std::cos(3 * std::numbers::pi / 180) *
                                                                      std::cos(2 * std::numbers::pi / 180)) -
                                                           1e-12);
}
