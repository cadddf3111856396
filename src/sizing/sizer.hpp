#pragma once
// The sizing search's state and stages (internal to src/sizing; the public side is
// include/swaybound/sizing/sizing.hpp, whose comment describes the search). One Sizer runs one
// sizing; its member functions live in a file per stage:
//   sizing.cpp         run(): the design as given, the search, rounding, the final check; the result
//   sizer_ledger.cpp   the objective, the ledger of evaluations and the budget, screening and verification
//   nlopt_adapter.cpp  one NLopt run over the free variables, and why it stopped
//   search.cpp         the search strategies: NLopt stages, boundary bisection, snapping, rounds
//   catalogue.cpp      catalogue combinations and rounding to steps
#include <chrono>
#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include <nlopt.hpp>

#include "swaybound/sizing/sizing.hpp"

namespace swaybound::sizing_search {

using Clock = std::chrono::steady_clock;

inline constexpr int kMaxRounds = 6;           ///< search + verification rounds per design subspace
inline constexpr long kMaxCombinations = 64;   ///< catalogue combinations enumerated or searched
inline constexpr double kBindingRatio = 0.01;  ///< a limit within 1% of its value binds
inline constexpr double kGlobalShare = 0.6;    ///< share of a search's budget ISRES gets in global mode
inline constexpr int kBisectionSteps = 12;     ///< boundary bisection after a local search
inline constexpr double kOnsetScreen = 0.25;   ///< onset margin ratio below which screening computes it
inline constexpr double kSnap = 1e-3;          ///< share of a range within which a value snaps to its bound

/// The value as the normalised YAML writes it (12 significant digits), so the design verified is
/// the design written.
double round12(double v);
std::vector<double> round12(std::vector<double> v);

/// Stops the search: the budget (evaluations or seconds) is spent.
struct BudgetSpent {};

struct Point {
  std::vector<double> values;
  DesignOutcome outcome;
  double f = 0;  ///< scaled objective (lower is better)
  bool pass = false;
  double least = 0;  ///< least constraint value
  bool verified = false;
};

class Sizer {
 public:
  Sizer(const Spec& spec, const SizingOptions& options)
      : spec_(spec),
        options_(options),
        sizing_(*spec.sizing),
        evaluator_(spec, design_variables(spec), options.jobs, options.search),
        vars_(evaluator_.variables()) {}

  /// The whole sizing run (sizing.cpp).
  SizingResult run();

 private:
  // --- objective (sizer_ledger.cpp) ---------------------------------------------------------------
  double objective_value(const std::vector<double>& values, const DesignOutcome& o) const;
  double scaled_objective(const std::vector<double>& values, const DesignOutcome& o) const;
  /// Lower bound of the scaled cost over designs with these catalogue values (min_cost only).
  double cost_lower_bound(const std::vector<double>& values, const std::vector<int>& free) const;

  // --- evaluations and budget (sizer_ledger.cpp) --------------------------------------------------
  double elapsed() const { return std::chrono::duration<double>(Clock::now() - start_).count(); }
  double search_elapsed() const {
    return std::chrono::duration<double>(Clock::now() - search_start_).count();
  }
  bool out_of_time() const { return search_elapsed() >= sizing_.max_seconds; }
  bool budget_left() const { return evaluations_ < sizing_.max_evaluations && !out_of_time(); }
  void note_budget_stop();
  /// The run's budget that is spent: time when out of time, else evaluations.
  StopReason run_budget_reason() const {
    return out_of_time() ? StopReason::time_budget : StopReason::evaluation_budget;
  }
  Point make_point(const std::vector<double>& values, DesignOutcome outcome) const;
  void record(const Point& p, EvaluationKind kind);
  void report_progress(const std::string& phase) const;
  /// The design on the screening set (memoised while the set does not change).
  const Point& screen(const std::vector<double>& values);
  /// The design on every case (no audit); its governing and failed cases join the screening set
  /// when they are not in it. Returns the verified point.
  Point verify(const std::vector<double>& values, bool& added);
  /// A design on every case without audit or recording (counted as a full check); the first 16
  /// cases whose run failed go to `failed`.
  DesignOutcome full_check(const Spec& design, CheckReport& report, std::vector<long>& failed);
  /// The spec as re-loaded from its normalised YAML (values at 12 significant digits); the spec
  /// itself when it cannot be re-loaded (a point beyond the end of its link: an infeasible design).
  Spec round_trip(const Spec& design) const;
  void consider_verified(const Point& p);
  /// The chaotic-onset margin is screened only once a full check finds it failing or close to its
  /// limit. Returns true when the screening changes (the onset starts to be screened).
  bool update_onset(const DesignOutcome& full);
  bool add_to_screening(const std::vector<long>& cases);

  // --- NLopt (nlopt_adapter.cpp) -----------------------------------------------------------------
  enum class Goal { objective, margin };
  struct Problem;
  static double nlopt_objective(unsigned, const double* x, double*, void* data);
  static void nlopt_constraints(unsigned m, double* result, unsigned, const double* x, double*, void* data);
  unsigned constraint_count(Goal goal) const;
  /// One NLopt run over the free variables from `start`; every point it evaluates goes to `seen`.
  void optimise(nlopt::algorithm algorithm, const std::vector<int>& free, const std::vector<double>& start,
                long budget, Goal goal, std::vector<Point>& seen, double step = 0.1);

  // --- search strategies (search.cpp) -------------------------------------------------------------
  static const Point* best_pass(const std::vector<Point>& seen);
  static const Point* best_least(const std::vector<Point>& seen);
  const Point* best_of(const std::vector<Point>& seen) const;
  /// Closes in on the constraint boundary: bisects between the best feasible point and the
  /// nearest-to-feasible point of lower objective.
  void bisect_boundary(std::vector<Point>& seen, long stop_at);
  /// Moves every free variable within 0.1% of the range from a bound onto it and keeps that
  /// design when it is at least as good.
  void snap_to_bounds(const std::vector<int>& free, std::vector<Point>& seen, long stop_at);
  /// The search over the free variables (catalogue variables among them relaxed) on the current
  /// screening set. Returns every point evaluated.
  std::vector<Point> search(const std::vector<int>& free, const std::vector<double>& start, long budget,
                            bool global, std::uint64_t seed);
  /// Search, verify, widen the screening set, repeat: the best verified design over the free
  /// variables, the others fixed at `start`'s values.
  void solve(const std::vector<int>& free, std::vector<double> start, long budget, std::uint64_t seed);

  // --- catalogue and steps (catalogue.cpp) ------------------------------------------------------
  std::vector<std::vector<double>> all_combinations(const std::vector<int>& cat) const;
  /// Combinations of the catalogue values next to a relaxed optimum, nearest first (at most 64).
  std::vector<std::vector<double>> neighbour_combinations(const std::vector<int>& cat,
                                                          const std::vector<double>& relaxed) const;
  void size_with_catalogue(const std::vector<int>& cont, const std::vector<int>& cat,
                           std::vector<double> start);
  /// Rounds every continuous variable with a step to a multiple of it. Returns what was done.
  std::string round_to_steps(std::vector<double>& values);

  // --- the result (sizing.cpp) ---------------------------------------------------------------------
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
  std::vector<SearchStage> stages_;  ///< every NLopt run, with why it stopped
  std::string catalogue_method_;
};

}  // namespace swaybound::sizing_search
