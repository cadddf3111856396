#pragma once
// RunSettings for whole-run tests: a duration, tolerances and an output rate, the rest default.
#include "swaybound/integrate/run.hpp"

namespace swaybound::testing {

/// Settings of a run of `duration` [s] at tolerances rtol, atol with `rate` samples per second
/// (0: none).
inline RunSettings run_settings(double duration, double rate, double rtol = 1e-10, double atol = 1e-12) {
  RunSettings s;
  s.duration = duration;
  s.rtol = rtol;
  s.atol = atol;
  s.output_rate = rate;
  return s;
}

}  // namespace swaybound::testing
