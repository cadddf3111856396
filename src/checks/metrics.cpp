#include "swaybound/checks/metrics.hpp"

#include <algorithm>
#include <cmath>

#include "swaybound/chaos/ftle.hpp"

namespace swaybound {

namespace {
void offer_max(Extreme& e, double value, double t) {
  if (value > e.value) {
    e.value = value;
    e.time = t;
  }
}
}  // namespace

CaseMetrics run_case(const Model& model, const Spec& spec, Workspace& ws, const CaseDef& def,
                     const RunSettings& settings, const CaseOptions& options) {
  const int n = model.n;
  const auto nn = static_cast<std::size_t>(n);
  CaseMetrics m;
  m.index = def.index;
  m.id = def.id;
  m.scenario = def.scenario;
  m.set = def.set;
  m.initial = def.initial;
  m.peak_angle.resize(nn);
  m.peak_relative.resize(nn);
  m.peak_rate.resize(nn);
  m.peak_load.resize(nn);
  m.min_tension.assign(nn, Extreme{std::nan(""), 0});
  for (int i = 0; i < n; ++i)
    if (model.kind[static_cast<std::size_t>(i)] == LinkKind::rope) m.min_tension[static_cast<std::size_t>(i)].value = INFINITY;
  std::vector<const LimitSpec*> residual_limits;
  for (const auto& l : spec.limits)
    if (l.kind == LimitKind::residual_sway) residual_limits.push_back(&l);
  m.residual.assign(residual_limits.size(), 0.0);
  const double band = spec.cases.settling_band;
  double last_outside = 0;
  bool outside_now = false;

  const Observer on_step = [&](const StepView& v) {
    const double* x = v.x;
    bool outside = false;
    for (int i = 0; i < n; ++i) {
      const auto k = static_cast<std::size_t>(i);
      const double angle = std::fabs(x[i]);
      offer_max(m.peak_angle[k], angle, v.t);
      offer_max(m.peak_relative[k], std::fabs(x[i] - (i > 0 ? x[i - 1] : 0.0)), v.t);
      offer_max(m.peak_rate[k], std::fabs(x[n + i]), v.t);
      offer_max(m.peak_load[k], v.ws->reaction[k], v.t);
      if (model.kind[k] == LinkKind::rope) {
        double top, bottom;
        link_tension(model, *v.ws, i, top, bottom);
        const double low = i + 1 < n ? std::min(top, bottom) : top;
        if (low < m.min_tension[k].value) m.min_tension[k] = {low, v.t};
      }
      outside |= angle > band;
    }
    for (std::size_t r = 0; r < residual_limits.size(); ++r) {
      const LimitSpec& l = *residual_limits[r];
      if (v.t < l.after) continue;
      for (int i = 0; i < n; ++i)
        if (l.link < 0 || l.link == i) m.residual[r] = std::max(m.residual[r], std::fabs(x[i]));
    }
    if (outside) last_outside = v.t;
    outside_now = outside;
  };
  const RunOutcome out = simulate_case(model, ws, def.scenario, def.initial, settings, on_step);
  m.status = out.status;
  m.reason = out.reason;
  m.steps = out.steps;
  m.evaluations = out.evaluations;
  m.audit_relative = out.audit_scale > 0 ? out.max_audit_residual / out.audit_scale : out.max_audit_residual;
  m.settling_time = outside_now ? std::nan("") : last_outside;
  for (int i = 0; i < n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    m.dynamic_factor.push_back(m.peak_load[k].value / (model.gravity * model.mass_below[k]));
  }
  if (options.ftle && m.ok()) {
    FtleSettings fs;
    fs.horizon = options.ftle_horizon;
    fs.separation = options.ftle_separation;
    fs.renormalise = options.ftle_renormalise;
    fs.rtol = settings.rtol;
    fs.atol = settings.atol;
    fs.max_steps = settings.max_steps;
    const FtleResult f = chain_ftle(model, ws, def.scenario, def.initial, fs);
    if (f.status == FtleStatus::ok)
      m.ftle = f.exponent;
    else {
      m.status = RunStatus::non_finite;
      m.reason = "FTLE run failed: " + f.reason;
      m.ftle_note = f.reason;
    }
  }
  return m;
}

}  // namespace swaybound
