#include "swaybound/checks/start_transient.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <fmt/ranges.h>

namespace swaybound {

namespace {

std::string degrees(const std::vector<double>& values, std::size_t n) {
  std::vector<std::string> out;
  for (std::size_t i = 0; i < n; ++i)
    out.push_back(fmt::format("{:.4g}", (i < values.size() ? values[i] : 0.0) * 180 / std::numbers::pi));
  return fmt::format("({})", fmt::join(out, ", "));
}

}  // namespace

double lowest_swing_period(const ModalResult& modes) {
  for (const Mode& m : modes.modes)  // sorted by frequency, lowest first
    if (!m.axial && m.frequency_hz > 0 && std::isfinite(m.period_s)) return m.period_s;
  return std::nan("");
}

std::string start_description(const Spec& spec, const CaseDef& def) {
  const std::size_t n = spec.links.size();
  const std::string local = def.id.substr(def.id.find('/') + 1);
  const bool rest = std::all_of(def.initial.omega.begin(), def.initial.omega.end(), [](double w) { return w == 0; }) &&
                    std::all_of(def.initial.phi_rate.begin(), def.initial.phi_rate.end(), [](double w) { return w == 0; });
  const char* kind = def.start_kind == StartKind::modal         ? "a modal start"
                     : def.start_kind == StartKind::equilibrium ? "the equilibrium start"
                                                                : "link angles";
  std::string text = fmt::format("{}: {} {} theta0 = {} deg", local, kind, rest ? "released from rest at" : "at",
                                 degrees(def.initial.theta, n));
  if (!rest) text += fmt::format(", omega0 = {} deg/s", degrees(def.initial.omega, n));
  if (!def.initial.phi.empty()) text += fmt::format(", phi0 = {} deg", degrees(def.initial.phi, n));
  if (const std::string values = start_values_text(spec, def.set, def.initial.quantities); !values.empty())
    text += " (" + values + ")";
  return text;
}

std::string start_values_text(const Spec& spec, int set, const std::vector<double>& quantities, bool si) {
  if (set < 0 || static_cast<std::size_t>(set) >= spec.cases.initial.size() || quantities.empty()) return {};
  const InitialSetSpec& s = spec.cases.initial[static_cast<std::size_t>(set)];
  if (start_kind(s) == StartKind::equilibrium) {
    std::string text = fmt::format("steady acceleration {:.6g} m/s^2", quantities.at(0));
    if (quantities.size() > 1 && !std::isnan(quantities[1])) text += fmt::format(", wind speed {:.6g} m/s", quantities[1]);
    return text;
  }
  if (start_kind(s) != StartKind::modal) return {};
  const std::size_t modes = std::min(s.amplitude.size(), quantities.size());
  const auto list = [&](std::size_t from, std::size_t to) {
    std::vector<std::string> out;
    for (std::size_t k = from; k < to; ++k)
      out.push_back(fmt::format("{:.6g}", si ? quantities[k] : quantities[k] * 180 / std::numbers::pi));
    return fmt::format("({})", fmt::join(out, ", "));
  };
  std::string text = fmt::format("amplitude {} {}", list(0, modes), si ? "rad" : "deg");
  if (quantities.size() > modes) text += fmt::format(", phase {} {}", list(modes, quantities.size()), si ? "rad" : "deg");
  return text;
}

std::string start_transient_remark(double time, double period, const std::string& start_note, Motion motion) {
  return fmt::format("start transient? The worst value is at t = {:.3g} s, within the first quarter of the lowest modal "
                     "period ({:.3g} s) after the start {}. It may come from this start (a kinked chain released from "
                     "rest) rather than from the motion; {}",
                     time, period, start_note,
                     motion == Motion::spatial
                         ? "check it again from starts with every link at the same theta and phi (the chain in line, "
                           "close to its lowest modes: spatial chains have no equilibrium or modal starts yet)."
                         : "check it again from an equilibrium or modal start (specs/README.md, 'Starts').");
}

void flag_start_transients(const Spec& spec, const CaseSpace& space, const ModalResult& modes,
                           std::vector<CheckResult>& checks) {
  const double period = lowest_swing_period(modes);
  if (!(period > 0)) return;
  for (CheckResult& c : checks) {
    c.start_transient = false;
    c.start_note.clear();
    if (!c.per_case || c.governing < 0 || c.governing >= space.size() || !std::isfinite(c.time)) continue;
    if (c.time >= kStartTransientFraction * period) continue;
    const CaseDef def = space.at(c.governing);
    if (def.start_kind == StartKind::equilibrium) continue;  // no transient by construction
    c.start_transient = true;
    c.start_note = start_description(spec, def);
  }
}

}  // namespace swaybound
