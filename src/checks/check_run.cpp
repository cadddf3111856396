#include "swaybound/checks/check_run.hpp"

#include <algorithm>
#include <chrono>
#include <filesystem>
#include <cmath>
#include <map>

#include <fmt/format.h>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/chaos/ftle.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound {

namespace {

constexpr std::size_t kFailedListed = 100;

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}
constexpr int kOnsetScanPoints = 16;

/// FTLE of one start under scenario 0 (NaN when the run fails).
double ftle_of(const Model& model, Workspace& ws, const Spec& spec, const RunSettings& run, const InitialState& start,
               int scenario = 0) {
  const FtleResult r = chain_ftle(model, ws, scenario, start, ftle_settings(spec, run));
  return r.status == FtleStatus::ok ? r.exponent : std::nan("");
}

/// FTLE of many starts in parallel, in order.
std::vector<double> ftle_batch(const Model& model, const Spec& spec, const RunSettings& run, int jobs,
                               const std::vector<InitialState>& starts) {
  std::vector<double> out;
  RunnerOptions ro;
  ro.jobs = jobs;
  run_parallel(
      model, static_cast<long>(starts.size()), ro,
      [&](long i, Workspace& ws) {
        CaseMetrics m;
        m.index = i;
        m.ftle = ftle_of(model, ws, spec, run, starts[static_cast<std::size_t>(i)]);
        return m;
      },
      [&](CaseMetrics&& m) { out.push_back(m.ftle); });
  return out;
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

/// Every how many output samples a recording keeps one (kMaxRecordedPoints).
long record_stride(const RunSettings& run) {
  const long samples = samples_per_case(run.duration, run.output_rate);
  return std::max(1L, (samples + kMaxRecordedPoints - 1) / kMaxRecordedPoints);
}

LadderResult ladder(const Model& model, const Spec& spec, const CaseSpace& space, const RunSettings& run, int set_index) {
  const InitialSetSpec& set = spec.cases.initial[static_cast<std::size_t>(set_index)];
  LadderResult r;
  r.set = set.name;
  r.scenario = spec.scenarios.front().name;
  r.link = set.perturb_link;
  RunSettings rec = run;
  rec.output_rate = spec.cases.output_rate;
  r.sample_interval = 1.0 / rec.output_rate;
  const int n = model.n;
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
    const Observer on_sample = [&](const StepView& v) { series.insert(series.end(), v.x, v.x + n); };
    simulate_case(model, ws, 0, def.initial, rec, {}, on_sample);
    angles.push_back(std::move(series));
  }
  const auto& base = angles.front();
  for (std::size_t k = 1; k < angles.size(); ++k) {
    const auto link = static_cast<std::size_t>(set.perturb_link);
    r.delta.push_back(std::fabs(starts[k].theta[link] - starts[0].theta[link]));
    std::vector<double> sep;
    double when = std::nan("");
    const std::size_t samples = std::min(base.size(), angles[k].size()) / static_cast<std::size_t>(n);
    for (std::size_t j = 0; j < samples; ++j) {
      double d = 0;
      for (int i = 0; i < n; ++i) d = std::max(d, std::fabs(angles[k][j * n + i] - base[j * n + i]));
      sep.push_back(d);
      if (std::isnan(when) && d > spec.chaos.tolerance) when = static_cast<double>(j) * r.sample_interval;
    }
    r.divergence_time.push_back(when);
    r.separation.push_back(std::move(sep));
  }
  r.lambda = ftle_of(model, ws, spec, run, starts.front());
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

OnsetResult onset(const Model& model, const Spec& spec, const RunSettings& run, int jobs) {
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
  const std::vector<double> scan = ftle_batch(model, spec, run, jobs, starts);
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
        const double f = ftle_of(model, ws, spec, run, start_at(mid));
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

ChaosMap chaos_map(const Model& model, const Spec& spec, const RunSettings& run, int jobs) {
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
  m.ftle = ftle_batch(model, spec, run, jobs, starts);
  return m;
}

}  // namespace

CheckReport run_check(const Spec& spec, const CheckOptions& options) {
  CheckReport report;
  report.spec_file = spec.source_file;
  // The spec's own bytes when it came from a file; its normalised form otherwise (a sized spec).
  std::error_code exists_error;
  report.spec_sha256 = !spec.source_file.empty() && std::filesystem::is_regular_file(spec.source_file, exists_error)
                           ? sha256_file(spec.source_file)
                           : sha256_hex(normalised_yaml(spec));
  const Model model = build_model(spec);
  const CaseSpace space(spec);
  report.case_count = space.size();
  const RunSettings run = RunSettings::from_spec(spec);

  bool has_ftle_limit = false, has_onset_limit = false;
  for (const auto& l : spec.limits) {
    has_ftle_limit |= l.kind == LimitKind::ftle_max;
    has_onset_limit |= l.kind == LimitKind::onset_margin;
  }
  CaseOptions case_options;
  case_options.ftle = has_ftle_limit;
  case_options.ftle_settings = ftle_settings(spec, run);

  const auto cases_start = std::chrono::steady_clock::now();
  RunSettings streaming = run;
  streaming.output_rate = 0;
  CheckSet checks(spec);
  RunnerOptions ro;
  ro.jobs = options.jobs;
  ro.progress = options.progress;
  report.chaos.per_case_ftle = has_ftle_limit;
  report.chaos.horizon = spec.chaos.horizon;
  report.chaos.envelope_amplitude = space.envelope_amplitude();
  run_parallel(
      model, space.size(), ro,
      [&](long i, Workspace& ws) { return run_case(model, spec, ws, space.at(i), streaming, case_options); },
      [&](CaseMetrics&& m) {
        checks.offer(m);
        report.total_steps += m.steps;
        if (m.status == RunStatus::time_budget) ++report.time_budget_total;
        if (!m.ok()) {
          if (report.failed.size() < kFailedListed)
            report.failed.push_back({m.id, std::string(status_name(m.status)), m.reason});
          ++report.failed_total;
        }
        if (m.ok() && (report.max_audit_case.empty() || m.audit_relative > report.max_audit_relative)) {
          report.max_audit_relative = m.audit_relative;
          report.max_audit_case = m.id;
        }
        if (!std::isnan(m.ftle) && (std::isnan(report.chaos.max_ftle) || m.ftle > report.chaos.max_ftle)) {
          report.chaos.max_ftle = m.ftle;
          report.chaos.max_ftle_case = m.id;
        }
        if (options.on_case) options.on_case(m);
      });

  report.seconds_cases = seconds_since(cases_start);
  const auto chaos_start = std::chrono::steady_clock::now();
  report.modes = modal_analysis(model);
  for (std::size_t i = 0; i < spec.limits.size(); ++i) {
    const LimitSpec& l = spec.limits[i];
    if (l.kind == LimitKind::modal_damping_min)
      checks.set_global(static_cast<int>(i), report.modes.least_damping_ratio, "modal analysis");
  }

  // Chaotic-onset indicators.
  const int jobs = options.jobs > 0 ? options.jobs : default_jobs();
  for (std::size_t s = 0; s < spec.cases.initial.size(); ++s)
    if (spec.cases.initial[s].kind == InitialKind::ladder)
      report.chaos.ladders.push_back(ladder(model, spec, space, run, static_cast<int>(s)));
  if (has_onset_limit || spec.chaos.given) report.chaos.onset = onset(model, spec, run, jobs);
  if (spec.chaos.map) report.chaos.map = chaos_map(model, spec, run, jobs);
  for (std::size_t i = 0; i < spec.limits.size(); ++i)
    if (spec.limits[i].kind == LimitKind::onset_margin) {
      const double envelope = report.chaos.envelope_amplitude;
      const double ratio = envelope > 0 ? report.chaos.onset.amplitude / envelope : INFINITY;
      checks.set_global(static_cast<int>(i), ratio,
                        report.chaos.onset.found ? "onset search" : "onset search (no onset up to chaos.onset.max)");
    }
  checks.finish();
  report.seconds_chaos = seconds_since(chaos_start);

  // Accuracy audit: each governing case again at a 100x tighter tolerance, in parallel.
  const auto audit_start = std::chrono::steady_clock::now();
  if (options.audit) {
    RunSettings tight = streaming;
    tight.rtol = std::max(run.rtol / 100, 1e-15);
    tight.atol = std::max(run.atol / 100, 1e-18);
    std::vector<long> governing;
    for (const auto& c : checks.results())
      if (c.per_case && c.governing >= 0 && std::find(governing.begin(), governing.end(), c.governing) == governing.end())
        governing.push_back(c.governing);
    std::sort(governing.begin(), governing.end());
    std::map<long, CaseMetrics> rerun;
    RunnerOptions audit_runner;
    audit_runner.jobs = options.jobs;
    run_parallel(
        model, static_cast<long>(governing.size()), audit_runner,
        [&](long k, Workspace& ws) {
          return run_case(model, spec, ws, space.at(governing[static_cast<std::size_t>(k)]), tight, case_options);
        },
        [&](CaseMetrics&& m) {
          if (m.status == RunStatus::time_budget) ++report.time_budget_total;
          rerun.emplace(m.index, std::move(m));
        });
    for (auto& c : checks.results()) {
      if (!c.per_case || c.governing < 0) continue;
      const CaseMetrics& m = rerun.at(c.governing);
      int link;
      double time;
      int slot = 0;
      for (int i = 0; i < c.limit; ++i) slot += spec.limits[static_cast<std::size_t>(i)].kind == LimitKind::residual_sway;
      c.audited = true;
      c.audit_value = m.ok() ? limit_value_in_case(spec.limits[static_cast<std::size_t>(c.limit)], slot, m, link, time)
                             : std::nan("");
      c.audit_change = c.audit_value - c.worst;
      c.audit_warning = !(std::fabs(c.audit_change) <= std::fabs(c.margin));
    }
  }
  if (options.record) {
    std::vector<long> governing;
    for (const auto& c : checks.results())
      if (c.per_case && c.governing >= 0) governing.push_back(c.governing);
    std::sort(governing.begin(), governing.end());
    governing.erase(std::unique(governing.begin(), governing.end()), governing.end());
    RunSettings recording = run;
    Workspace ws(model);
    const int n = model.n;
    for (long index : governing) {
      const CaseDef def = space.at(index);
      RecordedCase rc;
      rc.index = index;
      rc.id = def.id;
      rc.theta.assign(static_cast<std::size_t>(n), {});
      rc.load.assign(static_cast<std::size_t>(n), {});
      rc.tension.assign(static_cast<std::size_t>(n), {});
      rc.wind_x.assign(model.wind.size(), {});
      rc.stride = record_stride(recording);
      long sample = 0;
      const Observer on_sample = [&](const StepView& v) {
        if (sample++ % rc.stride != 0) return;
        rc.t.push_back(v.t);
        rc.support_x.push_back(-v.ws->reaction_x[0]);
        rc.support_y.push_back(-v.ws->reaction_y[0]);
        rc.base_vx.push_back(v.ws->base_vx);
        rc.base_vy.push_back(v.ws->base_vy);
        rc.base_ax.push_back(v.ws->base_ax);
        rc.base_ay.push_back(v.ws->base_ay);
        for (std::size_t w = 0; w < model.wind.size(); ++w) {
          double fx, fy, vx, vy;
          wind_load_force(model, *v.ws, *v.phase, w, fx, fy, vx, vy);
          rc.wind_x[w].push_back(fx);
        }
        for (int i = 0; i < n; ++i) {
          const auto k = static_cast<std::size_t>(i);
          double top, bottom;
          link_tension(model, *v.ws, i, top, bottom);
          rc.theta[k].push_back(v.x[i]);
          rc.load[k].push_back(v.ws->reaction[k]);
          rc.tension[k].push_back(i + 1 < n ? std::min(top, bottom) : top);
        }
      };
      CaseExtremes extremes(model, spec);
      const Observer on_step = [&](const StepView& v) { extremes.observe(v); };
      simulate_case(model, ws, def.scenario, def.initial, recording, on_step, on_sample);
      CaseMetrics located;
      extremes.write(located);
      rc.peak_angle = located.peak_angle;
      rc.peak_load = located.peak_load;
      rc.min_tension = located.min_tension;
      report.recorded.push_back(std::move(rc));
    }
  }
  report.seconds_audit = seconds_since(audit_start);
  report.checks = checks.results();
  // A case that failed to run fails the check run even when no per-case limit touches it.
  report.pass = checks.all_pass() && report.failed_total == 0;
  return report;
}

}  // namespace swaybound
