#pragma once
// Starts given in modal coordinates, and the way back. With the undamped modes of the chain about
// its hanging rest position (modes.hpp: shapes s_k, largest |component| 1, circular frequencies
// w_k = 2 pi f_k), the linear free motion in mode k alone is theta(t) = A_k cos(w_k t + phi_k) s_k,
// so a start of amplitudes A_k and phases phi_k is
//   theta(0) = sum_k A_k cos(phi_k) s_k,   omega(0) = -sum_k A_k w_k sin(phi_k) s_k
// (modal superposition; e.g. Meirovitch, Fundamentals of Vibrations, ch. 7). A_k is the largest
// link angle of mode k; phase 0 releases the mode from rest at its full amplitude.
#include <vector>

#include "swaybound/integrate/run.hpp"
#include "swaybound/modal/modes.hpp"

namespace swaybound {

/// The link angles and rates of a start with `amplitude[k]` [rad] and `phase[k]` [rad] in mode k
/// (modes missing from either list: 0). Planar chains of rigid links and inextensible ropes (the
/// modes' shapes are the link angles).
InitialState modal_start(const ModalResult& modes, const std::vector<double>& amplitude, const std::vector<double>& phase);

/// The modal coordinates of a state: q with theta = sum_k q_k s_k and q' with omega = sum_k q'_k s_k
/// (the inverse of the shape matrix applied to the angles and rates).
struct ModalCoordinates {
  std::vector<double> q, rate;  ///< per mode [rad], [rad/s]
  /// sqrt(q_k^2 + (q'_k / w_k)^2): the amplitude of mode k's linear free motion [rad]
  std::vector<double> amplitude;
};
ModalCoordinates modal_coordinates(const ModalResult& modes, const std::vector<double>& theta,
                                   const std::vector<double>& omega);

}  // namespace swaybound
