#pragma once
// Per-case metrics, kept as running extremes by an observer of the run, so a case costs O(links)
// memory whatever its length. Extremes are located on the dense output between accepted steps and
// on both sides of every jump of an input (integrate/extremes.hpp), so a reported peak is the peak
// to within the solver tolerance; the accuracy audit (checks.hpp) re-runs governing cases at a
// tighter tolerance and reports how far each figure moves.
#include <cmath>
#include <string>
#include <vector>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/chaos/ftle.hpp"
#include "swaybound/integrate/extremes.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct CaseMetrics {
  long index = 0;
  std::string id;
  int scenario = 0, set = 0;
  InitialState initial;
  RunStatus status = RunStatus::ok;
  std::string reason;
  std::vector<Extreme> peak_angle;     ///< max |theta_i| [rad] per link
  std::vector<Extreme> peak_relative;  ///< max |theta_i - theta_{i-1}| [rad] per pivot (theta_{-1} = 0)
  std::vector<Extreme> peak_rate;      ///< max |omega_i| [rad/s] per link
  std::vector<Extreme> peak_load;      ///< max |pivot reaction| [N] per pivot
  std::vector<double> dynamic_factor;  ///< peak load / static load (weight below the pivot) [-]
  std::vector<Extreme> min_tension;    ///< least axial tension of rope links, either end [N]; NaN for rigid
  std::vector<Extreme> min_tension_top;     ///< of which at the top end (what the pivot above sees) [N]
  std::vector<Extreme> min_tension_bottom;  ///< at the bottom end [N]; NaN for rigid links and the last link
  // Ropes (NaN for the links they do not apply to).
  std::vector<Extreme> peak_rope_force;  ///< largest tension of a rope's fall [N] (elastic: its law; else the top end)
  std::vector<double> parts_of_line;     ///< per link (1 for rigid links) [-]
  std::vector<double> slack_time;        ///< elastic ropes: total time slack [s]
  std::vector<long> slack_count;         ///< elastic ropes: times it went slack [-] (0 for other links)
  std::vector<Extreme> snatch;           ///< elastic ropes: largest tension after it first went slack [N] (0: never)
  long switches = 0;                     ///< located switches of contact laws (ropes, ground)
  double lift_off_time = std::nan("");   ///< when the load left the ground [s] (lift-off scenarios)
  Extreme support_force_x;             ///< max |x component of the force of the chain on its support|
                                       ///< = |x component of the reaction at link 0's pivot| [N]
  // On demand (needs_on_demand_metrics: a limit of such a kind; else empty), per link, read in the
  // boom frame of the phase (dynamics/posture.hpp: the ground's x and z without slewing).
  std::vector<Extreme> peak_in_plane;       ///< max |in-plane sway| [rad]
  std::vector<Extreme> peak_out_of_plane;   ///< max |out-of-plane sway| [rad] (0 for a planar chain)
  std::vector<Extreme> peak_load_x;         ///< max |x component of the pivot reaction| [N]
  std::vector<Extreme> peak_load_z;         ///< max |z component| [N]
  std::vector<Extreme> peak_load_vertical;  ///< max |vertical component| [N]
  std::vector<Extreme> peak_load_radial;    ///< max |radial component| (boom frame) [N]
  std::vector<Extreme> peak_load_tangential;///< max |tangential component| (boom frame) [N]
  std::vector<double> residual;        ///< per residual_sway limit: max |theta| after its time [rad]
  double settling_time = 0;            ///< time after which every |theta| stays within the band [s];
                                       ///< NaN when the run ends outside the band
  double audit_relative = 0;           ///< largest |energy audit residual| / energy scale [-]
  double boom_audit_relative = std::nan("");  ///< the same in the boom frame (a slewing spatial model), else NaN [-]
  long steps = 0, evaluations = 0;
  double ftle = std::nan("");          ///< largest finite-time Lyapunov exponent [1/s], NaN if not computed
  std::string ftle_note;               ///< why the FTLE is missing, when it failed
  bool ok() const { return status == RunStatus::ok; }
};

/// The FTLE settings of a spec's chaos section (horizon, separation, renormalisation interval,
/// norm and initial direction) with the solver tolerances and step budget of `run`.
FtleSettings ftle_settings(const Spec& spec, const RunSettings& run);

/// What a check run computes per case besides the metrics.
struct CaseOptions {
  bool ftle = false;              ///< compute the FTLE (doubles the cost of a case)
  FtleSettings ftle_settings;     ///< its settings (from `ftle_settings`)
};

/// The extremes a case reports, located by an ExtremeFinder: per link |theta|, |theta_i -
/// theta_{i-1}|, |omega|, the pivot load, the least tension at each end of a rope link; for the
/// chain the horizontal force on its support; per residual_sway limit the largest |theta| of its
/// links after its time; on demand (a limit of an on-demand kind, or `on_demand`) per link the
/// in-plane and out-of-plane sway and the pivot load components (CaseMetrics::peak_in_plane ...).
class CaseExtremes {
 public:
  /// With `on_demand` the on-demand figures are located whatever the limits. With `extra` > 0, `extra_quantities` adds that many quantities of the caller's, located by the
  /// same finder (one finder per run: each finder's probes re-evaluate the workspace, so a second
  /// finder observing the same view would read a workspace that no longer describes it). They are
  /// quantities `first_extra()` .. `first_extra() + extra - 1` of `finder()`.
  CaseExtremes(const Model& model, const Spec& spec, int extra = 0,
               ExtremeFinder::Quantities extra_quantities = {}, bool on_demand = false);
  /// The on_step observer.
  void observe(const StepView& v);
  /// Writes the extremes into m (peak_*, min_tension, support_force_x, residual).
  void write(CaseMetrics& m) const;
  const ExtremeFinder& finder() const { return finder_; }
  /// Index of the first of the caller's quantities in `finder()`.
  int first_extra() const { return first_extra_; }

 private:
  const Model& model_;
  bool on_demand_ = false;                      ///< the on-demand blocks are located
  int first_extra_ = 0;                         ///< the caller's quantities start here
  ExtremeFinder::Quantities extra_quantities_;  ///< the caller's, or empty
  std::vector<int> residual_links_;  ///< per residual_sway limit: its link, or -1 for every link
  // Per elastic rope (model.elastic_links order); declared before finder_, whose quantities read them.
  std::vector<double> slack_time_;   ///< total time slack so far [s]
  std::vector<long> slack_count_;    ///< slack intervals so far
  std::vector<char> was_slack_;      ///< slack at the last view
  std::vector<char> was_taut_;       ///< taut at some view so far
  double last_t_ = 0;                ///< time of the last view [s]
  ExtremeFinder finder_;
};

/// Runs one case with the metrics observer (and the FTLE when asked).
CaseMetrics run_case(const Model& model, const Spec& spec, Workspace& ws, const CaseDef& def,
                     const RunSettings& settings, const CaseOptions& options);

}  // namespace swaybound
