#include "swaybound/spec/case_set_kinds.hpp"

#include <algorithm>

namespace swaybound {

std::array<const std::vector<Range>*, kStartLists> start_lists(const InitialSetSpec& set) {
  return {&set.theta, &set.rate, &set.phi, &set.phi_rate, &set.amplitude, &set.phase, &set.accel_range, &set.wind_range};
}

StartKind start_kind(const InitialSetSpec& set) {
  if (set.kind == InitialKind::equilibrium) return StartKind::equilibrium;
  return set.amplitude.empty() ? StartKind::angles : StartKind::modal;
}

std::string_view start_kind_name(StartKind kind) {
  switch (kind) {
    case StartKind::angles: return "angles";
    case StartKind::modal: return "modal";
    case StartKind::equilibrium: return "equilibrium";
  }
  return "angles";
}

namespace {

constexpr long kCap = 1'000'000'001L;  // "over 1e9": the case cap refuses it long before

long single_size(const InitialSetSpec&) { return 1; }
long random_size(const InitialSetSpec& set) { return set.count; }
long ladder_size(const InitialSetSpec& set) { return 1 + static_cast<long>(set.steps.size()); }
/// The product of the counts of every range.
long grid_size(const InitialSetSpec& set) {
  long n = 1;
  for (const auto* list : start_lists(set))
    for (const auto& r : *list) n = n > 1'000'000'000L / std::max(1, r.count) ? kCap : n * r.count;
  return n;
}
/// An equilibrium set: one start, or as many as its ranges are sampled at.
long equilibrium_size(const InitialSetSpec& set) {
  return set.sampling == InitialKind::grid ? grid_size(set) : set.sampling == InitialKind::random ? set.count : 1;
}
/// Two starts per range that is not a single value.
long corners_size(const InitialSetSpec& set) {
  long n = 1;
  for (const auto* list : start_lists(set))
    for (const auto& r : *list)
      if (r.hi > r.lo) n = std::min(2 * n, kCap);
  return n;
}

constexpr std::string_view kValueKeys[] = {"theta", "rate", "phi", "phi_rate", "amplitude", "phase"};
constexpr std::string_view kRandomKeys[] = {"count", "seed", "method", "theta", "rate", "phi", "phi_rate", "amplitude", "phase"};
constexpr std::string_view kLadderKeys[] = {"from", "relative", "absolute", "link"};
constexpr std::string_view kEquilibriumKeys[] = {"acceleration", "wind_speed", "count", "seed", "method"};

constexpr InitialKindInfo kKinds[] = {
    {InitialKind::single, "single", kValueKeys, StartShape::values, single_size},
    {InitialKind::grid, "grid", kValueKeys, StartShape::counted_ranges, grid_size},
    {InitialKind::random, "random", kRandomKeys, StartShape::ranges, random_size},
    {InitialKind::corners, "corners", kValueKeys, StartShape::ranges, corners_size},
    {InitialKind::ladder, "ladder", kLadderKeys, StartShape::values, ladder_size},
    {InitialKind::equilibrium, "equilibrium", kEquilibriumKeys, StartShape::values, equilibrium_size},
};

constexpr bool in_enum_order() {
  for (std::size_t i = 0; i < std::size(kKinds); ++i)
    if (static_cast<std::size_t>(kKinds[i].kind) != i) return false;
  return true;
}
static_assert(in_enum_order(), "kKinds: one row per InitialKind, in enum order");

}  // namespace

std::span<const InitialKindInfo> initial_kinds() { return kKinds; }

const InitialKindInfo& initial_kind(InitialKind kind) { return kKinds[static_cast<std::size_t>(kind)]; }

const InitialKindInfo* find_initial_kind(std::string_view name) {
  for (const auto& k : kKinds)
    if (k.name == name) return &k;
  return nullptr;
}

}  // namespace swaybound
