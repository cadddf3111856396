// Every planar demo spec run by the spatial engine (the same spec with `motion: spatial`), its
// motion staying in the travel plane: the per-case figures the checks read equal the planar
// engine's. The demos cover the forms the planar engine has (pivot dampers and friction, dashpots,
// wind and gusts, drive profiles with shapers and stops, elastic ropes hoisted and lifted off the
// ground), so each reaches the spatial engine through the same loader and case space.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <string>
#include <vector>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {

/// |a - b| <= rel * max(|a|, |b|, floor).
bool close(double a, double b, double rel, double floor) {
  if (std::isnan(a) || std::isnan(b)) return std::isnan(a) && std::isnan(b);
  return std::fabs(a - b) <= rel * std::max({std::fabs(a), std::fabs(b), floor});
}

void check_extremes(const std::vector<Extreme>& spatial, const std::vector<Extreme>& planar, double floor,
                    const char* what) {
  REQUIRE(spatial.size() == planar.size());
  for (std::size_t i = 0; i < planar.size(); ++i) {
    INFO(what << "[" << i << "]: spatial " << spatial[i].value << ", planar " << planar[i].value);
    CHECK(close(spatial[i].value, planar[i].value, 1e-7, floor));
  }
}

}  // namespace

TEST_CASE("every planar demo spec gives the same figures in the spatial engine", "[integrate][spatial][demo]") {
  const std::filesystem::path specs = std::filesystem::path(SWAYBOUND_SOURCE_DIR) / "specs";
  int demos = 0;
  for (const auto& entry : std::filesystem::directory_iterator(specs)) {
    if (entry.path().extension() != ".yaml") continue;
    const Spec planar_spec = load_spec(entry.path().string());
    if (planar_spec.motion == Motion::spatial) continue;
    ++demos;
    INFO("demo " << entry.path().filename().string());
    Spec spatial_spec = planar_spec;
    spatial_spec.motion = Motion::spatial;
    const Model planar = build_model(planar_spec), spatial = build_model(spatial_spec);
    Workspace ws_planar(planar), ws_spatial(spatial);
    RunSettings settings = RunSettings::from_spec(planar_spec);
    settings.rtol = 1e-10;
    settings.atol = 1e-12;
    settings.output_rate = 0;
    const CaseSpace space(planar_spec);
    // The first and the last start of every scenario.
    for (long k = 0; k < space.size(); ++k) {
      const long within = k % space.starts();
      if (within != 0 && within != space.starts() - 1) continue;
      const CaseDef def = space.at(k);
      INFO("case " << def.id);
      const CaseMetrics p = run_case(planar, planar_spec, ws_planar, def, settings, {});
      const CaseMetrics s = run_case(spatial, spatial_spec, ws_spatial, def, settings, {});
      REQUIRE(p.ok());
      REQUIRE(s.ok());
      check_extremes(s.peak_angle, p.peak_angle, 1e-3, "peak angle");
      check_extremes(s.peak_relative, p.peak_relative, 1e-3, "peak relative angle");
      check_extremes(s.peak_load, p.peak_load, 1.0, "peak pivot load");
      check_extremes(s.min_tension, p.min_tension, 1.0, "least tension");
      check_extremes(s.peak_rope_force, p.peak_rope_force, 1.0, "rope force");
      CHECK(close(s.support_force_x.value, p.support_force_x.value, 1e-7, 1.0));
      CHECK(s.switches == p.switches);
      CHECK(close(s.lift_off_time, p.lift_off_time, 1e-7, 1.0));
      CHECK(s.audit_relative < 1e-8);
    }
  }
  CHECK(demos >= 4);
}
