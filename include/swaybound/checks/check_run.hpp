#pragma once
// The design check, as public stages that `check` and `size` compose:
//   plan_check        spec -> CheckPlan (model, case space, run settings, what to compute)
//   stream_cases      a list of cases, in parallel, into the checks and the running totals
//   run_global_checks modal analysis and chaotic-onset indicators, into the global checks
//   search_worst      the worst case between the samples, per per-case limit (worst_search.hpp)
//   audit_governing   each governing case again at a 100x tighter tolerance (audit_search: each searched worst)
//   record_governing  each governing case again with its time series recorded (for plots)
// run_check composes them over every case of the spec.
#include <cmath>
#include <functional>
#include <string>
#include <vector>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/cases/runner.hpp"
#include "swaybound/chaos/indicators.hpp"
#include "swaybound/checks/checks.hpp"
#include "swaybound/checks/convergence.hpp"
#include "swaybound/checks/shaping_compare.hpp"
#include "swaybound/checks/worst_search.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct FailedCase {
  std::string id, status, reason;
};

/// Most points kept per recorded time series (per plot line): a longer run is decimated to every
/// k-th output sample, k = ceil(samples / kMaxRecordedPoints), so a recording costs at most
/// (1 + 3 x links + 4 x elastic ropes + 3) x kMaxRecordedPoints doubles whatever duration x
/// output_rate is (a spatial chain: 2 x links + 11 more), plus the slack and taut intervals (at
/// most kMaxRecordedIntervals per rope).
inline constexpr long kMaxRecordedPoints = 4000;

/// Most slack intervals (and as many taut intervals after them) kept per rope of a recording.
inline constexpr long kMaxRecordedIntervals = 1000;

/// Snatch peaks located between the samples per rope of a recording (by the run's ExtremeFinder):
/// those of the first kLocatedSnatches re-tensionings; a later one is the largest recorded sample.
inline constexpr int kLocatedSnatches = 24;

/// A time interval [s].
struct Interval {
  double from = 0, to = 0;
};

/// The tension peak between a re-tensioning of an elastic rope (taut again after being slack) and
/// the next slack or the end of the run.
struct SnatchPeak {
  Interval taut;         ///< the taut interval [s]
  Extreme peak;          ///< the largest tension of the fall in it [N] and when [s]
  bool located = false;  ///< located between the samples; else the largest recorded sample
};

/// One elastic rope of a recorded case (model.elastic_links order).
struct RecordedRope {
  int link = -1;                    ///< its link
  std::vector<double> force;        ///< tension of the fall by the rope law, per sample [N]
  std::vector<double> length;       ///< the rope link's length, per sample [m]
  std::vector<double> unstretched;  ///< its unstretched length ell, per sample [m]
  std::vector<double> stretch;      ///< length - ell, per sample [m] (negative while slack)
  /// The slack intervals, from the located switches (not the samples); the last ends at the end
  /// of the run when the rope stays slack. The first kMaxRecordedIntervals.
  std::vector<Interval> slack;
  long slack_intervals = 0;  ///< how many there were (> slack.size() when capped)
  /// A rope that starts slack (a lift-off) being taken up, from t = 0 until it is first taut; not a
  /// slack interval (slack counts once the rope was taut). NaN when the rope started taut.
  Interval take_up{std::nan(""), std::nan("")};
  std::vector<SnatchPeak>
      snatches;  ///< one per taut interval after a slack one (first kMaxRecordedIntervals)
  /// The tension of the fall hanging at rest: g (mass below the rope + the rope's mass x its
  /// centre of mass / its length; the rope's own weight acts at its centre of mass) [N].
  double static_force = 0;
  // The re-run's metrics (as CaseMetrics names them).
  Extreme peak_force;     ///< peak_rope_force [N]
  double slack_time = 0;  ///< [s]
  long slack_count = 0;
  Extreme snatch;  ///< largest tension after it first went slack [N] (0: never slack)
};

/// A governing case re-run at the spec's tolerance with its time series recorded (for plots).
struct RecordedCase {
  long index = -1;
  std::string id;
  long stride = 1;                          ///< every stride-th output sample is kept
  std::vector<double> t;                    ///< [s] at cases.output_rate / stride
  std::vector<std::vector<double>> theta;   ///< per link [rad]
  std::vector<std::vector<double>> load;    ///< pivot load per link [N]
  std::vector<std::vector<double>> tension; ///< least axial tension per link (either end) [N]
  /// Force of the chain on the trolley or boom tip, -(reaction on link 0): x horizontal, y up [N].
  std::vector<double> support_x, support_y;
  std::vector<double> base_vx, base_vy;     ///< base (top pivot) velocity [m/s]
  std::vector<double> base_ax, base_ay;     ///< base acceleration [m/s^2]
  std::vector<std::vector<double>> wind_x;  ///< horizontal force of each wind load [N]
  /// Extremes of the run located between samples and steps (as the checks find them): per link
  /// max |theta|, max pivot load and the least rope tension (NaN for rigid links).
  std::vector<Extreme> peak_angle, peak_load, min_tension;
  // Spatial chains (empty for a planar one): what happens across the travel, and in the boom frame
  // (dynamics/posture.hpp BoomFrame: radial and tangential on a slewing base, else x and z).
  bool slewing = false;                           ///< the case's scenario slews (its boom frame turns)
  std::vector<std::vector<double>> in_plane;      ///< per link, signed in-plane sway [rad]
  std::vector<std::vector<double>> out_of_plane;  ///< per link, signed out-of-plane sway [rad]
  std::vector<Extreme> peak_in_plane, peak_out_of_plane;  ///< per link, max |.|, located as the checks do
  std::vector<double> hook_x, hook_z;             ///< the lowest link's lower end (the hook), ground frame [m]
  std::vector<double> pivot_x, pivot_z;           ///< the top pivot (trolley, boom tip), ground frame [m]
  std::vector<double> hook_radial, hook_tangential;  ///< the hook relative to the top pivot, boom frame [m]
  std::vector<double> support_z;                  ///< force on the support across the travel [N]
  std::vector<double> support_radial, support_tangential;  ///< force on the support, boom frame [N]
  /// Per link, the reaction R at its upper pivot (the force of the body above on it) by component:
  /// ground frame x, z and vertical (+ up), boom frame radial and tangential (x and z without slewing) [N].
  std::vector<std::vector<double>> load_x, load_z, load_vertical, load_radial, load_tangential;
  /// Their extremes per link, max |.|, located as the component limits find them.
  std::vector<Extreme> peak_load_x, peak_load_z, peak_load_vertical, peak_load_radial, peak_load_tangential;
  std::vector<double> base_vz, base_az;           ///< base velocity [m/s], acceleration [m/s^2] across the travel
  std::vector<std::vector<double>> wind_z;        ///< z component of each wind load's force [N]
  // Ropes of variable length: empty / NaN / -1 for a chain without them.
  std::vector<RecordedRope> ropes;      ///< per elastic rope
  int hoist_link = -1;                  ///< the rope link the scenario's drum winds, -1 for none
  std::vector<double> hoist_length;     ///< that link's length, per sample [m] (when it hoists)
  std::vector<double> drum_travel;      ///< rope hauled in at the drum since t = 0, per sample [m]
  std::vector<double> drum_speed;       ///< drum rope speed, + hauls in, per sample [m/s]
  double lift_off_time = std::nan("");  ///< when the load left the ground [s] (lift-off scenarios)
  long switches = 0;                    ///< located switches of contact laws (ropes, ground)
  double t_end = 0;                     ///< where the run ended [s]
  std::string status = "ok";            ///< the run's status (status_name)
};

struct CheckOptions {
  int jobs = 0;                   ///< 0 = all hardware threads
  bool audit = true;              ///< re-run governing cases at a 100x tighter tolerance
  bool record = true;             ///< re-run governing cases with recording (for the packet's plots)
  std::function<void(const Progress&)> progress;
  std::function<void(const CaseMetrics&)> on_case;  ///< every case, in case order
  /// The search for the worst case between the samples (checks/worst_search.hpp), run after the
  /// global checks when set and spec.cases.search is on. Set it to `search_worst`, which is in
  /// swaybound::sizing (it uses NLopt); unset, the check is the samples' alone.
  std::function<std::vector<LimitSearch>(const CheckPlan&, const WorstStarts&, const std::vector<CheckResult>&,
                                         const SearchBudget&, int jobs)>
      search;
};

struct CheckReport {
  std::string spec_file;
  long case_count = 0;
  std::vector<CheckResult> checks;
  ModalResult modes;
  ChaosSummary chaos;
  std::vector<RecordedCase> recorded;  ///< every governing case, recorded, in case order
  std::vector<FailedCase> failed;  ///< the first 100 failed cases
  long failed_total = 0;
  /// Cases and audit re-runs stopped by the wall-clock budget (solver.max_seconds, status
  /// time_budget): when > 0 the results depend on the machine and its load, and are not reproducible.
  long time_budget_total = 0;
  double max_audit_relative = 0;   ///< largest energy-audit residual / energy scale over the cases
  std::string max_audit_case;
  /// The same for the boom-frame audit (a slewing spatial model; case empty otherwise).
  double max_boom_audit_relative = 0;
  std::string max_boom_audit_case;
  long total_steps = 0;
  /// Cases in which an elastic rope went slack after it was taut (its snatch is in the rope figures;
  /// a slack_time limit bounds it), and the first of them.
  long slack_cases = 0;
  std::string first_slack_case;
  bool pass = false;
  /// The search for the worst case between the samples: one per per-case check, in limit order
  /// (empty when it did not run); `search_budget` is what it was given.
  std::vector<LimitSearch> search;
  bool searched = false;
  /// The sampled worst of each per-case check against the number of starts (checks/convergence.hpp).
  std::vector<ConvergenceRow> convergence;
  SearchBudget search_budget;
  /// Per scenario whose travel drive has a shaper: its governing case with and without the shaper,
  /// and the shaper's sensitivity curve (checks/shaping_compare.hpp); empty without shapers.
  std::vector<ShapingComparison> shaping;
  // Wall time of the stages [s] (not written to results.json, which must not depend on the host).
  double seconds_cases = 0, seconds_chaos = 0, seconds_audit = 0, seconds_search = 0;
};

/// What a check run of a spec computes, decided before any case runs. Refers to the spec it was
/// planned from, which must outlive it.
struct CheckPlan {
  const Spec* spec = nullptr;
  Model model;
  CaseSpace space;
  RunSettings run;           ///< the spec's settings (recordings sample at its output rate)
  RunSettings streaming;     ///< `run` without output samples: how cases stream through the checks
  CaseOptions case_options;  ///< the per-case FTLE when a ftle_max limit asks for it, and its settings
  bool modal_limit = false;  ///< a modal_damping_min limit
  bool onset = false;        ///< search the chaotic onset (an onset_margin limit or a chaos section)
  bool map = false;          ///< compute the FTLE map (chaos.map)
  std::vector<int> ladder_sets;  ///< initial sets of kind ladder
};

/// Builds the model and case space of `spec` and decides what its check computes.
CheckPlan plan_check(const Spec& spec);

/// The cases a stage runs: every case of a case space, or a list of its indices (ascending).
class CaseList {
 public:
  /// Cases 0 .. count-1.
  static CaseList all(long count);
  /// The listed case indices, in the order given.
  static CaseList of(std::vector<long> indices);
  long size() const { return listed_ ? static_cast<long>(indices_.size()) : count_; }
  long operator[](long k) const { return listed_ ? indices_[static_cast<std::size_t>(k)] : k; }

 private:
  bool listed_ = false;
  long count_ = 0;
  std::vector<long> indices_;
};

/// Running totals of the streamed cases besides the checks: failures, the time budget, steps, the
/// largest energy-audit residual and the largest per-case FTLE.
struct CaseTotals {
  long cases = 0;                  ///< cases offered
  std::vector<FailedCase> failed;  ///< the first 100 failed cases
  long failed_total = 0;
  long time_budget_total = 0;
  double max_audit_relative = 0;
  std::string max_audit_case;
  double max_boom_audit_relative = 0;
  std::string max_boom_audit_case;
  long total_steps = 0;
  long slack_cases = 0;            ///< cases in which an elastic rope went slack after it was taut
  std::string first_slack_case;    ///< the first of them (case order)
  double max_ftle = std::nan("");
  std::string max_ftle_case;
  /// Adds one case (offered in case order, so ties keep the first case).
  void offer(const CaseMetrics& m);
};

/// Runs `cases` of the plan with its streaming settings on runner.jobs threads and offers each
/// case's metrics, in list order, to `checks`, `totals` and then `on_case` (when set).
void stream_cases(const CheckPlan& plan, const CaseList& cases, const RunnerOptions& runner, CheckSet& checks,
                  CaseTotals& totals, const std::function<void(const CaseMetrics&)>& on_case = {});

/// Sets every modal_damping_min check of `spec` to the least damping ratio of `modes`.
void set_modal_checks(const Spec& spec, const ModalResult& modes, CheckSet& checks);

/// Sets every onset_margin check of `spec` to onset amplitude / `envelope` (+inf for an envelope of 0).
void set_onset_checks(const Spec& spec, const OnsetResult& onset, double envelope, CheckSet& checks);

/// The global stage: the modal analysis into `modes`, and as the plan asks the ladders, the onset
/// search and the FTLE map into `chaos` (on `jobs` threads, 0: all), with the modal and onset checks
/// set. Does not finish the checks.
void run_global_checks(const CheckPlan& plan, int jobs, CheckSet& checks, ModalResult& modes, ChaosSummary& chaos);

/// Accuracy audit: re-runs every case that governs a per-case check at a 100x tighter tolerance
/// (on `jobs` threads) and writes each such check's audit_value, audit_change and audit_warning.
/// Returns how many re-runs the wall-clock budget stopped.
long audit_governing(const CheckPlan& plan, int jobs, std::vector<CheckResult>& checks);

/// Re-runs every case that governs a per-case check with its time series recorded (decimated to at
/// most kMaxRecordedPoints per line), in case order.
std::vector<RecordedCase> record_governing(const CheckPlan& plan, const std::vector<CheckResult>& checks);

/// The whole check of `spec`: every case, the global checks, the search for the worst case between
/// the samples, the audit and the recordings as `options` asks, and (with `options.record`) the
/// comparison of each shaped travel drive with its unshaped moves.
CheckReport run_check(const Spec& spec, const CheckOptions& options);

}  // namespace swaybound
