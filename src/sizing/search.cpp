// The sizing search strategies: ISRES and COBYLA stages, the bisection onto the constraint
// boundary, snapping to the bounds, and the rounds of search and verification.
#include "sizer.hpp"

#include <algorithm>
#include <cmath>

namespace swaybound::sizing_search {

const Point* Sizer::best_pass(const std::vector<Point>& seen) {
  const Point* best = nullptr;
  for (const auto& p : seen)
    if (p.pass && (!best || p.f < best->f)) best = &p;
  return best;
}
const Point* Sizer::best_least(const std::vector<Point>& seen) {
  const Point* best = nullptr;
  for (const auto& p : seen)
    if (!best || p.least > best->least) best = &p;
  return best;
}
const Point* Sizer::best_of(const std::vector<Point>& seen) const {
  if (sizing_.objective != Objective::max_margin) return best_pass(seen);
  const Point* best = nullptr;
  for (const auto& p : seen)
    if (p.outcome.geometry >= 0 && (!best || p.f < best->f)) best = &p;
  return best;
}

/// Closes in on the constraint boundary: bisects between the best feasible point and the
/// nearest-to-feasible point of lower objective.
void Sizer::bisect_boundary(std::vector<Point>& seen, long stop_at) {
  if (sizing_.objective == Objective::max_margin) return;
  const Point* b = best_pass(seen);
  if (!b) return;
  Point good = *b;
  std::optional<Point> bad;
  for (const auto& p : seen)
    if (!p.pass && p.f < good.f && (!bad || p.least > bad->least)) bad = p;
  if (!bad) return;
  for (int step = 0; step < kBisectionSteps; ++step) {
    if (std::fabs(good.f - bad->f) <= 1e-6 * std::max(1.0, std::fabs(good.f))) break;
    if (!budget_left()) note_budget_stop();
    if (evaluations_ >= stop_at || !budget_left()) break;
    std::vector<double> mid = good.values;
    for (std::size_t i = 0; i < mid.size(); ++i) mid[i] = 0.5 * (good.values[i] + bad->values[i]);
    const Point p = screen(mid);
    seen.push_back(p);
    (p.pass ? good : *bad) = p;
  }
}

/// A local search stops within its tolerance of a bound; the bound itself is often as good.
/// Moves every free variable within 0.1% of the range from a bound onto it and keeps that
/// design when it is at least as good.
void Sizer::snap_to_bounds(const std::vector<int>& free, std::vector<Point>& seen, long stop_at) {
  const Point* b = best_of(seen);
  if (!budget_left()) note_budget_stop();
  if (!b || evaluations_ >= stop_at || !budget_left()) return;
  std::vector<double> v = b->values;
  bool moved = false;
  for (int i : free) {
    const DesignVariable& var = vars_[static_cast<std::size_t>(i)];
    double& x = v[static_cast<std::size_t>(i)];
    const double s = var.scaled(x);
    if (s < kSnap && x != var.lo) {
      x = var.lo;
      moved = true;
    } else if (s > 1 - kSnap && x != var.hi) {
      x = var.hi;
      moved = true;
    }
  }
  if (moved) seen.push_back(screen(v));
}

/// The search over the free variables (catalogue variables among them relaxed) on the current
/// screening set. Returns every point evaluated.
std::vector<Point> Sizer::search(const std::vector<int>& free, const std::vector<double>& start, long budget,
                                 bool global, std::uint64_t seed) {
  std::vector<Point> seen;
  const long stop_at = evaluations_ + budget;
  try {
    if (free.empty()) {
      seen.push_back(screen(start));
      return seen;
    }
    std::vector<double> from = start;
    if (global) {
      nlopt::srand(static_cast<unsigned long>(seed));
      optimise(nlopt::GN_ISRES, free, from, static_cast<long>(kGlobalShare * static_cast<double>(budget)),
               Goal::objective, seen);
      if (const Point* p = best_of(seen))
        from = p->values;
      else if (const Point* q = best_least(seen))
        from = q->values;
    }
    optimise(nlopt::LN_COBYLA, free, from, stop_at - evaluations_, Goal::objective, seen,
             global ? 0.05 : 0.1);
    if (sizing_.objective != Objective::max_margin && !best_pass(seen) && evaluations_ < stop_at) {
      // Nothing feasible yet: look for the design with the greatest least margin; if it holds,
      // search the objective again from there.
      if (const Point* q = best_least(seen)) from = q->values;
      optimise(nlopt::LN_COBYLA, free, from, stop_at - evaluations_, Goal::margin, seen);
      if (const Point* p = best_pass(seen))
        optimise(nlopt::LN_COBYLA, free, p->values, stop_at - evaluations_, Goal::objective, seen, 0.05);
    }
    bisect_boundary(seen, stop_at);
    snap_to_bounds(free, seen, stop_at);
  } catch (const BudgetSpent&) {
  }
  return seen;
}

/// Search, verify, widen the screening set, repeat: the best verified design over the free
/// variables, the others fixed at `start`'s values.
void Sizer::solve(const std::vector<int>& free, std::vector<double> start, long budget, std::uint64_t seed) {
  const long end = evaluations_ + budget;
  for (int round = 0; round < kMaxRounds; ++round) {
    if (round > 0 && (evaluations_ >= end || !budget_left())) break;
    const std::vector<Point> seen =
        search(free, start, std::max<long>(end - evaluations_, 1),
               sizing_.mode == SearchMode::global && round == 0, seed + static_cast<std::uint64_t>(round));
    const Point* candidate = best_of(seen);
    if (!candidate) return;  // nothing holds on the screening set, so nothing holds on every case
    if (best_verified_ && candidate->f >= best_verified_->f) return;  // cannot improve on a verified design
    const std::vector<double> values = round12(candidate->values);
    const double screened_least = candidate->least;
    bool added = false;
    const Point verified = verify(values, added);
    if (verified.pass && sizing_.objective != Objective::max_margin) return;
    if (sizing_.objective == Objective::max_margin && verified.least >= screened_least) return;
    if (!added) return;  // the screening set already holds every case that governs this design
    start = values;
  }
}

}  // namespace swaybound::sizing_search
