#pragma once
// Small-signal (modal) analysis of a chain about its hanging rest position.
//
// Linearising the equations of motion (chain.hpp) about theta = 0, omega = 0 with the base at rest
// and no wind gives
//   M0 theta'' + C theta' + K theta = 0,
//   M0 = mu (model.hpp),  K = diag(g h_i),
//   C  = pivot dampers on relative rates + dashpots (see modal_analysis),
// (linearisation about an equilibrium and the state-space form of a viscously damped
// multi-degree-of-freedom system as in e.g. Meirovitch, Fundamentals of Vibrations).
//
// Undamped modes solve K v = w^2 M0 v. The damped system is the first-order system
//   x' = A x,  A = [[0, I], [-M0^-1 K, -M0^-1 C]],  x = (theta, omega),
// whose eigenvalues lambda give, for an underdamped pair lambda, conj(lambda),
//   w_n = |lambda|,  zeta = -Re(lambda) / |lambda|,  w_d = Im(lambda);
// and, for an overdamped mode (two real roots lambda_1, lambda_2 of s^2 + 2 zeta w_n s + w_n^2),
//   w_n = sqrt(lambda_1 lambda_2),  zeta = -(lambda_1 + lambda_2) / (2 w_n) > 1,  w_d = 0.
// With non-proportional damping (a rotary damper between two links, a dashpot) the damped modes are
// not the undamped shapes; each damped mode is listed next to the undamped mode nearest in frequency.
//
// Left out (each reported in ModalResult::notes when the model has it):
//   - friction (constant and pin): regularised Coulomb friction tau = -T tanh(w / w_t) has slope
//     T / w_t at rest, an artefact of the regularisation rate, not a physical damping; real dry
//     friction either sticks or removes a fixed amplitude per cycle (amplitude-dependent), neither
//     of which a linear model represents;
//   - wind: it shifts the equilibrium away from theta = 0 and its drag linearisation depends on
//     the wind speed and the load case;
//   - base motion: the modes are those of the chain on a base at rest.
//
// Closed loops: a scenario whose travel drive has a controller (model/controller.hpp) also gets the
// eigenvalues of its loop linearised about rest at a constant speed command, in the states
// (theta, theta', e = v - v_ref): with F = d Q / d a_x the generalised force per unit base
// acceleration (F = -h at rest, model.hpp) and g the gain row, a = g . (theta, theta', e) =
// k_p theta_m + k_d theta_m' - k_v e,
//   [theta']   [ 0            I             0 ] [theta ]
//   [theta''] = [-M0^-1 K      -M0^-1 C       0 ] [theta'] + [0; M0^-1 F; 1] a.
//   [e'     ]   [ 0            0             0 ] [e     ]
// The saturation at accel_limit is left out (the loop is linear while |a_cmd| stays below it).
#include <complex>
#include <string>
#include <vector>

#include "swaybound/model/model.hpp"

namespace swaybound {

/// The plane a mode swings in: the travel plane (x-y; a planar chain's only one, the boom's vertical
/// plane when slewing) or, for a spatial chain, across it (z-y); a spatial chain's rope bounce
/// (an axial mode) is vertical, in neither.
enum class SwayPlane { travel, across, vertical };

/// The plane's name in results and tables: "travel", "across", "vertical".
inline const char* plane_name(SwayPlane p) {
  return p == SwayPlane::travel ? "travel" : p == SwayPlane::across ? "across" : "vertical";
}

/// One mode: the undamped mode (frequency, period, shape) with the damped mode matched to it.
struct Mode {
  SwayPlane plane = SwayPlane::travel;
  /// A spatial chain: the index (in ModalResult::modes) of its partner in the other plane at the
  /// same undamped frequency; -1 for none (planar chains).
  int pair = -1;
  // Undamped (K v = w^2 M0 v)
  double frequency_hz = 0;       ///< undamped natural frequency w / (2 pi) [Hz]
  double period_s = 0;           ///< 1 / frequency_hz [s] (infinity for a neutral mode)
  std::vector<double> shape;     ///< per link [-]: largest |component| 1, and that component positive
  /// Models with elastic ropes: the mode's stretch of each elastic rope [m per unit of the largest
  /// component of the whole mode vector] (model.elastic_links order), and whether it is mostly axial
  /// (more than half of its kinetic energy in the rope lengths: the bounce of the load on the rope).
  std::vector<double> stretch_shape;
  bool axial = false;

  // Damped (eigenvalues of A)
  double natural_frequency_with_damping_hz = 0;  ///< w_n / (2 pi) = |lambda| / (2 pi) [Hz]
  double damped_frequency_hz = 0;  ///< Im(lambda) / (2 pi) [Hz]; 0 when overdamped
  double damping_ratio = 0;        ///< zeta [-]; > 1 when overdamped
  bool overdamped = false;         ///< the mode's two eigenvalues are real
  std::complex<double> eigenvalue;  ///< lambda [1/s], Im >= 0; when overdamped the slower real root
  std::complex<double> partner;     ///< the other root [1/s]: conj(lambda), or the faster real root
};

/// One pole of a closed loop: a complex pair (listed once, Im > 0) or a real root.
struct ClosedLoopPole {
  std::complex<double> eigenvalue;  ///< lambda [1/s]
  double natural_frequency_hz = 0;  ///< |lambda| / (2 pi) [Hz]
  double damping_ratio = 0;         ///< -Re(lambda) / |lambda| [-] (a real root: 1 decaying, -1 growing; 0 at 0)
};

/// The loop of one scenario's travel controller, linearised about rest (see the top of this file).
struct ClosedLoop {
  int scenario = -1;
  std::string scenario_name;
  std::vector<ClosedLoopPole> poles;  ///< sorted by natural frequency, lowest first
  bool stable = false;                ///< every pole has Re(lambda) < 0 (beyond 1e-9 of the largest |lambda|)
  double least_damping_ratio = 0;     ///< min over the complex poles of damping_ratio [-] (1 with none)
};

struct ModalResult {
  std::vector<Mode> modes;          ///< sorted by undamped frequency, lowest first
  std::vector<ClosedLoop> closed_loops;  ///< one per scenario with a travel controller, in scenario order
  double least_damping_ratio = 0;   ///< min over modes of damping_ratio [-] (modal_damping_min limit)
  std::vector<std::string> notes;   ///< what the linearisation leaves out or approximates
};

/// Small-signal damping coefficient of a pivot's power-law damper [N m s/rad]: C for exponent 1;
/// for exponent < 1 the slope of the linear segment below `linear_below` w0, C w0^(alpha - 1)
/// (forces.hpp; it depends on w0, because the power law itself has infinite slope at rest); for
/// exponent > 1 the slope at rest, 0.
double small_signal_damper_coefficient(const PivotModel& pivot);
/// The same for one damper law [N m s/rad].
double small_signal_damper_coefficient(const DamperLaw& damper);

/// Linearised damping matrix C [N m s/rad] about the rest position (pivot dampers and dashpots).
Eigen::MatrixXd linear_damping_matrix(const Model& model);

/// Modal analysis about theta = 0 (see the top of this file). Throws ArgumentError when the mass
/// matrix is not positive definite (a massless, inertia-free end of the chain).
ModalResult modal_analysis(const Model& model);

}  // namespace swaybound
