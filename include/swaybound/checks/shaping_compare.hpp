#pragma once
// The effect of a drive's input shaper (model/shaper.hpp), for the review packet: per scenario and
// drive axis (travel, cross travel, slewing) with a shaper, the case that governs the sway in that scenario is run
// twice, as the spec gives it and with the shaper removed (same moves, same stop), and the residual
// sway of both runs is compared after the later of the two ends of the moves. Because a shaper is
// designed for one frequency and the chain's frequency varies over the design's range, the
// comparison also carries the shaper's sensitivity curve (its percentage residual vibration against
// actual / design frequency) with the chain's lowest natural frequency marked on it.
#include <string>
#include <vector>

#include "swaybound/checks/metrics.hpp"
#include "swaybound/integrate/extremes.hpp"
#include "swaybound/model/shaper.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct CheckPlan;

/// Points of the sensitivity curve, from 0.5 to 1.5 times the design frequency.
inline constexpr std::size_t kSensitivityPoints = 201;
inline constexpr double kSensitivityRatioLow = 0.5, kSensitivityRatioHigh = 1.5;

/// One run of the compared case: shaped or unshaped.
struct ShapingRun {
  double move_end = 0;          ///< end of the travel drive's moves (SpeedProfile::end_of_moves) [s]
  std::vector<Extreme> residual;///< per link: largest |theta| (spatial: swing angle) after the window start [rad]
  double residual_max = 0;      ///< the largest of them [rad] (NaN when the window never opened)
  int residual_link = -1;       ///< its link
  long stride = 1;              ///< every stride-th output sample is recorded
  std::vector<double> t;        ///< [s]
  std::vector<double> top_angle;///< link 0's angle (spatial: swing angle) [rad]
  std::vector<double> base_speed;///< the shaped drive's speed (travel along x, cross travel along z [m/s]; slewing [rad/s])
  std::string status = "ok";    ///< the run's status (status_name)
};

/// A marked point of the sensitivity curve: an actual lowest natural frequency of the chain.
struct SensitivityMark {
  std::string label;        ///< "nominal", or the sizing variable and its end
  double frequency_hz = 0;  ///< lowest undamped natural frequency of the chain [Hz]
  double ratio = 0;         ///< frequency_hz / the shaper's design frequency [-]
  double vibration = 0;     ///< residual_vibration there, at the shaper's damping ratio [-]
};

/// The comparison for one drive axis with a shaper (travel, cross travel or slewing) of one scenario.
struct ShapingComparison {
  int scenario = -1;
  std::string axis = "travel";      ///< the shaped drive's key: travel, cross_travel or slew
  int mode = 0;                     ///< the shaper was designed from this mode of `modes` (0: frequency given)
  InputShaper shaper;               ///< as designed from the spec (kind, frequency, damping, impulses)
  /// What chose the case: the spec's key of the limit whose worst case in this scenario it is
  /// ("residual_sway", "peak_angle"), or "first case" (no such limit, or no case of the scenario ran).
  std::string chosen_by;
  int limit = -1;                   ///< that limit's index in Spec::limits (-1 for "first case")
  long case_index = -1;
  std::string case_id;
  double window_start = 0;          ///< the later of the two ends of the moves [s]
  ShapingRun shaped, unshaped;
  double extra_time = 0;            ///< shaped.move_end - unshaped.move_end [s]
  double reduction = 0;             ///< 1 - shaped.residual_max / unshaped.residual_max [-]
  std::vector<SensitivityPoint> curve;  ///< kSensitivityPoints from kSensitivityRatioLow to High
  std::vector<SensitivityMark> marks;   ///< the nominal chain first, then the ends of sizing ranges
  /// True when the spec has sizing variables of link lengths or masses and their range ends are
  /// marked; false when it has none (only the nominal chain is marked).
  bool range_ends_marked = false;
  std::vector<std::string> notes;   ///< ends that could not be marked, and why
};

/// Finds, as the cases stream past in case order, the case of each shaped scenario that governs
/// the sway there: the largest value of the spec's first residual_sway limit, or without one of its
/// first peak_angle limit (ties keep the first case), and each scenario's first case.
class ShapingCases {
 public:
  explicit ShapingCases(const Spec& spec);
  /// Offers one case's metrics (in case order).
  void offer(const CaseMetrics& m);
  /// Whether any scenario of the spec has a shaper (else offering is pointless).
  bool any() const { return any_; }
  /// The limit the choice uses (-1: none), and per scenario the chosen case (-1: none seen).
  int limit() const { return limit_; }
  long worst_case(int scenario) const { return worst_[static_cast<std::size_t>(scenario)]; }
  long first_case(int scenario) const { return first_[static_cast<std::size_t>(scenario)]; }

 private:
  const Spec* spec_;
  bool any_ = false;
  int limit_ = -1;
  std::vector<long> worst_, first_;
  std::vector<double> worst_value_;
};

/// The percentage residual vibration of `shaper` against actual / design frequency from
/// kSensitivityRatioLow to kSensitivityRatioHigh (kSensitivityPoints), at the shaper's own damping
/// ratio, and the marks: the lowest natural frequency of the chain of `spec` as given and, for each
/// sizing variable of a link's length or mass, of the chain at each end of its range.
void shaping_sensitivity(const Spec& spec, const InputShaper& shaper, ShapingComparison& out);

/// Per scenario of the plan's spec and drive axis with a shaper, in scenario order (travel, cross
/// travel, slewing within one): the chosen
/// case run as given and without the shaper, recorded, with the sensitivity curve. Empty when no
/// scenario has a shaper.
std::vector<ShapingComparison> compare_shaping(const CheckPlan& plan, const ShapingCases& cases);

}  // namespace swaybound
