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
/// Where the values of a set's dimensions go: theta, omega, phi, phi_rate, amplitude, phase.
using Targets = std::array<std::vector<double>*, 6>;
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
    if (set.kind == InitialKind::random && set.method == SamplingMethod::latin_hypercube) {
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
  const Model model = build_model(spec);
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
  for (std::size_t i = 0; i < spec.cases.initial.size(); ++i) {
    const InitialSetSpec& set = spec.cases.initial[i];
    if (set.kind != InitialKind::equilibrium) continue;
    for (std::size_t sc = 0; sc < model.scenarios.size(); ++sc) {
      // The inputs at t = 0 with the set's steady acceleration and wind in place of the scenario's.
      Phase phase = model.scenarios[sc].phases.front();
      if (!set.accel_from_scenario) {
        phase.ax = set.accel;
        phase.ay = 0;
      }
      for (std::size_t w = 0; w < phase.wind_speed.size(); ++w)
        phase.wind_speed[w] = set.wind_from_spec ? spec.wind[w].speed : set.wind_speed;
      const EquilibriumResult e = static_equilibrium(model, ws, phase);
      if (!e.converged) {
        std::vector<std::string> angles;
        for (double t : e.theta) angles.push_back(fmt::format("{:.4g}", t * 180 / 3.141592653589793));
        throw SpecError(spec.source_file,
                        {Diagnostic{set.mark, fmt::format("cases.initial[{}].equilibrium", i),
                                    fmt::format("no equilibrium start under scenario '{}' ({:g} m/s^2 along the travel): {} "
                                                "(last angles {} deg, residual {:.3g})",
                                                spec.scenarios[sc].name, phase.ax, e.reason, fmt::join(angles, ", "),
                                                e.residual),
                                    "give a smaller steady acceleration or wind_speed, or start this chain from angles "
                                    "(theta, rate)"}});
      }
      for (double t : e.theta) envelope_ = std::max(envelope_, std::fabs(t));
      equilibria_[i].push_back(e.theta);
    }
  }
}

void CaseSpace::fill_start(const InitialSetSpec& set, int set_index, long k, Targets out) const {
  const std::size_t dims = dimensions(set);
  switch (set.kind) {
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
      break;  // at() takes the scenario's equilibrium
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
  fill_start(set, c.set, c.start, {&c.initial.theta, &c.initial.omega, &c.initial.phi, &c.initial.phi_rate, &amplitude, &phase});
  if (c.start_kind == StartKind::modal) {
    const InitialState m = modal_start(*modes_, amplitude, phase);
    c.initial.theta = m.theta;
    c.initial.omega = m.omega;
  } else if (c.start_kind == StartKind::equilibrium) {
    c.initial.theta = equilibria_[static_cast<std::size_t>(c.set)][static_cast<std::size_t>(c.scenario)];
  }
  const int width = static_cast<int>(std::to_string(initial_set_size(set)).size());
  c.id = fmt::format("{}/{}-{:0{}}", slugs_[static_cast<std::size_t>(c.scenario)], set_slugs_[static_cast<std::size_t>(c.set)], c.start + 1,
                     std::max(width, 3));
  return c;
}

}  // namespace swaybound
