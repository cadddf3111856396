// The angle-angle plots of a governing case: a planar chain's θ against θ of the next link, a
// spatial chain's signed sway in the plane (of the travel, or of a slewing boom) and across it,
// link against link, so a swing to either side shows on its own side of the plot.
#include <catch2/catch.hpp>

#include <algorithm>
#include <numbers>
#include <string>
#include <vector>

#include "../../src/report/report_model.hpp"
#include "swaybound/checks/check_run.hpp"
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
  const report_doc::Document d = report_doc::build_document(spec, p.report, {"2025-02-03", "", ""}, nullptr);
  for (const auto& s : d.sections)
    if (s.id == "governing")
      for (const auto& b : s.blocks)
        for (const auto& f : b.figures) p.figures.push_back(f);
  return p;
}

const report_doc::Figure* titled(const Plots& p, const std::string& title) {
  for (const auto& f : p.figures)
    if (f.plot.title == title) return &f;
  return nullptr;
}

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
  CHECK(in->caption.find("in-plane sway of link 2 against in-plane sway of link 1") != std::string::npos);
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
