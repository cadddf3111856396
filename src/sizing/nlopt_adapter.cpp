// The NLopt adapter of the sizing search: the problem NLopt sees (variables scaled to [0, 1],
// the screened objective and constraints), one NLopt run, and why it stopped.
#include "sizer.hpp"

#include <algorithm>
#include <exception>
#include <stdexcept>

namespace swaybound::sizing_search {

struct Sizer::Problem {
  Sizer* self;
  const std::vector<int>* free;
  std::vector<double> base;  ///< values of the variables that are not free
  Goal goal;
  long stop_at;  ///< evaluation count at which this search ends
  std::vector<Point>* seen;
  std::exception_ptr error;
  bool budget = false;  ///< ended by a budget (its own or the run's)

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

double Sizer::nlopt_objective(unsigned, const double* x, double*, void* data) {
  auto* pr = static_cast<Problem*>(data);
  const Point& p = pr->eval(x);
  return pr->goal == Goal::objective ? p.f : std::clamp(-p.least, -1e6, 1e6);
}
void Sizer::nlopt_constraints(unsigned m, double* result, unsigned, const double* x, double*, void* data) {
  auto* pr = static_cast<Problem*>(data);
  const Point& p = pr->eval(x);
  unsigned j = 0;
  if (pr->goal == Goal::objective && pr->self->sizing_.objective != Objective::max_margin)
    for (double r : p.outcome.ratio) result[j++] = p.outcome.required - r;
  if (pr->self->geometry_) result[j++] = -std::clamp(p.outcome.geometry, -1e6, 1e6);
  for (; j < m; ++j) result[j] = 0;
}

unsigned Sizer::constraint_count(Goal goal) const {
  unsigned m = geometry_ ? 1 : 0;
  if (goal == Goal::objective && sizing_.objective != Objective::max_margin)
    m += static_cast<unsigned>(spec_.limits.size());
  return m;
}

/// One NLopt run over the free variables from `start`; every point it evaluates goes to `seen`.
void Sizer::optimise(nlopt::algorithm algorithm, const std::vector<int>& free,
                     const std::vector<double>& start, long budget, Goal goal, std::vector<Point>& seen,
                     double step) {
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

}  // namespace swaybound::sizing_search
