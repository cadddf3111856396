#pragma once
// A speed profile along one axis (a hoist drum's rope speed, later a drive axis): an initial speed
// changed by speed moves in time order, each limited in acceleration and, for an S-curve, in jerk.
//
// The profile is a chain of pieces of constant jerk j. On a piece [t0, t1), with d = t - t0,
//   a(t) = a0 + j d,   v(t) = v0 + a0 d + j d^2 / 2,   p(t) = p0 + v0 d + a0 d^2 / 2 + j d^3 / 6,
// and each piece starts where the previous one ends (p and v continuous; a continuous except at a
// step of a trapezoidal move). A move at time `at` from speed v to speed `to`, dv = to - v,
// s = sign(dv), A = accel, J = jerk:
//   trapezoid (J = 0):       one piece a = s A for |dv| / A.
//   S-curve, |dv| >= A^2/J:  j = s J for A/J, a = s A for |dv|/A - A/J, j = -s J for A/J;
//                            the move lasts |dv|/A + A/J.
//   S-curve, |dv| <  A^2/J:  triangular acceleration, peak Ap = sqrt(|dv| J): j = s J for Ap/J,
//                            then j = -s J for Ap/J; the move lasts 2 sqrt(|dv| / J).
// Every move covers (v + to) / 2 times its duration (its acceleration is symmetric in time).
// Between moves the speed is constant. Before t = 0 the profile holds the initial speed.
// Pieces of zero duration are left out, and a boundary where neither the acceleration nor the jerk
// changes (two trapezoidal moves back to back at the same acceleration) is merged away.
#include <cstddef>
#include <limits>
#include <string>
#include <vector>

#include "swaybound/core/error.hpp"

namespace swaybound {

/// One speed command: from time `at` [s], change the speed to `to` [m/s] with |acceleration| <= accel [m/s^2]
/// and, if jerk > 0, |jerk| <= jerk [m/s^3] (S-curve); jerk = 0 means the acceleration steps (trapezoid in
/// speed).
struct SpeedMove {
  double at = 0, to = 0, accel = 0, jerk = 0;
};

/// A piece of constant jerk: on [t0, t1) position p(t) = p0 + v0 d + a0 d^2/2 + j d^3/6, d = t - t0.
struct ProfilePiece {
  double t0 = 0, t1 = 0, p0 = 0, v0 = 0, a0 = 0, j = 0;
};

/// A speed move that cannot be built: move_index() is its 0-based index in the list given to
/// SpeedProfile::build, and what() reads "moves[INDEX]: MESSAGE; FIX".
class ProfileError : public Error {
 public:
  ProfileError(std::size_t move_index, const std::string& message, const std::string& fix);
  std::size_t move_index() const { return move_index_; }

 private:
  std::size_t move_index_;
};

class SpeedProfile {
 public:
  SpeedProfile() = default;  // speed 0 for all t

  /// Builds the profile from an initial speed and moves in time order. Throws ProfileError naming the
  /// move when a move starts before the previous one has reached its speed, when `at` < 0, accel <= 0,
  /// jerk < 0, a value is not finite, or the move would end at a time that is not finite. A move to the
  /// speed the profile already has adds no pieces (and reaches its speed at `at`). A non-finite initial
  /// speed is an ArgumentError.
  static SpeedProfile build(double initial_speed, const std::vector<SpeedMove>& moves);

  /// A profile made of given pieces (a shaped or stopped command, model/shaper.hpp): contiguous from
  /// t = 0, each of positive duration, the last ending at +infinity; `end_of_moves` as below.
  /// Throws ArgumentError when the pieces are not so.
  static SpeedProfile from_pieces(std::vector<ProfilePiece> pieces, double end_of_moves);

  double position(double t) const;  ///< [m], 0 at t = 0
  double speed(double t) const;     ///< [m/s]
  double accel(double t) const;     ///< [m/s^2]; right-continuous at a jump
  double jerk(double t) const;      ///< [m/s^3]; of the piece holding t (0 before t = 0)

  /// Contiguous from t = 0, each of positive duration; the last has t1 = +infinity.
  const std::vector<ProfilePiece>& pieces() const { return pieces_; }

  /// Times > 0 where the acceleration or the jerk jumps (piece boundaries), increasing, no duplicates.
  std::vector<double> breakpoints() const;

  /// When the last move reaches its speed [s]; 0 without moves.
  double end_of_moves() const { return end_of_moves_; }

 private:
  /// The piece holding t >= 0 (binary search over the piece starts; no allocation).
  const ProfilePiece& piece_at(double t) const;

  std::vector<ProfilePiece> pieces_{ProfilePiece{0, std::numeric_limits<double>::infinity(), 0, 0, 0, 0}};
  double end_of_moves_ = 0;
};

}  // namespace swaybound
