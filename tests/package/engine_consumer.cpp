// Embeds the engine alone: checks a pendulum released from rest at 10 deg against a 12 deg peak
// angle limit. Without damping or base motion energy is conserved, so the largest |theta| is the
// release angle (any mechanics text); exit 0 when the check agrees to 1e-6 rad and passes.
#include <cmath>
#include <cstdio>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec.hpp"

int main() {
  const char* text = R"(swaybound: 1
name: engine-only consumer (test data)
links:
  - {name: rod, length: 2 m, mass: 10 kg}
cases:
  duration: 5 s
  initial:
    - single: {theta: [10 deg]}
limits:
  - {peak_angle: 12 deg, link: rod}
)";
  const swaybound::Spec spec = swaybound::load_spec_text(text, "consumer.yaml");
  swaybound::CheckOptions options;
  options.jobs = 1;
  options.audit = false;
  options.record = false;
  const swaybound::CheckReport report = swaybound::run_check(spec, options);
  const double expected = 10 * std::acos(-1.0) / 180;
  const double worst = report.checks.at(0).worst;
  std::printf("peak angle %.12g rad, expected %.12g rad, pass %d\n", worst, expected, report.pass ? 1 : 0);
  return report.pass && std::fabs(worst - expected) < 1e-6 ? 0 : 1;
}
