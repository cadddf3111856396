#pragma once
// Sizing: NLopt searches the design variables of a spec's `sizing` section (dampers, pivots,
// links) for the least weighted cost, the least value of a named metric, or the greatest smallest
// margin, with every limit of the spec, as its worst margin over the whole case set, a constraint:
// margin / scale >= sizing.required_margin (scale: |limit|, or for a limit of 0 the fixed scale of
// its dimension, constraint_scale).
//
// How the search goes (specs/README.md, "sizing", has the user's version):
//   1. The design as given is checked on every case ("before"). Its governing cases, plus every
//      k-th case (k chosen so that about `screening_cases` are taken), form the screening set.
//      The chaotic-onset search (costly, not per case) is screened only once a full check finds
//      onset_margin failing or within 25% of its limit; until then screening takes its value from
//      the latest full check (optimistic, so screening stays a relaxation).
//   2. The search runs on the screening set, with every variable scaled to [0, 1]. Local: COBYLA
//      (derivative-free, constrained by linear approximations in a trust region) from the design
//      as given (clamped into the ranges). Global: ISRES (stochastic ranking evolution strategy,
//      seeded) on part of the budget, then a COBYLA polish from its best point. After COBYLA a
//      short bisection between the best feasible point and the nearest cheaper infeasible one
//      closes in on the constraint boundary.
//   3. The best screening-feasible design is verified on every case. If a check fails there, the
//      governing cases of the full check join the screening set and the search continues from
//      that design (a new round). The screening set is a subset of the case set, so a design
//      that fails screening fails the full check: screening prunes, verification decides.
//   4. Catalogue variables: every combination is enumerated when there are at most 64 and the
//      continuous variables (if any) can still get a search each; otherwise the search runs with
//      the catalogue variables relaxed to their range, and the combinations of the catalogue
//      values next to the relaxed optimum (up to 64) are then searched as above.
//   4a. Continuous variables with a `step`: the combinations of the multiples next to the value
//      found are each checked on every case (cheapest first for min_cost, else nearest first), as
//      catalogue combinations are; the best that passes is the final design.
//   5. The final design goes through its YAML (normalised_yaml, re-loaded) and is checked on
//      every case with the accuracy audit and the search for the worst case between the samples
//      (checks/worst_search.hpp, as `check` runs it; cases.search: false leaves it out): each
//      limit's searched worst decides. That check is what is reported. No design passes that this
//      final check did not pass. Screening and the verification rounds use the samples alone
//      unless sizing.search_in_screening is true (then they search too).
// Worst-case margins are non-smooth (the governing case switches as the design moves): COBYLA's
// linear models tolerate kinks, the screening set keeps the cases that govern, and the
// verification round catches a case that starts to govern outside it.
#include <exception>
#include <functional>
#include <string>
#include <string_view>
#include <vector>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/sizing/evaluate.hpp"
#include "swaybound/spec/loader.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

enum class EvaluationKind {
  initial,       ///< the design as given, every case
  screening,     ///< a design of the search, the screening cases
  verification,  ///< a candidate, every case (no accuracy audit)
  final_check,   ///< the final design re-loaded from its YAML, every case (with the audit)
};
std::string_view evaluation_kind_name(EvaluationKind kind);

struct SizingEvaluation {
  long number = 0;                 ///< 0 for the initial design, then in order
  EvaluationKind kind = EvaluationKind::screening;
  long cases = 0;                  ///< cases run
  std::vector<double> values;      ///< per variable [SI]
  double cost = 0;                 ///< weighted cost sum cost_i value_i
  double objective = 0;            ///< the objective's value (cost; metric [SI]; least margin ratio)
  std::vector<double> ratio;       ///< per limit: constraint value (margin / scale)
  double geometry = 0;             ///< geometry margin (+inf when not constrained)
  double least = 0;                ///< least constraint value
  bool pass = false;               ///< every constraint holds on the cases run
  double seconds = 0;              ///< since the sizing run started
};

/// Why one NLopt stage of the search ended: each of NLopt's results (nlopt::result, the values of
/// nlopt_result) and exceptions, and the stops the search itself forces when a budget is spent.
enum class StopReason {
  success,            ///< NLOPT_SUCCESS
  stopval_reached,    ///< NLOPT_STOPVAL_REACHED
  ftol_reached,       ///< NLOPT_FTOL_REACHED: converged in the objective
  xtol_reached,       ///< NLOPT_XTOL_REACHED: converged in the variables
  maxeval_reached,    ///< NLOPT_MAXEVAL_REACHED: NLopt's own call cap for the stage
  maxtime_reached,    ///< NLOPT_MAXTIME_REACHED
  failure,            ///< NLOPT_FAILURE, std::runtime_error
  invalid_args,       ///< NLOPT_INVALID_ARGS, std::invalid_argument
  out_of_memory,      ///< NLOPT_OUT_OF_MEMORY, std::bad_alloc
  roundoff_limited,   ///< NLOPT_ROUNDOFF_LIMITED, nlopt::roundoff_limited
  forced_stop,        ///< NLOPT_FORCED_STOP, nlopt::forced_stop (for no reason the search records)
  evaluation_budget,  ///< forced stop: sizing.budget.evaluations spent
  time_budget,        ///< forced stop: sizing.budget.seconds spent
  stage_budget,       ///< forced stop: the share of the budget this stage was given is spent
};

/// The reason's name as sizing.json writes it ("xtol_reached", "evaluation_budget", ...).
std::string_view stop_reason_name(StopReason reason);
/// One line saying what the reason means for the search.
std::string_view stop_reason_meaning(StopReason reason);
/// The reason of an NLopt result code (an nlopt::result / nlopt_result value); failure for a
/// value NLopt does not define.
StopReason stop_reason_of_nlopt_result(int code);
/// The reason of an exception nlopt::opt::optimize threw: roundoff_limited, forced_stop,
/// invalid_args (std::invalid_argument), out_of_memory (std::bad_alloc), failure (anything else,
/// std::runtime_error among them).
StopReason stop_reason_of_nlopt_exception(const std::exception_ptr& error);

/// One NLopt run of the search (an ISRES or COBYLA stage) and why it ended.
struct SearchStage {
  std::string algorithm;       ///< "ISRES" or "COBYLA"
  std::string goal;            ///< "objective" or "least margin" (looking for any design that holds)
  long first_evaluation = 0;   ///< evaluations counted before the stage began
  long evaluations = 0;        ///< new evaluations the stage made (counted against the budget)
  long budget = 0;             ///< evaluations the stage was given
  StopReason reason = StopReason::success;
};

/// Stages with the same algorithm, goal and reason, in order of first appearance (for the tables).
struct SearchStageGroup {
  std::string algorithm, goal;
  StopReason reason = StopReason::success;
  long stages = 0, evaluations = 0;
};
std::vector<SearchStageGroup> group_search_stages(const std::vector<SearchStage>& stages);

struct SizingProgress {
  long evaluations = 0, max_evaluations = 0;  ///< counted against the budget
  double best_objective = std::nan("");       ///< of the best design so far (verified if any)
  bool best_verified = false;
  double best_least = std::nan("");           ///< its least margin ratio
  double elapsed = 0, seconds_left = 0;       ///< [s]
  std::string phase;                          ///< "search", "verification", "final check", ...
};

struct SizingOptions {
  int jobs = 0;                  ///< threads (0: every core)
  long screening_cases = 64;     ///< about this many every-k-th cases screen (0: every case screens)
  bool audit = true;             ///< final check with the accuracy audit, as `check`
  bool record = false;           ///< final check records its governing cases (for plots)
  bool search = true;            ///< the search for the worst case between the samples (spec's cases.search permitting)
  LoadOptions load;              ///< for re-loading the sized spec
  std::function<void(const SizingProgress&)> progress;
  std::function<void(const CaseMetrics&)> on_final_case;  ///< every case of the final check, in order
  /// Writes the sized spec's text and returns the path it went to (the final check then loads and
  /// hashes that file); empty: the text is loaded from memory.
  std::function<std::string(const std::string& text)> write_sized_spec;
};

struct VariableOutcome {
  std::string path, unit;
  double lo = 0, hi = 0, cost = 0;
  bool discrete = false;
  double before = 0, after = 0;  ///< SI
  int at_bound = 0;              ///< of `after`: -1 low end, +1 high end, 0 inside
  double step = 0;               ///< the variable's step (SI); 0: not rounded
  double unrounded = 0;          ///< the value the search found, before rounding to the step
};

struct LimitOutcome {
  int limit = 0;
  std::string key, subject, unit;
  double limit_value = 0;
  double worst_before = std::nan(""), worst_after = std::nan("");
  double ratio_before = std::nan(""), ratio_after = std::nan("");  ///< constraint values
  bool pass_before = false, pass_after = false;
  bool binding = false;          ///< after: margin ratio within 1% of the required margin (active), or failing
  double shortfall = 0;          ///< after, when failing: how much the worst value is past the limit [SI]
  /// After: the sampled cases' worst [SI]; worst_after is the searched worst where the search ran.
  double sampled_after = std::nan("");
  std::string governing_after;
  /// After: the final check's worst may be a start transient (CheckResult::start_transient,
  /// checks/start_transient.hpp): the time of that worst [s] and the start that gave it.
  bool start_transient_after = false;
  double time_after = std::nan("");
  std::string start_note_after;
};

struct SizingResult {
  bool feasible = false;         ///< the final check passes: every limit holds on every case
  std::vector<DesignVariable> variables;
  std::vector<VariableOutcome> variable_outcomes;
  std::vector<LimitOutcome> limits;
  std::vector<double> initial_values, values;  ///< SI per variable
  std::vector<double> unrounded_values;        ///< SI per variable: the search's, before rounding to steps
  double required_margin = 0;    ///< every constraint value had to reach it (sizing.required_margin)
  std::string rounding;          ///< empty (no steps), else what rounding to the steps did
  bool initial_in_range = false; ///< the design as given lies in the ranges and catalogues
  Spec sized;                    ///< the final design as re-loaded from `sized_yaml`
  std::string sized_yaml;        ///< header comment + normalised YAML
  std::string sized_path;        ///< where write_sized_spec put it (empty: memory)
  CheckReport before, after;     ///< full checks of the design as given and of the final design
  /// Where the search for the worst case between the samples ran: in the final check (after.searched)
  /// and in screening and the verification rounds (sizing.search_in_screening).
  bool searched_final = false, searched_screening = false;
  DesignOutcome outcome_before, outcome_after;
  double objective_before = std::nan(""), objective_after = std::nan("");
  std::string objective_label, objective_unit;
  std::vector<SizingEvaluation> history;
  long evaluations = 0;          ///< counted against the budget (screening + verification)
  long screening_evaluations = 0, full_checks = 0;
  long screening_size = 0, case_count = 0;
  double seconds = 0;            ///< whole run [s]
  std::string algorithm;         ///< "COBYLA", "ISRES + COBYLA"
  std::string catalogue_method;  ///< empty, "enumeration of N combinations", "relaxed, rounded: N combinations"
  std::string stop_reason;       ///< "converged", "evaluation budget", "time budget"
  std::vector<SearchStage> stages;  ///< every NLopt stage, in order, with why it ended
  std::string source_file, source_sha256;
};

/// Runs the sizing of `spec` (which must have a sizing section: SpecError otherwise).
SizingResult run_sizing(const Spec& spec, const SizingOptions& options = {});

/// One sentence saying where the search for the worst case between the samples ran (the final
/// check, screening) and so which worst each limit's verdict rests on.
std::string worst_case_search_sentence(const SizingResult& result);

/// The header comment of a sized spec file.
std::string sized_spec_header(const SizingResult& result);

/// sizing_history.csv: one row per evaluation; every column names its unit.
std::string sizing_history_csv(const Spec& spec, const SizingResult& result);
/// The before/after table as Markdown (variables, objective, every check, binding limits).
std::string sizing_table_markdown(const Spec& spec, const SizingResult& result);
/// A short machine-readable summary (schema swaybound.sizing/1).
std::string sizing_summary_json(const Spec& spec, const SizingResult& result);

}  // namespace swaybound
