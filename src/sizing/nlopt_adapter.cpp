// The NLopt adapter of the sizing search: the problem NLopt sees (variables scaled to [0, 1],
// the screened objective and constraints), one NLopt run, and why it stopped.
#include "sizer.hpp"

#include <algorithm>
#include <array>
#include <exception>
#include <new>
#include <stdexcept>

namespace swaybound {

namespace {

struct StopReasonRow {
  StopReason reason;
  std::string_view name, meaning;
};

/// One row per reason, in the order of the enum.
constexpr std::array<StopReasonRow, 14> kStopReasons{{
    {StopReason::success, "success", "NLopt reports success without naming a tolerance"},
    {StopReason::stopval_reached, "stopval_reached", "the objective reached the stop value"},
    {StopReason::ftol_reached, "ftol_reached",
     "converged: the objective changed by less than its tolerance between steps"},
    {StopReason::xtol_reached, "xtol_reached",
     "converged: the scaled variables moved by less than their tolerance (1e-4 of the range)"},
    {StopReason::maxeval_reached, "maxeval_reached",
     "NLopt's cap on calls for the stage was reached (4 x its budget + 16, repeated designs included)"},
    {StopReason::maxtime_reached, "maxtime_reached", "NLopt's own time limit was reached"},
    {StopReason::failure, "failure", "NLopt failed (generic failure); the designs it evaluated are kept"},
    {StopReason::invalid_args, "invalid_args", "NLopt refused its arguments (bounds, steps or tolerances)"},
    {StopReason::out_of_memory, "out_of_memory", "NLopt ran out of memory"},
    {StopReason::roundoff_limited, "roundoff_limited",
     "round-off limited: rounding errors stopped progress, the best design is as good as the arithmetic allows"},
    {StopReason::forced_stop, "forced_stop", "the search stopped NLopt"},
    {StopReason::evaluation_budget, "evaluation_budget",
     "the budget of evaluations (sizing.budget.evaluations) is spent"},
    {StopReason::time_budget, "time_budget", "the time budget (sizing.budget.seconds) is spent"},
    {StopReason::stage_budget, "stage_budget", "the share of the budget this stage was given is spent"},
}};

constexpr bool rows_in_enum_order() {
  for (std::size_t i = 0; i < kStopReasons.size(); ++i)
    if (static_cast<std::size_t>(kStopReasons[i].reason) != i) return false;
  return kStopReasons.back().reason == StopReason::stage_budget;
}
static_assert(rows_in_enum_order(), "one row per StopReason, in the order of the enum");

const StopReasonRow& stop_reason_row(StopReason reason) {
  const auto i = static_cast<std::size_t>(reason);
  return i < kStopReasons.size() ? kStopReasons[i] : kStopReasons[static_cast<std::size_t>(StopReason::failure)];
}

}  // namespace

std::string_view stop_reason_name(StopReason reason) { return stop_reason_row(reason).name; }

std::string_view stop_reason_meaning(StopReason reason) { return stop_reason_row(reason).meaning; }

StopReason stop_reason_of_nlopt_result(int code) {
  switch (static_cast<nlopt::result>(code)) {
    case nlopt::SUCCESS: return StopReason::success;
    case nlopt::STOPVAL_REACHED: return StopReason::stopval_reached;
    case nlopt::FTOL_REACHED: return StopReason::ftol_reached;
    case nlopt::XTOL_REACHED: return StopReason::xtol_reached;
    case nlopt::MAXEVAL_REACHED: return StopReason::maxeval_reached;
    case nlopt::MAXTIME_REACHED: return StopReason::maxtime_reached;
    case nlopt::FAILURE: return StopReason::failure;
    case nlopt::INVALID_ARGS: return StopReason::invalid_args;
    case nlopt::OUT_OF_MEMORY: return StopReason::out_of_memory;
    case nlopt::ROUNDOFF_LIMITED: return StopReason::roundoff_limited;
    case nlopt::FORCED_STOP: return StopReason::forced_stop;
    default: return StopReason::failure;  // NLOPT_NUM_FAILURES, NLOPT_NUM_RESULTS: markers, not results
  }
}

StopReason stop_reason_of_nlopt_exception(const std::exception_ptr& error) {
  try {
    std::rethrow_exception(error);
  } catch (const nlopt::roundoff_limited&) {  // both derive from std::runtime_error: before it
    return StopReason::roundoff_limited;
  } catch (const nlopt::forced_stop&) {
    return StopReason::forced_stop;
  } catch (const std::invalid_argument&) {
    return StopReason::invalid_args;
  } catch (const std::bad_alloc&) {
    return StopReason::out_of_memory;
  } catch (...) {
    return StopReason::failure;
  }
}

}  // namespace swaybound

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
  StopReason budget_reason = StopReason::stage_budget;  ///< which one, when `budget`

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
      budget_reason = self->budget_left() ? StopReason::stage_budget : self->run_budget_reason();
      throw nlopt::forced_stop();
    }
    try {
      const Point& p = self->screen(v);
      seen->push_back(p);
      return p;
    } catch (const BudgetSpent&) {
      budget = true;
      budget_reason = self->run_budget_reason();
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

/// One NLopt run over the free variables from `start`; every point it evaluates goes to `seen`, and
/// the stage, with why NLopt stopped, to `stages_`. An error of an evaluation is rethrown; so is
/// NLopt's std::bad_alloc (out of memory: nothing sensible follows). Every other way NLopt ends
/// is a stop reason of the stage, and the search goes on from the designs it evaluated.
void Sizer::optimise(nlopt::algorithm algorithm, const std::vector<int>& free,
                     const std::vector<double>& start, long budget, Goal goal, std::vector<Point>& seen,
                     double step) {
  if (free.empty() || budget <= 0 || !budget_left()) {
    if (!budget_left()) note_budget_stop();
    return;
  }
  const auto n = static_cast<unsigned>(free.size());
  Problem pr{this, &free, start, goal, evaluations_ + budget, &seen, nullptr, false, StopReason::stage_budget};
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
  SearchStage stage;
  stage.algorithm = algorithm == nlopt::GN_ISRES ? "ISRES" : "COBYLA";
  stage.goal = goal == Goal::objective ? "objective" : "least margin";
  stage.first_evaluation = evaluations_;
  stage.budget = budget;
  double fmin = 0;
  try {
    stage.reason = stop_reason_of_nlopt_result(opt.optimize(x, fmin));
  } catch (const std::bad_alloc&) {
    if (!pr.error) throw;
  } catch (...) {
    stage.reason = stop_reason_of_nlopt_exception(std::current_exception());
  }
  if (pr.error) std::rethrow_exception(pr.error);
  if (stage.reason == StopReason::forced_stop && pr.budget) stage.reason = pr.budget_reason;
  stage.evaluations = evaluations_ - stage.first_evaluation;
  stages_.push_back(std::move(stage));
}

}  // namespace swaybound::sizing_search
