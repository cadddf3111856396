#pragma once
// The start-transient flag of a per-case check. A start that is not an equilibrium (link angles
// released, a mode started) sets off motion in every mode it is not in; a kinked chain released
// from rest loads its pivots hardest in the first instants, through its fast modes, a load no real
// hook block would see. The flag tells such a peak from a design problem: it is raised when the
// governing peak of a check happens before kStartTransientFraction of the chain's lowest modal
// period after a start that is not an equilibrium.
//
// Why a quarter: the motion of the lowest mode itself needs a quarter of its period to build up
// (from rest its rate, and the load it adds, peak at T1/4; its far swing at T1/2), so a peak before
// T1/4 is the start's: its initial angles themselves, or the faster modes a kinked start sets off
// (T_k < T1). Later peaks (a swing, a trolley's braking) are the motion's and are not flagged.
#include <string>
#include <vector>

#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/checks.hpp"
#include "swaybound/modal/modes.hpp"

namespace swaybound {

/// Share of the lowest modal period after t = 0 within which a governing peak is flagged [-].
inline constexpr double kStartTransientFraction = 0.25;

/// The lowest modal period of `modes` that is a swing (not a rope's bounce) and finite [s]; NaN if none.
double lowest_swing_period(const ModalResult& modes);

/// The start of a case in words: the kind and the raw angles and rates it amounted to, e.g.
/// "grid-017: link angles released from rest at theta0 = (2, -4, 6) deg".
std::string start_description(const Spec& spec, const CaseDef& def);

/// The values a start not given as angles came from (InitialState::quantities of a start of set
/// `set`), in words: "amplitude (5, 0) deg, phase (90) deg" for a modal start, "steady acceleration
/// 0.5 m/s^2" (and ", wind speed 12 m/s" when the set gives one) for an equilibrium start; angles in
/// rad when `si`. Empty for a start of link angles.
std::string start_values_text(const Spec& spec, int set, const std::vector<double>& quantities, bool si = false);

/// The remark on a flagged check, as the check packet gives it: the worst value's time `time` [s],
/// the lowest modal period `period` [s], the start `start_note` and what to do about it (a start
/// from an equilibrium or in a mode; for a spatial chain, which has neither, a start with the links
/// in line).
std::string start_transient_remark(double time, double period, const std::string& start_note, Motion motion);

/// Sets start_transient and start_note of every per-case check whose governing case starts from
/// other than an equilibrium and whose peak is at t < kStartTransientFraction x the lowest period.
void flag_start_transients(const Spec& spec, const CaseSpace& space, const ModalResult& modes,
                           std::vector<CheckResult>& checks);

}  // namespace swaybound
