// The packet's figures of the load at each lower pivot of a spatial chain (the force of the link
// above on each link below the top one) by component: in the boom frame under a slewing boom,
// checked against the closed form of a steady rotation and against the recorded ground-frame
// reactions turned by the slewing angle; along and across the travel otherwise; none for a planar
// chain or a single link.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "../../src/report/report_model.hpp"
#include "../support/close_to.hpp"
#include "../support/governing_figures.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::IsCloseTo;

namespace {

constexpr double kG = 9.81;

struct Packet {
  Spec spec;
  CheckReport report;
  std::vector<report_doc::Figure> figures;  ///< of the governing cases' section
};

Packet packet(const std::string& yaml) {
  Packet p;
  p.spec = load_spec_text(yaml, "lower_pivot_loads.yaml");
  CheckOptions o;
  o.audit = false;
  o.jobs = 1;
  p.report = run_check(p.spec, o);
  p.figures = testing::governing_figures(p.spec, p.report);
  return p;
}

const report_doc::Figure* titled(const Packet& p, const std::string& title) { return testing::titled(p.figures, title); }

std::size_t lower_pivot_figures(const Packet& p) {
  return static_cast<std::size_t>(std::count_if(p.figures.begin(), p.figures.end(), [](const report_doc::Figure& f) {
    return f.plot.title.find("at the lower pivots") != std::string::npos;
  }));
}

bool has_ref(const report_doc::Figure& f, double value) {
  return std::any_of(f.plot.refs.begin(), f.plot.refs.end(),
                     [&](const plot::RefLine& r) { return std::fabs(r.value - value) < 1e-12; });
}

/// Two point masses m1, m2 on massless rods L1, L2 (com at the rod's end, no inertia) under a boom
/// slewing at W from t = 0 at radius R, started in their steady rotation at angles a1, a2 outwards
/// (+x at t = 0), turning with the boom (phi' = W sin a). Undamped: a pivot damper between the two
/// links would see their rates about their own, different axes differ and pull the lower mass
/// sideways a little (0.02 N here) even in the steady rotation.
std::string slewing_yaml(double L1, double L2, double m1, double m2, double R, double W, double a1, double a2) {
  return fmt::format(R"(swaybound: 1
name: steady slewing, two links
motion: spatial
gravity: 9.81
links:
  - {{name: upper, length: {} m, mass: {} kg, com: {} m, inertia: 0}}
  - {{name: lower, length: {} m, mass: {} kg, com: {} m, inertia: 0}}
base:
  scenarios:
    - name: slewing steadily
      slew: {{radius: {} m, speed: {} rad/s}}
cases:
  duration: 8 s
  output_rate: 20 Hz
  initial: [{{single: {{theta: [{} rad, {} rad], phi: [0 rad, 0 rad], rate: [0 rad/s, 0 rad/s], phi_rate: [{} rad/s, {} rad/s]}}}}]
limits:
  - {{pivot_load_radial: 3 kN, link: lower}}
  - {{pivot_load_tangential: 7 kN, link: upper}}
  - {{pivot_load_vertical: 9 kN}}
solver: {{rtol: 1e-11, atol: 1e-13}}
)",
                     L1, m1, L1, L2, m2, L2, R, W, a1, a2, W * std::sin(a1), W * std::sin(a2));
}

}  // namespace

TEST_CASE("a two-link chain under a steadily slewing boom: the lower pivot's load in the boom frame, radial "
          "-m2 W^2 r2, vertical m2 g",
          "[report][spatial][slew]") {
  // Steady rotation (any dynamics text, e.g. Meriam & Kraige, Dynamics, ch. 3, the conical
  // pendulum; derived here for two point masses): in the frame turning with the boom at W each mass
  // hangs still, so at radius r it needs the inward force m W^2 r. The lower mass m2, at
  // r2 = R + L1 sin a1 + L2 sin a2, is held by its rod alone: R2 = (-m2 W^2 r2 radially, m2 g up),
  // tan a2 = W^2 r2 / g. The upper mass m1 at r1 = R + L1 sin a1 is held by its rod and pulled by
  // the lower rod with -R2: tan a1 = W^2 (m1 r1 + m2 r2) / ((m1 + m2) g). Nothing acts tangentially.
  const double L1 = 3.0, L2 = 1.5, m1 = 150.0, m2 = 400.0, R = 6.0, W = 0.35;
  double a1 = 0, a2 = 0;
  for (int k = 0; k < 200; ++k) {  // a fixed point: the right-hand sides change little with the angles
    const double r1 = R + L1 * std::sin(a1), r2 = r1 + L2 * std::sin(a2);
    a2 = std::atan(W * W * r2 / kG);
    a1 = std::atan(W * W * (m1 * r1 + m2 * r2) / ((m1 + m2) * kG));
  }
  const double r2 = R + L1 * std::sin(a1) + L2 * std::sin(a2);
  const double radial = -m2 * W * W * r2, vertical = m2 * kG;  // on the lower link, from the upper [N]
  INFO("angles " << a1 << ", " << a2 << " rad; radial load " << radial << " N");
  const Packet p = packet(slewing_yaml(L1, L2, m1, m2, R, W, a1, a2));
  REQUIRE(p.report.recorded.size() == 1);
  const RecordedCase& rc = p.report.recorded[0];
  REQUIRE(rc.slewing);
  REQUIRE(rc.status == "ok");
  REQUIRE(rc.load_radial.size() == 2);
  REQUIRE(rc.load_radial[1].size() == rc.t.size());
  REQUIRE(rc.t.size() > 100);

  const report_doc::Figure* rad = titled(p, "Radial load at the lower pivots");
  const report_doc::Figure* tan = titled(p, "Tangential load at the lower pivots");
  const report_doc::Figure* up = titled(p, "Vertical load at the lower pivots");
  REQUIRE(rad != nullptr);
  REQUIRE(tan != nullptr);
  REQUIRE(up != nullptr);
  CHECK(lower_pivot_figures(p) == 3);
  CHECK(titled(p, "Load along the travel at the lower pivots") == nullptr);
  // One line per lower link (here the one below the top), in kN.
  for (const auto* f : {rad, tan, up}) {
    REQUIRE(f->plot.series.size() == 1);
    CHECK(f->plot.series[0].label == "lower");
    CHECK(f->plot.series[0].x == rc.t);
  }
  const std::vector<double>& fr = rad->plot.series[0].y;
  const std::vector<double>& ft = tan->plot.series[0].y;
  const std::vector<double>& fv = up->plot.series[0].y;
  for (std::size_t k = 0; k < rc.t.size(); ++k) {
    INFO("t = " << rc.t[k] << " s");
    // The recorded ground-frame reaction turned by the slewing angle W t: the boom's radial axis is
    // (cos W t, sin W t) in the x-z plane, its tangential one (-sin W t, cos W t).
    const double c = std::cos(W * rc.t[k]), s = std::sin(W * rc.t[k]);
    const double x = rc.load_x[1][k], z = rc.load_z[1][k];
    CHECK_THAT(fr[k] * 1e3, IsCloseTo(x * c + z * s, 1e-9 * vertical, 1e-9));
    CHECK_THAT(ft[k] * 1e3, IsCloseTo(-x * s + z * c, 1e-9 * vertical, 1e-9));
    CHECK_THAT(fv[k] * 1e3, IsCloseTo(rc.load_vertical[1][k], 1e-12, 1e-12));
    // The closed form of the steady rotation.
    CHECK_THAT(fr[k] * 1e3, IsCloseTo(radial, 0, 1e-6));
    CHECK(std::fabs(ft[k] * 1e3) < 1e-6 * vertical);
    CHECK_THAT(fv[k] * 1e3, IsCloseTo(vertical, 0, 1e-7));
  }
  // The located peaks, on the side the load is on: inwards, and up.
  REQUIRE(rad->plot.marks.size() == 1);
  CHECK_THAT(rad->plot.marks[0].y * 1e3, IsCloseTo(radial, 0, 1e-6));
  REQUIRE(up->plot.marks.size() == 1);
  CHECK_THAT(up->plot.marks[0].y * 1e3, IsCloseTo(vertical, 0, 1e-7));
  // The limits on the lower link and on every link are drawn, not the one on the top link alone.
  CHECK(has_ref(*rad, 3.0));
  CHECK(has_ref(*rad, -3.0));
  CHECK(has_ref(*up, 9.0));
  CHECK_FALSE(has_ref(*tan, 7.0));
  CHECK(rad->caption.find("+ outwards") != std::string::npos);
}

TEST_CASE("a two-link chain under a braking trolley: the lower pivot's load along and across the travel",
          "[report][spatial]") {
  const Packet p = packet(R"(swaybound: 1
name: lower pivot loads, ground frame
motion: spatial
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 5 m, mass: 20 kg}
  - {name: block, length: 1 m, mass: 400 kg, com: 0.8 m, inertia: 40 kg m^2}
base: {scenarios: [{name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 1 s, x: -1 m/s^2}]}]}
cases: {duration: 6 s, output_rate: 25 Hz, initial: [{single: {theta: [-4 deg, -3 deg], phi: [3 deg, 5 deg]}}]}
limits:
  - {pivot_load_x: 2 kN, link: block}
  - {pivot_load_z: 1.5 kN}
  - {pivot_load_x: 4 kN, link: rope}
)");
  REQUIRE(p.report.recorded.size() == 1);
  const RecordedCase& rc = p.report.recorded[0];
  REQUIRE_FALSE(rc.slewing);
  const report_doc::Figure* along = titled(p, "Load along the travel at the lower pivots");
  const report_doc::Figure* across = titled(p, "Load across the travel at the lower pivots");
  const report_doc::Figure* up = titled(p, "Vertical load at the lower pivots");
  REQUIRE(along != nullptr);
  REQUIRE(across != nullptr);
  REQUIRE(up != nullptr);
  CHECK(lower_pivot_figures(p) == 3);
  CHECK(titled(p, "Radial load at the lower pivots") == nullptr);
  // The ground frame's components of the recorded reaction on the block, in kN.
  REQUIRE(along->plot.series.size() == 1);
  REQUIRE(rc.load_x.at(1).size() == rc.t.size());
  for (std::size_t k = 0; k < rc.t.size(); ++k) {
    CHECK(along->plot.series[0].y[k] == Approx(rc.load_x[1][k] * 1e-3).epsilon(1e-15));
    CHECK(across->plot.series[0].y[k] == Approx(rc.load_z[1][k] * 1e-3).epsilon(1e-15));
    CHECK(up->plot.series[0].y[k] == Approx(rc.load_vertical[1][k] * 1e-3).epsilon(1e-15));
  }
  // The swing goes both ways across the travel; the block hangs from the rope (about its weight up).
  const auto& z = across->plot.series[0].y;
  CHECK(*std::min_element(z.begin(), z.end()) < 0);
  CHECK(*std::max_element(z.begin(), z.end()) > 0);
  CHECK(up->plot.series[0].y.front() == Approx(400 * kG * 1e-3).epsilon(0.1));
  // The peak marks are the recording's located peaks, at most the limit finder's |.|.
  REQUIRE(along->plot.marks.size() == 1);
  CHECK(std::fabs(along->plot.marks[0].y) == Approx(rc.peak_load_x[1].value * 1e-3).epsilon(1e-15));
  CHECK(along->plot.marks[0].x == rc.peak_load_x[1].time);
  for (double v : along->plot.series[0].y) CHECK(std::fabs(v) <= rc.peak_load_x[1].value * 1e-3 * (1 + 1e-12));
  // Limit lines: the block's and every link's, not the rope's (the top link) alone.
  CHECK(has_ref(*along, 2.0));
  CHECK_FALSE(has_ref(*along, 4.0));
  CHECK(has_ref(*across, 1.5));
  CHECK(has_ref(*across, -1.5));
}

TEST_CASE("no lower pivot figures for a single spatial link or a planar chain", "[report][spatial]") {
  constexpr const char* kTwoLinks = R"(swaybound: 1
name: lower pivot loads, none
motion: spatial
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 5 m, mass: 20 kg}
  - {name: block, length: 1 m, mass: 400 kg, com: 0.8 m, inertia: 40 kg m^2}
base: {scenarios: [{name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 1 s, x: -1 m/s^2}]}]}
cases: {duration: 4 s, output_rate: 25 Hz, initial: [{single: {theta: [-4 deg, -3 deg]}}]}
limits:
  - {peak_angle: 30 deg}
)";
  SECTION("a single link: its only pivot is the support's, plotted already") {
    std::string one = kTwoLinks;
    one.erase(one.find("  - {name: block"), one.find("base:") - one.find("  - {name: block"));
    one.replace(one.find("[-4 deg, -3 deg]"), 16, "[-4 deg]");
    const Packet p = packet(one);
    REQUIRE(p.report.recorded.size() == 1);
    CHECK(titled(p, "Horizontal force on the support") != nullptr);
    CHECK(lower_pivot_figures(p) == 0);
  }
  SECTION("a planar chain: no figure by component, of the support or of the lower pivots") {
    std::string planar = kTwoLinks;
    planar.erase(planar.find("motion: spatial\n"), 16);
    const Packet p = packet(planar);
    REQUIRE(p.report.recorded.size() == 1);
    CHECK(p.report.recorded[0].load_x.empty());
    CHECK(lower_pivot_figures(p) == 0);
    CHECK(titled(p, "Horizontal force on the support") == nullptr);
  }
}
