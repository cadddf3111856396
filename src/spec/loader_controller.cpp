// Spec loader, the controller of a travel drive: base.scenarios[i].travel.controller
// {measure, angle_gain, rate_gain, speed_gain, accel_limit} (model/controller.hpp).
#include <fmt/format.h>

#include "loader_parts.hpp"
#include "swaybound/model/controller.hpp"

namespace swaybound::spec_detail {

namespace u = units;

void read_travel_controller(const MapView& scenario, const Spec& spec, ScenarioSpec& sc) {
  Context& ctx = scenario.ctx();
  const YAML::Node travel = scenario.get("travel");
  if (!travel.IsMap()) return;
  Mark key;
  bool found = false;
  for (auto it = travel.begin(); it != travel.end(); ++it)
    if (it->first.IsScalar() && it->first.Scalar() == "controller") {
      key = mark_of(it->first);
      found = true;
    }
  if (!found) return;
  const std::string path = scenario.path("travel") + ".controller";
  MapView m(ctx, travel["controller"], path, {"measure", "angle_gain", "rate_gain", "speed_gain", "accel_limit"});
  if (!m.ok()) return;
  if (!sc.travel) return;  // the travel itself was refused
  ScenarioSpec::Travel::Controller c;
  c.mark = key;
  bool ok = true;
  if (sc.travel->moves.empty()) {
    ctx.error(key, path,
              "the travel drive has no moves: the controller adds to the drive's speed command, and its acceleration "
              "limit is the drive's",
              "give the travel's moves (e.g. moves: [{at: 0 s, to: 1 m/s, accel: 0.3 m/s^2}]), or remove controller");
    ok = false;
  }
  if (m.has("measure")) {
    c.measure = read_link_ref(ctx, m.get("measure"), m.path("measure"), spec);
    ok &= c.measure >= 0;
  } else {
    c.measure = static_cast<int>(spec.links.size()) - 1;
    ctx.defaults_filled.push_back(m.path("measure"));
  }
  const auto gain = [&](std::string_view name, const u::Dim& dim, const Bounds& bounds, double& out) {
    if (!m.has(name)) {
      ctx.defaults_filled.push_back(m.path(name));
      return;
    }
    if (auto v = read_quantity(ctx, m.get(name), m.path(name), dim, bounds))
      out = *v;
    else
      ok = false;
  };
  const Bounds damping{0, 1e300, false, false, "a negative gain feeds the sway or the speed error (the loop grows)"};
  gain("angle_gain", u::sway_angle_gain, Bounds::any(), c.angle_gain);
  gain("rate_gain", u::sway_rate_gain, damping, c.rate_gain);
  gain("speed_gain", u::rate, damping, c.speed_gain);
  if (m.has("accel_limit")) {
    if (auto v = read_quantity(ctx, m.get("accel_limit"), m.path("accel_limit"), u::acceleration, Bounds::positive()))
      c.accel_limit = *v;
    else
      ok = false;
  } else {
    c.accel_limit = default_accel_limit(*sc.travel);
    ctx.defaults_filled.push_back(m.path("accel_limit"));
  }
  if (ok) sc.travel->controller = c;
}

}  // namespace swaybound::spec_detail
