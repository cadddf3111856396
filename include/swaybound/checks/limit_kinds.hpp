#pragma once
// The limit kinds, one row each: everything the loader, the checks, sizing, results.json,
// cases.csv, verify and the report need to know about a kind. Adding a per-case kind costs one
// row here (with the accessor that reads its value from a case's metrics), the metric that
// computes it (checks/metrics.cpp), specs/README.md and tests.
#include <cmath>
#include <span>
#include <string>
#include <string_view>

#include "swaybound/core/units.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct CaseMetrics;
struct Extreme;  // integrate/extremes.hpp

enum class Bound { upper, lower };

/// What a limit of the kind applies to when it names no link.
enum class LimitScope {
  each_link,   ///< every link (a `link` key picks one)
  rope_links,  ///< every link of kind rope (a `link` key must name a rope)
  elastic_rope_links,  ///< every elastic rope link (a `link` key must name one)
  chain,       ///< the chain as a whole (no `link` key)
};

/// What a spec needs for a limit of the kind to mean something; the loader refuses it otherwise.
enum class LimitNeeds {
  any,      ///< every chain
  spatial,  ///< `motion: spatial` (the figure is 0 in the travel plane)
  slewing,  ///< a scenario with `slew` (without one the boom frame is the ground's)
};

/// The optional keys a limit entry may carry besides `link`.
struct LimitOptions {
  bool after = false;    ///< `after` [s], required: the value counts from that time on
  bool horizon = false;  ///< `horizon` [s], default cases.duration
  bool end = false;      ///< `end` (either, top, bottom): which end of a rope
};

/// The accepted range of a limit's value (SI).
struct LimitRange {
  double lo = -1e300, hi = 1e300;
  bool lo_open = false, hi_open = false;
};

/// The value of a per-case kind for one link in one case (value NaN: none, e.g. a rigid link's
/// rope tension). `limit` gives the options (e.g. the rope end).
using LinkValue = Extreme (*)(const CaseMetrics& m, const LimitSpec& limit, std::size_t link);
/// The value of a per-case kind over the whole case (time NaN when the kind has no instant);
/// `residual_slot` is the limit's index among the spec's residual_sway limits.
using CaseValue = Extreme (*)(const CaseMetrics& m, const LimitSpec& limit, int residual_slot);

struct LimitKindInfo {
  LimitKind kind;
  std::string_view key;          ///< the spec key, results.json's "limit"
  units::Dim dim;
  LimitRange range;              ///< accepted limit values
  Bound bound;
  bool per_case;                 ///< false: one value for the design (checked without cases)
  LimitScope scope;
  LimitOptions options;
  /// A sizing objective {min: key} needs a limit of this kind (same link) in the spec: it sets
  /// `after` or `horizon`, or switches the computation on.
  bool objective_needs_limit;
  std::string_view definition;   ///< the report's definition of the figure
  /// Per-case kinds: exactly one of the two is set. `link_value` kinds take the worst over the
  /// links the limit names; `case_value` kinds have one value per case.
  LinkValue link_value;
  CaseValue case_value;
  /// cases.csv: the column stem ("" = no column of its own). Per-link kinds get a column per
  /// link (per rope link for rope_links; with `end`, also _time, _top and _bottom columns);
  /// a case_value kind with `after` gets one column per limit, one without a single column.
  std::string_view csv;
  LimitNeeds needs;
  /// Computed only in a spec that has a limit of an on-demand kind (each costs located quantities
  /// per link); cases.csv has the kind's columns only when the spec has a limit of it.
  bool on_demand;
};

/// Every limit kind, in the order of the LimitKind enum.
std::span<const LimitKindInfo> limit_kinds();
/// The row of a kind.
const LimitKindInfo& limit_kind(LimitKind kind);
/// The row whose key is `key`, or nullptr.
const LimitKindInfo* find_limit_kind(std::string_view key);
/// Whether `spec` has a limit of `kind`.
bool has_limit_of(const Spec& spec, LimitKind kind);
/// Whether `spec` has a limit of an on-demand kind (its case metrics compute those figures).
bool needs_on_demand_metrics(const Spec& spec);
/// "upper" or "lower".
std::string_view bound_name(Bound bound);

}  // namespace swaybound
