#pragma once
// The design vector of a sizing run: each variable of the spec's `sizing` section resolved to the
// spec value it addresses, with its range, cost weight and catalogue, and the maps between the
// search's scaled coordinates (every variable on [0, 1]) and values in SI.
#include <string>
#include <vector>

#include "swaybound/core/units.hpp"
#include "swaybound/spec/paths.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct DesignVariable {
  std::string path;             ///< as written in the spec, e.g. links[hook].pivot.damper.coefficient
  SpecPath target;
  units::Dim dim;
  std::string unit;             ///< SI unit text, e.g. "N m s/rad"
  double lo = 0, hi = 0;        ///< SI; for a catalogue its smallest and largest value
  double cost = 1;              ///< weight per SI unit
  std::vector<double> catalogue;///< ascending; empty: continuous
  double initial = 0;           ///< the value in the spec as given (may lie outside [lo, hi])
  double step = 0;              ///< continuous: the final value is a multiple of it (SI); 0: not rounded

  bool discrete() const { return !catalogue.empty(); }
  /// SI value at scaled coordinate x in [0, 1] (clamped); lo when the range is a single value.
  double value_at(double x) const;
  /// Scaled coordinate of an SI value (clamped to [0, 1]).
  double scaled(double value) const;
  /// The catalogue value nearest to `value` (the value itself for a continuous variable).
  double nearest(double value) const;
  /// -1 at the low end (within 0.1% of the range), +1 at the high end, 0 inside.
  int at_bound(double value) const;
  /// The multiples of `step` next to `value` that lie in [lo, hi] (one when `value` is a
  /// multiple, or only one neighbour is in range), lower first; {value} without a step.
  std::vector<double> step_neighbours(double value) const;
};

/// The spec's design variables. Throws SpecError when the spec has no sizing section (an input
/// error) or a path no longer resolves.
std::vector<DesignVariable> design_variables(const Spec& spec);

/// Sets every variable's value in `spec` (SI, one per variable, in order), then the frequency of
/// every shaper designed from a mode of the chain so changed (resolve_shaper_modes; a SpecError
/// when one cannot be).
void apply_design(Spec& spec, const std::vector<DesignVariable>& variables, const std::vector<double>& values);

/// Weighted cost: sum of cost_i * value_i [cost units].
double design_cost(const std::vector<DesignVariable>& variables, const std::vector<double>& values);

/// Geometric validity of a design whose lengths or centres of mass are varied: the least, over
/// every point placed on a link (a given centre of mass, a wind point, a dashpot end), of
/// (link length - distance along the link) / link length. Negative: a point lies beyond the end
/// of its link. +inf when nothing is placed on a link.
double geometry_margin(const Spec& spec);

/// True when a variable changes a length or a centre of mass (then geometry_margin constrains).
bool varies_geometry(const std::vector<DesignVariable>& variables);

}  // namespace swaybound
