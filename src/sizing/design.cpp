#include "swaybound/sizing/design.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <limits>

#include <fmt/format.h>

#include "swaybound/core/error.hpp"
#include "swaybound/modal/shaper_modes.hpp"

namespace swaybound {

double DesignVariable::value_at(double x) const {
  if (!(hi > lo)) return lo;
  x = std::clamp(x, 0.0, 1.0);
  return x >= 1 ? hi : lo + x * (hi - lo);
}

double DesignVariable::scaled(double value) const {
  if (!(hi > lo)) return 0;
  return std::clamp((value - lo) / (hi - lo), 0.0, 1.0);
}

double DesignVariable::nearest(double value) const {
  if (catalogue.empty()) return value;
  double best = catalogue.front();
  for (double c : catalogue)
    if (std::fabs(c - value) < std::fabs(best - value)) best = c;
  return best;
}

int DesignVariable::at_bound(double value) const {
  const double tol = 1e-3 * std::max(hi - lo, 1e-300);
  if (value <= lo + tol) return -1;
  if (value >= hi - tol) return +1;
  return 0;
}

std::vector<double> DesignVariable::step_neighbours(double value) const {
  if (!(step > 0) || discrete()) return {value};
  // Multiples as the YAML writes them (12 significant digits), so 3 x 0.1 is 0.3.
  const auto multiple = [&](double k) {
    return std::strtod(fmt::format("{:.12g}", k * step).c_str(), nullptr);
  };
  const double q = value / step;
  const double nearest = std::round(q);
  std::vector<double> ks;
  if (std::fabs(q - nearest) <= 1e-9 * std::max(1.0, std::fabs(q)))
    ks = {nearest};
  else
    ks = {std::floor(q), std::ceil(q)};
  std::vector<double> out;
  for (double k : ks) {
    const double m = multiple(k);
    if (m >= lo * (1 - 1e-12) - 1e-300 && m <= hi * (1 + 1e-12) + 1e-300) out.push_back(m);
  }
  if (out.empty()) {
    // value lies outside every multiple in range: take the multiple in range nearest to it.
    const double first = multiple(std::ceil(lo / step - 1e-9)), last = multiple(std::floor(hi / step + 1e-9));
    out.push_back(value < first ? first : last);
  }
  return out;
}

std::vector<DesignVariable> design_variables(const Spec& spec) {
  const std::string file = spec.source_file.empty() ? std::string("spec") : spec.source_file;
  if (!spec.sizing)
    throw SpecError(file, {Diagnostic{{}, "sizing", "the spec has no sizing section, so there is nothing to size",
                                      "add a 'sizing' section with at least one design variable "
                                      "(specs/README.md, 'sizing')"}});
  std::vector<DesignVariable> out;
  std::vector<Diagnostic> problems;
  for (std::size_t i = 0; i < spec.sizing->variables.size(); ++i) {
    const SizingVariableSpec& v = spec.sizing->variables[i];
    std::string why;
    const auto target = parse_spec_path(spec, v.path, why);
    if (!target) {
      problems.push_back({v.mark, fmt::format("sizing.variables[{}].path", i), why, "see specs/README.md, 'sizing'"});
      continue;
    }
    DesignVariable d;
    d.path = v.path;
    d.target = *target;
    d.dim = spec_path_dim(*target);
    d.unit = units::si_unit(d.dim);
    d.lo = v.lo;
    d.hi = v.hi;
    d.cost = v.cost;
    d.catalogue = v.catalogue;
    d.step = v.step;
    std::sort(d.catalogue.begin(), d.catalogue.end());
    d.catalogue.erase(std::unique(d.catalogue.begin(), d.catalogue.end()), d.catalogue.end());
    if (!d.catalogue.empty()) {
      d.lo = d.catalogue.front();
      d.hi = d.catalogue.back();
    }
    d.initial = get_spec_value(spec, *target);
    for (const auto& other : out)
      if (other.target.field == d.target.field && other.target.index == d.target.index)
        problems.push_back({v.mark, fmt::format("sizing.variables[{}].path", i),
                            fmt::format("'{}' addresses the same value as '{}'", v.path, other.path),
                            "give each spec value at most one design variable"});
    out.push_back(std::move(d));
  }
  if (out.empty() && problems.empty())
    problems.push_back({spec.sizing->mark, "sizing.variables", "no design variables", "give at least one"});
  if (!problems.empty()) throw SpecError(file, std::move(problems));
  return out;
}

void apply_design(Spec& spec, const std::vector<DesignVariable>& variables, const std::vector<double>& values) {
  SWAYBOUND_REQUIRE(values.size() == variables.size(), "{} values for {} variables", values.size(), variables.size());
  for (std::size_t i = 0; i < variables.size(); ++i) set_spec_value(spec, variables[i].target, values[i]);
  spec.design_values = values;
  // A centre of mass or inertia not given explicitly is the uniform rod's of the link's length and
  // mass (the loader's default, and what build_model uses): hold the spec's values to the sized ones,
  // so the normalised sized spec (which writes them as numbers) reloads to the same chain.
  for (LinkSpec& l : spec.links) {
    if (!l.com_given) l.com = l.length / 2;
    if (!l.inertia_given) l.inertia = l.mass * l.length * l.length / 12;
  }
  // A wind point not given explicitly sits at its link's centre of mass (the loader's default):
  // keep it there when a length or centre of mass changes.
  for (auto& w : spec.wind)
    if (!w.at_given && w.link >= 0 && w.link < static_cast<int>(spec.links.size())) {
      const LinkSpec& l = spec.links[static_cast<std::size_t>(w.link)];
      w.at = l.com_given ? l.com : l.length / 2;
    }
  // A shaper designed from a mode follows the mode of the sized chain (modal/shaper_modes.hpp).
  if (auto problems = resolve_shaper_modes(spec); !problems.empty())
    throw SpecError(spec.source_file.empty() ? std::string("spec") : spec.source_file, std::move(problems));
}

double design_cost(const std::vector<DesignVariable>& variables, const std::vector<double>& values) {
  double sum = 0;
  for (std::size_t i = 0; i < variables.size() && i < values.size(); ++i) sum += variables[i].cost * values[i];
  return sum;
}

double geometry_margin(const Spec& spec) {
  double least = std::numeric_limits<double>::infinity();
  const auto offer = [&](int link, double at) {
    if (link < 0 || link >= static_cast<int>(spec.links.size())) return;
    const double length = spec.links[static_cast<std::size_t>(link)].length;
    if (length > 0) least = std::min(least, (length - at) / length);
  };
  for (std::size_t i = 0; i < spec.links.size(); ++i)
    if (spec.links[i].com_given) offer(static_cast<int>(i), spec.links[i].com);
  for (const auto& w : spec.wind)
    if (w.at_given) offer(w.link, w.at);
  for (const auto& d : spec.dashpots) {
    offer(d.from.link, d.from.at);
    offer(d.to.link, d.to.at);
  }
  return least;
}

bool varies_geometry(const std::vector<DesignVariable>& variables) {
  for (const auto& v : variables)
    if (v.target.field == SpecPath::Field::length || v.target.field == SpecPath::Field::com) return true;
  return false;
}

}  // namespace swaybound
