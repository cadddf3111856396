// results.json of a check packet. Reason it stays one file: one schema, written in one place
// (checks, cases, search, shaping, modes and closed loops, audits), so readers have one source.
#include "swaybound/report/results.hpp"

#include <algorithm>
#include <cmath>
#include <optional>
#include <string_view>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/checks/start_transient.hpp"
#include "swaybound/spec/case_set_kinds.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/core/version.hpp"
#include "swaybound/report/format.hpp"

namespace swaybound {

namespace {

using Json = nlohmann::ordered_json;

Json number(double v) { return std::isfinite(v) ? Json(v) : Json(nullptr); }

Json vector_json(const std::vector<double>& v) {
  Json out = Json::array();
  for (double x : v) out.push_back(number(x));
  return out;
}

const char* stepper_name(Stepper s) { return s == Stepper::dopri5 ? "dopri5" : "rkf78"; }

/// Whether some link is an elastic rope.
bool has_elastic_rope(const Spec& spec) {
  return std::any_of(spec.links.begin(), spec.links.end(),
                     [](const LinkSpec& l) { return l.elastic.has_value(); });
}

/// Whether some scenario starts with the load on the ground.
/// Whether some set gives its starts other than as link angles (modal coordinates, an equilibrium):
/// then cases.csv names each case's start kind and results.json each governing case's start.
bool has_derived_starts(const Spec& spec) {
  return std::any_of(spec.cases.initial.begin(), spec.cases.initial.end(),
                     [](const InitialSetSpec& set) { return start_kind(set) != StartKind::angles; });
}

bool has_lift_off(const Spec& spec) {
  return std::any_of(spec.scenarios.begin(), spec.scenarios.end(),
                     [](const ScenarioSpec& s) { return s.lift_off.has_value(); });
}

/// The search for the worst case between the samples of one per-case check (results.json).
/// The values a modal or equilibrium start came from (InitialState::quantities), as fields of `j`.
void add_start_values(Json& j, const Spec& spec, int set, const std::vector<double>& q) {
  if (q.empty() || set < 0 || static_cast<std::size_t>(set) >= spec.cases.initial.size()) return;
  const InitialSetSpec& s = spec.cases.initial[static_cast<std::size_t>(set)];
  if (start_kind(s) == StartKind::equilibrium) {
    j["acceleration_m_per_s2"] = number(q.at(0));
    // null: each wind load's own steady speed
    j["wind_speed_m_per_s"] = q.size() > 1 && !std::isnan(q[1]) ? number(q[1]) : Json(nullptr);
  } else if (start_kind(s) == StartKind::modal) {
    const auto modes = static_cast<std::ptrdiff_t>(std::min(s.amplitude.size(), q.size()));
    j["amplitude_rad"] = vector_json(std::vector<double>(q.begin(), q.begin() + modes));
    j["phase_rad"] = vector_json(std::vector<double>(q.begin() + modes, q.end()));
  }
}

Json search_json(const Spec& spec, const LimitSearch& s) {
  Json j;
  j["searched"] = s.searched;
  j["sampled_worst"] = number(s.sampled_worst);
  j["searched_worst"] = number(s.searched_worst);
  j["found_worse"] = s.found_worse;
  j["start"] = {{"scenario", s.scenario >= 0 ? Json(spec.scenarios[static_cast<std::size_t>(s.scenario)].name) : Json(nullptr)},
                {"theta_rad", vector_json(s.theta)},
                {"rate_rad_per_s", vector_json(s.omega)},
                {"from_case", s.from_case}};
  if (spec.motion == Motion::spatial) {
    j["start"]["phi_rad"] = vector_json(s.phi);
    j["start"]["phi_rate_rad_per_s"] = vector_json(s.phi_rate);
  }
  // A modal or equilibrium start: the values the search moved.
  if (!s.worst_case.initial.quantities.empty()) {
    j["start"]["kind"] = std::string(start_kind_name(s.worst_case.start_kind));
    add_start_values(j["start"], spec, s.worst_case.set, s.worst_case.initial.quantities);
  }
  j["raise"] = number(s.raise);
  j["raise_of_margin"] = number(s.raise_of_margin);
  j["margin"] = number(s.margin);
  j["evaluations"] = s.evaluations;
  j["methods"] = s.methods;
  j["failed_run"] = s.failed_run;
  if (s.failed_run) j["failure"] = s.failure;
  j["local_worst_statistical_not_a_bound"] = s.chaotic;
  j["ftle_per_s"] = number(s.ftle);
  j["verdict"] = s.pass ? "pass" : "fail";
  j["sampling_alone_would_pass"] = s.sampling_missed();
  // Only for a scenario with uncertain values, so a spec without them writes what it wrote before.
  if (!s.uncertain.empty()) {
    Json values = Json::array();
    for (std::size_t k = 0; k < s.uncertain.size() && k < s.uncertain_dims.size(); ++k)
      values.push_back({{"path", s.uncertain_dims.paths[k]},
                        {"unit", s.uncertain_dims.units[k]},
                        {"value", number(s.uncertain[k])},
                        {"spec_value", number(s.uncertain_dims.nominal[k])},
                        {"range", {number(s.uncertain_dims.lo[k]), number(s.uncertain_dims.hi[k])}}});
    j["uncertain"] = values;
  }
  if (s.audited)
    j["accuracy_audit"] = {{"value", number(s.audit_value)}, {"change", number(s.audit_change)},
                           {"warning", s.audit_warning}};
  return j;
}

/// One run of a shaping comparison (results.json): its end of moves and residual sway per link.
Json shaping_run_json(const Spec& spec, const ShapingRun& run) {
  Json residual = Json::array();
  for (std::size_t i = 0; i < run.residual.size(); ++i)
    residual.push_back({{"link", spec.links[i].name}, {"angle_rad", number(run.residual[i].value)},
                        {"time_s", number(run.residual[i].time)}});
  return {{"moves_end_s", number(run.move_end)},
          {"residual_sway_rad", number(run.residual_max)},
          {"residual_sway_link", run.residual_link >= 0 ? Json(spec.links[static_cast<std::size_t>(run.residual_link)].name)
                                                        : Json(nullptr)},
          {"residual_per_link", residual},
          {"status", run.status}};
}

/// Per shaped travel drive: the governing case with and without its shaper, and the shaper's
/// sensitivity to the actual frequency (results.json).
Json shaping_json(const Spec& spec, const ShapingComparison& c) {
  static const char* const kinds[] = {"zv", "zvd", "ei"};
  Json impulses = Json::array();
  for (const Impulse& i : c.shaper.impulses) impulses.push_back({{"time_s", i.time}, {"amplitude", i.amplitude}});
  Json shaper = {{"kind", kinds[static_cast<int>(c.shaper.kind)]},
                 {"frequency_hz", c.shaper.frequency_hz},
                 {"damping_ratio", c.shaper.damping_ratio},
                 {"duration_s", c.shaper.duration()},
                 {"impulses", impulses}};
  if (c.shaper.kind == ShaperKind::ei) shaper["vibration_tolerance"] = c.shaper.vibration_tolerance;
  if (c.mode > 0) shaper["designed_from_mode"] = c.mode;
  Json ratio = Json::array(), vibration = Json::array();
  for (const SensitivityPoint& p : c.curve) {
    ratio.push_back(number(p.frequency_ratio));
    vibration.push_back(number(p.vibration));
  }
  Json marks = Json::array();
  for (const SensitivityMark& m : c.marks)
    marks.push_back({{"label", m.label}, {"lowest_frequency_hz", number(m.frequency_hz)},
                     {"frequency_ratio", number(m.ratio)}, {"residual_vibration", number(m.vibration)}});
  return {{"scenario", spec.scenarios[static_cast<std::size_t>(c.scenario)].name},
          {"axis", c.axis},
          {"shaper", shaper},
          {"case", c.case_id},
          {"case_chosen_by", c.chosen_by},
          {"residual_window_from_s", number(c.window_start)},
          {"shaped", shaping_run_json(spec, c.shaped)},
          {"unshaped", shaping_run_json(spec, c.unshaped)},
          {"residual_reduction", number(c.reduction)},
          {"extra_move_time_s", number(c.extra_time)},
          {"sensitivity", {{"frequency_ratio", ratio}, {"residual_vibration", vibration}, {"marks", marks},
                           {"sizing_range_ends_marked", c.range_ends_marked}, {"notes", c.notes}}}};
}

/// The ropes, switches and lift-off of a recorded governing case (results.json).
Json governing_case_json(const Spec& spec, const RecordedCase& rc) {
  Json ropes = Json::array();
  for (const RecordedRope& rope : rc.ropes) {
    const LinkSpec& link = spec.links[static_cast<std::size_t>(rope.link)];
    Json slack = Json::array();
    for (const Interval& s : rope.slack) slack.push_back({number(s.from), number(s.to)});
    Json snatches = Json::array();
    for (const SnatchPeak& p : rope.snatches)
      snatches.push_back({{"tension_n", number(p.peak.value)},
                          {"time_s", number(p.peak.time)},
                          {"taut_from_s", number(p.taut.from)},
                          {"taut_to_s", number(p.taut.to)},
                          {"located", p.located}});
    ropes.push_back({{"link", link.name},
                     {"parts_of_line", link.parts_of_line},
                     {"static_tension_n", number(rope.static_force)},
                     {"peak_rope_tension_n", number(rope.peak_force.value)},
                     {"peak_rope_tension_time_s", number(rope.peak_force.time)},
                     {"slack_time_s", number(rope.slack_time)},
                     {"slack_count", rope.slack_count},
                     {"snatch_load_n", number(rope.snatch.value)},
                     {"snatch_load_time_s", number(rope.snatch.time)},
                     {"slack_intervals_s", slack},
                     {"take_up_s", std::isnan(rope.take_up.from) ? nlohmann::json(nullptr)
                                                                  : nlohmann::json::array({number(rope.take_up.from),
                                                                                           number(rope.take_up.to)})},
                     {"slack_intervals_listed", static_cast<long>(rope.slack.size()) == rope.slack_intervals},
                     {"snatch_peaks", snatches}});
  }
  return {{"case", rc.id},
          {"status", rc.status},
          {"end_s", number(rc.t_end)},
          {"switches", rc.switches},
          {"lift_off_time_s", number(rc.lift_off_time)},
          {"ropes", ropes}};
}

std::string csv_quote(const std::string& s) {
  std::string out = "\"";
  for (char c : s) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

std::string csv_number(double v) { return std::isfinite(v) ? fmt::format("{:.10g}", v) : std::string(); }

}  // namespace

std::string time_budget_note(const Spec& spec, long count) {
  return fmt::format(
      "not reproducible: {} run(s) stopped on the wall-clock budget solver.max_seconds = {:g} s "
      "(status time_budget), which depends on the machine and its load; the same spec can give other "
      "results elsewhere. Raise solver.max_seconds and bound the work with solver.max_steps, which "
      "gives the same result on every machine",
      count, spec.solver.max_seconds);
}

std::string results_json(const Spec& spec, const CheckReport& r) {
  Json j;
  j["schema"] = kResultsSchema;
  j["tool"] = {{"name", "swaybound"}, {"version", std::string(tool_version())}, {"commit", std::string(git_commit())}};
  j["spec"] = {{"name", spec.name}, {"sha256", spec_sha256(spec)}, {"format_version", spec.version}};
  j["units"] = "SI: m, kg, s, N, rad; margins in the unit of their check";
  j["solver"] = {{"method", stepper_name(spec.solver.method)}, {"rtol", spec.solver.rtol}, {"atol", spec.solver.atol},
                 {"max_steps", spec.solver.max_steps}, {"min_step_s", spec.solver.min_step},
                 {"audit_tolerance_factor", 0.01}};
  Json seeds = Json::array();
  for (const auto& set : spec.cases.initial)
    if (set.kind == InitialKind::random) seeds.push_back({{"set", set.name}, {"seed", set.seed}});
  j["seeds"] = seeds;
  j["cases"] = {{"count", r.case_count}, {"scenarios", spec.scenarios.size()}, {"duration_s", spec.cases.duration},
                {"failed", r.failed_total}, {"total_steps", r.total_steps},
                {"energy_audit_max_relative", number(r.max_audit_relative)}, {"energy_audit_max_case", r.max_audit_case}};
  if (!r.max_boom_audit_case.empty()) {
    j["cases"]["energy_audit_boom_frame_max_relative"] = number(r.max_boom_audit_relative);
    j["cases"]["energy_audit_boom_frame_max_case"] = r.max_boom_audit_case;
  }
  Json failed = Json::array();
  for (const auto& f : r.failed) failed.push_back({{"case", f.id}, {"status", f.status}, {"reason", f.reason}});
  j["failed_cases"] = failed;
  // A wall-clock budget that binds makes the outcome depend on the machine and its load.
  j["reproducible"] = r.time_budget_total == 0;
  Json notes = Json::array();
  if (r.time_budget_total > 0) notes.push_back(time_budget_note(spec, r.time_budget_total));
  if (const std::string axes = damper_axes_sentence(spec); !axes.empty()) notes.push_back(axes);
  j["notes"] = notes;

  Json checks = Json::array();
  const bool derived = has_derived_starts(spec);
  const bool flagged = std::any_of(r.checks.begin(), r.checks.end(), [](const CheckResult& c) { return c.start_transient; });
  std::optional<CaseSpace> space;
  if (derived || flagged) space.emplace(spec);
  for (const auto& c : r.checks) {
    Json cj;
    cj["limit"] = c.key;
    cj["applies_to"] = c.subject;
    cj["bound"] = std::string(bound_name(c.bound));
    cj["unit"] = c.unit;
    cj["limit_value"] = number(c.limit_value);
    cj["worst"] = number(c.worst);
    cj["margin"] = number(c.margin);
    cj["margin_ratio"] = number(c.margin_ratio);
    cj["governing_case"] = c.governing_id;
    cj["governing_link"] = c.governing_link >= 0 ? Json(spec.links[static_cast<std::size_t>(c.governing_link)].name) : Json(nullptr);
    cj["time_s"] = number(c.time);
    cj["failed_cases"] = c.failed_cases;
    if (!c.first_failure.empty()) cj["first_failure"] = c.first_failure;
    if (c.audited)
      cj["accuracy_audit"] = {{"value", number(c.audit_value)}, {"change", number(c.audit_change)},
                              {"warning", c.audit_warning}};
    cj["verdict"] = c.pass ? "pass" : "fail";
    // Specs with modal or equilibrium starts, or a flagged check: the raw start of the governing case.
    if (space && c.per_case && c.governing >= 0 && c.governing < space->size()) {
      const CaseDef def = space->at(c.governing);
      cj["governing_start"] = {{"kind", std::string(start_kind_name(def.start_kind))},
                               {"theta_rad", vector_json(def.initial.theta)},
                               {"rate_rad_per_s", vector_json(def.initial.omega)}};
      add_start_values(cj["governing_start"], spec, def.set, def.initial.quantities);
    }
    if (c.start_transient)
      cj["start_transient"] = {{"flagged", true},
                               {"within_s", number(kStartTransientFraction * lowest_swing_period(r.modes))},
                               {"fraction_of_lowest_period", kStartTransientFraction},
                               {"start", c.start_note}};
    if (r.searched)
      for (const LimitSearch& ls : r.search)
        if (ls.limit == c.limit) cj["search"] = search_json(spec, ls);
    for (const ConvergenceRow& row : r.convergence)
      if (row.limit == c.limit) {
        Json worst = Json::array();
        for (double w : row.worst) worst.push_back(number(w));
        cj["convergence"] = {{"starts", row.starts}, {"worst", worst}};
      }
    checks.push_back(cj);
  }
  j["checks"] = checks;
  // Only when the search ran, so a check without it (--no-search) writes what it wrote before.
  if (r.searched)
    j["search"] = {{"evaluations_per_limit", r.search_budget.evaluations},
                 {"starts_per_limit", r.search_budget.starts},
                 {"method", "bounded local search of the start box (NLopt BOBYQA; Nelder-Mead, COBYLA fallbacks) "
                            "from the worst sampled cases: a local worst, not a bound"}};
  // Only with a shaped travel drive, so a spec without one writes what it wrote before.
  if (!r.shaping.empty()) {
    Json shaping = Json::array();
    for (const ShapingComparison& c : r.shaping) shaping.push_back(shaping_json(spec, c));
    j["shaping"] = shaping;
  }
  // Chains with elastic ropes or a lift-off: per recorded governing case its ropes' figures.
  if (has_elastic_rope(spec) || has_lift_off(spec)) {
    Json governing = Json::array();
    for (const RecordedCase& rc : r.recorded) governing.push_back(governing_case_json(spec, rc));
    j["governing_cases"] = governing;
  }

  Json modes = Json::array();
  for (const auto& m : r.modes.modes) {
    Json mj{{"frequency_hz", number(m.frequency_hz)}, {"period_s", number(m.period_s)},
            {"damping_ratio", number(m.damping_ratio)}, {"damped_frequency_hz", number(m.damped_frequency_hz)},
            {"shape", vector_json(m.shape)}};
    if (spec.motion == Motion::spatial) {  // pairs: the travel plane and across it
      mj["plane"] = plane_name(m.plane);
      mj["pair_mode"] = m.pair >= 0 ? Json(m.pair + 1) : Json(nullptr);
    }
    modes.push_back(std::move(mj));
  }
  j["modes"] = {{"modes", modes}, {"least_damping_ratio", number(r.modes.least_damping_ratio)}, {"notes", r.modes.notes}};
  if (!r.modes.closed_loops.empty()) {  // travel controllers (modal/modes.hpp)
    Json loops = Json::array();
    for (const ClosedLoop& loop : r.modes.closed_loops) {
      Json poles = Json::array();
      for (const ClosedLoopPole& p : loop.poles)
        poles.push_back({{"eigenvalue_real_per_s", number(p.eigenvalue.real())},
                         {"eigenvalue_imag_per_s", number(p.eigenvalue.imag())},
                         {"natural_frequency_hz", number(p.natural_frequency_hz)},
                         {"damping_ratio", number(p.damping_ratio)}});
      loops.push_back({{"scenario", loop.scenario_name}, {"stable", loop.stable},
                       {"least_damping_ratio", number(loop.least_damping_ratio)}, {"poles", poles}});
    }
    j["modes"]["closed_loops"] = loops;
  }

  const ChaosSummary& ch = r.chaos;
  Json chaos;
  chaos["method"] = "largest finite-time Lyapunov exponent, Benettin renormalisation of a nearby trajectory";
  chaos["horizon_s"] = ch.horizon;
  chaos["separation"] = spec.chaos.separation;
  chaos["renormalise_s"] = spec.chaos.renormalise;
  chaos["threshold_per_s"] = spec.chaos.threshold;
  chaos["per_case_ftle"] = ch.per_case_ftle;
  chaos["max_ftle_per_s"] = number(ch.max_ftle);
  chaos["max_ftle_case"] = ch.max_ftle_case;
  chaos["envelope_amplitude_rad"] = ch.envelope_amplitude;
  Json ladders = Json::array();
  for (const auto& l : ch.ladders)
    ladders.push_back({{"set", l.set}, {"scenario", l.scenario}, {"link", spec.links[static_cast<std::size_t>(l.link)].name},
                       {"delta_rad", vector_json(l.delta)}, {"divergence_time_s", vector_json(l.divergence_time)},
                       {"ftle_per_s", number(l.lambda)}, {"slope_s", number(l.slope)},
                       {"predictability_measured_s", number(l.horizon_measured)},
                       {"predictability_from_ftle_s", number(l.horizon_predicted)},
                       {"uncertainty_rad", spec.chaos.uncertainty}, {"tolerance_rad", spec.chaos.tolerance}});
  chaos["ladders"] = ladders;
  if (ch.onset.computed)
    chaos["onset"] = {{"scenario", ch.onset.scenario}, {"found", ch.onset.found},
                      {"amplitude_rad", number(ch.onset.amplitude)}, {"bracket_low_rad", number(ch.onset.bracket_low)},
                      {"direction", vector_json(spec.chaos.onset_direction)},
                      {"scan_amplitude_rad", vector_json(ch.onset.scan_amplitude)},
                      {"scan_ftle_per_s", vector_json(ch.onset.scan_ftle)}};
  if (ch.map.computed)
    chaos["map"] = {{"theta0_rad", vector_json(ch.map.x)}, {"theta1_rad", vector_json(ch.map.y)},
                    {"ftle_per_s", vector_json(ch.map.ftle)}};
  j["chaos"] = chaos;
  j["verdict"] = r.pass ? "pass" : "fail";
  j["caution"] =
      "Screening and design aid only; not a certification. Verify against the applicable crane and lifting-equipment "
      "standards and local regulations; the design must be reviewed and signed off by a licensed professional engineer.";
  return j.dump(2) + "\n";
}

namespace {
/// Appends ",value" to a CSV line. (Written out rather than `line += "," + value`: g++ 12 reports a
/// false -Wrestrict inside <string> for that form at -O2.)
void add_field(std::string& line, std::string_view value) {
  line += ',';
  line += value;
}
}  // namespace

namespace {
/// The unit of a cases.csv column of a kind: its SI unit, "-" when dimensionless.
std::string csv_unit(const LimitKindInfo& info) {
  const std::string unit = units::si_unit(info.dim);
  return unit.empty() ? "-" : unit;
}

/// Whether a per-link kind has columns for link k (a rope kind: rope links only).
bool has_link_columns(const Spec& spec, const LimitKindInfo& info, std::size_t k) {
  return info.link_value && !info.csv.empty() &&
         (info.scope != LimitScope::rope_links || spec.links[k].kind == LinkKind::rope) &&
         (info.scope != LimitScope::elastic_rope_links || spec.links[k].elastic.has_value()) &&
         (!info.on_demand || has_limit_of(spec, info.kind));
}

/// A limit of the kind with default options and, for a kind with `end`, the end given.
LimitSpec probe_limit(const LimitKindInfo& info, RopeEnd end = RopeEnd::either) {
  LimitSpec l;
  l.kind = info.kind;
  l.end = end;
  return l;
}
}  // namespace

std::string cases_csv_header(const Spec& spec) {
  std::string h = "\"case\",\"scenario\",\"set\",\"status\"";
  const auto column = [&h](const std::string& name) { add_field(h, csv_quote(name)); };
  if (has_derived_starts(spec)) {
    column("start");
    column("start_values");
  }
  for (const auto& l : spec.links) column(fmt::format("theta0({}) [rad]", l.name));
  for (const auto& l : spec.links) column(fmt::format("omega0({}) [rad/s]", l.name));
  if (spec.motion == Motion::spatial) {
    for (const auto& l : spec.links) column(fmt::format("phi0({}) [rad]", l.name));
    for (const auto& l : spec.links) column(fmt::format("phi_rate0({}) [rad/s]", l.name));
  }
  // Per link, the per-link kinds in the order of the table.
  for (std::size_t k = 0; k < spec.links.size(); ++k)
    for (const auto& info : limit_kinds()) {
      if (!has_link_columns(spec, info, k)) continue;
      const std::string& name = spec.links[k].name;
      column(fmt::format("{}({}) [{}]", info.csv, name, csv_unit(info)));
      if (!info.options.end) continue;
      column(fmt::format("{}_time({}) [s]", info.csv, name));
      column(fmt::format("{}_top({}) [{}]", info.csv, name, csv_unit(info)));
      column(fmt::format("{}_bottom({}) [{}]", info.csv, name, csv_unit(info)));
    }
  // Per case: one column per kind, or per limit for a kind whose value depends on its window.
  for (const auto& info : limit_kinds()) {
    if (!info.case_value || info.csv.empty()) continue;
    if (!info.options.after) {
      column(fmt::format("{} [{}]", info.csv, csv_unit(info)));
      continue;
    }
    for (std::size_t i = 0; i < spec.limits.size(); ++i)
      if (spec.limits[i].kind == info.kind) column(fmt::format("{}(limits[{}]) [{}]", info.csv, i, csv_unit(info)));
  }
  // Chains with elastic ropes or a lift-off: the contact switches of each case.
  for (const auto& l : spec.links)
    if (l.elastic) column(fmt::format("slack_count({}) [-]", l.name));
  if (has_elastic_rope(spec) || has_lift_off(spec)) column("switches [-]");
  if (has_lift_off(spec)) column("lift_off_time [s]");
  h += ",\"settling_time [s]\",\"ftle [1/s]\",\"energy_audit_relative [-]\",\"steps\",\"reason\"\n";
  return h;
}

std::string cases_csv_row(const Spec& spec, const CaseMetrics& m) {
  std::string row = csv_quote(m.id);
  add_field(row, csv_quote(spec.scenarios[static_cast<std::size_t>(m.scenario)].name));
  add_field(row, csv_quote(spec.cases.initial[static_cast<std::size_t>(m.set)].name));
  add_field(row, status_name(m.status));
  if (has_derived_starts(spec)) {
    add_field(row, start_kind_name(start_kind(spec.cases.initial[static_cast<std::size_t>(m.set)])));
    add_field(row, csv_quote(start_values_text(spec, m.set, m.initial.quantities, true)));
  }
  const std::size_t n = spec.links.size();
  for (std::size_t i = 0; i < n; ++i) add_field(row, csv_number(i < m.initial.theta.size() ? m.initial.theta[i] : 0.0));
  for (std::size_t i = 0; i < n; ++i) add_field(row, csv_number(i < m.initial.omega.size() ? m.initial.omega[i] : 0.0));
  if (spec.motion == Motion::spatial)
    for (const auto* list : {&m.initial.phi, &m.initial.phi_rate})
      for (std::size_t i = 0; i < n; ++i) add_field(row, csv_number(i < list->size() ? (*list)[i] : 0.0));
  // A failed run has no peaks: its measured fields stay empty.
  const bool ok = m.ok();
  const auto measured = [&row, ok](double x) { add_field(row, ok ? csv_number(x) : std::string()); };
  const auto link_value = [&](const LimitKindInfo& info, std::size_t k, RopeEnd end) {
    return ok ? info.link_value(m, probe_limit(info, end), k) : Extreme{};
  };
  for (std::size_t k = 0; k < n; ++k)
    for (const auto& info : limit_kinds()) {
      if (!has_link_columns(spec, info, k)) continue;
      const Extreme either = link_value(info, k, RopeEnd::either);
      measured(either.value);
      if (!info.options.end) continue;
      measured(either.time);
      measured(link_value(info, k, RopeEnd::top).value);
      measured(link_value(info, k, RopeEnd::bottom).value);
    }
  for (const auto& info : limit_kinds()) {
    if (!info.case_value || info.csv.empty()) continue;
    if (!info.options.after) {
      measured(ok ? info.case_value(m, probe_limit(info), 0).value : 0.0);
      continue;
    }
    int slot = 0;  // the limit's window among every limit with `after` (CaseMetrics::residual)
    for (const auto& l : spec.limits) {
      if (l.kind == info.kind) measured(ok ? info.case_value(m, l, slot).value : 0.0);
      slot += limit_kind(l.kind).options.after;
    }
  }
  // Counts and instants of what happened before the run ended, written for failed runs too.
  for (std::size_t k = 0; k < n; ++k)
    if (spec.links[k].elastic)
      add_field(row, std::to_string(k < m.slack_count.size() ? m.slack_count[k] : 0));
  if (has_elastic_rope(spec) || has_lift_off(spec)) add_field(row, std::to_string(m.switches));
  if (has_lift_off(spec)) add_field(row, csv_number(m.lift_off_time));
  measured(m.settling_time);
  add_field(row, csv_number(m.ftle));
  add_field(row, csv_number(m.audit_relative));
  add_field(row, std::to_string(m.steps));
  add_field(row, csv_quote(m.reason));
  row += '\n';
  return row;
}

}  // namespace swaybound
