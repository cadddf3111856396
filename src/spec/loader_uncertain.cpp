// Spec loader, the uncertain values of a scenario: base.scenarios[i].uncertain, a list of
// {path, range}. The sampled cases use the spec's value; the worst-case search moves each value
// through its range (checks/worst_search.hpp). Read after every scenario and the wind, which the
// paths address.
#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/model/shaper.hpp"
#include "swaybound/spec/paths.hpp"

namespace swaybound::spec_detail {

namespace u = units;

namespace {

/// Why the travel drive of scenario `scenario` cannot be built with the uncertain value `target`
/// set to `value` (a stop that never ends, moves that overlap); empty when it can.
std::string travel_problem(const Spec& spec, int scenario, const SpecPath& target, double value) {
  const ScenarioSpec& sc = spec.scenarios[static_cast<std::size_t>(scenario)];
  if (!sc.travel || (target.field != SpecPath::Field::stop_decel && target.field != SpecPath::Field::drum_move_accel))
    return {};
  Spec changed;
  changed.scenarios = {sc};
  SpecPath at = target;
  at.index = 0;
  set_spec_value(changed, at, value);
  try {
    (void)travel_drive_profile(*changed.scenarios[0].travel);
  } catch (const std::exception& e) {
    const std::string text = e.what(), cut = "failed: ";  // without SWAYBOUND_REQUIRE's source location
    const auto pos = text.find(cut);
    return pos == std::string::npos ? text : text.substr(pos + cut.size());
  }
  return {};
}

/// One entry {path, range} of scenario `scenario`'s list, at `path`.
void read_uncertain_one(Context& ctx, const YAML::Node& node, const std::string& path, Spec& spec, int scenario) {
  MapView m(ctx, node, path, {"path", "range"});
  if (!m.ok()) return;
  ScenarioSpec& sc = spec.scenarios[static_cast<std::size_t>(scenario)];
  UncertainSpec entry;
  entry.mark = m.mark();
  std::optional<SpecPath> target;
  if (m.require("path", "the scenario's value that is uncertain, e.g. accel[0].x or wind.speed"))
    if (auto p = read_string(ctx, m.get("path"), m.path("path"))) {
      entry.path = *p;
      std::string why;
      target = parse_uncertain_path(spec, scenario, *p, why);
      if (!target) {
        ctx.error(m.get("path"), m.path("path"), fmt::format("'{}' does not name an uncertain value: {}", *p, why),
                  "see specs/README.md, 'Uncertain values of a scenario', for the paths");
      } else {
        for (const UncertainSpec& earlier : sc.uncertain) {
          std::string ignored;
          const auto other = parse_uncertain_path(spec, scenario, earlier.path, ignored);
          if (other && other->field == target->field && other->index == target->index &&
              other->damper == target->damper) {
            ctx.error(m.get("path"), m.path("path"), fmt::format("'{}' is uncertain twice in this scenario", *p),
                      "give each value one range");
            target.reset();
            break;
          }
        }
      }
    }
  if (!m.require("range", "the range the value may take, e.g. [-1.2 m/s^2, -0.6 m/s^2]") || !target) return;
  const YAML::Node r = m.get("range");
  if (!r.IsSequence() || r.size() != 2) {
    ctx.error(r, m.path("range"), "expected [low, high]", "write e.g. range: [-1.2 m/s^2, -0.6 m/s^2]");
    return;
  }
  const u::Dim dim = spec_path_dim(*target);
  const auto lo = read_quantity(ctx, r[0], m.path("range") + "[0]", dim);
  const auto hi = read_quantity(ctx, r[1], m.path("range") + "[1]", dim);
  if (!lo || !hi) return;
  bool open = false;
  const double floor = spec_path_lower_bound(*target, open);
  const double nominal = get_spec_value(spec, *target);
  if (!(*lo < *hi)) {
    ctx.error(r, m.path("range"), "the range is empty or inverted", "write [low, high] with low < high");
  } else if (open ? !(*lo > floor) : !(*lo >= floor)) {
    ctx.error(r[0], m.path("range") + "[0]", "the range reaches values the spec does not allow",
              fmt::format("keep the low end {} {}", open ? ">" : ">=", u::format_si(floor, dim)));
  } else if (!(nominal >= *lo && nominal <= *hi)) {
    ctx.error(r, m.path("range"),
              fmt::format("the scenario's value {} lies outside the range: the sampled cases use it",
                          u::format_si(nominal, dim)),
              "give a range that holds the scenario's value, or change the value");
  } else {
    // The search runs the drive at any value of the range: both ends must give a drive that can be built.
    for (int end = 0; end < 2; ++end) {
      const double value = end == 0 ? *lo : *hi;
      const std::string problem = travel_problem(spec, scenario, *target, value);
      if (problem.empty()) continue;
      ctx.error(r[static_cast<std::size_t>(end)], fmt::format("{}[{}]", m.path("range"), end),
                fmt::format("at {} the travel drive cannot be built: {}", u::format_si(value, dim), problem),
                "narrow the range to values the drive can run");
      return;
    }
    entry.lo = *lo;
    entry.hi = *hi;
    sc.uncertain.push_back(entry);
  }
}

}  // namespace

void read_uncertain(Context& ctx, const YAML::Node& scenarios, Spec& spec) {
  if (!scenarios.IsSequence() || scenarios.size() != spec.scenarios.size()) return;  // reported, or refused
  for (std::size_t i = 0; i < scenarios.size(); ++i) {
    const YAML::Node s = scenarios[i];
    if (!s.IsMap() || !s["uncertain"]) continue;
    const std::string path = fmt::format("base.scenarios[{}].uncertain", i);
    const YAML::Node list = s["uncertain"];
    if (!expect_sequence(ctx, list, path, "uncertain values {path, range}")) continue;
    if (list.size() == 0)
      ctx.error(list, path, "the list of uncertain values is empty", "give at least one {path, range}, or leave it out");
    for (std::size_t k = 0; k < list.size(); ++k)
      read_uncertain_one(ctx, list[k], fmt::format("{}[{}]", path, k), spec, static_cast<int>(i));
  }
}

}  // namespace swaybound::spec_detail
