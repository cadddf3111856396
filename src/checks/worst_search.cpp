// The worst-case search's optimiser (checks/worst_search.hpp). Built into swaybound::sizing, which
// links NLopt, so that an engine-only program does not (tests/package); run_check reaches it
// through CheckOptions::search.
//
// Each (limit, start) pair is one task: a bounded local maximisation of the limit's utilisation
// over the free dimensions of the start box and the uncertain values of the start's scenario,
// scaled to [0, 1] each, from the sampled start (and the spec's values). The
// tasks run in parallel on their own workspaces and are combined in task order, so the result does
// not depend on the thread count. None of the optimisers used draws random numbers.
#include <algorithm>
#include <cmath>
#include <map>
#include <memory>
#include <mutex>

#include <fmt/format.h>
#include <nlopt.h>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/worst_search.hpp"

namespace swaybound {

namespace {

/// Initial step of every optimiser, as a fraction of each box dimension.
constexpr double kInitialStep = 0.25;
/// Stop once a step moves every scaled coordinate by less than this.
constexpr double kScaledTolerance = 1e-10;

/// One task: limit `limit` from kept start `start` with `budget` runs.
struct Task {
  int limit = 0;
  std::size_t start = 0;
  int budget = 0;
};

/// What one task found.
struct TaskResult {
  double best = -INFINITY;   ///< best utilisation (the start's to begin with)
  double best_value = std::nan("");
  CaseDef best_case;         ///< the start giving it
  std::vector<double> best_values;  ///< and the uncertain values (empty: the scenario has none)
  double best_ftle = std::nan("");
  std::string from_case;     ///< the sampled start's id
  long runs = 0;
  std::string method;
  bool failed = false;       ///< a run failed
  CaseDef failed_case;
  std::vector<double> failed_values;
  std::string failure;
};

/// The scenario variants made so far (scenario_variant), one per scenario and distinct vector of
/// uncertain values, shared by every task.
class SharedVariants {
 public:
  std::shared_ptr<const ScenarioVariant> get(const CheckPlan& plan, int scenario, const UncertainDims& dims,
                                             const std::vector<double>& values) {
    const std::lock_guard<std::mutex> lock(mutex_);
    auto& slot = variants_[{scenario, values}];
    if (!slot) slot = scenario_variant(*plan.spec, plan.model, scenario, dims, values);
    return slot;
  }

 private:
  std::mutex mutex_;
  std::map<std::pair<int, std::vector<double>>, std::shared_ptr<const ScenarioVariant>> variants_;
};

/// The cases run so far by every task, so that limits searched from the same start share the runs
/// of the points their optimisers have in common (the first steps from one start are the same for
/// every limit). Whether a point is found here depends on the thread timing, but not its metrics:
/// a task's result and its count of evaluations do not.
class SharedRuns {
 public:
  /// Scenario (negated and less one when the run computed the FTLE), then the angles and rates,
  /// then the uncertain values.
  using Key = std::pair<int, std::vector<double>>;
  std::shared_ptr<const CaseMetrics> find(const Key& key) const {
    const std::lock_guard<std::mutex> lock(mutex_);
    const auto it = runs_.find(key);
    return it == runs_.end() ? nullptr : it->second;
  }
  void add(Key key, std::shared_ptr<const CaseMetrics> m) {
    const std::lock_guard<std::mutex> lock(mutex_);
    runs_.emplace(std::move(key), std::move(m));
  }

 private:
  mutable std::mutex mutex_;
  std::map<Key, std::shared_ptr<const CaseMetrics>> runs_;
};

/// The optimiser's view of a task: its objective and bookkeeping.
struct Problem {
  const CheckPlan* plan = nullptr;
  const StartBox* box = nullptr;
  const WorstStarts* starts = nullptr;
  Workspace* ws = nullptr;
  SharedRuns* shared = nullptr;
  SharedVariants* variants = nullptr;
  UncertainDims dims;  ///< the uncertain values of the start's scenario: the last dimensions
  CaseOptions options;  ///< the plan's, with the FTLE only where the limit is ftle_max
  int limit = 0;
  Bound bound = Bound::upper;
  CaseDef base;  ///< the sampled start's case: scenario, set, rope lengths
  int budget = 0;
  double start_utilisation = 0;
  std::map<std::vector<double>, double> seen;  ///< scaled point -> utilisation
  nlopt_opt opt = nullptr;
  TaskResult* result = nullptr;

  /// Scaled coordinate k of a point: clamped to [0, 1], or wrapped into [0, 1) for a periodic
  /// dimension (a phase over a whole turn).
  double scaled(const double* u, std::size_t k) const {
    if (k < box->free.size() && box->periodic[static_cast<std::size_t>(box->free[k])]) return u[k] - std::floor(u[k]);
    return std::clamp(u[k], 0.0, 1.0);
  }

  /// The values of the box's free dimensions at scaled point `u`.
  std::vector<double> start_at(const double* u) const {
    std::vector<double> values;
    for (std::size_t k = 0; k < box->free.size(); ++k) {
      const auto d = static_cast<std::size_t>(box->free[k]);
      values.push_back(box->lo[d] + u[k] * (box->hi[d] - box->lo[d]));
    }
    return values;
  }

  /// The uncertain values at scaled point `u`.
  std::vector<double> values_at(const double* u) const {
    std::vector<double> values;
    for (std::size_t k = 0; k < dims.size(); ++k) values.push_back(dims.lo[k] + u[box->free.size() + k] * (dims.hi[k] - dims.lo[k]));
    return values;
  }

  /// Ends the task on a run that failed (or a start that does not exist): it fails the limit.
  double fail(const CaseDef& def, const std::vector<double>& values, std::string why) {
    result->failed = true;
    result->failed_case = def;
    result->failed_values = values;
    result->failure = std::move(why);
    nlopt_force_stop(opt);
    return start_utilisation;
  }

  double evaluate(const double* u) {
    std::vector<double> key(box->free.size() + dims.size());
    for (std::size_t k = 0; k < key.size(); ++k) key[k] = scaled(u, k);
    if (const auto it = seen.find(key); it != seen.end()) return it->second;
    if (result->runs >= budget) {
      nlopt_force_stop(opt);
      return start_utilisation;
    }
    const std::vector<double> values = values_at(key.data());
    // The variant keeps the plan's model id, so this task's workspace runs it.
    const auto variant = values.empty() ? nullptr : variants->get(*plan, base.scenario, dims, values);
    const Model& model = variant ? variant->model : plan->model;
    const Spec& spec = variant ? variant->spec : *plan->spec;
    CaseDef def = base;
    if (std::string why = move_start(*box, start_at(key.data()), spec, plan->space, model, *ws, def); !why.empty()) {
      ++result->runs;
      return fail(def, values, "no_start: " + why);
    }
    SharedRuns::Key shared_key{options.ftle ? -1 - def.scenario : def.scenario, def.initial.theta};
    for (const std::vector<double>* list : std::initializer_list<const std::vector<double>*>{&def.initial.omega, &def.initial.phi, &def.initial.phi_rate, &values})
      shared_key.second.insert(shared_key.second.end(), list->begin(), list->end());
    std::shared_ptr<const CaseMetrics> run = shared->find(shared_key);
    if (!run) {
      run = std::make_shared<const CaseMetrics>(run_case(model, spec, *ws, def, plan->streaming, options));
      shared->add(std::move(shared_key), run);
    }
    const CaseMetrics& m = *run;
    ++result->runs;
    // A failed run fails the limit: stop here and report its start.
    if (!m.ok()) return fail(def, values, fmt::format("{}: {}", status_name(m.status), m.reason));
    const double value = starts->value(limit, m);
    // A case without a value (none of the limit's links has one) is neither better nor worse.
    const double u_value = std::isnan(value) ? start_utilisation : utilisation(bound, value);
    seen.emplace(std::move(key), u_value);
    if (!std::isnan(value) && u_value > result->best) {
      result->best = u_value;
      result->best_value = value;
      result->best_case = def;
      result->best_values = values;
      result->best_ftle = m.ftle;
    }
    return u_value;
  }

  static double objective(unsigned, const double* u, double*, void* data) {
    return static_cast<Problem*>(data)->evaluate(u);
  }
};

/// Runs one optimiser from `x`; returns its NLopt result.
nlopt_result optimise(nlopt_algorithm algorithm, Problem& p, std::vector<double>& x) {
  const auto d = static_cast<unsigned>(x.size());
  nlopt_opt opt = nlopt_create(algorithm, d);
  if (!opt) return NLOPT_OUT_OF_MEMORY;
  p.opt = opt;
  // A periodic dimension may run a whole turn past either end (wrapped when evaluated), so the
  // optimiser sees no wall at the seam.
  std::vector<double> lower(d, 0.0), upper(d, 1.0);
  const std::vector<double> step(d, kInitialStep);
  for (std::size_t k = 0; k < p.box->free.size(); ++k)
    if (p.box->periodic[static_cast<std::size_t>(p.box->free[k])]) {
      lower[k] = -1;
      upper[k] = 2;
    }
  nlopt_set_lower_bounds(opt, lower.data());
  nlopt_set_upper_bounds(opt, upper.data());
  nlopt_set_max_objective(opt, &Problem::objective, &p);
  nlopt_set_initial_step(opt, step.data());
  nlopt_set_xtol_abs1(opt, kScaledTolerance);
  // Cached points cost no run; this only guards against an optimiser circling among them.
  nlopt_set_maxeval(opt, 50 * p.budget + 100);
  double best = 0;
  const nlopt_result r = nlopt_optimize(opt, x.data(), &best);
  nlopt_destroy(opt);
  p.opt = nullptr;
  return r;
}

/// Whether an optimiser's result means it refused the problem (rather than stopping or ending).
bool refused(nlopt_result r) { return r == NLOPT_INVALID_ARGS || r == NLOPT_FAILURE || r == NLOPT_OUT_OF_MEMORY; }

TaskResult run_task(const CheckPlan& plan, const std::vector<StartBox>& boxes, const WorstStarts& starts, const Task& task,
                    Workspace& ws, SharedRuns& shared, SharedVariants& variants) {
  const CaseMetrics& start = starts.of(task.limit)[task.start];
  const StartBox& box = boxes[static_cast<std::size_t>(start.set)];
  const Bound bound = limit_kind(plan.spec->limits[static_cast<std::size_t>(task.limit)].kind).bound;
  TaskResult result;
  Problem p;
  p.plan = &plan;
  p.box = &box;
  p.starts = &starts;
  p.ws = &ws;
  p.shared = &shared;
  p.variants = &variants;
  p.dims = uncertain_dims(*plan.spec, start.scenario);
  // The FTLE doubles a run's cost: only an ftle_max limit's search computes it at every point (the
  // others get it for the case they end on, for the chaos flag).
  p.options = plan.case_options;
  p.options.ftle = plan.case_options.ftle &&
                   plan.spec->limits[static_cast<std::size_t>(task.limit)].kind == LimitKind::ftle_max;
  p.limit = task.limit;
  p.bound = bound;
  p.base = plan.space.at(start.index);
  p.budget = task.budget;
  p.result = &result;
  const double start_value = starts.value(task.limit, start);
  p.start_utilisation = utilisation(bound, start_value);
  result.best = p.start_utilisation;
  result.best_value = start_value;
  result.best_case = p.base;
  result.best_values = p.dims.nominal;
  result.best_ftle = start.ftle;
  result.from_case = start.id;

  // The start, scaled; its value is the sampled one (no run).
  std::vector<double> x;
  InitialState initial = start.initial;
  for (int d : box.free) {
    const auto k = static_cast<std::size_t>(d);
    const double u = (box_value(box, initial, d) - box.lo[k]) / (box.hi[k] - box.lo[k]);
    x.push_back(box.periodic[k] ? u - std::floor(u) : std::clamp(u, 0.0, 1.0));
  }
  for (std::size_t k = 0; k < p.dims.size(); ++k)
    x.push_back(std::clamp((p.dims.nominal[k] - p.dims.lo[k]) / (p.dims.hi[k] - p.dims.lo[k]), 0.0, 1.0));
  p.seen.emplace(x, p.start_utilisation);

  // BOBYQA first; Nelder-Mead, then COBYLA, from the best point so far when it refuses (it needs
  // two dimensions or more).
  const std::pair<nlopt_algorithm, const char*> methods[] = {
      {NLOPT_LN_BOBYQA, "BOBYQA"}, {NLOPT_LN_NELDERMEAD, "Nelder-Mead"}, {NLOPT_LN_COBYLA, "COBYLA"}};
  for (const auto& [algorithm, name] : methods) {
    result.method = name;
    const nlopt_result r = optimise(algorithm, p, x);
    if (!refused(r) || result.failed) break;
  }
  return result;
}

}  // namespace

namespace {
/// Records in `s` the start of `def` (scenario, angles, rates), the uncertain values of its scenario
/// and the sampled case it came from.
void set_start(LimitSearch& s, const Spec& spec, const CaseDef& def, const std::vector<double>& values,
               const std::string& from_case) {
  s.worst_case = def;
  s.uncertain_dims = uncertain_dims(spec, def.scenario);
  s.uncertain = values;
  s.scenario = def.scenario;
  s.theta = def.initial.theta;
  s.omega = def.initial.omega;
  s.phi = def.initial.phi;
  s.phi_rate = def.initial.phi_rate;
  s.from_case = from_case;
}
}  // namespace

std::vector<LimitSearch> search_worst(const CheckPlan& plan, const WorstStarts& starts,
                                      const std::vector<CheckResult>& checks, const SearchBudget& budget,
                                      int jobs) {
  const Spec& spec = *plan.spec;
  std::vector<StartBox> boxes;  // per set: the box its starts are searched in
  for (std::size_t i = 0; i < spec.cases.initial.size(); ++i) boxes.push_back(set_box(spec, static_cast<int>(i)));
  std::vector<LimitSearch> out;
  std::vector<Task> tasks;
  for (const CheckResult& c : checks) {
    if (!c.per_case) continue;
    LimitSearch s;
    s.limit = c.limit;
    s.sampled_worst = c.worst;
    s.searched_worst = c.worst;
    s.sampled_pass = c.pass;
    s.pass = c.pass;
    s.margin = c.margin;
    const std::vector<CaseMetrics>& kept = starts.of(c.limit);
    if (!kept.empty()) {
      const CaseDef governing = plan.space.at(kept.front().index);
      set_start(s, spec, governing, uncertain_dims(spec, governing.scenario).nominal, governing.id);
      s.ftle = kept.front().ftle;
    }
    // A start whose scenario has no uncertain value has nothing to move in a box that is a point.
    std::vector<int> movable;
    for (std::size_t j = 0; j < kept.size(); ++j)
      if (!boxes[static_cast<std::size_t>(kept[j].set)].free.empty() ||
          !spec.scenarios[static_cast<std::size_t>(kept[j].scenario)].uncertain.empty())
        movable.push_back(static_cast<int>(j));
    s.searched = !movable.empty();
    const int count = static_cast<int>(movable.size());
    for (int j = 0; j < count; ++j) {
      const int share = budget.evaluations / count + (j < budget.evaluations % count ? 1 : 0);
      if (share > 0) tasks.push_back({c.limit, static_cast<std::size_t>(movable[static_cast<std::size_t>(j)]), share});
    }
    out.push_back(std::move(s));
  }

  std::vector<TaskResult> results;
  SharedRuns shared;
  SharedVariants variants;
  RunnerOptions runner;
  runner.jobs = jobs;
  run_ordered<TaskResult>(
      static_cast<long>(tasks.size()), runner, [&] { return Workspace(plan.model); },
      [&](long k, Workspace& ws) { return run_task(plan, boxes, starts, tasks[static_cast<std::size_t>(k)], ws, shared, variants); },
      [&](TaskResult&& r) { results.push_back(std::move(r)); });

  for (LimitSearch& s : out) {
    if (!s.searched) continue;
    const CheckResult& c = checks[static_cast<std::size_t>(s.limit)];
    const Bound bound = c.bound;
    const double sampled = utilisation(bound, c.worst);
    double best = sampled;
    const TaskResult* winner = nullptr;
    const TaskResult* failed = nullptr;
    for (std::size_t k = 0; k < tasks.size(); ++k) {
      if (tasks[k].limit != s.limit) continue;
      const TaskResult& r = results[k];
      s.evaluations += r.runs;
      s.methods.push_back(r.method);
      if (r.failed && !failed) failed = &r;
      if (r.best > best) {
        best = r.best;
        winner = &r;
      }
    }
    if (failed) {
      s.failed_run = true;
      s.failure = failed->failure;
      set_start(s, spec, failed->failed_case, failed->failed_values, failed->from_case);
      s.searched_worst = std::nan("");
      s.margin = std::nan("");
      s.ftle = std::nan("");
      s.pass = false;
      continue;
    }
    if (winner) {
      s.found_worse = true;
      s.searched_worst = winner->best_value;
      set_start(s, spec, winner->best_case, winner->best_values, winner->from_case);
      s.ftle = winner->best_ftle;
      s.raise = best - sampled;
    }
    s.margin = bound == Bound::upper ? c.limit_value - s.searched_worst : s.searched_worst - c.limit_value;
    s.raise_of_margin = std::isfinite(c.margin) && c.margin != 0 ? s.raise / std::fabs(c.margin) : std::nan("");
    s.pass = c.failed_cases == 0 && s.margin >= 0;
    if (plan.case_options.ftle && std::isnan(s.ftle) && winner) {
      // The search ran without the FTLE: compute it for the case it ended on.
      const CaseDef& def = winner->best_case;
      Workspace ws(plan.model);
      if (winner->best_values.empty()) {
        s.ftle = run_case(plan.model, spec, ws, def, plan.streaming, plan.case_options).ftle;
      } else {
        const auto variant = variants.get(plan, def.scenario, s.uncertain_dims, winner->best_values);
        s.ftle = run_case(variant->model, variant->spec, ws, def, plan.streaming, plan.case_options).ftle;
      }
    }
    s.chaotic = plan.case_options.ftle && !std::isnan(s.ftle) && s.ftle > spec.chaos.threshold;
  }
  return out;
}

}  // namespace swaybound
