// Catalogue variables (every combination, or those next to a relaxed optimum) and the rounding
// of continuous variables to their steps, each candidate checked on every case.
#include "sizer.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::sizing_search {

// --- catalogue -------------------------------------------------------------------------------
std::vector<std::vector<double>> Sizer::all_combinations(const std::vector<int>& cat) const {
  std::vector<std::vector<double>> combos{{}};
  for (int i : cat) {
    std::vector<std::vector<double>> next;
    for (const auto& c : combos)
      for (double v : vars_[static_cast<std::size_t>(i)].catalogue) {
        auto d = c;
        d.push_back(v);
        next.push_back(std::move(d));
      }
    combos = std::move(next);
  }
  return combos;
}

/// Combinations of the catalogue values next to a relaxed optimum, nearest first (at most 64).
std::vector<std::vector<double>> Sizer::neighbour_combinations(const std::vector<int>& cat,
                                                               const std::vector<double>& relaxed) const {
  std::vector<std::vector<double>> combos{{}};
  for (int i : cat) {
    const DesignVariable& v = vars_[static_cast<std::size_t>(i)];
    const double r = relaxed[static_cast<std::size_t>(i)];
    std::vector<double> near;
    const auto up = std::lower_bound(v.catalogue.begin(), v.catalogue.end(), r);
    if (up != v.catalogue.end()) near.push_back(*up);
    if (up != v.catalogue.begin() && (up == v.catalogue.end() || *up != r)) near.push_back(*(up - 1));
    std::vector<std::vector<double>> next;
    for (const auto& c : combos)
      for (double x : near) {
        auto d = c;
        d.push_back(x);
        next.push_back(std::move(d));
      }
    combos = std::move(next);
  }
  const auto distance = [&](const std::vector<double>& c) {
    double d = 0;
    for (std::size_t k = 0; k < cat.size(); ++k) {
      const DesignVariable& v = vars_[static_cast<std::size_t>(cat[k])];
      d += std::fabs(v.scaled(c[k]) - v.scaled(relaxed[static_cast<std::size_t>(cat[k])]));
    }
    return d;
  };
  std::stable_sort(combos.begin(), combos.end(),
                   [&](const auto& a, const auto& b) { return distance(a) < distance(b); });
  if (combos.size() > static_cast<std::size_t>(kMaxCombinations)) combos.resize(kMaxCombinations);
  return combos;
}

void Sizer::size_with_catalogue(const std::vector<int>& cont, const std::vector<int>& cat,
                                std::vector<double> start) {
  double product = 1;
  for (int i : cat) product *= static_cast<double>(vars_[static_cast<std::size_t>(i)].catalogue.size());
  const long per_combination = cont.empty() ? 2 : 10 * static_cast<long>(cont.size() + 1);
  std::vector<std::vector<double>> combos;
  if (product <= kMaxCombinations &&
      product * static_cast<double>(per_combination) <= sizing_.max_evaluations) {
    combos = all_combinations(cat);
    catalogue_method_ = fmt::format("enumeration of all {} catalogue combinations", combos.size());
  } else {
    // Relaxed search: every variable continuous; then the catalogue values next to its optimum.
    std::vector<int> all = cont;
    all.insert(all.end(), cat.begin(), cat.end());
    std::sort(all.begin(), all.end());
    const std::vector<Point> seen =
        search(all, start, std::max<long>(sizing_.max_evaluations / 2 - evaluations_, 1),
               sizing_.mode == SearchMode::global, sizing_.seed);
    std::vector<double> relaxed = start;
    if (const Point* p = best_of(seen))
      relaxed = p->values;
    else if (const Point* q = best_least(seen))
      relaxed = q->values;
    combos = neighbour_combinations(cat, relaxed);
    for (int i : cont) start[static_cast<std::size_t>(i)] = relaxed[static_cast<std::size_t>(i)];
    catalogue_method_ = fmt::format(
        "relaxed search, then the {} combinations of catalogue values next to its optimum", combos.size());
  }
  const auto with = [&](const std::vector<double>& combo) {
    std::vector<double> v = start;
    for (std::size_t k = 0; k < cat.size(); ++k) v[static_cast<std::size_t>(cat[k])] = combo[k];
    return v;
  };
  std::vector<std::size_t> order(combos.size());
  for (std::size_t k = 0; k < order.size(); ++k) order[k] = k;
  if (sizing_.objective == Objective::min_cost)
    std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
      return cost_lower_bound(with(combos[a]), cont) < cost_lower_bound(with(combos[b]), cont);
    });
  for (std::size_t k = 0; k < order.size(); ++k) {
    if (!budget_left()) {
      note_budget_stop();
      break;
    }
    const std::vector<double> v = with(combos[order[k]]);
    if (sizing_.objective == Objective::min_cost && best_verified_ &&
        cost_lower_bound(v, cont) >= best_verified_->f)
      continue;  // cannot be cheaper than a verified design
    const long left = sizing_.max_evaluations - evaluations_;
    const long share = std::max<long>(left / static_cast<long>(order.size() - k), per_combination);
    solve(cont, v, share, sizing_.seed + 7919 * static_cast<std::uint64_t>(k + 1));
  }
}

/// Rounds every continuous variable with a step to a multiple of it: the combinations of the
/// multiples next to the values found (the others keep their values) are verified on every case,
/// cheapest first for min_cost (else nearest first), as catalogue combinations are; the best
/// that passes replaces `values`, else the one nearest to holding. Returns what was done.
std::string Sizer::round_to_steps(std::vector<double>& values) {
  std::vector<int> stepped;
  for (std::size_t i = 0; i < vars_.size(); ++i)
    if (!vars_[i].discrete() && vars_[i].step > 0) stepped.push_back(static_cast<int>(i));
  if (stepped.empty()) return {};
  std::vector<std::vector<double>> combos{values};
  for (int i : stepped) {
    std::vector<std::vector<double>> next;
    for (const auto& c : combos)
      for (double x :
           vars_[static_cast<std::size_t>(i)].step_neighbours(values[static_cast<std::size_t>(i)])) {
        auto d = c;
        d[static_cast<std::size_t>(i)] = x;
        next.push_back(std::move(d));
      }
    combos = std::move(next);
  }
  const auto distance = [&](const std::vector<double>& c) {
    double d = 0;
    for (int i : stepped) {
      const DesignVariable& v = vars_[static_cast<std::size_t>(i)];
      d +=
          std::fabs(v.scaled(c[static_cast<std::size_t>(i)]) - v.scaled(values[static_cast<std::size_t>(i)]));
    }
    return d;
  };
  std::stable_sort(combos.begin(), combos.end(), [&](const auto& a, const auto& b) {
    if (sizing_.objective == Objective::min_cost) return design_cost(vars_, a) < design_cost(vars_, b);
    return distance(a) < distance(b);
  });
  if (combos.size() > static_cast<std::size_t>(kMaxCombinations)) combos.resize(kMaxCombinations);
  // Only rounded designs compete from here on.
  best_verified_.reset();
  least_violation_.reset();
  long verified = 0;
  for (const auto& c : combos) {
    if (sizing_.objective == Objective::min_cost && best_verified_)
      break;  // sorted by cost: the first that passes
    bool added = false;
    const Point p = verify(c, added);
    ++verified;
    if (!least_violation_ || p.least > least_violation_->least) least_violation_ = p;
  }
  if (best_verified_)
    values = best_verified_->values;
  else if (least_violation_)
    values = least_violation_->values;
  return fmt::format(
      "{} rounded to its step: {} of the {} combinations of the multiples next to the values found "
      "checked on every case{}",
      stepped.size() == 1 ? "1 variable" : fmt::format("{} variables", stepped.size()), verified,
      combos.size(), best_verified_ ? "" : "; none passes");
}

}  // namespace swaybound::sizing_search
