// Per-case metrics as bytes (checks/case_wire.hpp) and the seam a distributed run plugs into
// (checks/case_farm.hpp): a farm that computes the cases in another order and hands them over
// through the bytes must leave every figure of the check as it is (the MPI build's promise; the
// MPI runs themselves are compared in tests/cluster/check_mpi_runs.py).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <string>

#include "swaybound/checks/case_farm.hpp"
#include "swaybound/checks/case_wire.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {

/// Runs each list of cases on one thread, last case first, and hands the metrics over as bytes.
class WireFarm final : public CaseFarm {
 public:
  long lists = 0, cases = 0;
  bool stream(const CheckPlan& plan, const CaseList& list, const RunnerOptions&,
              const std::function<void(CaseMetrics&&)>& consume) override {
    ++lists;
    std::vector<CaseMetrics> out;
    Workspace ws(plan.model);
    for (long k = list.size() - 1; k >= 0; --k)
      out.push_back(run_case(plan.model, *plan.spec, ws, plan.space.at(list[k]), plan.streaming, plan.case_options));
    std::reverse(out.begin(), out.end());
    std::string bytes;
    encode_cases(out, bytes);
    for (CaseMetrics& m : decode_cases(bytes)) {
      ++cases;
      consume(std::move(m));
    }
    return true;
  }
  std::string describe(int) const override { return "a test farm"; }
};

/// Installs a farm for the scope.
struct Installed {
  explicit Installed(CaseFarm* farm) { set_case_farm(farm); }
  ~Installed() { set_case_farm(nullptr); }
};

Spec demo(const std::string& name, double duration) {
  Spec spec = load_spec(std::string(SWAYBOUND_SOURCE_DIR) + "/" + name);
  spec.cases.duration = duration;
  return spec;
}

/// The spatial demo with a limit of every kind that is computed only on demand (sway by direction,
/// pivot load by component), so that their metrics travel too.
Spec spatial_with_components(double duration) {
  const std::string path = std::string(SWAYBOUND_SOURCE_DIR) + "/specs/gantry_two_axis.yaml";
  std::string text = Spec(load_spec(path)).source_text;
  const std::string extra = "limits:\n  - {in_plane_sway: 20 deg}\n  - {out_of_plane_sway: 20 deg}\n"
                            "  - {pivot_load_x: 500 kN}\n  - {pivot_load_z: 500 kN}\n"
                            "  - {pivot_load_vertical: 500 kN}\n";
  text.replace(text.find("limits:\n"), 8, extra);
  Spec spec = load_spec_text(text, path);
  spec.cases.duration = duration;
  return spec;
}

std::string results_of(const Spec& spec) {
  CheckOptions options;
  options.jobs = 2;
  options.record = false;
  return results_json(spec, run_check(spec, options));
}

}  // namespace

TEST_CASE("a check whose cases come through the bytes of a farm writes the same results.json", "[checks][cluster]") {
  // A planar chain with friction and a wind gust, an elastic rope that goes slack and lifts a load
  // off the ground (vectors per rope, switches, lift-off time), and a spatial chain (phi starts).
  const auto [name, duration] = GENERATE(table<std::string, double>({{"tests/cluster/cluster_check.yaml", 8.0},
                                                                    {"specs/hoist_lift_off.yaml", 6.0},
                                                                    {"specs/gantry_two_axis.yaml", 4.0}}));
  CAPTURE(name);
  const Spec spec = demo(name, duration);
  const std::string here = results_of(spec);
  WireFarm farm;
  std::string farmed;
  {
    Installed installed(&farm);
    farmed = results_of(spec);
    CHECK(describe_execution(2) == "a test farm");
  }
  CHECK(farm.lists == 1);
  CHECK(farm.cases == CaseSpace(spec).size());
  CHECK(farmed == here);
  CHECK(describe_execution(3) == "1 process x 3 threads");
}

TEST_CASE("sway by direction and pivot load by component come through the bytes of a farm", "[checks][cluster]") {
  const Spec spec = spatial_with_components(4.0);
  const std::string here = results_of(spec);
  WireFarm farm;
  Installed installed(&farm);
  CHECK(results_of(spec) == here);
  CHECK(here.find("out_of_plane_sway") != std::string::npos);
}

TEST_CASE("case bytes: decode gives back every field encode wrote", "[checks][cluster]") {
  const Spec spec = demo("specs/hoist_lift_off.yaml", 6.0);
  const CheckPlan plan = plan_check(spec);
  Workspace ws(plan.model);
  std::vector<CaseMetrics> cases;
  for (long i = 0; i < std::min(4L, plan.space.size()); ++i)
    cases.push_back(run_case(plan.model, spec, ws, plan.space.at(i), plan.streaming, plan.case_options));
  cases[1].status = RunStatus::mode_chatter;  // the last status, and texts with any bytes
  cases[1].reason = std::string("a reason\0with a nul", 19);
  cases[2].ftle_note = "note";
  std::string bytes;
  encode_cases(cases, bytes);
  const std::vector<CaseMetrics> back = decode_cases(bytes);
  REQUIRE(back.size() == cases.size());
  std::string again;
  encode_cases(back, again);
  CHECK(again == bytes);
  for (std::size_t k = 0; k < cases.size(); ++k) {
    CHECK(back[k].id == cases[k].id);
    CHECK(back[k].status == cases[k].status);
    CHECK(back[k].reason == cases[k].reason);
    CHECK(back[k].initial.theta == cases[k].initial.theta);
    CHECK(back[k].initial.rope_length == cases[k].initial.rope_length);
    REQUIRE(back[k].peak_load.size() == cases[k].peak_load.size());
    for (std::size_t i = 0; i < cases[k].peak_load.size(); ++i) {
      CHECK(back[k].peak_load[i].value == cases[k].peak_load[i].value);
      CHECK(back[k].peak_load[i].time == cases[k].peak_load[i].time);
    }
    CHECK(back[k].slack_count == cases[k].slack_count);
    CHECK(back[k].steps == cases[k].steps);
    CHECK(back[k].ftle_note == cases[k].ftle_note);
    // NaN fields stay NaN (lift_off_time of a case that did not lift, ftle not computed).
    CHECK(std::isnan(back[k].ftle) == std::isnan(cases[k].ftle));
    CHECK(std::isnan(back[k].lift_off_time) == std::isnan(cases[k].lift_off_time));
  }
}

TEST_CASE("case bytes: short, foreign or oversized input is an error, not a crash", "[checks][cluster]") {
  const Spec spec = demo("tests/cluster/cluster_check.yaml", 2.0);
  const CheckPlan plan = plan_check(spec);
  Workspace ws(plan.model);
  std::string bytes;
  encode_cases({run_case(plan.model, spec, ws, plan.space.at(0), plan.streaming, plan.case_options)}, bytes);
  for (std::size_t cut : {std::size_t{0}, std::size_t{3}, std::size_t{12}, bytes.size() / 2, bytes.size() - 1}) {
    CAPTURE(cut);
    CHECK_THROWS_AS(decode_cases(std::string_view(bytes).substr(0, cut)), RunError);
  }
  std::string foreign = bytes;
  foreign[0] ^= 0x5a;
  CHECK_THROWS_WITH(decode_cases(foreign), Catch::Contains("another layout"));
  std::string huge = bytes;
  const std::uint64_t count = ~std::uint64_t{0} >> 4;
  std::memcpy(huge.data() + 4, &count, sizeof count);  // the case count after the 4-byte magic
  CHECK_THROWS_WITH(decode_cases(huge), Catch::Contains("runs past the end"));
}
