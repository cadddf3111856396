#include "swaybound/chaos/indicators.hpp"

#include <algorithm>
#include <cmath>

#include "swaybound/cases/runner.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound {

namespace {

constexpr int kOnsetScanPoints = 16;

/// FTLE of one start under scenario 0 (NaN when the run fails).
double ftle_of(const Model& model, Workspace& ws, const InitialState& start, const FtleSettings& ftle) {
  const FtleResult r = chain_ftle(model, ws, 0, start, ftle);
  return r.status == FtleStatus::ok ? r.exponent : std::nan("");
}

/// The angle between two unit vectors [rad], accurate for small and large angles.
double angle_between(const double* a, const double* b) {
  const double cx = a[1] * b[2] - a[2] * b[1], cy = a[2] * b[0] - a[0] * b[2], cz = a[0] * b[1] - a[1] * b[0];
  return std::atan2(std::sqrt(cx * cx + cy * cy + cz * cz), a[0] * b[0] + a[1] * b[1] + a[2] * b[2]);
}

/// Least-squares slope b and intercept a of y = a + b x over the finite points.
bool fit_line(const std::vector<double>& x, const std::vector<double>& y, double& a, double& b) {
  double sx = 0, sy = 0, sxx = 0, sxy = 0;
  int n = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    if (!std::isfinite(y[i])) continue;
    sx += x[i];
    sy += y[i];
    sxx += x[i] * x[i];
    sxy += x[i] * y[i];
    ++n;
  }
  const double den = n * sxx - sx * sx;
  if (n < 2 || den == 0) return false;
  b = (n * sxy - sx * sy) / den;
  a = (sy - b * sx) / n;
  return true;
}

}  // namespace

std::vector<double> ftle_of_starts(const Model& model, const std::vector<InitialState>& starts,
                                   const FtleSettings& ftle, int jobs) {
  std::vector<double> out;
  out.reserve(starts.size());
  RunnerOptions ro;
  ro.jobs = jobs;
  run_ordered<double>(
      static_cast<long>(starts.size()), ro, [&] { return Workspace(model); },
      [&](long i, Workspace& ws) { return ftle_of(model, ws, starts[static_cast<std::size_t>(i)], ftle); },
      [&](double&& f) { out.push_back(f); });
  return out;
}

LadderResult perturbation_ladder(const Model& model, const Spec& spec, const CaseSpace& space,
                                 const RunSettings& run, const FtleSettings& ftle, int set_index) {
  const InitialSetSpec& set = spec.cases.initial[static_cast<std::size_t>(set_index)];
  LadderResult r;
  r.set = set.name;
  r.scenario = spec.scenarios.front().name;
  r.link = set.perturb_link;
  RunSettings rec = run;
  rec.output_rate = spec.cases.output_rate;
  r.sample_interval = 1.0 / rec.output_rate;
  const int n = model.n;
  // What is compared per link: its angle (planar), or its direction e_i (spatial: the separation is
  // then the angle between the two directions).
  const int per_link = model.spatial ? 3 : 1;
  // Record every start of the set under the first scenario.
  long first = 0;
  for (int s = 0; s < set_index; ++s) first += initial_set_size(spec.cases.initial[static_cast<std::size_t>(s)]);
  std::vector<std::vector<double>> angles;  // per start: samples x links
  std::vector<InitialState> starts;
  Workspace ws(model);
  for (long k = 0; k < initial_set_size(set); ++k) {
    const CaseDef def = space.at(first + k);
    starts.push_back(def.initial);
    std::vector<double> series;
    const Observer on_sample = [&](const StepView& v) { series.insert(series.end(), v.x, v.x + n * per_link); };
    simulate_case(model, ws, 0, def.initial, rec, {}, on_sample);
    angles.push_back(std::move(series));
  }
  const auto& base = angles.front();
  for (std::size_t k = 1; k < angles.size(); ++k) {
    const auto link = static_cast<std::size_t>(set.perturb_link);
    r.delta.push_back(std::fabs(starts[k].theta[link] - starts[0].theta[link]));
    std::vector<double> sep;
    double when = std::nan("");
    const auto stride = static_cast<std::size_t>(n * per_link);
    const std::size_t samples = std::min(base.size(), angles[k].size()) / stride;
    for (std::size_t j = 0; j < samples; ++j) {
      double d = 0;
      for (int i = 0; i < n; ++i)
        d = std::max(d, per_link == 1 ? std::fabs(angles[k][j * stride + i] - base[j * stride + i])
                                      : angle_between(&angles[k][j * stride + 3 * i], &base[j * stride + 3 * i]));
      sep.push_back(d);
      if (std::isnan(when) && d > spec.chaos.tolerance) when = static_cast<double>(j) * r.sample_interval;
    }
    r.divergence_time.push_back(when);
    r.separation.push_back(std::move(sep));
  }
  r.lambda = ftle_of(model, ws, starts.front(), ftle);
  std::vector<double> x;
  for (double d : r.delta) x.push_back(std::log(1.0 / d));
  double a, b;
  if (fit_line(x, r.divergence_time, a, b)) {
    r.slope = b;
    r.horizon_measured = a + b * std::log(1.0 / spec.chaos.uncertainty);
  }
  if (r.lambda > 0) r.horizon_predicted = std::log(spec.chaos.tolerance / spec.chaos.uncertainty) / r.lambda;
  return r;
}

OnsetResult onset_search(const Model& model, const Spec& spec, const FtleSettings& ftle, int jobs) {
  OnsetResult r;
  r.computed = true;
  r.scenario = spec.scenarios.front().name;
  const auto start_at = [&](double amplitude) {
    InitialState s;
    for (double d : spec.chaos.onset_direction) s.theta.push_back(amplitude * d);
    return s;
  };
  std::vector<InitialState> starts;
  for (int k = 1; k <= kOnsetScanPoints; ++k)
    starts.push_back(start_at(spec.chaos.onset_max * k / kOnsetScanPoints));
  const std::vector<double> scan = ftle_of_starts(model, starts, ftle, jobs);
  double below = 0;
  for (int k = 0; k < kOnsetScanPoints; ++k) {
    const double a = spec.chaos.onset_max * (k + 1) / kOnsetScanPoints;
    r.scan_amplitude.push_back(a);
    r.scan_ftle.push_back(scan[static_cast<std::size_t>(k)]);
    // A failed run counts as chaotic: it cannot show the motion is predictable.
    if (!(scan[static_cast<std::size_t>(k)] <= spec.chaos.threshold)) {
      r.found = true;
      double above = a;
      Workspace ws(model);
      while (above - below > spec.chaos.onset_resolution) {
        const double mid = 0.5 * (above + below);
        const double f = ftle_of(model, ws, start_at(mid), ftle);
        r.scan_amplitude.push_back(mid);
        r.scan_ftle.push_back(f);
        (f <= spec.chaos.threshold ? below : above) = mid;
      }
      r.amplitude = above;
      r.bracket_low = below;
      return r;
    }
    below = a;
  }
  r.amplitude = spec.chaos.onset_max;
  r.bracket_low = spec.chaos.onset_max;
  return r;
}

ChaosMap ftle_map(const Model& model, const Spec& spec, const FtleSettings& ftle, int jobs) {
  ChaosMap m;
  m.computed = true;
  const auto axis = [](const Range& r) {
    std::vector<double> v;
    for (int k = 0; k < r.count; ++k) v.push_back(r.count == 1 ? 0.5 * (r.lo + r.hi) : r.lo + (r.hi - r.lo) * k / (r.count - 1));
    return v;
  };
  m.x = axis(spec.chaos.map_x);
  m.y = axis(spec.chaos.map_y);
  std::vector<InitialState> starts;
  for (double y : m.y)
    for (double x : m.x) {
      InitialState s;
      s.theta = {x, y};
      starts.push_back(s);
    }
  m.ftle = ftle_of_starts(model, starts, ftle, jobs);
  return m;
}

}  // namespace swaybound
