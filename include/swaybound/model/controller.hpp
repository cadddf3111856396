#pragma once
// Feedback anti-sway on the travel drive (x) of a chain, planar or spatial (there theta_m is the
// measured link's angle in the travel plane, atan2(e_x, -e_y)): a model for sizing the gains of a
// sway controller and the drive it needs, not a controller implementation for a real drive (no
// sampling, no sensor, no filter, no drive dynamics; specs/README.md, "Travel drive: controller").
//
// The law. The drive follows its speed command v_ref(t), the travel profile (shaped when the
// travel has a shaper, with its stop), whose acceleration is a_ref(t). With the trolley's speed v
// along x, the measured link's absolute angle theta_m from the downward vertical (positive when its
// lower end is displaced towards +x) and its rate theta_m', the drive's acceleration is
//   a_cmd = a_ref(t) + k_v (v_ref(t) - v) + k_p theta_m + k_d theta_m',
//   a     = min(max(a_cmd, -a_max), a_max).
// Signs: positive gains accelerate the trolley towards the side the load swings to (the trolley
// moves towards the load's swing), which stiffens (k_p) and damps (k_d) the sway. For a point mass
// on a massless rod of length L and k_v = 0 the loop is L theta'' + k_d theta' + (g + k_p) theta = 0:
// natural frequency sqrt((g + k_p) / L), damping ratio k_d / (2 sqrt(L (g + k_p))).
//
// Saturation is a kink of a in the state, continuous in time: it needs no event (the step-size
// control takes the kink); the reference's phase boundaries stay the only restarts. The modal
// analysis (modal/modes.hpp) linearises the loop without it.
//
// State: with a controller the trolley's position x [m] and speed v [m/s] are states of the run
// (Model::drive_state), x' = v, v' = a; without one the base follows the scenario's phases exactly.
#include <limits>

#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// The controller of a travel drive in SI, carried by every phase of its scenario (inactive
/// elsewhere).
struct DriveControl {
  bool active = false;
  int measure = -1;          ///< the link whose angle and rate are measured
  double angle_gain = 0;     ///< k_p [m/s^2 per rad]
  double rate_gain = 0;      ///< k_d [m/s^2 per rad/s]
  double speed_gain = 0;     ///< k_v [1/s]
  double accel_limit = std::numeric_limits<double>::infinity();  ///< a_max [m/s^2]
};

/// The controller of a spec's travel drive, active.
DriveControl drive_control(const ScenarioSpec::Travel::Controller& controller);

/// The unsaturated command a_cmd [m/s^2] of the law above: reference acceleration `a_ref`
/// [m/s^2] and speed `v_ref` [m/s], trolley speed `speed` [m/s], measured angle [rad] and rate [rad/s].
double drive_command(const DriveControl& control, double a_ref, double v_ref, double speed, double angle, double rate);

/// The drive's acceleration a [m/s^2]: drive_command saturated at +-accel_limit.
double drive_acceleration(const DriveControl& control, double a_ref, double v_ref, double speed, double angle,
                          double rate);

/// The default acceleration limit of a travel drive's controller [m/s^2]: the largest acceleration
/// of its moves and its stop's deceleration (0 when it has neither).
double default_accel_limit(const ScenarioSpec::Travel& travel);

}  // namespace swaybound
