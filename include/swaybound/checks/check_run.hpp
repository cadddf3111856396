#pragma once
// The design check, end to end: every case of the spec (in parallel, streamed through the checks),
// the modal analysis, the chaotic-onset indicators, and the accuracy audit of each governing case.
#include <functional>
#include <string>
#include <vector>

#include "swaybound/cases/runner.hpp"
#include "swaybound/checks/checks.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct FailedCase {
  std::string id, status, reason;
};

/// Divergence of a perturbation ladder from its base start.
struct LadderResult {
  std::string set, scenario;
  int link = 0;                          ///< the perturbed link
  std::vector<double> delta;             ///< actual initial angle perturbations [rad]
  std::vector<double> divergence_time;   ///< first time max_i |dtheta_i| > chaos.tolerance [s]; NaN: never
  double sample_interval = 0;            ///< of `separation` [s]
  std::vector<std::vector<double>> separation;  ///< per step: max_i |dtheta_i| at each sample [rad]
  double lambda = std::nan("");          ///< FTLE of the base start [1/s]
  double slope = std::nan("");           ///< least-squares d(time)/d ln(1/delta) [s]
  double horizon_measured = std::nan(""); ///< the fitted time at delta = chaos.uncertainty [s]
  double horizon_predicted = std::nan("");///< ln(tolerance / uncertainty) / lambda [s]
};

struct OnsetResult {
  bool computed = false;
  bool found = false;                 ///< FTLE exceeded the threshold below chaos.onset.max
  double amplitude = std::nan("");    ///< smallest amplitude with FTLE > threshold [rad] (upper end of the bracket)
  double bracket_low = std::nan("");  ///< largest amplitude known below the threshold [rad]
  std::vector<double> scan_amplitude, scan_ftle;  ///< coarse scan and bisection points [rad], [1/s]
  std::string scenario;
};

struct ChaosMap {
  bool computed = false;
  std::vector<double> x, y;   ///< link 0 and link 1 start angles [rad]
  std::vector<double> ftle;   ///< row-major, y outer: ftle[j * x.size() + i] [1/s]; NaN where a run failed
};

struct ChaosSummary {
  bool per_case_ftle = false;
  double horizon = 0;             ///< [s]
  double max_ftle = std::nan(""); ///< over the cases [1/s]
  std::string max_ftle_case;
  double envelope_amplitude = 0;  ///< largest start angle of the case sets [rad]
  std::vector<LadderResult> ladders;
  OnsetResult onset;
  ChaosMap map;
};

/// Most points kept per recorded time series (per plot line): a longer run is decimated to every
/// k-th output sample, k = ceil(samples / kMaxRecordedPoints), so a recording costs at most
/// (1 + 3 x links) x kMaxRecordedPoints doubles whatever duration x output_rate is.
inline constexpr long kMaxRecordedPoints = 4000;

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
};

struct CheckOptions {
  int jobs = 0;                   ///< 0 = all hardware threads
  bool audit = true;              ///< re-run governing cases at a 100x tighter tolerance
  bool record = true;             ///< re-run governing cases with recording (for the packet's plots)
  std::function<void(const Progress&)> progress;
  std::function<void(const CaseMetrics&)> on_case;  ///< every case, in case order
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
  long total_steps = 0;
  bool pass = false;
  // Wall time of the stages [s] (not written to results.json, which must not depend on the host).
  double seconds_cases = 0, seconds_chaos = 0, seconds_audit = 0;
};

CheckReport run_check(const Spec& spec, const CheckOptions& options);

}  // namespace swaybound
