#include "swaybound/checks/check_run.hpp"

#include <algorithm>
#include <chrono>
#include <initializer_list>
#include <cmath>
#include <map>

#include <fmt/format.h>

#include "rope_recording.hpp"
#include "swaybound/checks/case_farm.hpp"
#include "swaybound/checks/start_transient.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound {

namespace {

constexpr std::size_t kFailedListed = 100;

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

/// Every how many output samples a recording keeps one (kMaxRecordedPoints).
long record_stride(const RunSettings& run) {
  const long samples = samples_per_case(run.duration, run.output_rate);
  return std::max(1L, (samples + kMaxRecordedPoints - 1) / kMaxRecordedPoints);
}

bool has_limit(const Spec& spec, LimitKind kind) {
  return std::any_of(spec.limits.begin(), spec.limits.end(), [&](const LimitSpec& l) { return l.kind == kind; });
}

/// A spatial chain's sample of a recording: sway in and across the boom frame's plane, the hook and
/// the top pivot in plan, the support force across the travel and in the boom frame, every pivot's
/// load by component, the base's motion and the wind across the travel.
void sample_spatial(const Model& model, const StepView& v, RecordedCase& rc) {
  const Workspace& ws = *v.ws;
  const BoomFrame frame = boom_frame(*v.phase, ws);
  double hook[3] = {0, 0, 0};
  for (int i = 0; i < model.n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    rc.in_plane[k].push_back(in_plane_sway(model, v.x, i, frame));
    rc.out_of_plane[k].push_back(out_of_plane_sway(model, v.x, i, frame));
    const LoadComponents load = pivot_load_components(model, ws, i, frame);
    rc.load_x[k].push_back(load.x);
    rc.load_z[k].push_back(load.z);
    rc.load_vertical[k].push_back(load.vertical);
    rc.load_radial[k].push_back(load.radial);
    rc.load_tangential[k].push_back(load.tangential);
    for (std::size_t c = 0; c < 3; ++c) hook[c] += ws.len[k] * ws.dir[3 * k + c];
  }
  rc.pivot_x.push_back(ws.base_x);
  rc.pivot_z.push_back(ws.base_z);
  rc.hook_x.push_back(ws.base_x + hook[0]);
  rc.hook_z.push_back(ws.base_z + hook[2]);
  rc.hook_radial.push_back(hook[0] * frame.radial_x + hook[2] * frame.radial_z);
  rc.hook_tangential.push_back(hook[0] * frame.tangential_x + hook[2] * frame.tangential_z);
  rc.support_z.push_back(-rc.load_z[0].back());
  rc.support_radial.push_back(-rc.load_radial[0].back());
  rc.support_tangential.push_back(-rc.load_tangential[0].back());
  rc.base_vz.push_back(ws.base_vz);
  rc.base_az.push_back(ws.base_az);
  for (std::size_t w = 0; w < model.wind.size(); ++w) rc.wind_z[w].push_back(wind_load_force_z(model, ws, *v.phase, w));
}

/// The distinct cases governing a per-case check, ascending.
std::vector<long> governing_cases(const std::vector<CheckResult>& checks) {
  std::vector<long> governing;
  for (const auto& c : checks)
    if (c.per_case && c.governing >= 0) governing.push_back(c.governing);
  std::sort(governing.begin(), governing.end());
  governing.erase(std::unique(governing.begin(), governing.end()), governing.end());
  return governing;
}

}  // namespace

CheckPlan plan_check(const Spec& spec) {
  CheckPlan plan{&spec, build_model(spec), CaseSpace(spec), RunSettings::from_spec(spec), {}, {}, {}, {}, {}, {}};
  plan.streaming = plan.run;
  plan.streaming.output_rate = 0;
  plan.case_options.ftle = has_limit(spec, LimitKind::ftle_max);
  plan.case_options.ftle_settings = ftle_settings(spec, plan.run);
  plan.modal_limit = has_limit(spec, LimitKind::modal_damping_min);
  plan.onset = has_limit(spec, LimitKind::onset_margin) || spec.chaos.given;
  plan.map = spec.chaos.map;
  for (std::size_t s = 0; s < spec.cases.initial.size(); ++s)
    if (spec.cases.initial[s].kind == InitialKind::ladder) plan.ladder_sets.push_back(static_cast<int>(s));
  return plan;
}

CaseList CaseList::all(long count) {
  CaseList list;
  list.count_ = count;
  return list;
}

CaseList CaseList::of(std::vector<long> indices) {
  CaseList list;
  list.listed_ = true;
  list.indices_ = std::move(indices);
  return list;
}

void CaseTotals::offer(const CaseMetrics& m) {
  ++cases;
  total_steps += m.steps;
  if (m.status == RunStatus::time_budget) ++time_budget_total;
  if (!m.ok()) {
    if (failed.size() < kFailedListed) failed.push_back({m.id, std::string(status_name(m.status)), m.reason});
    ++failed_total;
  }
  if (m.ok() && (max_audit_case.empty() || m.audit_relative > max_audit_relative)) {
    max_audit_relative = m.audit_relative;
    max_audit_case = m.id;
  }
  if (m.ok() && !std::isnan(m.boom_audit_relative) &&
      (max_boom_audit_case.empty() || m.boom_audit_relative > max_boom_audit_relative)) {
    max_boom_audit_relative = m.boom_audit_relative;
    max_boom_audit_case = m.id;
  }
  const bool slack = std::any_of(m.slack_count.begin(), m.slack_count.end(), [](long c) { return c > 0; });
  if (slack && slack_cases++ == 0) first_slack_case = m.id;
  if (!std::isnan(m.ftle) && (std::isnan(max_ftle) || m.ftle > max_ftle)) {
    max_ftle = m.ftle;
    max_ftle_case = m.id;
  }
}

void stream_cases(const CheckPlan& plan, const CaseList& cases, const RunnerOptions& runner, CheckSet& checks,
                  CaseTotals& totals, const std::function<void(const CaseMetrics&)>& on_case) {
  const Spec& spec = *plan.spec;
  const std::function<void(CaseMetrics&&)> consume = [&](CaseMetrics&& m) {
    checks.offer(m);
    totals.offer(m);
    if (on_case) on_case(m);
  };
  if (CaseFarm* farm = case_farm(); farm && farm->stream(plan, cases, runner, consume)) return;
  run_ordered<CaseMetrics>(
      cases.size(), runner, [&] { return Workspace(plan.model); },
      [&](long k, Workspace& ws) {
        return run_case(plan.model, spec, ws, plan.space.at(cases[k]), plan.streaming, plan.case_options);
      },
      consume);
}


void set_modal_checks(const Spec& spec, const ModalResult& modes, CheckSet& checks) {
  for (std::size_t i = 0; i < spec.limits.size(); ++i)
    if (spec.limits[i].kind == LimitKind::modal_damping_min)
      checks.set_global(static_cast<int>(i), modes.least_damping_ratio, "modal analysis");
}

void set_onset_checks(const Spec& spec, const OnsetResult& onset, double envelope, CheckSet& checks) {
  for (std::size_t i = 0; i < spec.limits.size(); ++i)
    if (spec.limits[i].kind == LimitKind::onset_margin) {
      const double ratio = envelope > 0 ? onset.amplitude / envelope : INFINITY;
      checks.set_global(static_cast<int>(i), ratio,
                        onset.found ? "onset search" : "onset search (no onset up to chaos.onset.max)");
    }
}

void run_global_checks(const CheckPlan& plan, int jobs, CheckSet& checks, ModalResult& modes, ChaosSummary& chaos) {
  const Spec& spec = *plan.spec;
  modes = modal_analysis(plan.model);
  set_modal_checks(spec, modes, checks);
  const FtleSettings& ftle = plan.case_options.ftle_settings;
  for (int set : plan.ladder_sets)
    chaos.ladders.push_back(perturbation_ladder(plan.model, spec, plan.space, plan.run, ftle, set));
  if (plan.onset) chaos.onset = onset_search(plan.model, spec, ftle, jobs);
  if (plan.map) chaos.map = ftle_map(plan.model, spec, ftle, jobs);
  if (has_limit(spec, LimitKind::onset_margin))
    set_onset_checks(spec, chaos.onset, plan.space.envelope_amplitude(), checks);
}

long audit_governing(const CheckPlan& plan, int jobs, std::vector<CheckResult>& checks) {
  const Spec& spec = *plan.spec;
  RunSettings tight = plan.streaming;
  tight.rtol = std::max(plan.run.rtol / 100, 1e-15);
  tight.atol = std::max(plan.run.atol / 100, 1e-18);
  const std::vector<long> governing = governing_cases(checks);
  std::map<long, CaseMetrics> rerun;
  long time_budget = 0;
  RunnerOptions runner;
  runner.jobs = jobs;
  run_ordered<CaseMetrics>(
      static_cast<long>(governing.size()), runner, [&] { return Workspace(plan.model); },
      [&](long k, Workspace& ws) {
        return run_case(plan.model, spec, ws, plan.space.at(governing[static_cast<std::size_t>(k)]), tight,
                        plan.case_options);
      },
      [&](CaseMetrics&& m) {
        if (m.status == RunStatus::time_budget) ++time_budget;
        rerun.emplace(m.index, std::move(m));
      });
  for (auto& c : checks) {
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
  return time_budget;
}

std::vector<RecordedCase> record_governing(const CheckPlan& plan, const std::vector<CheckResult>& checks) {
  const Spec& spec = *plan.spec;
  const Model& model = plan.model;
  std::vector<RecordedCase> recorded;
  const RunSettings& recording = plan.run;
  Workspace ws(model);
  const int n = model.n;
  for (long index : governing_cases(checks)) {
    const CaseDef def = plan.space.at(index);
    RecordedCase rc;
    rc.index = index;
    rc.id = def.id;
    rc.theta.assign(static_cast<std::size_t>(n), {});
    rc.load.assign(static_cast<std::size_t>(n), {});
    rc.tension.assign(static_cast<std::size_t>(n), {});
    rc.wind_x.assign(model.wind.size(), {});
    rc.stride = record_stride(recording);
    const bool spatial = model.spatial;
    if (spatial) {
      rc.slewing = spec.scenarios[static_cast<std::size_t>(def.scenario)].slew.has_value();
      rc.in_plane.assign(static_cast<std::size_t>(n), {});
      rc.out_of_plane.assign(static_cast<std::size_t>(n), {});
      for (auto* series : {&rc.load_x, &rc.load_z, &rc.load_vertical, &rc.load_radial, &rc.load_tangential})
        series->assign(static_cast<std::size_t>(n), {});
      rc.wind_z.assign(model.wind.size(), {});
    }
    checks_detail::RopeRecorder ropes(model, def.scenario);
    ropes.start(rc);
    long sample = 0;
    const Observer on_sample = [&](const StepView& v) {
      if (sample++ % rc.stride != 0) return;
      rc.t.push_back(v.t);
      ropes.sample(v, rc);
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
      if (spatial) sample_spatial(model, v, rc);
      for (int i = 0; i < n; ++i) {
        const auto k = static_cast<std::size_t>(i);
        double top, bottom;
        link_tension(model, *v.ws, i, top, bottom);
        // The angle a plot shows: theta (planar), the cone angle from the vertical (spatial).
        rc.theta[k].push_back(model.spatial ? swing_angle(model, v.x, i) : v.x[i]);
        rc.load[k].push_back(v.ws->reaction[k]);
        rc.tension[k].push_back(i + 1 < n ? std::min(top, bottom) : top);
      }
    };
    // One finder for the case's extremes and the ropes' snatch peaks (its probes re-evaluate the
    // workspace, so the ropes read their slack flags from each view first).
    CaseExtremes extremes(model, spec, ropes.count(),
                          [&ropes](const StepView& v, double* q) { ropes.quantities(v, q); }, spatial);
    const Observer on_step = [&](const StepView& v) {
      ropes.step(v);
      extremes.observe(v);
    };
    const RunOutcome out = simulate_case(model, ws, def.scenario, def.initial, recording, on_step, on_sample);
    CaseMetrics located;
    extremes.write(located);
    rc.peak_angle = located.peak_angle;
    rc.peak_load = located.peak_load;
    rc.min_tension = located.min_tension;
    rc.peak_in_plane = located.peak_in_plane;
    rc.peak_out_of_plane = located.peak_out_of_plane;
    rc.peak_load_x = located.peak_load_x;
    rc.peak_load_z = located.peak_load_z;
    rc.peak_load_vertical = located.peak_load_vertical;
    rc.peak_load_radial = located.peak_load_radial;
    rc.peak_load_tangential = located.peak_load_tangential;
    rc.switches = out.switches;
    rc.t_end = out.t_reached;
    rc.status = std::string(status_name(out.status));
    for (const ModeEvent& e : out.events)
      if (e.kind == ModeEventKind::lift_off && std::isnan(rc.lift_off_time)) rc.lift_off_time = e.time;
    ropes.finish(extremes, located, out.t_reached, rc);
    recorded.push_back(std::move(rc));
  }
  return recorded;
}

CheckReport run_check(const Spec& spec, const CheckOptions& options) {
  CheckReport report;
  report.spec_file = spec.source_file;
  const CheckPlan plan = plan_check(spec);
  report.case_count = plan.space.size();

  const auto cases_start = std::chrono::steady_clock::now();
  CheckSet checks(spec);
  CaseTotals totals;
  RunnerOptions runner;
  runner.jobs = options.jobs;
  runner.progress = options.progress;
  const bool search = options.search && spec.cases.search.enabled;
  WorstStarts starts(spec, spec.cases.search.starts);
  ShapingCases shaping(spec);
  ConvergenceTracker convergence(spec, plan.space.starts());
  const std::function<void(const CaseMetrics&)> on_case = [&](const CaseMetrics& m) {
    if (search) starts.offer(m);
    shaping.offer(m);
    convergence.offer(m);
    if (options.on_case) options.on_case(m);
  };
  stream_cases(plan, CaseList::all(plan.space.size()), runner, checks, totals, on_case);
  report.convergence = convergence.rows();
  report.failed = std::move(totals.failed);
  report.failed_total = totals.failed_total;
  report.time_budget_total = totals.time_budget_total;
  report.max_audit_relative = totals.max_audit_relative;
  report.max_audit_case = totals.max_audit_case;
  report.max_boom_audit_relative = totals.max_boom_audit_relative;
  report.max_boom_audit_case = totals.max_boom_audit_case;
  report.total_steps = totals.total_steps;
  report.slack_cases = totals.slack_cases;
  report.first_slack_case = totals.first_slack_case;
  report.chaos.per_case_ftle = plan.case_options.ftle;
  report.chaos.horizon = spec.chaos.horizon;
  report.chaos.envelope_amplitude = plan.space.envelope_amplitude();
  report.chaos.max_ftle = totals.max_ftle;
  report.chaos.max_ftle_case = totals.max_ftle_case;
  report.seconds_cases = seconds_since(cases_start);

  const auto chaos_start = std::chrono::steady_clock::now();
  // The stages after the cases run in this process alone; a farm may lend it the threads of
  // processes that wait meanwhile (the ranks that share its node).
  const CaseFarm* farm = case_farm();
  const int stage_jobs = farm ? farm->stage_jobs(options.jobs) : options.jobs;
  run_global_checks(plan, stage_jobs > 0 ? stage_jobs : default_jobs(), checks, report.modes, report.chaos);
  checks.finish();
  flag_start_transients(spec, plan.space, report.modes, checks.results());
  report.seconds_chaos = seconds_since(chaos_start);

  if (search) {
    const auto search_start = std::chrono::steady_clock::now();
    report.search_budget = {spec.cases.search.evaluations, spec.cases.search.starts};
    report.search = options.search(plan, starts, checks.results(), report.search_budget, stage_jobs);
    report.searched = true;
    apply_search(report.search, checks.results());
    report.seconds_search = seconds_since(search_start);
  }

  const auto audit_start = std::chrono::steady_clock::now();
  if (options.audit) report.time_budget_total += audit_governing(plan, stage_jobs, checks.results());
  if (options.audit && report.searched) report.time_budget_total += audit_search(plan, stage_jobs, report.search);
  if (options.record) report.recorded = record_governing(plan, checks.results());
  if (options.record) report.shaping = compare_shaping(plan, shaping);
  report.seconds_audit = seconds_since(audit_start);
  report.checks = checks.results();
  // A case that failed to run fails the check run even when no per-case limit touches it.
  report.pass = checks.all_pass() && report.failed_total == 0;
  return report;
}

}  // namespace swaybound
