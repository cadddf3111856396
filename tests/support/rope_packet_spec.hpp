#pragma once
// An in-memory spec whose elastic rope goes slack and snatches (test data, not a design): a load
// resting on the ground under a slack rope, lifted by a drum fast enough that the rope goes slack
// again after lift-off (the tension swings by v sqrt(k m) > m g about m g) and is caught again.
#include <cmath>

#include "rope.hpp"

namespace swaybound::testing {

inline constexpr double kSnatchLoad = 1000;      ///< [kg]
inline constexpr double kSnatchStiffness = 1e6;  ///< fall at 20 m [N/m]
inline constexpr double kSnatchRope = 20;        ///< rope length [m]
inline constexpr double kSnatchRopeMass = 2;     ///< [kg]

/// With `hoist`, the drum hauls in at 0.6 m/s from a rope 5 cm slack; without, the load hangs
/// still (at rest under its static stretch).
inline Spec snatch_spec(bool hoist = true, double duration = 4) {
  RopeChain d;
  d.g = 9.81;
  const double L = kSnatchRope, m = kSnatchLoad, k = kSnatchStiffness;
  d.links = {{.m = kSnatchRopeMass,
              .L = L,
              .c = L / 2,
              .I = kSnatchRopeMass * L * L / 12,
              .ea = k * L,
              .c_axial = 0.02 * 2 * std::sqrt(k * m)},
             {.m = m, .L = 1.0, .c = 1.0, .I = 0}};
  d.duration = duration;
  d.rtol = 1e-8;
  d.atol = 1e-10;
  Spec s = d.spec();
  s.name = "snatching rope (invented data)";
  s.cases.initial[0].name = "start";
  s.cases.output_rate = 100;
  if (hoist) {
    s.scenarios[0].hoist = HoistSpec{0, 0.6, {}, {}};
    s.scenarios[0].lift_off = LiftOffSpec{0.05, {}};
  }
  const auto limit = [&](LimitKind kind, const char* key, double value, int link) {
    LimitSpec l;
    l.kind = kind;
    l.key = key;
    l.value = value;
    l.link = link;
    s.limits.push_back(l);
  };
  limit(LimitKind::rope_tension_max, "rope_tension_max", 60e3, 0);
  limit(LimitKind::line_pull, "line_pull", 60e3, 0);
  limit(LimitKind::slack_time, "slack_time", 1.0, 0);
  limit(LimitKind::snatch_load, "snatch_load", 50e3, 0);
  limit(LimitKind::pivot_load, "pivot_load", 80e3, -1);
  return s;
}

}  // namespace swaybound::testing
