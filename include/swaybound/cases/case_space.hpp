#pragma once
// The set of cases a check runs: every initial-condition set of the spec crossed with every base
// scenario. Cases are made on demand from their index (no list of all cases is kept), so memory
// does not grow with the case count; the same index always gives the same case.
//
// Starts given in modal coordinates or as a static equilibrium are turned into link angles and
// rates here (modal/modal_start.hpp, dynamics/equilibrium.hpp), from the model of the spec built
// once in the constructor; a CaseDef always holds the raw angles and rates a case starts from.
//
// Order: scenario-major, then the initial sets in spec order, then the starts of each set.
// Id: "<scenario-slug>/<set-name>-<k>", k counted from 1 within the set and zero-padded to the
// width of the set's size (at least 3), e.g. "brake-from-travel-speed/grid-017". Sets with the same
// name are told apart as "random", "random-2", ...
#include <array>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "swaybound/dynamics/equilibrium.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/spec/case_set_kinds.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct ModalResult;

struct CaseDef {
  long index = 0;           ///< position in the case space
  std::string id;           ///< stable, readable id
  int scenario = 0;         ///< index into Spec::scenarios / Model::scenarios
  int set = 0;              ///< index into Spec::cases.initial
  long start = 0;           ///< index of the start within its set
  InitialState initial;     ///< angles [rad] and rates [rad/s] per link
  StartKind start_kind = StartKind::angles;  ///< what the set gave (angles, modal coordinates, an equilibrium)
};

class CaseSpace {
 public:
  /// Throws SpecError (at the set) when an equilibrium start cannot be found.
  explicit CaseSpace(const Spec& spec);
  long size() const { return total_; }
  long starts() const { return starts_; }  ///< per scenario
  CaseDef at(long index) const;
  /// The chain's modes, when a set gives modal starts (else null).
  const ModalResult* modes() const { return modes_.get(); }
  /// Largest |initial angle| over every start of every set [rad] (the operating envelope).
  double envelope_amplitude() const { return envelope_; }

 private:
  void prepare_starts(const Spec& spec);
  void fill_start(const InitialSetSpec& set, int set_index, long k, std::array<std::vector<double>*, kStartLists> out) const;
  const Spec* spec_;
  std::shared_ptr<const Model> model_;         ///< the spec's model, when a set gives modal or equilibrium starts
  std::shared_ptr<const ModalResult> modes_;  ///< the chain's modes, when a set gives modal starts
  /// Equilibrium sets: per set, per start (start x scenarios + scenario) the angles [rad].
  std::vector<std::vector<std::vector<double>>> equilibria_;
  std::vector<long> offsets_;                      ///< first start of each set within a scenario
  std::vector<std::vector<std::vector<int>>> lhs_; ///< per set, per dimension: stratum permutation
  std::vector<std::string> slugs_;      ///< per scenario
  std::vector<std::string> set_slugs_;  ///< per initial set, unique
  long starts_ = 0, total_ = 0;
  double envelope_ = 0;
};

/// The steady base acceleration along the travel [m/s^2] and wind speed [m/s] (NaN: each wind
/// load's own speed) an equilibrium start of `set` hangs under in `scenario` of `model`, given the
/// set's sampled values `accel` and `wind` (one each when the set gives that range, else empty).
std::array<double, 2> steady_values(const Model& model, const InitialSetSpec& set, int scenario,
                                    const std::vector<double>& accel, const std::vector<double>& wind);

/// The equilibrium of `model` (built from `spec`) in the inputs at t = 0 of `scenario`, with the
/// base acceleration `accel` along the travel (and none upwards) unless `set` takes the scenario's,
/// and every wind load at speed `wind` (NaN: its own).
EquilibriumResult steady_equilibrium(const Spec& spec, const Model& model, Workspace& ws, const InitialSetSpec& set,
                                     int scenario, double accel, double wind);

/// "Brake from travel speed" -> "brake-from-travel-speed".
std::string slug(const std::string& name);

/// A uniform double in [0, 1) from a 64-bit seed and counters (SplitMix64; Steele, Lea & Flood,
/// "Fast splittable pseudorandom number generators", OOPSLA 2014). Portable: no <random>
/// distribution, whose output differs between standard libraries.
double unit_random(std::uint64_t seed, std::uint64_t a, std::uint64_t b);

}  // namespace swaybound
