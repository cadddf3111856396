// Sizing search: NLopt problem, screening, round-and-verify, steps and the stopping report.
// Long for a reason: one search pipeline whose stages share state; it splits along those stages
// when the check pipeline becomes a staged, public one (planned renovation).
#include "swaybound/sizing/sizing.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <exception>
#include <map>
#include <optional>
#include <set>

#include <fmt/format.h>
#include <nlopt.hpp>

#include "swaybound/core/error.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/core/version.hpp"

namespace swaybound {

std::string_view evaluation_kind_name(EvaluationKind kind) {
  switch (kind) {
    case EvaluationKind::initial: return "initial";
    case EvaluationKind::screening: return "screening";
    case EvaluationKind::verification: return "verification";
    case EvaluationKind::final_check: return "final";
  }
  return "?";
}

namespace {

using Clock = std::chrono::steady_clock;

constexpr int kMaxRounds = 6;              ///< search + verification rounds per design subspace
constexpr long kMaxCombinations = 64;      ///< catalogue combinations enumerated or searched
constexpr double kBindingRatio = 0.01;     ///< a limit within 1% of its value binds
constexpr double kGlobalShare = 0.6;       ///< share of a search's budget ISRES gets in global mode
constexpr int kBisectionSteps = 12;        ///< boundary bisection after a local search
constexpr double kOnsetScreen = 0.25;      ///< onset margin ratio below which screening computes it
constexpr double kSnap = 1e-3;             ///< share of a range within which a value snaps to its bound

/// The value as the normalised YAML writes it (12 significant digits), so the design verified is
/// the design written.
double round12(double v) { return std::strtod(fmt::format("{:.12g}", v).c_str(), nullptr); }
std::vector<double> round12(std::vector<double> v) {
  for (double& x : v) x = round12(x);
  return v;
}

/// Stops the search: the budget (evaluations or seconds) is spent.
struct BudgetSpent {};

struct Point {
  std::vector<double> values;
  DesignOutcome outcome;
  double f = 0;        ///< scaled objective (lower is better)
  bool pass = false;
  double least = 0;    ///< least constraint value
  bool verified = false;
};

class Sizer {
 public:
  Sizer(const Spec& spec, const SizingOptions& options)
      : spec_(spec), options_(options), sizing_(*spec.sizing),
        evaluator_(spec, design_variables(spec), options.jobs), vars_(evaluator_.variables()) {}

  SizingResult run();

 private:
  // --- objective -------------------------------------------------------------------------------
  double objective_value(const std::vector<double>& values, const DesignOutcome& o) const {
    switch (sizing_.objective) {
      case Objective::min_cost: return design_cost(vars_, values);
      case Objective::min_metric: return o.metric;
      case Objective::max_margin: return o.least();
    }
    return 0;
  }
  double scaled_objective(const std::vector<double>& values, const DesignOutcome& o) const {
    double f = 0;
    switch (sizing_.objective) {
      case Objective::min_cost: f = (design_cost(vars_, values) - cost_floor_) / cost_span_; break;
      case Objective::min_metric:
        f = std::isfinite(o.metric) ? (evaluator_.metric().lower ? -o.metric : o.metric) / metric_scale_ : 1e3;
        break;
      case Objective::max_margin: f = std::isfinite(o.least()) ? -o.least() : 0.0; break;
    }
    return std::clamp(f, -1e6, 1e6);
  }
  /// Lower bound of the scaled cost over designs with these catalogue values (min_cost only).
  double cost_lower_bound(const std::vector<double>& values, const std::vector<int>& free) const {
    std::vector<double> v = values;
    for (int i : free) v[static_cast<std::size_t>(i)] = vars_[static_cast<std::size_t>(i)].lo;
    return (design_cost(vars_, v) - cost_floor_) / cost_span_;
  }

  // --- evaluations -----------------------------------------------------------------------------
  double elapsed() const { return std::chrono::duration<double>(Clock::now() - start_).count(); }
  double search_elapsed() const { return std::chrono::duration<double>(Clock::now() - search_start_).count(); }
  bool out_of_time() const { return search_elapsed() >= sizing_.max_seconds; }
  bool budget_left() const { return evaluations_ < sizing_.max_evaluations && !out_of_time(); }
  void note_budget_stop() {
    if (stop_reason_ != "converged") return;
    stop_reason_ = out_of_time() ? "time budget" : "evaluation budget";
  }

  Point make_point(const std::vector<double>& values, DesignOutcome outcome) const {
    Point p;
    p.values = values;
    p.outcome = std::move(outcome);
    p.f = scaled_objective(values, p.outcome);
    p.pass = p.outcome.pass();
    p.least = p.outcome.least();
    return p;
  }

  void record(const Point& p, EvaluationKind kind) {
    SizingEvaluation e;
    e.number = static_cast<long>(history_.size());
    e.kind = kind;
    e.cases = p.outcome.cases;
    e.values = p.values;
    e.cost = design_cost(vars_, p.values);
    e.objective = objective_value(p.values, p.outcome);
    e.ratio = p.outcome.ratio;
    e.geometry = p.outcome.geometry;
    e.least = p.least;
    e.pass = p.pass;
    e.seconds = elapsed();
    history_.push_back(std::move(e));
    if (kind == EvaluationKind::screening && p.pass && (!best_screen_ || p.f < best_screen_->f)) best_screen_ = p;
    if (!least_violation_ || p.least > least_violation_->least ||
        (p.least == least_violation_->least && p.verified && !least_violation_->verified))
      if (kind != EvaluationKind::initial || initial_in_range_) least_violation_ = p;
    report_progress(kind == EvaluationKind::screening ? "search" : std::string(evaluation_kind_name(kind)));
  }

  void report_progress(const std::string& phase) const {
    if (!options_.progress) return;
    SizingProgress s;
    s.evaluations = evaluations_;
    s.max_evaluations = sizing_.max_evaluations;
    // The best design so far: the best screened one when it beats the best verified one.
    const Point* best = best_verified_ ? &*best_verified_ : nullptr;
    if (best_screen_ && (!best || best_screen_->f < best->f)) best = &*best_screen_;
    if (best) {
      s.best_objective = objective_value(best->values, best->outcome);
      s.best_verified = best->verified;
      s.best_least = best->least;
    }
    s.elapsed = elapsed();
    s.seconds_left = searching_ ? std::max(0.0, sizing_.max_seconds - search_elapsed()) : 0.0;
    s.phase = phase;
    options_.progress(s);
  }

  /// The design on the screening set (memoised while the set does not change).
  const Point& screen(const std::vector<double>& values) {
    const auto hit = memo_.find(values);
    if (hit != memo_.end()) return hit->second;
    if (!budget_left()) {
      note_budget_stop();
      throw BudgetSpent{};
    }
    ++evaluations_;
    ++screening_evaluations_;
    Point p = make_point(values, evaluator_.screen(values, screening_, screen_onset_ ? nullptr : &onset_worst_));
    record(p, EvaluationKind::screening);
    return memo_.emplace(values, std::move(p)).first->second;
  }

  /// The design on every case (no audit); its governing and failed cases join the screening set
  /// when they are not in it. Returns the verified point.
  Point verify(const std::vector<double>& values, bool& added) {
    ++evaluations_;
    ++full_checks_;
    // Through the normalised YAML, as the final design will be: the spec verified is the spec written.
    const Spec design = round_trip(evaluator_.design(values));
    CheckOptions o;
    o.jobs = options_.jobs;
    o.audit = false;
    o.record = false;
    std::vector<long> failed;
    o.on_case = [&](const CaseMetrics& m) {
      if (!m.ok() && failed.size() < 16) failed.push_back(m.index);
    };
    CheckReport report;
    Point p = make_point(values, evaluator_.check(design, o, report));
    p.verified = true;
    std::vector<long> extra = failed;
    for (long g : p.outcome.governing)
      if (g >= 0) extra.push_back(g);
    added = add_to_screening(extra);
    added |= update_onset(p.outcome);
    record(p, EvaluationKind::verification);
    consider_verified(p);
    return p;
  }

  /// The spec as re-loaded from its normalised YAML (values at 12 significant digits); the spec
  /// itself when it cannot be re-loaded (a point beyond the end of its link: an infeasible design).
  Spec round_trip(const Spec& design) const {
    try {
      return load_spec_text(normalised_yaml(design), "sized spec", options_.load);
    } catch (const SpecError&) {
      Spec s = design;
      s.source_file.clear();
      s.source_text.clear();
      return s;
    }
  }

  void consider_verified(const Point& p) {
    const bool acceptable = sizing_.objective == Objective::max_margin ? p.outcome.geometry >= 0 : p.pass;
    if (acceptable && (!best_verified_ || p.f < best_verified_->f)) best_verified_ = p;
  }

  /// The chaotic-onset margin (an onset search per design) is screened only once a full check
  /// finds it failing or within kOnsetScreen of its limit; until then screening takes it from the
  /// latest full check, where it holds with room, so screening stays optimistic (a relaxation).
  /// Returns true when the screening changes (the onset starts to be screened).
  bool update_onset(const DesignOutcome& full) {
    bool any = false, close = false;
    for (std::size_t i = 0; i < spec_.limits.size(); ++i)
      if (spec_.limits[i].kind == LimitKind::onset_margin) {
        any = true;
        close |= !(full.ratio[i] >= kOnsetScreen);
      }
    if (!any || screen_onset_) return false;
    if (close) {
      screen_onset_ = true;
      memo_.clear();
      return true;
    }
    if (full.worst != onset_worst_) memo_.clear();
    onset_worst_ = full.worst;
    return false;
  }

  bool add_to_screening(const std::vector<long>& cases) {
    bool added = false;
    for (long c : cases)
      if (c >= 0 && !std::binary_search(screening_.begin(), screening_.end(), c)) {
        screening_.insert(std::upper_bound(screening_.begin(), screening_.end(), c), c);
        added = true;
      }
    if (added) memo_.clear();
    return added;
  }

  // --- NLopt -----------------------------------------------------------------------------------
  enum class Goal { objective, margin };

  struct Problem {
    Sizer* self;
    const std::vector<int>* free;
    std::vector<double> base;  ///< values of the variables that are not free
    Goal goal;
    long stop_at;              ///< evaluation count at which this search ends
    std::vector<Point>* seen;
    std::exception_ptr error;
    bool budget = false;       ///< ended by a budget (its own or the run's)

    std::vector<double> values(const double* x) const {
      std::vector<double> v = base;
      for (std::size_t k = 0; k < free->size(); ++k) {
        const auto i = static_cast<std::size_t>((*free)[k]);
        v[i] = self->vars_[i].value_at(x[k]);
      }
      return v;
    }
    const Point& eval(const double* x) {
      const std::vector<double> v = values(x);
      if (self->memo_.find(v) == self->memo_.end() && self->evaluations_ >= stop_at) {
        if (!self->budget_left()) self->note_budget_stop();
        budget = true;
        throw nlopt::forced_stop();
      }
      try {
        const Point& p = self->screen(v);
        seen->push_back(p);
        return p;
      } catch (const BudgetSpent&) {
        budget = true;
        throw nlopt::forced_stop();
      } catch (...) {
        error = std::current_exception();
        throw nlopt::forced_stop();
      }
    }
  };

  static double nlopt_objective(unsigned, const double* x, double*, void* data) {
    auto* pr = static_cast<Problem*>(data);
    const Point& p = pr->eval(x);
    return pr->goal == Goal::objective ? p.f : std::clamp(-p.least, -1e6, 1e6);
  }
  static void nlopt_constraints(unsigned m, double* result, unsigned, const double* x, double*, void* data) {
    auto* pr = static_cast<Problem*>(data);
    const Point& p = pr->eval(x);
    unsigned j = 0;
    if (pr->goal == Goal::objective && pr->self->sizing_.objective != Objective::max_margin)
      for (double r : p.outcome.ratio) result[j++] = p.outcome.required - r;
    if (pr->self->geometry_) result[j++] = -std::clamp(p.outcome.geometry, -1e6, 1e6);
    for (; j < m; ++j) result[j] = 0;
  }

  unsigned constraint_count(Goal goal) const {
    unsigned m = geometry_ ? 1 : 0;
    if (goal == Goal::objective && sizing_.objective != Objective::max_margin)
      m += static_cast<unsigned>(spec_.limits.size());
    return m;
  }

  /// One NLopt run over the free variables from `start`; every point it evaluates goes to `seen`.
  void optimise(nlopt::algorithm algorithm, const std::vector<int>& free, const std::vector<double>& start, long budget,
                Goal goal, std::vector<Point>& seen, double step = 0.1) {
    if (free.empty() || budget <= 0 || !budget_left()) {
      if (!budget_left()) note_budget_stop();
      return;
    }
    const auto n = static_cast<unsigned>(free.size());
    Problem pr{this, &free, start, goal, evaluations_ + budget, &seen, nullptr, false};
    nlopt::opt opt(algorithm, n);
    opt.set_lower_bounds(std::vector<double>(n, 0.0));
    opt.set_upper_bounds(std::vector<double>(n, 1.0));
    opt.set_min_objective(nlopt_objective, &pr);
    const unsigned m = constraint_count(goal);
    if (m > 0) opt.add_inequality_mconstraint(nlopt_constraints, &pr, std::vector<double>(m, 0.0));
    opt.set_maxeval(static_cast<int>(std::min<long>(4 * budget + 16, 1'000'000'000)));
    if (algorithm == nlopt::GN_ISRES) {
      const long population = std::clamp<long>(budget / 6, 5L * (n + 1), 20L * (n + 1));
      opt.set_population(static_cast<unsigned>(population));
    } else {
      opt.set_xtol_abs(std::vector<double>(n, 1e-4));
      opt.set_ftol_abs(1e-10);
      opt.set_initial_step(std::vector<double>(n, step));
    }
    std::vector<double> x(n);
    for (unsigned k = 0; k < n; ++k) {
      const auto i = static_cast<std::size_t>(free[k]);
      x[k] = vars_[i].scaled(start[i]);
    }
    double fmin = 0;
    try {
      opt.optimize(x, fmin);
    } catch (const nlopt::forced_stop&) {
    } catch (const nlopt::roundoff_limited&) {
    } catch (const std::runtime_error&) {
      if (!pr.error) throw;
    }
    if (pr.error) std::rethrow_exception(pr.error);
  }

  static const Point* best_pass(const std::vector<Point>& seen) {
    const Point* best = nullptr;
    for (const auto& p : seen)
      if (p.pass && (!best || p.f < best->f)) best = &p;
    return best;
  }
  static const Point* best_least(const std::vector<Point>& seen) {
    const Point* best = nullptr;
    for (const auto& p : seen)
      if (!best || p.least > best->least) best = &p;
    return best;
  }
  const Point* best_of(const std::vector<Point>& seen) const {
    if (sizing_.objective != Objective::max_margin) return best_pass(seen);
    const Point* best = nullptr;
    for (const auto& p : seen)
      if (p.outcome.geometry >= 0 && (!best || p.f < best->f)) best = &p;
    return best;
  }

  /// Closes in on the constraint boundary: bisects between the best feasible point and the
  /// nearest-to-feasible point of lower objective.
  void bisect_boundary(std::vector<Point>& seen, long stop_at) {
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
  void snap_to_bounds(const std::vector<int>& free, std::vector<Point>& seen, long stop_at) {
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
  std::vector<Point> search(const std::vector<int>& free, const std::vector<double>& start, long budget, bool global,
                            std::uint64_t seed) {
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
        if (const Point* p = best_of(seen)) from = p->values;
        else if (const Point* q = best_least(seen)) from = q->values;
      }
      optimise(nlopt::LN_COBYLA, free, from, stop_at - evaluations_, Goal::objective, seen, global ? 0.05 : 0.1);
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
  void solve(const std::vector<int>& free, std::vector<double> start, long budget, std::uint64_t seed) {
    const long end = evaluations_ + budget;
    for (int round = 0; round < kMaxRounds; ++round) {
      if (round > 0 && (evaluations_ >= end || !budget_left())) break;
      const std::vector<Point> seen =
          search(free, start, std::max<long>(end - evaluations_, 1), sizing_.mode == SearchMode::global && round == 0,
                 seed + static_cast<std::uint64_t>(round));
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

  // --- catalogue -------------------------------------------------------------------------------
  std::vector<std::vector<double>> all_combinations(const std::vector<int>& cat) const {
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
  std::vector<std::vector<double>> neighbour_combinations(const std::vector<int>& cat,
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

  void size_with_catalogue(const std::vector<int>& cont, const std::vector<int>& cat, std::vector<double> start) {
    double product = 1;
    for (int i : cat) product *= static_cast<double>(vars_[static_cast<std::size_t>(i)].catalogue.size());
    const long per_combination = cont.empty() ? 2 : 10 * static_cast<long>(cont.size() + 1);
    std::vector<std::vector<double>> combos;
    if (product <= kMaxCombinations && product * static_cast<double>(per_combination) <= sizing_.max_evaluations) {
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
      if (const Point* p = best_of(seen)) relaxed = p->values;
      else if (const Point* q = best_least(seen)) relaxed = q->values;
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
      if (sizing_.objective == Objective::min_cost && best_verified_ && cost_lower_bound(v, cont) >= best_verified_->f)
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
  std::string round_to_steps(std::vector<double>& values) {
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
        d += std::fabs(v.scaled(c[static_cast<std::size_t>(i)]) -
                       v.scaled(values[static_cast<std::size_t>(i)]));
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

  void build_result(SizingResult& r) const;

  const Spec& spec_;
  SizingOptions options_;
  SizingSpec sizing_;
  DesignEvaluator evaluator_;
  const std::vector<DesignVariable>& vars_;
  bool geometry_ = false;
  bool screen_onset_ = false;
  std::vector<double> onset_worst_;  ///< per limit: the latest full check's worst values
  double cost_floor_ = 0, cost_span_ = 1, metric_scale_ = 1;
  bool initial_in_range_ = false;
  std::vector<long> screening_;
  std::map<std::vector<double>, Point> memo_;
  long evaluations_ = 0, screening_evaluations_ = 0, full_checks_ = 0;
  Clock::time_point start_, search_start_;
  bool searching_ = false;
  std::vector<SizingEvaluation> history_;
  std::optional<Point> best_verified_, best_screen_, least_violation_;
  std::string stop_reason_ = "converged";
  std::string catalogue_method_;
};

SizingResult Sizer::run() {
  SizingResult r;
  start_ = Clock::now();
  r.variables = vars_;
  r.required_margin = evaluator_.required_margin();
  r.case_count = evaluator_.case_count();
  r.source_file = spec_.source_file;
  geometry_ = varies_geometry(vars_);
  for (const auto& v : vars_) {
    cost_floor_ += v.cost * v.lo;
    r.initial_values.push_back(v.initial);
  }
  double span = 0;
  for (const auto& v : vars_) span += v.cost * (v.hi - v.lo);
  cost_span_ = span > 0 ? span : 1.0;
  initial_in_range_ = true;
  for (const auto& v : vars_) {
    const bool in = v.discrete() ? std::find(v.catalogue.begin(), v.catalogue.end(), v.initial) != v.catalogue.end()
                                 : v.initial >= v.lo && v.initial <= v.hi;
    initial_in_range_ &= in;
  }
  r.initial_in_range = initial_in_range_;

  // 1. The design as given, on every case.
  {
    CheckOptions o;
    o.jobs = options_.jobs;
    o.audit = false;
    o.record = false;
    std::vector<long> failed;
    o.on_case = [&](const CaseMetrics& m) {
      if (!m.ok() && failed.size() < 16) failed.push_back(m.index);
    };
    ++full_checks_;
    r.outcome_before = evaluator_.check(spec_, o, r.before);
    const double metric = r.outcome_before.metric;
    metric_scale_ = std::isfinite(metric) && metric != 0 ? std::fabs(metric) : 1.0;
    Point p = make_point(r.initial_values, r.outcome_before);
    p.verified = true;
    if (initial_in_range_) consider_verified(p);
    record(p, EvaluationKind::initial);
    // 2. The screening set: every k-th case, the governing and the failed cases of the design as given.
    const long n = r.case_count;
    const long target = options_.screening_cases;
    const long stride = target <= 0 || target >= n ? 1 : (n + target - 1) / target;
    for (long i = 0; i < n; i += stride) screening_.push_back(i);
    std::vector<long> extra = failed;
    for (long g : r.outcome_before.governing) extra.push_back(g);
    add_to_screening(extra);
    update_onset(r.outcome_before);
    r.objective_before = objective_value(r.initial_values, r.outcome_before);
  }

  // 3. The search.
  std::vector<double> start;
  for (const auto& v : vars_) start.push_back(v.discrete() ? v.nearest(v.initial) : std::clamp(v.initial, v.lo, v.hi));
  std::vector<int> cont, cat;
  for (std::size_t i = 0; i < vars_.size(); ++i) (vars_[i].discrete() ? cat : cont).push_back(static_cast<int>(i));
  r.screening_size = static_cast<long>(screening_.size());
  search_start_ = Clock::now();
  searching_ = true;
  if (cat.empty())
    solve(cont, start, sizing_.max_evaluations, sizing_.seed);
  else
    size_with_catalogue(cont, cat, start);
  searching_ = false;

  // 4. The final design: the best verified one, else the one nearest to holding.
  std::vector<double> final_values = start;
  if (best_verified_)
    final_values = best_verified_->values;
  else if (least_violation_)
    final_values = least_violation_->values;
  final_values = round12(final_values);
  r.unrounded_values = final_values;
  // 4a. Variables with a step: the multiples next to the values found, each verified on every case.
  r.rounding = round_to_steps(final_values);
  r.values = final_values;

  // 5. Through its YAML, then every case with the audit.
  r.algorithm = sizing_.mode == SearchMode::global ? "ISRES, then COBYLA polish" : "COBYLA";
  r.catalogue_method = catalogue_method_;
  r.stop_reason = stop_reason_;
  r.evaluations = evaluations_;
  r.screening_evaluations = screening_evaluations_;
  r.full_checks = full_checks_ + 1;
  r.source_sha256 = spec_sha256(spec_);
  const Spec design = evaluator_.design(final_values);
  r.sized_yaml = sized_spec_header(r) + normalised_yaml(design);
  if (options_.write_sized_spec) r.sized_path = options_.write_sized_spec(r.sized_yaml);
  try {
    r.sized = r.sized_path.empty() ? load_spec_text(r.sized_yaml, "sized spec", options_.load)
                                   : load_spec(r.sized_path, options_.load);
  } catch (const SpecError&) {
    // Only a design with a point beyond the end of its link (infeasible) fails to re-load.
    r.sized = design;
    r.sized.source_file.clear();
    r.sized.source_text.clear();
  }
  for (std::size_t i = 0; i < vars_.size(); ++i) {
    const double written = get_spec_value(r.sized, vars_[i].target);
    SWAYBOUND_REQUIRE(written == final_values[i], "the sized spec holds {} for {}, the search found {}", written,
                      vars_[i].path, final_values[i]);
  }
  report_progress("final check");
  CheckOptions o;
  o.jobs = options_.jobs;
  o.audit = options_.audit;
  o.record = options_.record;
  o.on_case = options_.on_final_case;
  r.outcome_after = evaluator_.check(r.sized, o, r.after);
  Point p = make_point(final_values, r.outcome_after);
  p.verified = true;
  record(p, EvaluationKind::final_check);
  r.feasible = r.after.pass && r.outcome_after.pass();
  r.objective_after = objective_value(final_values, r.outcome_after);
  r.history = history_;
  build_result(r);
  r.seconds = elapsed();
  return r;
}

void Sizer::build_result(SizingResult& r) const {
  switch (sizing_.objective) {
    case Objective::min_cost:
      r.objective_label = "weighted cost";
      r.objective_unit = "";
      break;
    case Objective::min_metric:
      r.objective_label = evaluator_.metric().label;
      r.objective_unit = evaluator_.metric().unit;
      break;
    case Objective::max_margin:
      r.objective_label = "least margin ratio";
      r.objective_unit = "";
      break;
  }
  for (std::size_t i = 0; i < vars_.size(); ++i) {
    const DesignVariable& v = vars_[i];
    VariableOutcome o;
    o.path = v.path;
    o.unit = v.unit;
    o.lo = v.lo;
    o.hi = v.hi;
    o.cost = v.cost;
    o.discrete = v.discrete();
    o.before = r.initial_values[i];
    o.after = r.values[i];
    o.at_bound = v.at_bound(o.after);
    o.step = v.step;
    o.unrounded = i < r.unrounded_values.size() ? r.unrounded_values[i] : o.after;
    r.variable_outcomes.push_back(o);
  }
  for (std::size_t i = 0; i < r.after.checks.size(); ++i) {
    const CheckResult& a = r.after.checks[i];
    LimitOutcome l;
    l.limit = a.limit;
    l.key = a.key;
    l.subject = a.subject;
    l.unit = a.unit;
    l.limit_value = a.limit_value;
    if (i < r.before.checks.size()) {
      l.worst_before = r.before.checks[i].worst;
      l.ratio_before = r.outcome_before.ratio[i];
      l.pass_before = r.before.checks[i].pass;
    }
    l.worst_after = a.worst;
    l.ratio_after = r.outcome_after.ratio[i];
    l.pass_after = a.pass;
    l.binding = !a.pass || l.ratio_after < r.required_margin + kBindingRatio;
    l.shortfall = a.pass ? 0.0 : (std::isnan(a.margin) ? std::nan("") : -a.margin);
    l.governing_after = a.governing_id;
    r.limits.push_back(l);
  }
}

}  // namespace

SizingResult run_sizing(const Spec& spec, const SizingOptions& options) {
  design_variables(spec);  // SpecError when there is nothing to size
  Sizer sizer(spec, options);
  return sizer.run();
}

std::string sized_spec_header(const SizingResult& r) {
  std::string h;
  h += fmt::format("# Sized by swaybound {} (commit {}), `swaybound size`, from {} (sha256 {}).\n", tool_version(),
                   git_commit(), r.source_file.empty() ? std::string("a spec in memory") : r.source_file,
                   r.source_sha256);
  h += "# The normalised spec (SI units, defaults written out; the original's comments are not kept) with\n";
  h += "# the design variables set to the values the search found:\n";
  for (std::size_t i = 0; i < r.variables.size(); ++i)
    h += fmt::format("#   {} = {:.12g} {} (was {:.12g})\n", r.variables[i].path, r.values[i], r.variables[i].unit,
                     r.initial_values[i]);
  if (r.required_margin > 0)
    h += fmt::format("# Every limit was required to hold with {:g}% to spare (sizing.required_margin).\n",
                     100 * r.required_margin);
  for (std::size_t i = 0; i < r.variables.size(); ++i)
    if (r.variables[i].step > 0 && !r.variables[i].discrete() && i < r.unrounded_values.size())
      h += fmt::format("#   {} rounded to a multiple of {:.12g} {} from {:.12g}\n", r.variables[i].path,
                       r.variables[i].step, r.variables[i].unit, r.unrounded_values[i]);
  h += "# The check of exactly this file on every case is in results.json beside it; the verdict there\n";
  h += "# decides. CAUTION: a sized design is a proposal, not a certification. It still needs the review\n";
  h += "# and sign-off of a licensed professional engineer against the applicable codes and standards.\n";
  return h;
}

}  // namespace swaybound
