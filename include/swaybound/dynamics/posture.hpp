#pragma once
// How a state reads as swing angles, for planar and spatial chains alike, and how two swing angles
// per link make a spatial start.
//
// Planar chains: theta_i is the state's coordinate i; the swing angle is |theta_i|.
// Spatial chains (x along the travel, y up, z = x cross y across it): the state holds the unit
// vector e_i along each link. A start gives two angles per link, theta in the travel plane (x-y)
// and then phi out of it, e = (sin theta cos phi, -cos theta cos phi, sin phi), so phi = 0 is the
// planar chain at theta. The swing angle is the angle between e_i and the downward vertical (the
// cone angle), acos(cos theta cos phi) at a start.
#include <vector>

#include "swaybound/dynamics/chain.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"

namespace swaybound {

/// e = (sin theta cos phi, -cos theta cos phi, sin phi) and its rate for the angle rates
/// theta_rate, phi_rate [rad/s]: e' = de/dtheta theta' + de/dphi phi' (perpendicular to e).
void direction_from_angles(double theta, double phi, double theta_rate, double phi_rate, double* e, double* e_rate);

/// Swing angle of link i from the downward vertical [rad]: |theta_i| (planar), the cone angle
/// atan2(|e_h|, -e_y) (spatial, in [0, pi]).
double swing_angle(const Model& model, const double* x, int i);

/// Angle of link i relative to the link above (the vertical for link 0) at its upper pivot [rad]:
/// |theta_i - theta_{i-1}| (planar), the angle between e_i and e_{i-1} (spatial, in [0, pi]).
double relative_swing(const Model& model, const double* x, int i);

/// Swing rate of link i [rad/s]: |theta_i'| (planar), |e_i'| with its part along e_i removed
/// (spatial; the magnitude of the link's angular velocity, twist not modelled).
double swing_rate(const Model& model, const double* x, int i);

/// Angle of link i's projection on the travel plane x-y from the downward vertical [rad]:
/// theta_i (planar), atan2(e_x, -e_y) (spatial).
double travel_plane_angle(const Model& model, const double* x, int i);

/// Angle of link i's projection on the plane across the travel, z-y, from the downward vertical
/// [rad]: 0 (planar), atan2(e_z, -e_y) (spatial).
double cross_plane_angle(const Model& model, const double* x, int i);

/// The horizontal axes an engineer reads sway and loads in (unit vectors, x and z components).
/// On a slewing base (the boom frame): radial, from the slewing axis out through the top pivot,
/// and tangential, the way a positive slewing speed moves the pivot (radial x tangential = down).
/// On any other base they are the ground's x (along the travel) and z (across it), which is also
/// the boom frame of a slewing base at t = 0.
struct BoomFrame {
  double radial_x = 1, radial_z = 0;
  double tangential_x = 0, tangential_z = 1;
};

/// The boom frame under `phase` at the base position of the last `kinematics` into ws.
BoomFrame boom_frame(const Phase& phase, const Workspace& ws);

/// Link i's sway in the vertical plane of `frame`'s radial axis (in-plane) [rad]: the angle from
/// the downward vertical of the link's shadow on that plane, atan2(e . radial, -e_y), signed
/// (+ towards +radial). theta_i for a planar chain.
double in_plane_sway(const Model& model, const double* x, int i, const BoomFrame& frame);

/// Link i's sway across that plane (out-of-plane) [rad]: the angle of its shadow on the vertical
/// plane of the tangential axis, atan2(e . tangential, -e_y) (+ towards +tangential); 0 for a
/// planar chain.
double out_of_plane_sway(const Model& model, const double* x, int i, const BoomFrame& frame);

/// The reaction at link i's upper pivot (the force on link i from above) by component [N], after
/// `evaluate` (reactions complete): ground frame x, vertical (y up) and z; boom frame radial and
/// tangential. z and tangential are 0 for a planar chain (whose boom frame is the ground's).
struct LoadComponents {
  double x = 0, vertical = 0, z = 0, radial = 0, tangential = 0;
};
LoadComponents pivot_load_components(const Model& model, const Workspace& ws, int i, const BoomFrame& frame);

/// Writes the coordinates and rates of a start into x (size model.state_size(), zeroed by the
/// caller): angles and rates for a planar chain; for a spatial one each link's direction from
/// (theta, phi) and its rate from (omega, phi_rate). Missing entries are 0. Throws ArgumentError
/// for more entries than links, or for phi on a planar chain.
void write_start(const Model& model, const InitialState& start, std::vector<double>& x);

}  // namespace swaybound
