#pragma once
// Chaotic-onset indicators of a chain, each built on the FTLE (chaos/ftle.hpp): the divergence of
// a perturbation ladder from its base start, the search for the smallest start amplitude whose FTLE
// exceeds the threshold, and the FTLE map over the first two links' start angles. Their settings
// come from the spec's chaos section; the FTLE settings are passed in (checks' ftle_settings).
#include <cmath>
#include <string>
#include <vector>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/chaos/ftle.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// Divergence of a perturbation ladder from its base start.
struct LadderResult {
  std::string set, scenario;
  int link = 0;                          ///< the perturbed link
  std::vector<double> delta;             ///< actual initial angle perturbations [rad]
  std::vector<double> divergence_time;   ///< first time max_i |dtheta_i| > chaos.tolerance [s] (spatial: the angle between link i's two directions); NaN: never
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

/// FTLE of each start under scenario 0, computed on `jobs` threads (0: all), in start order; NaN
/// where a run failed.
std::vector<double> ftle_of_starts(const Model& model, const std::vector<InitialState>& starts,
                                   const FtleSettings& ftle, int jobs);

/// The perturbation ladder of initial set `set_index` (of kind ladder): every start recorded at
/// cases.output_rate under the first scenario with `run`'s solver settings, the separation of each
/// perturbed start from the base start, the time it first exceeds chaos.tolerance, the FTLE of the
/// base start, and the predictability horizon measured (fit of time against ln(1/delta)) and
/// predicted (ln(tolerance / uncertainty) / FTLE).
LadderResult perturbation_ladder(const Model& model, const Spec& spec, const CaseSpace& space,
                                 const RunSettings& run, const FtleSettings& ftle, int set_index);

/// The smallest amplitude along chaos.onset_direction whose FTLE under the first scenario exceeds
/// chaos.threshold: a coarse scan of 16 amplitudes up to chaos.onset_max on `jobs` threads, then a
/// bisection to chaos.onset_resolution. A failed run counts as above the threshold. With no onset
/// below onset_max, amplitude = bracket_low = onset_max and found = false.
OnsetResult onset_search(const Model& model, const Spec& spec, const FtleSettings& ftle, int jobs);

/// The FTLE over the grid chaos.map_x x chaos.map_y of the first two links' start angles (at rest),
/// under the first scenario, on `jobs` threads.
ChaosMap ftle_map(const Model& model, const Spec& spec, const FtleSettings& ftle, int jobs);

}  // namespace swaybound
