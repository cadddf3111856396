#include "swaybound/modal/shaper_modes.hpp"

#include <cmath>
#include <string>

#include <fmt/format.h>

#include "swaybound/modal/modes.hpp"
#include "swaybound/model/model.hpp"

namespace swaybound {

namespace {

using Shaper = ScenarioSpec::Travel::Shaper;

/// The chain of `spec` alone (links, dashpots, gravity, motion; no scenario, wind or limit), with
/// the shaper's design_for values applied: what the modes of the design are computed for.
Spec design_chain(const Spec& spec, const Shaper& shaper, int link) {
  Spec chain;
  chain.motion = spec.motion;
  chain.gravity = spec.gravity;
  chain.links = spec.links;
  chain.dashpots = spec.dashpots;
  ScenarioSpec still;
  still.name = "still";
  chain.scenarios.push_back(still);
  if (shaper.design_for && link >= 0) {
    LinkSpec& l = chain.links[static_cast<std::size_t>(link)];
    if (shaper.design_for->length) l.length = *shaper.design_for->length;
    if (shaper.design_for->mass) l.mass = *shaper.design_for->mass;
  }
  return chain;
}

void resolve_one(const Spec& spec, Shaper& shaper, const std::string& path, std::vector<Diagnostic>& problems) {
  if (shaper.mode <= 0) return;
  int link = -1;
  if (shaper.design_for) {
    link = spec.link_index(shaper.design_for->link);
    if (link < 0) {
      std::string names;
      for (const LinkSpec& l : spec.links) names += (names.empty() ? "'" : ", '") + l.name + "'";
      problems.push_back({shaper.design_for->link_mark, path + ".design_for.link",
                          fmt::format("no link is named '{}'", shaper.design_for->link),
                          fmt::format("name one of the links: {}", names)});
      return;
    }
  }
  ModalResult modes;
  try {
    modes = modal_analysis(build_model(design_chain(spec, shaper, link)));
  } catch (const Error& e) {
    problems.push_back({shaper.mode_mark, path + ".mode",
                        fmt::format("the modes of the chain to design the shaper for cannot be computed: {}", e.what()),
                        "check the links (and design_for's length and mass)"});
    return;
  }
  const auto count = static_cast<int>(modes.modes.size());
  if (shaper.mode > count) {
    problems.push_back({shaper.mode_mark, path + ".mode",
                        fmt::format("mode {} is asked for, and the chain has {} mode{} (as `modes` lists them)",
                                    shaper.mode, count, count == 1 ? "" : "s"),
                        fmt::format("give a mode from 1 to {} (1 is the lowest)", count)});
    return;
  }
  const Mode& m = modes.modes[static_cast<std::size_t>(shaper.mode - 1)];
  if (m.overdamped || !(m.natural_frequency_with_damping_hz > 0) || (!shaper.damping_given && m.damping_ratio >= 1)) {
    problems.push_back({shaper.mode_mark, path + ".mode",
                        fmt::format("mode {} is {} (damping ratio {:.4g}), and a shaper is designed for a swinging "
                                    "mode",
                                    shaper.mode, m.overdamped ? "overdamped" : "not oscillating", m.damping_ratio),
                        "design the shaper for another mode, or give frequency and damping_ratio"});
    return;
  }
  shaper.frequency = m.natural_frequency_with_damping_hz;
  // An undamped chain's eigenvalues carry a real part of rounding size (zeta ~ 1e-16): that is 0.
  if (!shaper.damping_given) shaper.damping_ratio = std::fabs(m.damping_ratio) < 1e-12 ? 0.0 : m.damping_ratio;
}

}  // namespace

std::vector<Diagnostic> resolve_shaper_modes(Spec& spec) {
  std::vector<Diagnostic> problems;
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i) {
    ScenarioSpec& s = spec.scenarios[i];
    const std::string path = fmt::format("base.scenarios[{}]", i);
    if (s.travel && s.travel->shaper) resolve_one(spec, *s.travel->shaper, path + ".travel.shaper", problems);
    if (s.cross_travel && s.cross_travel->shaper)
      resolve_one(spec, *s.cross_travel->shaper, path + ".cross_travel.shaper", problems);
    if (s.slew && s.slew->shaper) resolve_one(spec, *s.slew->shaper, path + ".slew.shaper", problems);
  }
  return problems;
}

}  // namespace swaybound
