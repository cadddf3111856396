#pragma once
// Input shapers designed from a mode of the chain (`shaper: {mode: K}`, specs/README.md, "Travel
// drive"): the design frequency, and the damping ratio unless the spec gives one, are those of the
// K-th mode that `modes` lists (modal/modes.hpp, lowest first), of the chain as it stands or, with
// `design_for`, of the chain with one link's length or mass replaced for the design only (a chosen
// rope length or load case). The frequency is w_n = |lambda| / (2 pi) of the damped mode and the
// damping ratio its zeta = -Re(lambda) / |lambda|, so the shaper's damped period 2 pi / (w_n
// sqrt(1 - zeta^2)) is the mode's, Im(lambda). Because a sized length, mass, damper or dashpot moves
// the mode, the loader and apply_design (sizing/design.hpp) both call resolve_shaper_modes.
#include <vector>

#include "swaybound/core/error.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// Sets frequency (and, unless given, damping_ratio) of every shaper of `spec` designed from a
/// mode (travel, cross travel, slewing), from the modal analysis of the chain (with the shaper's
/// design_for values). Returns a diagnostic per shaper that cannot be resolved (mode beyond the
/// chain's modes, an overdamped mode, design_for naming an unknown link, a chain whose modes cannot
/// be computed), leaving that shaper's values as they were.
std::vector<Diagnostic> resolve_shaper_modes(Spec& spec);

}  // namespace swaybound
