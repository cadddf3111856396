#pragma once
// Shared fixtures of the engine tests (dynamics, integrate, chaos, modal): chains with closed-form
// references written as inline YAML, building a model from it, running a case and keeping samples.
#include <string>

#include <fmt/format.h>
#include <vector>

#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::testing {

struct Sample {
  double t = 0;
  std::vector<double> x;         ///< state
  std::vector<double> reaction;  ///< |pivot reaction| per link [N]
  std::vector<double> tension;   ///< axial tension at each link's top [N]
  double energy = 0, audit = 0;  ///< [J]
};

struct Trace {
  RunOutcome outcome;
  std::vector<Sample> samples;
  double max_abs_energy_change = 0;  ///< max |E(t) - E(0)| over accepted steps [J]
};

/// A rope and hook load under a trolley braking from 1 m/s at 0.6667 m/s^2 for 1.5 s, released at rest.
inline const char* kBraking = R"(
swaybound: 1
name: braking trolley
links:
  - {name: rope, kind: rope, length: 5, mass: 30}
  - {name: load, length: 1, mass: 2000, com: 0.8, inertia: 100}
base: {scenarios: [{name: brake, initial_velocity: {x: 1}, accel: [{for: 1.5 s, x: -0.6667}]}]}
cases: {duration: 10 s, initial: [{single: {theta: [0]}}]}
)";

inline Model model_from_yaml(const std::string& yaml) { return build_model(load_spec_text(yaml, "inline.yaml")); }

/// Equal double pendulum: two point masses `mass` on massless links `length`, gravity `g`, plus
/// `extra` YAML (limits, base, ...).
inline std::string equal_double_yaml(double length, double mass, double g = 9.81, const std::string& extra = "") {
  return fmt::format(R"(
swaybound: 1
name: equal double pendulum
gravity: {0}
links:
  - {{name: upper, length: {1}, mass: {2}, com: {1}, inertia: 0}}
  - {{name: lower, length: {1}, mass: {2}, com: {1}, inertia: 0}}
cases: {{duration: 1 s, initial: [{{single: {{theta: [0.1 rad]}}}}]}}
{3}
)",
                     g, length, mass, extra);
}

/// One rigid link on a fixed pivot: length, mass, com [m from the pivot], inertia about the com,
/// and the pivot's YAML map (`{}` for a free pivot), under gravity `g`.
inline std::string single_link_yaml(double length, double mass, double com, double inertia, const std::string& pivot,
                                    double g = 9.81) {
  return fmt::format(R"(
swaybound: 1
name: single link
gravity: {}
links:
  - {{name: arm, length: {}, mass: {}, com: {}, inertia: {}, pivot: {}}}
cases: {{duration: 1 s, initial: [{{single: {{theta: [0.1 rad]}}}}]}}
)",
                     g, length, mass, com, inertia, pivot);
}

/// Runs one case, keeping samples at `output_rate` per second (dense output).
inline Trace run_trace(const Model& model, const InitialState& start, RunSettings settings, int scenario = 0) {
  Trace trace;
  Workspace ws(model);
  const int n = model.n;
  const Observer on_sample = [&](const StepView& v) {
    Sample s;
    s.t = v.t;
    s.x.assign(v.x, v.x + model.state_size());
    for (int i = 0; i < n; ++i) {
      double top, bottom;
      link_tension(model, *v.ws, i, top, bottom);
      s.reaction.push_back(v.ws->reaction[i]);
      s.tension.push_back(top);
    }
    s.energy = v.energy;
    s.audit = v.audit_residual;
    trace.samples.push_back(std::move(s));
  };
  double e0 = 0;
  bool first = true;
  const Observer on_step = [&](const StepView& v) {
    if (first) {
      e0 = v.energy;
      first = false;
    }
    trace.max_abs_energy_change = std::max(trace.max_abs_energy_change, std::fabs(v.energy - e0));
  };
  trace.outcome = simulate_case(model, ws, scenario, start, settings, on_step, on_sample);
  return trace;
}

inline RunSettings settings(double duration, double rtol, double atol, double output_rate) {
  RunSettings s;
  s.duration = duration;
  s.rtol = rtol;
  s.atol = atol;
  s.output_rate = output_rate;
  return s;
}

/// Times at which component `k` of the state crosses zero upwards (linear interpolation; at a
/// zero of an angle the curvature of a pendulum's motion vanishes, so this is third-order exact).
inline std::vector<double> upward_crossings(const Trace& trace, int k) {
  std::vector<double> out;
  for (std::size_t i = 1; i < trace.samples.size(); ++i) {
    const double a = trace.samples[i - 1].x[k], b = trace.samples[i].x[k];
    if (a < 0 && b >= 0) {
      const double ta = trace.samples[i - 1].t, tb = trace.samples[i].t;
      out.push_back(ta + (tb - ta) * (-a) / (b - a));
    }
  }
  return out;
}

/// Mean period from the first and last upward crossings of state component k.
inline double mean_period(const Trace& trace, int k) {
  const auto c = upward_crossings(trace, k);
  if (c.size() < 2) return 0;
  return (c.back() - c.front()) / static_cast<double>(c.size() - 1);
}

/// Values of state component `value` where component `rate` changes sign from + to - (peaks).
inline std::vector<double> peaks(const Trace& trace, int value, int rate) {
  std::vector<double> out;
  for (std::size_t i = 1; i < trace.samples.size(); ++i) {
    const double a = trace.samples[i - 1].x[rate], b = trace.samples[i].x[rate];
    if (a > 0 && b <= 0) {
      const double f = a / (a - b);
      out.push_back(trace.samples[i - 1].x[value] + f * (trace.samples[i].x[value] - trace.samples[i - 1].x[value]));
    }
  }
  return out;
}

}  // namespace swaybound::testing
