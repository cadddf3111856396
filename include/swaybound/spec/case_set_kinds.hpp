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

/// Every kind of initial-condition set, in the order of the InitialKind enum.
std::span<const InitialKindInfo> initial_kinds();
/// The row of a kind.
const InitialKindInfo& initial_kind(InitialKind kind);
/// The row whose key is `name`, or nullptr.
const InitialKindInfo* find_initial_kind(std::string_view name);

}  // namespace swaybound
