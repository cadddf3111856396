#include "swaybound/model/controller.hpp"

#include <algorithm>

namespace swaybound {

DriveControl drive_control(const ScenarioSpec::Travel::Controller& c) {
  return DriveControl{true, c.measure, c.angle_gain, c.rate_gain, c.speed_gain, c.accel_limit};
}

double drive_command(const DriveControl& c, double a_ref, double v_ref, double speed, double angle, double rate) {
  return a_ref + c.speed_gain * (v_ref - speed) + c.angle_gain * angle + c.rate_gain * rate;
}

double drive_acceleration(const DriveControl& c, double a_ref, double v_ref, double speed, double angle,
                          double rate) {
  return std::clamp(drive_command(c, a_ref, v_ref, speed, angle, rate), -c.accel_limit, c.accel_limit);
}

double default_accel_limit(const ScenarioSpec::Travel& travel) {
  double limit = travel.stop ? travel.stop->decel : 0.0;
  for (const DrumMoveSpec& m : travel.moves) limit = std::max(limit, m.accel);
  return limit;
}

}  // namespace swaybound
