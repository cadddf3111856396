#include "swaybound/model/profile.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound {

ProfileError::ProfileError(std::size_t move_index, const std::string& message, const std::string& fix)
    : Error(fmt::format("moves[{}]: {}; {}", move_index, message, fix)), move_index_(move_index) {}

namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();

double piece_position(const ProfilePiece& q, double d) {
  return q.p0 + d * (q.v0 + d * (q.a0 / 2 + d * q.j / 6));
}
double piece_speed(const ProfilePiece& q, double d) {
  return q.v0 + d * (q.a0 + d * q.j / 2);
}
double piece_accel(const ProfilePiece& q, double d) {
  return q.a0 + d * q.j;
}

/// Appends pieces one after another and keeps the state at the end of the last one.
class PieceChain {
 public:
  explicit PieceChain(double initial_speed) : speed_(initial_speed) {}

  double end_time() const { return time_; }
  double end_speed() const { return speed_; }

  /// A piece from the end of the chain to t1 with jerk j, nominal acceleration a0 at its start and a1 at
  /// its end. Nothing when t1 is not after the end (a duration rounded away); merged into the last
  /// piece when the acceleration and jerk carry on unchanged across the boundary.
  void append(double t1, double a0, double a1, double j) {
    if (!(t1 > time_)) return;
    if (!pieces_.empty() && pieces_.back().j == j && end_accel_ == a0) {
      pieces_.back().t1 = t1;
    } else {
      pieces_.push_back(ProfilePiece{time_, t1, position_, speed_, a0, j});
    }
    const ProfilePiece& q = pieces_.back();
    position_ = piece_position(q, t1 - q.t0);
    speed_ = piece_speed(q, t1 - q.t0);
    time_ = t1;
    end_accel_ = a1;
  }

  /// A move has reached its target: the speed is `to` exactly (the pieces' rounding is dropped).
  void settle(double to) { speed_ = to; }

  /// The finished chain: a last piece of constant speed to +infinity.
  std::vector<ProfilePiece> finish() {
    append(kInfinity, 0, 0, 0);
    return std::move(pieces_);
  }

 private:
  std::vector<ProfilePiece> pieces_;
  double time_ = 0, position_ = 0, speed_ = 0, end_accel_ = 0;
};

void check_move(std::size_t index, const SpeedMove& m, double previous_reached, std::size_t previous_index) {
  if (!std::isfinite(m.at) || !std::isfinite(m.to) || !std::isfinite(m.accel) || !std::isfinite(m.jerk))
    throw ProfileError(
        index,
        fmt::format("a value is not finite (at {}, to {}, accel {}, jerk {})", m.at, m.to, m.accel, m.jerk),
        "give finite numbers");
  if (m.at < 0)
    throw ProfileError(index, fmt::format("starts at {:g} s, before t = 0", m.at),
                       "start it at 0 s or later");
  if (m.accel <= 0)
    throw ProfileError(index, fmt::format("accel is {:g} m/s^2", m.accel),
                       "give an acceleration limit above 0");
  if (m.jerk < 0)
    throw ProfileError(index, fmt::format("jerk is {:g} m/s^3", m.jerk),
                       "give 0 for a trapezoid or a jerk limit above 0 for an S-curve");
  if (index > 0 && m.at < previous_reached)
    throw ProfileError(index,
                       fmt::format("starts at {:g} s, before moves[{}] reaches its speed at {:.17g} s", m.at,
                                   previous_index, previous_reached),
                       fmt::format("start it at {:.17g} s or later, or raise the accel or jerk of moves[{}]",
                                   previous_reached, previous_index));
}

}  // namespace

SpeedProfile SpeedProfile::build(double initial_speed, const std::vector<SpeedMove>& moves) {
  SWAYBOUND_REQUIRE(std::isfinite(initial_speed), "initial speed {} is not finite", initial_speed);
  PieceChain chain(initial_speed);
  double reached = 0;  // when the latest move reached its speed
  for (std::size_t i = 0; i < moves.size(); ++i) {
    const SpeedMove& m = moves[i];
    check_move(i, m, reached, i - 1);
    const double change = m.to - chain.end_speed();
    if (change == 0) {
      reached = m.at;
      continue;
    }
    const double size = std::fabs(change), sign = change > 0 ? 1.0 : -1.0;
    double end = 0;  // when this move reaches its speed
    if (m.jerk == 0) {
      end = m.at + size / m.accel;
    } else if (size * m.jerk > m.accel * m.accel) {
      end = m.at + size / m.accel + m.accel / m.jerk;
    } else {
      end = m.at + 2 * std::sqrt(size / m.jerk);
    }
    if (!std::isfinite(end))
      throw ProfileError(
          i,
          fmt::format("a speed change of {:g} m/s at {:g} m/s^2 ends at a time that is not finite", change,
                      m.accel),
          "raise accel (or jerk) or reduce the speed change");

    chain.append(m.at, 0, 0, 0);  // constant speed up to the move
    if (m.jerk == 0) {
      chain.append(end, sign * m.accel, sign * m.accel, 0);
    } else if (size * m.jerk > m.accel * m.accel) {
      const double ramp = m.accel / m.jerk, peak = sign * m.accel;
      chain.append(m.at + ramp, 0, peak, sign * m.jerk);
      chain.append(end - ramp, peak, peak, 0);
      chain.append(end, peak, 0, -sign * m.jerk);
    } else {
      const double peak = std::sqrt(size * m.jerk), ramp = peak / m.jerk;
      chain.append(m.at + ramp, 0, sign * peak, sign * m.jerk);
      chain.append(end, sign * peak, 0, -sign * m.jerk);
    }
    chain.settle(m.to);
    reached = end;
  }
  SpeedProfile profile;
  profile.pieces_ = chain.finish();
  profile.end_of_moves_ = reached;
  return profile;
}

SpeedProfile SpeedProfile::from_pieces(std::vector<ProfilePiece> pieces, double end_of_moves) {
  SWAYBOUND_REQUIRE(!pieces.empty() && pieces.front().t0 == 0 && pieces.back().t1 == kInfinity,
                    "pieces must run from t = 0 to infinity ({} pieces)", pieces.size());
  for (std::size_t k = 0; k < pieces.size(); ++k) {
    SWAYBOUND_REQUIRE(pieces[k].t1 > pieces[k].t0, "piece {} has no duration ({} to {})", k, pieces[k].t0,
                      pieces[k].t1);
    SWAYBOUND_REQUIRE(k == 0 || pieces[k].t0 == pieces[k - 1].t1, "piece {} does not start where piece {} ends", k,
                      k - 1);
  }
  SWAYBOUND_REQUIRE(std::isfinite(end_of_moves) && end_of_moves >= 0, "end of moves {} s", end_of_moves);
  SpeedProfile profile;
  profile.pieces_ = std::move(pieces);
  profile.end_of_moves_ = end_of_moves;
  return profile;
}

const ProfilePiece& SpeedProfile::piece_at(double t) const {
  // The first piece whose start is after t, less one; pieces_[0].t0 = 0 <= t.
  const auto after = std::upper_bound(pieces_.begin(), pieces_.end(), t,
                                      [](double time, const ProfilePiece& q) { return time < q.t0; });
  return after == pieces_.begin() ? pieces_.front() : *(after - 1);
}

double SpeedProfile::position(double t) const {
  if (t < 0) return pieces_.front().v0 * t;
  const ProfilePiece& q = piece_at(t);
  return piece_position(q, t - q.t0);
}

double SpeedProfile::speed(double t) const {
  if (t < 0) return pieces_.front().v0;
  const ProfilePiece& q = piece_at(t);
  return piece_speed(q, t - q.t0);
}

double SpeedProfile::accel(double t) const {
  if (t < 0) return 0;
  const ProfilePiece& q = piece_at(t);
  return piece_accel(q, t - q.t0);
}

double SpeedProfile::jerk(double t) const {
  if (t < 0) return 0;
  return piece_at(t).j;
}

std::vector<double> SpeedProfile::breakpoints() const {
  std::vector<double> times;
  times.reserve(pieces_.size() - 1);
  for (std::size_t k = 1; k < pieces_.size(); ++k) times.push_back(pieces_[k].t0);
  return times;
}

}  // namespace swaybound
