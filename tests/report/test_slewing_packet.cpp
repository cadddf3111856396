// The packet of a spatial chain as a reviewer reads it. The angle-angle plots of a governing case:
// a planar chain's θ against θ of the next link, a spatial chain's signed sway in the plane (of the
// travel, or of a slewing boom) and across it, link against link, so a swing to either side shows on
// its own side of the plot. A slewing scenario's text: its base motion, the wind's direction, the
// starts out of the plane, what is not modelled, the remark on a start transient, the captions.
#include <catch2/catch.hpp>

#include <algorithm>
#include <numbers>
#include <string>
#include <vector>

#include "../../src/report/report_model.hpp"
#include "../support/governing_figures.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {

constexpr double kDeg = 180 / std::numbers::pi;

// Two links, started to swing across the plane one way and in it the other, then a braking base.
constexpr const char* kSpec = R"(swaybound: 1
name: angle-angle plots
motion: spatial
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 5 m, mass: 20 kg}
  - {name: block, length: 1 m, mass: 400 kg, com: 0.8 m, inertia: 40 kg m^2}
base: {scenarios: [{name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 1 s, x: -1 m/s^2}]}]}
cases: {duration: 8 s, output_rate: 25 Hz, initial: [{single: {theta: [-4 deg, -3 deg], phi: [3 deg, 5 deg]}}]}
limits:
  - {peak_angle: 30 deg}
)";

struct Plots {
  CheckReport report;
  std::vector<report_doc::Figure> figures;  ///< of the governing cases' section
};

Plots plots(const std::string& yaml) {
  const Spec spec = load_spec_text(yaml, "angle_plots.yaml");
  CheckOptions o;
  o.audit = false;
  Plots p;
  p.report = run_check(spec, o);
  p.figures = testing::governing_figures(spec, p.report);
  return p;
}

const report_doc::Figure* titled(const Plots& p, const std::string& title) { return testing::titled(p.figures, title); }

std::vector<double> in_degrees(const std::vector<double>& v) {
  std::vector<double> out;
  for (double x : v) out.push_back(x * kDeg);
  return out;
}

bool has_both_signs(const std::vector<double>& v) {
  return *std::min_element(v.begin(), v.end()) < 0 && *std::max_element(v.begin(), v.end()) > 0;
}

}  // namespace

TEST_CASE("a spatial chain's angle-angle plots: signed sway in the plane and across it, link against link",
          "[report][plots][spatial]") {
  const Plots p = plots(kSpec);
  REQUIRE(p.report.recorded.size() == 1);
  const RecordedCase& rc = p.report.recorded[0];
  const report_doc::Figure* in = titled(p, "Angle-angle plot in the travel plane, links 1 and 2");
  const report_doc::Figure* across = titled(p, "Angle-angle plot across the travel plane, links 1 and 2");
  REQUIRE(in != nullptr);
  REQUIRE(across != nullptr);
  CHECK(titled(p, "Angle-angle plot, links 1 and 2") == nullptr);  // no cone angles against each other
  const plot::Series& s_in = in->plot.series.at(0);
  const plot::Series& s_across = across->plot.series.at(0);
  CHECK(s_in.x == in_degrees(rc.in_plane[0]));
  CHECK(s_in.y == in_degrees(rc.in_plane[1]));
  CHECK(s_across.x == in_degrees(rc.out_of_plane[0]));
  CHECK(s_across.y == in_degrees(rc.out_of_plane[1]));
  // The swing goes to both sides in both planes (a cone angle would never be negative), and it
  // starts where the case starts: theta and phi's shadows, -4 deg in the plane, about 3 deg across.
  CHECK(has_both_signs(s_in.x));
  CHECK(has_both_signs(s_across.y));
  CHECK(s_in.x.front() == Approx(-4).epsilon(1e-9));
  CHECK(s_across.x.front() > 2.9);
  CHECK(in->caption.rfind("In-plane sway of link 2 against in-plane sway of link 1", 0) == 0);
}

TEST_CASE("a planar chain's angle-angle plot stays θ against θ", "[report][plots]") {
  std::string planar = kSpec;
  planar.erase(planar.find("motion: spatial\n"), 16);
  planar.replace(planar.find(", phi: [3 deg, 5 deg]"), 21, "");
  const Plots p = plots(planar);
  REQUIRE(p.report.recorded.size() == 1);
  const report_doc::Figure* f = titled(p, "Angle-angle plot, links 1 and 2");
  REQUIRE(f != nullptr);
  CHECK(f->plot.series.at(0).x == in_degrees(p.report.recorded[0].theta[0]));
  CHECK(f->plot.series.at(0).y == in_degrees(p.report.recorded[0].theta[1]));
  CHECK(f->caption == "θ of link 2 against θ of link 1 over the run: a regular motion traces a tidy figure, a chaotic "
                      "one fills an area.");
  CHECK(titled(p, "Angle-angle plot in the travel plane, links 1 and 2") == nullptr);
}

TEST_CASE("a slewing spec's packet says how the base moves, where the wind blows from, and what to do about a "
          "start transient",
          "[report][spatial][slew]") {
  const Spec spec = load_spec_text(R"(swaybound: 1
name: slewing packet text
motion: spatial
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 8 m, mass: 20 kg}
  - {name: block, length: 1 m, mass: 800 kg, com: 0.8 m, inertia: 60 kg m^2, pivot: {damper: {coefficient: 3 kN m s/rad}}}
wind: {speed: 5 m/s, direction: 40 deg, link: block, drag_area: 2 m^2, drag_coefficient: 1.2}
base:
  scenarios:
    - name: slew and luff
      slew:
        radius: 20 m
        moves: [{at: 0 s, to: 0.05 rad/s, accel: 0.025 rad/s^2}]
        luff: {moves: [{at: 1 s, to: 0.5 m/s, accel: 0.25 m/s^2}, {at: 4 s, to: 0 m/s, accel: 0.25 m/s^2}]}
cases: {duration: 8 s, output_rate: 10 Hz, initial: [{single: {theta: [8 deg, -8 deg], phi: [0 deg, 4 deg]}}]}
limits:
  - {relative_angle: 30 deg, link: block}
  - {out_of_plane_sway: 20 deg}
)",
                                   "slewing_text.yaml");
  CheckOptions o;
  o.audit = false;
  const CheckReport r = run_check(spec, o);
  std::string html = report_html(spec, r, {"2025-02-03", "", ""}, nullptr);
  for (std::size_t k; (k = html.find("&#39;")) != std::string::npos;) html.replace(k, 5, "'");
  const auto has = [&](const std::string& text) {
    INFO(text);
    CHECK(html.find(text) != std::string::npos);
  };
  // The scenario table describes the slewing and the luffing, not "constant velocity".
  has("slewing at radius 20 m: speed 0 deg/s at t = 0; moves to 2.865 deg/s at 0 s (1.432 deg/s²)");
  has("radial luffing (+ outwards): speed 0 m/s at t = 0; moves to 0.5 m/s at 1 s (0.25 m/s²), to 0 m/s at 4 s");
  CHECK(html.find("none (constant velocity)") == std::string::npos);
  // The wind's direction; the starts out of the plane.
  has("direction [deg]");
  has("from +x towards +z");
  has("φ [0; 4] deg");
  // A spatial chain swings in 3-D: what is left out is the twist.
  has("twisting of the links and the load about their own axes");
  CHECK(html.find("three-dimensional (spherical) swing") == std::string::npos);
  // The kinked start's relative angle is largest at t = 0: the remark offers a start a spatial
  // chain can have (no modal or equilibrium starts).
  REQUIRE(r.checks.at(0).start_transient);
  has("check it again from starts with every link at the same theta and phi");
  CHECK(html.find("check it again from an equilibrium or modal start") == std::string::npos);
  // Captions name the case and the plane.
  REQUIRE(r.recorded.size() == 1);
  has("Case " + r.recorded[0].id + ": plan view (from above)");
  has("each link's sway across the boom's vertical plane (tangential)");
  has("largest horizontal |(F_x, F_z)|");
}
