#include "swaybound/checks/shaping_compare.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <string_view>

#include <fmt/format.h>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/spec/loader.hpp"
#include "swaybound/spec/paths.hpp"

namespace swaybound {

namespace {

/// The shaper a drive's spec designs.
InputShaper shaper_of(const ScenarioSpec::Travel::Shaper& s) {
  return design_shaper(s.kind, s.frequency, s.damping_ratio, s.vibration_tolerance);
}

using ShaperSlot = std::optional<ScenarioSpec::Travel::Shaper>;
constexpr const char* kAxes[] = {"travel", "cross_travel", "slew"};

/// The shaper of drive axis `axis` (kAxes) of a scenario; null when the scenario has no such drive.
ShaperSlot* shaper_slot(ScenarioSpec& s, std::string_view axis) {
  if (axis == "travel") return s.travel ? &s.travel->shaper : nullptr;
  if (axis == "cross_travel") return s.cross_travel ? &s.cross_travel->shaper : nullptr;
  return s.slew ? &s.slew->shaper : nullptr;
}

/// The profile of drive axis `axis` of a scenario that has it.
SpeedProfile axis_profile(const ScenarioSpec& s, std::string_view axis) {
  if (axis == "travel") return travel_drive_profile(*s.travel);
  if (axis == "cross_travel") return travel_drive_profile(*s.cross_travel);
  return slew_drive_profile(*s.slew);
}

/// The lowest undamped natural frequency of the chain of `spec` [Hz]; NaN when it has no mode.
double lowest_frequency(const Spec& spec) {
  const ModalResult modes = modal_analysis(build_model(spec));
  return modes.modes.empty() ? std::nan("") : modes.modes.front().frequency_hz;
}

SensitivityMark mark_at(std::string label, double frequency_hz, const InputShaper& shaper) {
  SensitivityMark m;
  m.label = std::move(label);
  m.frequency_hz = frequency_hz;
  m.ratio = frequency_hz / shaper.frequency_hz;
  m.vibration = std::isfinite(frequency_hz) ? residual_vibration(shaper, frequency_hz, shaper.damping_ratio)
                                            : std::nan("");
  return m;
}

/// Runs case `def` of `model` with its time series recorded (every `stride`-th output sample) and
/// the largest angle of each link located from `window_start` on.
ShapingRun run_one(const Model& model, const CaseDef& def, const RunSettings& run, long stride, double window_start,
                   const SpeedProfile& drive) {
  const int n = model.n;
  ShapingRun out;
  out.stride = stride;
  const auto angle = [&model](const double* x, int i) { return model.spatial ? swing_angle(model, x, i) : x[i]; };
  ExtremeFinder finder(
      n,
      [&](const StepView& v, double* q) {
        for (int i = 0; i < n; ++i) q[i] = std::fabs(angle(v.x, i));
      },
      std::vector<double>(static_cast<std::size_t>(n), window_start));
  long sample = 0;
  const Observer on_sample = [&](const StepView& v) {
    if (sample++ % stride != 0) return;
    out.t.push_back(v.t);
    out.top_angle.push_back(angle(v.x, 0));
    out.base_speed.push_back(drive.speed(v.t));
  };
  Workspace ws(model);
  const RunOutcome outcome =
      simulate_case(model, ws, def.scenario, def.initial, run, [&](const StepView& v) { finder.observe(v); }, on_sample);
  out.status = std::string(status_name(outcome.status));
  out.residual_max = -std::numeric_limits<double>::infinity();
  for (int i = 0; i < n; ++i) {
    Extreme e = finder.max(i);
    if (!std::isfinite(e.value)) e.value = std::nan("");
    out.residual.push_back(e);
    if (e.value > out.residual_max) {
      out.residual_max = e.value;
      out.residual_link = i;
    }
  }
  if (out.residual_link < 0) out.residual_max = std::nan("");
  return out;
}

}  // namespace

ShapingCases::ShapingCases(const Spec& spec) : spec_(&spec) {
  const std::size_t count = spec.scenarios.size();
  worst_.assign(count, -1);
  first_.assign(count, -1);
  worst_value_.assign(count, -std::numeric_limits<double>::infinity());
  for (ScenarioSpec s : spec.scenarios)
    for (const char* axis : kAxes) any_ = any_ || (shaper_slot(s, axis) && *shaper_slot(s, axis));
  for (LimitKind kind : {LimitKind::residual_sway, LimitKind::peak_angle}) {
    for (std::size_t i = 0; i < spec.limits.size() && limit_ < 0; ++i)
      if (spec.limits[i].kind == kind) limit_ = static_cast<int>(i);
    if (limit_ >= 0) break;
  }
}

void ShapingCases::offer(const CaseMetrics& m) {
  const auto s = static_cast<std::size_t>(m.scenario);
  if (!any_ || s >= first_.size()) return;
  if (first_[s] < 0) first_[s] = m.index;
  if (limit_ < 0 || !m.ok()) return;
  int link;
  double time;
  // The first residual_sway limit is residual slot 0; a peak_angle limit has no slot.
  const double value = limit_value_in_case(spec_->limits[static_cast<std::size_t>(limit_)], 0, m, link, time);
  if (value > worst_value_[s]) {
    worst_value_[s] = value;
    worst_[s] = m.index;
  }
}

void shaping_sensitivity(const Spec& spec, const InputShaper& shaper, ShapingComparison& out) {
  out.curve = sensitivity_curve(shaper, shaper.damping_ratio, kSensitivityRatioLow, kSensitivityRatioHigh,
                                kSensitivityPoints);
  out.marks.push_back(mark_at("nominal", lowest_frequency(spec), shaper));
  if (!spec.sizing) return;
  for (const SizingVariableSpec& var : spec.sizing->variables) {
    std::string error;
    const std::optional<SpecPath> path = parse_spec_path(spec, var.path, error);
    if (!path || (path->field != SpecPath::Field::length && path->field != SpecPath::Field::mass)) continue;
    out.range_ends_marked = true;
    const bool length = path->field == SpecPath::Field::length;
    for (double end : {var.lo, var.hi}) {
      const std::string label = fmt::format("{} = {:.4g} {}", var.path, end, length ? "m" : "kg");
      try {
        Spec at_end = spec;
        set_spec_value(at_end, *path, end);
        out.marks.push_back(mark_at(label, lowest_frequency(at_end), shaper));
      } catch (const Error& e) {
        out.notes.push_back(fmt::format("{}: not marked, the chain could not be built there ({})", label, e.what()));
      }
    }
  }
}

std::vector<ShapingComparison> compare_shaping(const CheckPlan& plan, const ShapingCases& cases) {
  const Spec& spec = *plan.spec;
  std::vector<ShapingComparison> out;
  if (!cases.any()) return out;
  const long samples = samples_per_case(plan.run.duration, plan.run.output_rate);
  const long stride = std::max(1L, (samples + kMaxRecordedPoints - 1) / kMaxRecordedPoints);
  for (std::size_t s = 0; s < spec.scenarios.size(); ++s)
    for (const char* axis : kAxes) {
      ScenarioSpec scenario = spec.scenarios[s];
      const ShaperSlot* slot = shaper_slot(scenario, axis);
      if (slot == nullptr || !*slot) continue;
      const int index = static_cast<int>(s);
      ShapingComparison c;
      c.scenario = index;
      c.axis = axis;
      c.mode = (*slot)->mode;
      c.shaper = shaper_of(**slot);
      c.case_index = cases.worst_case(index);
      if (c.case_index >= 0) {
        c.limit = cases.limit();
        c.chosen_by = spec.limits[static_cast<std::size_t>(c.limit)].key;
      } else {
        c.case_index = cases.first_case(index);
        c.chosen_by = "first case";
      }
      if (c.case_index < 0) continue;  // the scenario has no case (not possible for a loaded spec)
      const CaseDef def = plan.space.at(c.case_index);
      c.case_id = def.id;

      // The same spec with this axis's shaper removed: same moves, same stop.
      Spec unshaped_spec = spec;
      shaper_slot(unshaped_spec.scenarios[s], axis)->reset();
      const Model unshaped_model = build_model(unshaped_spec);
      const SpeedProfile shaped_drive = axis_profile(scenario, axis);
      const SpeedProfile unshaped_drive = axis_profile(unshaped_spec.scenarios[s], axis);
      const double shaped_end = shaped_drive.end_of_moves(), unshaped_end = unshaped_drive.end_of_moves();
      c.window_start = std::max(shaped_end, unshaped_end);
      c.shaped = run_one(plan.model, def, plan.run, stride, c.window_start, shaped_drive);
      c.unshaped = run_one(unshaped_model, def, plan.run, stride, c.window_start, unshaped_drive);
      c.shaped.move_end = shaped_end;
      c.unshaped.move_end = unshaped_end;
      c.extra_time = shaped_end - unshaped_end;
      c.reduction = 1 - c.shaped.residual_max / c.unshaped.residual_max;
      shaping_sensitivity(spec, c.shaper, c);
      out.push_back(std::move(c));
    }
  return out;
}

}  // namespace swaybound
