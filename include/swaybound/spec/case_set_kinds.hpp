#pragma once
// The kinds of initial-condition set, one row each: the spec key (which is also the set's default
// name), the keys its body takes, how it gives each link's start, and how many starts it gives.
// The loader finds a set's kind by its key here; the emitter and the packet name it from here.
#include <span>
#include <string_view>

#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// How a set gives the start angle and rate of each link.
enum class StartShape {
  values,          ///< one value per link (single; a ladder's `from`)
  ranges,          ///< a range [low, high] per link (random, corners)
  counted_ranges,  ///< a range with a count [low, high, count] per link (grid)
};

struct InitialKindInfo {
  InitialKind kind;
  std::string_view name;                   ///< the spec key, e.g. "grid"
  std::span<const std::string_view> keys; ///< the keys of its body
  StartShape shape;
  long (*size)(const InitialSetSpec& set); ///< starts the set gives (capped above 1e9)
};

/// What a start is given as: raw link angles and rates, modal coordinates (amplitude and phase per
/// mode), or the static equilibrium under a steady acceleration and wind. Every start becomes raw
/// angles and rates before it runs; results name the kind beside them.
enum class StartKind { angles, modal, equilibrium };
/// The start kind of a set's starts.
StartKind start_kind(const InitialSetSpec& set);
/// "angles", "modal", "equilibrium".
std::string_view start_kind_name(StartKind kind);

/// Every kind of initial-condition set, in the order of the InitialKind enum.
std::span<const InitialKindInfo> initial_kinds();
/// The row of a kind.
const InitialKindInfo& initial_kind(InitialKind kind);
/// The row whose key is `name`, or nullptr.
const InitialKindInfo* find_initial_kind(std::string_view name);

}  // namespace swaybound
