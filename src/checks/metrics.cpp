#include "swaybound/checks/metrics.hpp"

#include <algorithm>
#include <cmath>

#include "swaybound/chaos/ftle.hpp"
#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/dynamics/posture.hpp"

namespace swaybound {

namespace {
/// Index blocks of the quantities of CaseExtremes: per link angle, relative angle, rate, load,
/// negated top-end tension, negated bottom-end tension; then the chain's quantities (Chain);
/// then, on demand, the blocks of OnDemand per link; then one per residual_sway limit.
enum Block { kAngle, kRelative, kRate, kLoad, kTensionTop, kTensionBottom, kRopeForce, kSnatch, kBlocks };
/// Quantities of the whole chain, after the blocks: |horizontal force on the support|.
enum Chain { kSupportX, kChain };
/// On-demand blocks per link: |in-plane|, |out-of-plane| sway, |pivot load components|.
enum OnDemand { kInPlane, kOutOfPlane, kLoadX, kLoadZ, kLoadVertical, kLoadRadial, kLoadTangential, kOnDemand };

/// The window start of every quantity: 0, or a residual_sway limit's time; then `extra` zeros.
std::vector<double> residual_windows(const Model& model, const Spec& spec, bool on_demand, int extra = 0) {
  std::vector<double> from(static_cast<std::size_t>(kBlocks * model.n + kChain + (on_demand ? kOnDemand * model.n : 0)),
                           0.0);
  for (const auto& l : spec.limits)
    if (limit_kind(l.kind).options.after) from.push_back(l.after);
  from.resize(from.size() + static_cast<std::size_t>(extra), 0.0);
  return from;
}
}  // namespace

CaseExtremes::CaseExtremes(const Model& model, const Spec& spec, int extra,
                           ExtremeFinder::Quantities extra_quantities, bool on_demand)
    : model_(model),
      on_demand_(on_demand || needs_on_demand_metrics(spec)),
      first_extra_(static_cast<int>(residual_windows(model, spec, on_demand_).size())),
      extra_quantities_(extra > 0 ? std::move(extra_quantities) : ExtremeFinder::Quantities{}),
      finder_(static_cast<int>(residual_windows(model, spec, on_demand_, std::max(extra, 0)).size()),
              [this](const StepView& v, double* q) {
                const int n = model_.n;
                const double* x = v.x;
                for (int i = 0; i < n; ++i) {
                  const auto k = static_cast<std::size_t>(i);
                  q[kAngle * n + i] = swing_angle(model_, x, i);
                  q[kRelative * n + i] = relative_swing(model_, x, i);
                  q[kRate * n + i] = swing_rate(model_, x, i);
                  q[kLoad * n + i] = v.ws->reaction[k];
                  double top = 0, bottom = 0;
                  if (model_.kind[k] == LinkKind::rope) link_tension(model_, *v.ws, i, top, bottom);
                  q[kTensionTop * n + i] = -top;
                  q[kTensionBottom * n + i] = -bottom;
                  // The fall's tension: an elastic rope's law, an inextensible rope's top end.
                  const int r = model_.length_kind[k] == LengthKind::elastic ? model_.length_coordinate[k] - model_.length_start() : -1;
                  const double force = r >= 0 ? v.ws->rope_force[static_cast<std::size_t>(r)] : top;
                  q[kRopeForce * n + i] = model_.kind[k] == LinkKind::rope ? force : 0.0;
                  q[kSnatch * n + i] = r >= 0 && slack_count_[static_cast<std::size_t>(r)] > 0 ? force : 0.0;
                }
                // Horizontal: along x for a planar chain, in the x-z plane for a spatial one.
                q[kBlocks * n + kSupportX] = model_.spatial ? std::hypot(v.ws->reaction_x[0], v.ws->reaction_z[0])
                                                            : std::fabs(v.ws->reaction_x[0]);
                int next = kBlocks * n + kChain;
                if (on_demand_) {
                  const BoomFrame frame = boom_frame(*v.phase, *v.ws);
                  for (int i = 0; i < n; ++i) {
                    const LoadComponents load = pivot_load_components(model_, *v.ws, i, frame);
                    q[next + kInPlane * n + i] = std::fabs(in_plane_sway(model_, x, i, frame));
                    q[next + kOutOfPlane * n + i] = std::fabs(out_of_plane_sway(model_, x, i, frame));
                    q[next + kLoadX * n + i] = std::fabs(load.x);
                    q[next + kLoadZ * n + i] = std::fabs(load.z);
                    q[next + kLoadVertical * n + i] = std::fabs(load.vertical);
                    q[next + kLoadRadial * n + i] = std::fabs(load.radial);
                    q[next + kLoadTangential * n + i] = std::fabs(load.tangential);
                  }
                  next += kOnDemand * n;
                }
                for (std::size_t r = 0; r < residual_links_.size(); ++r) {
                  double worst = 0;
                  for (int i = 0; i < n; ++i)
                    if (residual_links_[r] < 0 || residual_links_[r] == i) worst = std::max(worst, swing_angle(model_, x, i));
                  q[next + static_cast<int>(r)] = worst;
                }
                if (extra_quantities_) extra_quantities_(v, q + first_extra_);
              },
              residual_windows(model, spec, on_demand_, std::max(extra, 0))) {
  for (const auto& l : spec.limits)
    if (limit_kind(l.kind).options.after) residual_links_.push_back(l.link);
  slack_time_.assign(model.elastic_links.size(), 0.0);
  slack_count_.assign(model.elastic_links.size(), 0);
  was_slack_.assign(model.elastic_links.size(), 0);
  was_taut_.assign(model.elastic_links.size(), 0);
}

void CaseExtremes::observe(const StepView& v) {
  // Slack intervals are whole segments (the driver switches a rope's branch at a segment start).
  // Slack counts once the rope has been taut: a rope that starts slack (a lift-off taking up its
  // slack) is being taken up, not going slack.
  for (std::size_t r = 0; r < slack_time_.size(); ++r) {
    const bool slack = v.ws->rope_slack[r] != 0;
    if (!slack) was_taut_[r] = 1;
    if (slack && was_slack_[r] && was_taut_[r]) slack_time_[r] += v.t - last_t_;
    if (slack && !was_slack_[r] && was_taut_[r]) ++slack_count_[r];
    was_slack_[r] = slack;
  }
  last_t_ = v.t;
  finder_.observe(v);
}

void CaseExtremes::write(CaseMetrics& m) const {
  const int n = model_.n;
  const auto nn = static_cast<std::size_t>(n);
  const auto peak = [&](int block, int i) { return finder_.max(block * n + i); };
  m.peak_angle.resize(nn);
  m.peak_relative.resize(nn);
  m.peak_rate.resize(nn);
  m.peak_load.resize(nn);
  m.min_tension.assign(nn, Extreme{std::nan(""), 0});
  m.min_tension_top.assign(nn, Extreme{std::nan(""), 0});
  m.min_tension_bottom.assign(nn, Extreme{std::nan(""), 0});
  for (int i = 0; i < n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    m.peak_angle[k] = peak(kAngle, i);
    m.peak_relative[k] = peak(kRelative, i);
    m.peak_rate[k] = peak(kRate, i);
    m.peak_load[k] = peak(kLoad, i);
    if (model_.kind[k] != LinkKind::rope) continue;
    // The lower end of the last link is free (tension 0 there): only the top end counts.
    const Extreme top = peak(kTensionTop, i), bottom = peak(kTensionBottom, i);
    m.min_tension_top[k] = {-top.value, top.time};
    if (i + 1 < n) m.min_tension_bottom[k] = {-bottom.value, bottom.time};
    m.min_tension[k] = i + 1 < n && bottom.value > top.value ? m.min_tension_bottom[k] : m.min_tension_top[k];
  }
  m.peak_rope_force.assign(nn, Extreme{std::nan(""), 0});
  m.parts_of_line.assign(nn, 1.0);
  m.slack_time.assign(nn, std::nan(""));
  m.slack_count.assign(nn, 0);
  m.snatch.assign(nn, Extreme{std::nan(""), 0});
  for (int i = 0; i < n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    m.parts_of_line[k] = model_.parts[k];
    if (model_.kind[k] == LinkKind::rope) m.peak_rope_force[k] = peak(kRopeForce, i);
    if (model_.length_kind[k] != LengthKind::elastic) continue;
    const auto r = static_cast<std::size_t>(model_.length_coordinate[k] - model_.length_start());
    m.slack_time[k] = slack_time_[r];
    m.slack_count[k] = slack_count_[r];
    m.snatch[k] = peak(kSnatch, i);
  }
  m.support_force_x = finder_.max(kBlocks * n + kSupportX);
  int next = kBlocks * n + kChain;
  if (on_demand_) {
    const auto block = [&](int b, std::vector<Extreme>& out) {
      out.resize(nn);
      for (int i = 0; i < n; ++i) out[static_cast<std::size_t>(i)] = finder_.max(next + b * n + i);
    };
    block(kInPlane, m.peak_in_plane);
    block(kOutOfPlane, m.peak_out_of_plane);
    block(kLoadX, m.peak_load_x);
    block(kLoadZ, m.peak_load_z);
    block(kLoadVertical, m.peak_load_vertical);
    block(kLoadRadial, m.peak_load_radial);
    block(kLoadTangential, m.peak_load_tangential);
    next += kOnDemand * n;
  }
  m.residual.assign(residual_links_.size(), 0.0);
  for (std::size_t r = 0; r < residual_links_.size(); ++r)
    m.residual[r] = std::max(0.0, finder_.max(next + static_cast<int>(r)).value);
}

FtleSettings ftle_settings(const Spec& spec, const RunSettings& run) {
  FtleSettings fs;
  fs.horizon = spec.chaos.horizon;
  fs.separation = spec.chaos.separation;
  fs.renormalise = spec.chaos.renormalise;
  fs.rate_weight = spec.chaos.rate_weight;
  fs.direction = spec.chaos.direction;
  fs.rtol = run.rtol;
  fs.atol = run.atol;
  fs.max_steps = run.max_steps;
  fs.max_seconds = run.max_seconds;
  return fs;
}

CaseMetrics run_case(const Model& model, const Spec& spec, Workspace& ws, const CaseDef& def,
                     const RunSettings& settings, const CaseOptions& options) {
  const int n = model.n;
  CaseMetrics m;
  m.index = def.index;
  m.id = def.id;
  m.scenario = def.scenario;
  m.set = def.set;
  m.initial = def.initial;
  const double band = spec.cases.settling_band;
  double last_outside = 0;
  bool outside_now = false;
  CaseExtremes extremes(model, spec);

  const Observer on_step = [&](const StepView& v) {
    bool outside = false;
    for (int i = 0; i < n; ++i) outside |= swing_angle(model, v.x, i) > band;
    if (outside) last_outside = v.t;
    outside_now = outside;
    extremes.observe(v);
  };
  const RunOutcome out = simulate_case(model, ws, def.scenario, def.initial, settings, on_step);
  m.status = out.status;
  m.reason = out.reason;
  m.steps = out.steps;
  m.evaluations = out.evaluations;
  m.audit_relative = out.audit_scale > 0 ? out.max_audit_residual / out.audit_scale : out.max_audit_residual;
  if (model.boom_frame)
    m.boom_audit_relative = out.audit_scale > 0 ? out.max_boom_audit_residual / out.audit_scale : out.max_boom_audit_residual;
  m.settling_time = outside_now ? std::nan("") : last_outside;
  m.switches = out.switches;
  for (const ModeEvent& e : out.events)
    if (e.kind == ModeEventKind::lift_off) m.lift_off_time = e.time;
  extremes.write(m);
  for (int i = 0; i < n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    m.dynamic_factor.push_back(m.peak_load[k].value / (model.gravity * model.mass_below[k]));
  }
  if (options.ftle && m.ok()) {
    FtleSettings fs = options.ftle_settings;
    fs.rtol = settings.rtol;
    fs.atol = settings.atol;
    fs.max_steps = settings.max_steps;
    const FtleResult f = chain_ftle(model, ws, def.scenario, def.initial, fs);
    if (f.status == FtleStatus::ok)
      m.ftle = f.exponent;
    else {
      m.status = f.status;  // the cause (step budget, time budget, ...), not a blanket non_finite
      m.reason = "FTLE run failed: " + f.reason;
      m.ftle_note = f.reason;
    }
  }
  return m;
}

}  // namespace swaybound
