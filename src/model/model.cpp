#include "swaybound/model/model.hpp"

#include "swaybound/model/profile.hpp"
#include "swaybound/model/shaper.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>
#include <numbers>
#include <optional>

namespace swaybound {

int ScenarioModel::phase_at(double t) const {
  for (std::size_t k = 0; k < phases.size(); ++k)
    if (t < phases[k].t1) return static_cast<int>(k);
  return static_cast<int>(phases.size()) - 1;
}

namespace {

PointRef point_of(const AttachmentSpec& a) { return PointRef{a.link, a.at, a.base_x, a.base_y}; }

/// The drum's speed profile of a scenario (standing still without a hoist).
SpeedProfile drum_profile(const ScenarioSpec& s) {
  if (!s.hoist) return {};
  std::vector<SpeedMove> moves;
  for (const DrumMoveSpec& m : s.hoist->moves) moves.push_back(SpeedMove{m.at, m.to, m.accel, m.jerk});
  return SpeedProfile::build(s.hoist->initial_speed, moves);
}

/// The slewing drive's speed profile of a scenario [rad/s], shaped and stopped as its spec says
/// (standing still without one).
SpeedProfile slew_profile(const ScenarioSpec& s) {
  if (!s.slew) return {};
  return slew_drive_profile(*s.slew);
}

/// The luffing profile of a scenario: the radius's rate [m/s] or the boom angle's [rad/s] (standing
/// still without luffing).
SpeedProfile luff_profile(const ScenarioSpec& s) {
  if (!s.slew || !s.slew->luff) return {};
  std::vector<SpeedMove> moves;
  for (const DrumMoveSpec& m : s.slew->luff->moves) moves.push_back(SpeedMove{m.at, m.to, m.accel, m.jerk});
  return SpeedProfile::build(s.slew->luff->initial_speed, moves);
}

/// The travel drive's speed profile of a scenario, shaped and stopped as its spec says (empty
/// without a travel drive).
std::optional<SpeedProfile> travel_profile(const ScenarioSpec& s) {
  if (!s.travel) return std::nullopt;
  return travel_drive_profile(*s.travel);
}

/// The cross-travel drive's speed profile (along z), likewise.
std::optional<SpeedProfile> cross_travel_profile(const ScenarioSpec& s) {
  if (!s.cross_travel) return std::nullopt;
  return travel_drive_profile(*s.cross_travel);
}

}  // namespace

ScenarioModel build_scenario(const ScenarioSpec& s, const std::vector<WindSpec>& wind) {
  // Breakpoints: ends of base-acceleration segments, starts/ends of gusts, and where the drum's or
  // the travel drive's acceleration or jerk jumps.
  const SpeedProfile drum = drum_profile(s);
  const std::optional<SpeedProfile> travel = travel_profile(s);
  const SpeedProfile slew = slew_profile(s);
  const SpeedProfile luff = luff_profile(s);
  std::vector<double> cuts = drum.breakpoints();
  for (double t : slew.breakpoints()) cuts.push_back(t);
  for (double t : luff.breakpoints()) cuts.push_back(t);
  if (travel)
    for (double t : travel->breakpoints()) cuts.push_back(t);
  const std::optional<SpeedProfile> cross = cross_travel_profile(s);
  if (cross)
    for (double t : cross->breakpoints()) cuts.push_back(t);
  double t = 0;
  for (const auto& seg : s.accel) cuts.push_back(t += seg.duration);
  for (const auto& w : wind)
    if (w.gust) {
      cuts.push_back(w.gust->start);
      cuts.push_back(w.gust->start + w.gust->duration);
    }
  cuts.push_back(0.0);
  std::sort(cuts.begin(), cuts.end());
  cuts.erase(std::unique(cuts.begin(), cuts.end()), cuts.end());

  ScenarioModel out;
  out.name = s.name;
  out.hoist_link = s.hoist ? s.hoist->link : -1;
  out.lift_off = s.lift_off.has_value();
  out.lift_off_slack = s.lift_off ? s.lift_off->slack : 0.0;
  double x = 0, y = 0, z = 0, vx = s.initial_vx, vy = s.initial_vy, vz = s.initial_vz;
  for (std::size_t k = 0; k < cuts.size(); ++k) {
    Phase p;
    p.t0 = cuts[k];
    p.t1 = k + 1 < cuts.size() ? cuts[k + 1] : std::numeric_limits<double>::infinity();
    // Base acceleration of the segment that contains this phase (0 after the last segment).
    double seg_start = 0;
    for (const auto& seg : s.accel) {
      if (p.t0 >= seg_start && p.t0 < seg_start + seg.duration) {
        p.ax = seg.ax;
        p.ay = seg.ay;
        p.az = seg.az;
        break;
      }
      seg_start += seg.duration;
    }
    p.x0 = x;
    p.y0 = y;
    p.vx0 = vx;
    p.vy0 = vy;
    p.z0 = z;
    p.vz0 = vz;
    for (const auto& w : wind) {
      const bool gusting = w.gust && p.t0 >= w.gust->start && p.t0 < w.gust->start + w.gust->duration;
      p.wind_speed.push_back(w.speed + (gusting ? w.gust->speed : 0.0));
    }
    if (s.hoist) {
      p.drum_link = s.hoist->link;
      p.drum_s0 = drum.position(p.t0);
      p.drum_v0 = drum.speed(p.t0);
      p.drum_a0 = drum.accel(p.t0);
      p.drum_jerk = drum.jerk(p.t0);
    }
    if (s.slew) {
      p.slew_radius = s.slew->radius;
      p.slew_angle0 = slew.position(p.t0);
      p.slew_rate0 = slew.speed(p.t0);
      p.slew_accel0 = slew.accel(p.t0);
      p.slew_jerk = slew.jerk(p.t0);
      if (const auto& l = s.slew->luff) {
        p.luff_boom = l->boom;
        p.luff_angle0 = l->angle;
        p.luff_s0 = luff.position(p.t0);
        p.luff_v0 = luff.speed(p.t0);
        p.luff_a0 = luff.accel(p.t0);
        p.luff_jerk = luff.jerk(p.t0);
      }
    }
    if (travel) {
      // The drive's profile gives x exactly (a cubic within the phase); y keeps its segments.
      p.x0 = travel->position(p.t0);
      p.vx0 = travel->speed(p.t0);
      p.ax = travel->accel(p.t0);
      p.jx = travel->jerk(p.t0);
    }
    if (cross) {  // z from the cross-travel drive's profile, as x from the travel drive's
      p.z0 = cross->position(p.t0);
      p.vz0 = cross->speed(p.t0);
      p.az = cross->accel(p.t0);
      p.jz = cross->jerk(p.t0);
    }
    if (std::isfinite(p.t1)) {
      const double dt = p.t1 - p.t0;
      x += vx * dt + 0.5 * p.ax * dt * dt;
      y += vy * dt + 0.5 * p.ay * dt * dt;
      z += vz * dt + 0.5 * p.az * dt * dt;
      vx += p.ax * dt;
      vy += p.ay * dt;
      vz += p.az * dt;
    }
    if (s.travel && s.travel->controller) p.control = drive_control(*s.travel->controller);
    out.phases.push_back(std::move(p));
  }
  return out;
}

namespace {

/// Length kinds, rope laws and the extended coordinates of ropes of variable length.
void assign_length_coordinates(const Spec& spec, Model& m) {
  const auto n = static_cast<std::size_t>(m.n);
  m.length_kind.assign(n, LengthKind::fixed);
  m.parts.assign(n, 1);
  m.rope_law.assign(n, RopeLaw{});
  m.length_coordinate.assign(n, -1);
  for (std::size_t i = 0; i < n; ++i) {
    const LinkSpec& l = spec.links[i];
    if (l.kind != LinkKind::rope) continue;
    m.parts[i] = l.parts_of_line;
    if (l.elastic) {
      m.length_kind[i] = LengthKind::elastic;
      const double ea = l.elastic->stiffness > 0 ? l.elastic->stiffness * l.length : l.parts_of_line * l.elastic->ea;
      double damping = l.elastic->damping;
      if (l.elastic->damping_ratio >= 0) {
        // Generalised mass of the length coordinate hanging at rest: phi^2 m_rope + the mass below.
        const double phi = m.com[i] / l.length;
        const double mass = phi * phi * m.mass[i] + (i + 1 < n ? m.mass_below[i + 1] : 0.0);
        damping = 2 * l.elastic->damping_ratio * std::sqrt(ea / l.length * mass);
      }
      m.rope_law[i] = RopeLaw{ea, damping};
    }
  }
  for (const ScenarioModel& s : m.scenarios)
    if (s.hoist_link >= 0 && m.length_kind[static_cast<std::size_t>(s.hoist_link)] == LengthKind::fixed)
      m.length_kind[static_cast<std::size_t>(s.hoist_link)] = LengthKind::prescribed;
  int next = m.n;
  for (std::size_t i = 0; i < n; ++i)
    if (m.length_kind[i] == LengthKind::elastic) {
      m.length_coordinate[i] = next++;
      m.elastic_links.push_back(static_cast<int>(i));
    }
  m.dof = next;
  for (std::size_t i = 0; i < n; ++i)
    if (m.length_kind[i] == LengthKind::prescribed) m.length_coordinate[i] = next++;
  m.extended = next;
}

}  // namespace

Model build_model(const Spec& spec) {
  static std::atomic<std::uint64_t> next_id{1};
  Model m;
  m.id = next_id.fetch_add(1, std::memory_order_relaxed);
  m.n = static_cast<int>(spec.links.size());
  SWAYBOUND_REQUIRE(m.n >= 1, "a model needs at least one link, got {}", m.n);
  m.gravity = spec.gravity;
  const auto n = static_cast<std::size_t>(m.n);
  for (const auto& l : spec.links) {
    m.names.push_back(l.name);
    m.kind.push_back(l.kind);
    m.mass.push_back(l.mass);
    m.length.push_back(l.length);
    m.com.push_back(l.com_given ? l.com : l.length / 2);
    m.inertia.push_back(l.inertia_given ? l.inertia : l.mass * l.length * l.length / 12.0);
    PivotModel p;
    if (const auto& f = l.pivot.friction) {
      p.coulomb_torque = f->torque;
      p.pin_friction = f->mu * f->pin_radius;
      p.transition_rate = f->transition_rate;
    }
    for (const DamperSpec& d : l.pivot.dampers) {
      DamperLaw law{d.coefficient, d.exponent, d.max_torque, d.linear_below};
      if (d.axis) {
        // A shaft is a line (the law is odd in the rate, so a and -a give one torque): within 1e-9 rad
        // of along or across it is that axis exactly (unit components), else oblique at the angle given.
        const double turn = std::fabs(std::remainder(*d.axis, std::numbers::pi));  // in [0, pi/2]
        law.directional = true;
        law.axis_x = turn <= 1e-9 ? 1.0 : turn >= kDamperAcross - 1e-9 ? 0.0 : std::cos(*d.axis);
        law.axis_z = turn <= 1e-9 ? 0.0 : turn >= kDamperAcross - 1e-9 ? 1.0 : std::sin(*d.axis);
      }
      p.dampers.push_back(law);
    }
    m.any_pin_friction |= p.pin_friction > 0;
    m.any_pivot_torque |= p.has_friction() || p.has_damper();
    m.pivots.push_back(p);
  }
  m.mass_below.assign(n, 0.0);
  for (std::size_t k = n; k-- > 0;) m.mass_below[k] = m.mass[k] + (k + 1 < n ? m.mass_below[k + 1] : 0.0);
  m.h.resize(n);
  for (std::size_t i = 0; i < n; ++i)
    m.h[i] = m.mass[i] * m.com[i] + m.length[i] * (i + 1 < n ? m.mass_below[i + 1] : 0.0);
  m.mu.resize(m.n, m.n);
  for (std::size_t i = 0; i < n; ++i) {
    const double below = i + 1 < n ? m.mass_below[i + 1] : 0.0;
    m.mu(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(i)) =
        m.mass[i] * m.com[i] * m.com[i] + m.inertia[i] + m.length[i] * m.length[i] * below;
    for (std::size_t j = i + 1; j < n; ++j) {
      // i < j: sum over k >= j of m_k L_i a_kj = L_i h_j
      const double v = m.length[i] * m.h[j];
      m.mu(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) = v;
      m.mu(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(i)) = v;
    }
  }
  double depth = 0;
  for (std::size_t k = 0; k < n; ++k) {
    m.energy_scale += m.gravity * m.mass[k] * (depth + m.com[k]);
    depth += m.length[k];
  }
  for (const auto& d : spec.dashpots)
    m.dashpots.push_back(DashpotModel{d.name, point_of(d.from), point_of(d.to), d.coefficient});
  for (const auto& w : spec.wind)
    m.wind.push_back(WindModel{PointRef{w.link, w.at, 0, 0}, 0.5 * w.air_density * w.drag_coefficient * w.drag_area,
                               std::cos(w.direction), std::sin(w.direction)});
  for (const auto& s : spec.scenarios) {
    m.scenarios.push_back(build_scenario(s, spec.wind));
    m.drive_states |= s.travel && s.travel->controller;
  }
  assign_length_coordinates(spec, m);
  if (spec.motion == Motion::spatial) {
    m.spatial = true;
    // Each link's direction takes 3 coordinates instead of an angle's 1: the lengths move up by 2n.
    for (int& c : m.length_coordinate)
      if (c >= 0) c += 2 * m.n;
    m.dof += 2 * m.n;
    m.extended += 2 * m.n;
    m.boom_frame = std::any_of(spec.scenarios.begin(), spec.scenarios.end(),
                               [](const ScenarioSpec& s) { return s.slew.has_value(); });
  }
  return m;
}

}  // namespace swaybound
