#include "swaybound/cases/case_space.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "swaybound/dynamics/equilibrium.hpp"
#include "swaybound/modal/modal_start.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound {

namespace {

std::uint64_t splitmix64(std::uint64_t x) {
  x += 0x9e3779b97f4a7c15ULL;
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

/// Dimensions of a set: its theta ranges, then rate, phi and phi_rate ranges (start_lists).
std::size_t dimensions(const InitialSetSpec& set) {
  std::size_t d = 0;
  for (const auto* list : start_lists(set)) d += list->size();
  return d;
}
const Range& dimension(const InitialSetSpec& set, std::size_t d) {
  for (const auto* list : start_lists(set)) {
    if (d < list->size()) return (*list)[d];
    d -= list->size();
  }
  throw ArgumentError(fmt::format("start dimension {} out of range", d));
}
/// Where the values of a set's dimensions go: theta, omega, phi, phi_rate, amplitude, phase,
/// steady acceleration, wind speed.
using Targets = std::array<std::vector<double>*, kStartLists>;
/// How a set's ranges are sampled: its kind, or an equilibrium set's sampling.
InitialKind sampling(const InitialSetSpec& set) {
  return set.kind == InitialKind::equilibrium ? set.sampling : set.kind;
}
void assign(const Targets& targets, const InitialSetSpec& set, std::size_t d, double value) {
  const auto lists = start_lists(set);
  for (std::size_t k = 0; k < lists.size(); ++k) {
    if (d < lists[k]->size()) {
      (*targets[k])[d] = value;
      return;
    }
    d -= lists[k]->size();
  }
}

}  // namespace

double unit_random(std::uint64_t seed, std::uint64_t a, std::uint64_t b) {
  const std::uint64_t bits = splitmix64(splitmix64(splitmix64(seed) ^ a) ^ (b * 0x9e3779b97f4a7c15ULL));
  return static_cast<double>(bits >> 11) * 0x1.0p-53;
}

std::string slug(const std::string& name) {
  std::string out;
  for (char c : name) {
    const auto u = static_cast<unsigned char>(c);
    if (std::isalnum(u))
      out += static_cast<char>(std::tolower(u));
    else if (!out.empty() && out.back() != '-')
      out += '-';
  }
  while (!out.empty() && out.back() == '-') out.pop_back();
  return out.empty() ? "case" : out;
}

CaseSpace::CaseSpace(const Spec& spec) : spec_(&spec) {
  for (const auto& s : spec.scenarios) {
    std::string name = slug(s.name);
    for (int k = 2; std::find(slugs_.begin(), slugs_.end(), name) != slugs_.end(); ++k)
      name = fmt::format("{}-{}", slug(s.name), k);
    slugs_.push_back(name);
  }
  for (std::size_t i = 0; i < spec.cases.initial.size(); ++i) {
    const InitialSetSpec& set = spec.cases.initial[i];
    // Two sets of one kind (or name) get "-2", "-3", ... so every id stays unique.
    std::string name = slug(set.name);
    for (int k = 2; std::find(set_slugs_.begin(), set_slugs_.end(), name) != set_slugs_.end(); ++k)
      name = fmt::format("{}-{}", slug(set.name), k);
    set_slugs_.push_back(name);
    offsets_.push_back(starts_);
    starts_ += initial_set_size(set);
    std::vector<std::vector<int>> perms;
    if (sampling(set) == InitialKind::random && set.method == SamplingMethod::latin_hypercube) {
      // One random permutation of the strata per dimension (Fisher-Yates with unit_random).
      for (std::size_t d = 0; d < dimensions(set); ++d) {
        std::vector<int> p(static_cast<std::size_t>(set.count));
        for (int k = 0; k < set.count; ++k) p[static_cast<std::size_t>(k)] = k;
        for (std::size_t k = p.size(); k > 1; --k) {
          const auto j = static_cast<std::size_t>(unit_random(set.seed, 1000 + d, k) * static_cast<double>(k));
          std::swap(p[k - 1], p[std::min(j, k - 1)]);
        }
        perms.push_back(std::move(p));
      }
    }
    lhs_.push_back(std::move(perms));
    // Envelope: the extremes of every range bound the starts' angles.
    for (const auto& r : set.theta) envelope_ = std::max({envelope_, std::fabs(r.lo), std::fabs(r.hi)});
    if (set.kind == InitialKind::ladder && set.perturb_link >= 0 &&
        static_cast<std::size_t>(set.perturb_link) < set.theta.size()) {
      const double base = std::fabs(set.theta[static_cast<std::size_t>(set.perturb_link)].lo);
      for (double step : set.steps) envelope_ = std::max(envelope_, set.relative ? base * (1 + step) : base + step);
    }
  }
  total_ = starts_ * static_cast<long>(spec.scenarios.size());
  prepare_starts(spec);
}

void CaseSpace::prepare_starts(const Spec& spec) {
  equilibria_.resize(spec.cases.initial.size());
  bool modal = false, equilibrium = false;
  for (const auto& set : spec.cases.initial) {
    modal |= start_kind(set) == StartKind::modal;
    equilibrium |= set.kind == InitialKind::equilibrium;
  }
  if (!modal && !equilibrium) return;
  model_ = std::make_shared<const Model>(build_model(spec));
  const Model& model = *model_;
  if (modal) {
    modes_ = std::make_shared<const ModalResult>(modal_analysis(model));
    // Envelope: |theta_i| <= sum_k max |A_k| |s_ki| <= sum_k max |A_k| (largest |s_ki| is 1).
    for (const auto& set : spec.cases.initial) {
      double bound = 0;
      for (const auto& r : set.amplitude) bound += std::max(std::fabs(r.lo), std::fabs(r.hi));
      envelope_ = std::max(envelope_, bound);
    }
  }
  if (!equilibrium) return;
  Workspace ws(model);
  const auto scenarios = static_cast<long>(model.scenarios.size());
  for (std::size_t i = 0; i < spec.cases.initial.size(); ++i) {
    const InitialSetSpec& set = spec.cases.initial[i];
    if (set.kind != InitialKind::equilibrium) continue;
    const long count = initial_set_size(set);
    for (long k = 0; k < count; ++k) {
      std::vector<double> none, accel(set.accel_range.size()), wind(set.wind_range.size());
      fill_start(set, static_cast<int>(i), k, {&none, &none, &none, &none, &none, &none, &accel, &wind});
      for (long sc = 0; sc < scenarios; ++sc) {
        const auto [a, u] = steady_values(model, set, static_cast<int>(sc), accel, wind);
        const EquilibriumResult e = steady_equilibrium(spec, model, ws, set, static_cast<int>(sc), a, u);
        if (!e.converged) {
          std::vector<std::string> angles;
          for (double t : e.theta) angles.push_back(fmt::format("{:.4g}", t * 180 / 3.141592653589793));
          throw SpecError(spec.source_file,
                          {Diagnostic{set.mark, fmt::format("cases.initial[{}].equilibrium", i),
                                      fmt::format("no equilibrium start under scenario '{}' ({:g} m/s^2 along the travel{}): {} "
                                                  "(last angles {} deg, residual {:.3g})",
                                                  spec.scenarios[static_cast<std::size_t>(sc)].name, a,
                                                  std::isnan(u) ? std::string() : fmt::format(", wind {:g} m/s", u),
                                                  e.reason, fmt::join(angles, ", "), e.residual),
                                      "give a smaller steady acceleration or wind_speed, or start this chain from angles "
                                      "(theta, rate)"}});
        }
        for (double t : e.theta) envelope_ = std::max(envelope_, std::fabs(t));
        equilibria_[i].push_back(e.theta);
      }
    }
  }
}

std::array<double, 2> steady_values(const Model& model, const InitialSetSpec& set, int scenario,
                                    const std::vector<double>& accel, const std::vector<double>& wind) {
  const double a = !accel.empty()            ? accel.front()
                   : set.accel_from_scenario ? model.scenarios.at(static_cast<std::size_t>(scenario)).phases.front().ax
                                             : set.accel;
  const double u = !wind.empty() ? wind.front() : set.wind_from_spec ? std::nan("") : set.wind_speed;
  return {a, u};
}

EquilibriumResult steady_equilibrium(const Spec& spec, const Model& model, Workspace& ws, const InitialSetSpec& set,
                                     int scenario, double accel, double wind) {
  Phase phase = model.scenarios.at(static_cast<std::size_t>(scenario)).phases.front();
  if (!set.accel_from_scenario) {
    phase.ax = accel;
    phase.ay = 0;
  }
  for (std::size_t w = 0; w < phase.wind_speed.size(); ++w)
    phase.wind_speed[w] = std::isnan(wind) ? spec.wind[w].speed : wind;
  return static_equilibrium(model, ws, phase);
}

void CaseSpace::fill_start(const InitialSetSpec& set, int set_index, long k, Targets out) const {
  const std::size_t dims = dimensions(set);
  switch (sampling(set)) {
    case InitialKind::single:
      for (std::size_t d = 0; d < dims; ++d) assign(out, set, d, dimension(set, d).lo);
      break;
    case InitialKind::ladder: {
      for (std::size_t d = 0; d < dims; ++d) assign(out, set, d, dimension(set, d).lo);
      if (k > 0) {
        const double step = set.steps[static_cast<std::size_t>(k - 1)];
        double& theta = (*out[0])[static_cast<std::size_t>(set.perturb_link)];
        theta = set.relative ? theta * (1 + step) : theta + step;
      }
      break;
    }
    case InitialKind::grid: {
      long rest = k;  // last dimension varies fastest
      for (std::size_t d = dims; d-- > 0;) {
        const Range& r = dimension(set, d);
        const long j = rest % r.count;
        rest /= r.count;
        assign(out, set, d, r.count == 1 ? 0.5 * (r.lo + r.hi) : r.lo + (r.hi - r.lo) * static_cast<double>(j) / (r.count - 1));
      }
      break;
    }
    case InitialKind::corners: {
      long bit = 0;
      for (std::size_t d = 0; d < dims; ++d) {
        const Range& r = dimension(set, d);
        if (r.hi > r.lo) {
          assign(out, set, d, (k >> bit) & 1 ? r.hi : r.lo);
          ++bit;
        } else {
          assign(out, set, d, r.lo);
        }
      }
      break;
    }
    case InitialKind::random: {
      const bool lhs = set.method == SamplingMethod::latin_hypercube;
      for (std::size_t d = 0; d < dims; ++d) {
        const Range& r = dimension(set, d);
        const double u = unit_random(set.seed, d, static_cast<std::uint64_t>(k));
        const double f = lhs ? (lhs_[static_cast<std::size_t>(set_index)][d][static_cast<std::size_t>(k)] + u) / set.count : u;
        assign(out, set, d, r.lo + (r.hi - r.lo) * f);
      }
      break;
    }
    case InitialKind::equilibrium:
      break;  // an equilibrium set's sampling is single, grid or random
  }
}

CaseDef CaseSpace::at(long index) const {
  SWAYBOUND_REQUIRE(index >= 0 && index < total_, "case index {} out of range [0, {})", index, total_);
  CaseDef c;
  c.index = index;
  c.scenario = static_cast<int>(index / starts_);
  const long within = index % starts_;
  const auto it = std::upper_bound(offsets_.begin(), offsets_.end(), within);
  c.set = static_cast<int>(it - offsets_.begin()) - 1;
  c.start = within - offsets_[static_cast<std::size_t>(c.set)];
  const InitialSetSpec& set = spec_->cases.initial[static_cast<std::size_t>(c.set)];
  const std::size_t n = spec_->links.size();
  c.initial.theta.assign(n, 0.0);
  c.initial.omega.assign(n, 0.0);
  if (spec_->motion == Motion::spatial) {
    c.initial.phi.assign(n, 0.0);
    c.initial.phi_rate.assign(n, 0.0);
  }
  c.start_kind = start_kind(set);
  std::vector<double> amplitude(set.amplitude.size(), 0.0), phase(set.phase.size(), 0.0);
  std::vector<double> accel(set.accel_range.size(), 0.0), wind(set.wind_range.size(), 0.0);
  fill_start(set, c.set, c.start,
             {&c.initial.theta, &c.initial.omega, &c.initial.phi, &c.initial.phi_rate, &amplitude, &phase, &accel, &wind});
  if (c.start_kind == StartKind::modal) {
    const InitialState m = modal_start(*modes_, amplitude, phase);
    c.initial.theta = m.theta;
    c.initial.omega = m.omega;
    c.initial.quantities = amplitude;
    c.initial.quantities.insert(c.initial.quantities.end(), phase.begin(), phase.end());
  } else if (c.start_kind == StartKind::equilibrium) {
    const auto scenarios = static_cast<long>(spec_->scenarios.size());
    c.initial.theta = equilibria_[static_cast<std::size_t>(c.set)][static_cast<std::size_t>(c.start * scenarios + c.scenario)];
    const auto [a, u] = steady_values(*model_, set, c.scenario, accel, wind);
    c.initial.quantities = {a, u};
  }
  const int width = static_cast<int>(std::to_string(initial_set_size(set)).size());
  c.id = fmt::format("{}/{}-{:0{}}", slugs_[static_cast<std::size_t>(c.scenario)], set_slugs_[static_cast<std::size_t>(c.set)], c.start + 1,
                     std::max(width, 3));
  return c;
}

}  // namespace swaybound
