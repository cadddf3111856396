// Section 3, design summary: links, pivots, dampers, wind, scenarios and the case set.
#include "document_build.hpp"

#include <algorithm>
#include <cmath>
#include <optional>
#include <utility>

#include <fmt/format.h>

#include "swaybound/spec/case_set_kinds.hpp"
#include "swaybound/report/format.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound::report_doc::build {

namespace {

// ---------------------------------------------------------------------------------------------
// 3 Design summary

std::string range_text(const std::vector<Range>& ranges, InitialKind kind, double factor, const std::string& unit) {
  if (ranges.empty()) return "0";
  const StartShape shape = initial_kind(kind).shape;
  std::vector<std::string> parts;
  for (const auto& r : ranges) {
    if (shape == StartShape::values || r.lo == r.hi)
      parts.push_back(num(r.lo * factor));
    else if (shape == StartShape::counted_ranges)
      parts.push_back(fmt::format("{} to {} ({})", num(r.lo * factor), num(r.hi * factor), r.count));
    else
      parts.push_back(fmt::format("{} to {}", num(r.lo * factor), num(r.hi * factor)));
  }
  return fmt::format("[{}] {}", fmt::join(parts, "; "), unit);
}

std::string kind_name(InitialKind k) { return std::string(initial_kind(k).name); }

std::string attachment_text(const Spec& spec, const AttachmentSpec& a) {
  if (a.link < 0) return fmt::format("base at ({}, {}) m", num(a.base_x), num(a.base_y));
  return fmt::format("'{}' at {} m", link_name(spec, a.link), num(a.at));
}

/// "to 4 deg/s at 0 s (2 deg/s², jerk 2 deg/s³)" for each move of a speed profile of a position in
/// `unit` (deg, m), the values times `factor`.
std::string moves_text(const std::vector<DrumMoveSpec>& moves, double factor, const std::string& unit) {
  std::vector<std::string> out;
  for (const auto& m : moves)
    out.push_back(fmt::format("to {} {}/s at {:g} s ({} {}/s²{})", num(m.to * factor), unit, m.at,
                              num(m.accel * factor), unit,
                              m.jerk > 0 ? fmt::format(", jerk {} {}/s³", num(m.jerk * factor), unit) : ""));
  return fmt::format("{}", fmt::join(out, ", "));
}

/// A speed profile of a position in `unit` (deg, m): its speed at t = 0, moves, shaper and stop,
/// the values times `factor`.
std::string profile_text(double speed, const std::vector<DrumMoveSpec>& moves,
                         const std::optional<ScenarioSpec::Travel::Shaper>& shaper,
                         const std::optional<ScenarioSpec::Travel::Stop>& stop, double factor, const std::string& unit) {
  std::string text = fmt::format("speed {} {}/s at t = 0", num(speed * factor), unit);
  if (!moves.empty()) text += "; moves " + moves_text(moves, factor, unit);
  if (shaper) text += fmt::format("; shaped for {} Hz", num(shaper->frequency));
  if (stop) text += fmt::format("; stop at {:g} s at {} {}/s²", stop->at, num(stop->decel * factor), unit);
  return text;
}

/// How a scenario moves the top pivot: its acceleration segments, its drives along x and z, or its
/// slewing and luffing (3 Design summary, base-motion scenarios).
std::string base_motion_text(const ScenarioSpec& scn, bool spatial) {
  std::vector<std::string> parts;
  if (scn.slew) {
    const auto& sl = *scn.slew;
    parts.push_back(fmt::format("slewing at radius {} m: {}", num(sl.radius),
                                profile_text(sl.initial_rate, sl.moves, sl.shaper, sl.stop, kDeg, "deg")));
    if (sl.luff) {
      const auto& lf = *sl.luff;
      if (lf.boom > 0)
        parts.push_back(fmt::format("luffing boom of {} m from {} deg: {}", num(lf.boom), num(lf.angle * kDeg),
                                    profile_text(lf.initial_speed, lf.moves, {}, {}, kDeg, "deg")));
      else
        parts.push_back("radial luffing (+ outwards): " +
                        profile_text(lf.initial_speed, lf.moves, {}, {}, 1, "m"));
    }
  }
  for (const auto& [drive, axis] : {std::pair{&scn.travel, "x"}, std::pair{&scn.cross_travel, "z"}})
    if (*drive)
      parts.push_back(fmt::format("drive along {}: {}", axis,
                                  profile_text((*drive)->initial_speed, (*drive)->moves, (*drive)->shaper,
                                               (*drive)->stop, 1, "m")));
  std::vector<std::string> seg;
  for (const auto& a : scn.accel)
    seg.push_back(spatial ? fmt::format("{:g} s at ({}, {}, {})", a.duration, num(a.ax), num(a.ay), num(a.az))
                          : fmt::format("{:g} s at ({}, {})", a.duration, num(a.ax), num(a.ay)));
  if (!seg.empty()) parts.push_back(fmt::format("acceleration {} m/s²", fmt::join(seg, "; ")));
  return parts.empty() ? "none (constant velocity)" : fmt::format("{}", fmt::join(parts, "; "));
}

}  // namespace

Section design_section(const Spec& spec, const CheckReport& r) {
  Section s{"design", "3", "Design summary", {}, false};
  Block f;
  f.kind = Block::Kind::fields;
  f.field_list = {{"Gravity", fmt::format("{} m/s²", num(spec.gravity, 6))},
                  {"Links", std::to_string(spec.links.size())},
                  {"Cases", fmt::format("{} = {} start(s) x {} scenario(s)", r.case_count,
                                        spec.scenarios.empty() ? 0 : r.case_count / static_cast<long>(spec.scenarios.size()),
                                        spec.scenarios.size())},
                  {"Run length", fmt::format("{:g} s per case, recorded at {:g} /s", spec.cases.duration, spec.cases.output_rate)}};
  s.blocks.push_back(f);

  s.blocks.push_back(subheading("Links (top to bottom)"));
  Table links{"links-table",
              {col("#", 0.35, Align::right, "index"), col("link", 2.2, Align::left, "name"),
               col("kind", 0.8, Align::left, "kind"), col("length [m]", 1, Align::right, "length"),
               col("mass [kg]", 1.1, Align::right, "mass"), col("com [m]", 1.2, Align::right, "com"),
               col("inertia about com [kg m²]", 1.5, Align::right, "inertia")},
              {},
              "com: centre of mass from the link's upper pivot; (rod): the uniform-rod default.",
              7.6};
  for (std::size_t i = 0; i < spec.links.size(); ++i) {
    const auto& l = spec.links[i];
    links.rows.push_back({{std::to_string(i + 1), l.name, l.kind == LinkKind::rope ? "rope" : "rigid", num(l.length),
                           amount(l.mass), num(l.com) + (l.com_given ? "" : " (rod)"),
                           amount(l.inertia) + (l.inertia_given ? "" : " (rod)")}});
  }
  s.blocks.push_back(table_block(links));

  s.blocks.push_back(subheading("Pivots: friction and dampers"));
  Table piv{"pivots-table",
            {col("pivot of", 2.0, Align::left, "link"), col("Coulomb [N m]", 1, Align::right, "friction-torque"),
             col("pin r [mm]", 0.9, Align::right, "pin-radius"), col("mu", 0.6, Align::right, "mu"),
             col("w_t [deg/s]", 0.9, Align::right, "transition"), col("C [kN m s/rad]", 1.2, Align::right, "damper-c"),
             col("alpha", 0.6, Align::right, "exponent"), col("max torque [kN m]", 1.0, Align::right, "max-torque"),
             col("linear below [deg/s]", 1.1, Align::right, "linear-below")},
            {},
            "Friction torque T0 + mu r |R|, regularised by tanh(w / w_t); damper tau = C w_ref (|w|/w_ref)^alpha, "
            "w_ref = 1 rad/s, capped at max, linear below linear_below when alpha < 1. A dash: none.",
            7.4};
  // A column for the dampers' shafts when some damper has an axis (it acts about its shaft only).
  bool shafts = false;
  for (const auto& l : spec.links)
    for (const auto& dm : l.pivot.dampers) shafts |= dm.axis.has_value();
  if (shafts) {
    piv.columns.push_back(col("shaft", 0.8, Align::left, "damper-axis"));
    piv.caption += " Shaft: the axis a damper acts about (across or along the travel, or its angle from the travel "
                   "towards +z); any: every direction of the swing alike.";
  }
  for (const auto& l : spec.links) {
    Row row;
    row.cells.push_back(l.name);
    if (l.pivot.friction) {
      const auto& fr = *l.pivot.friction;
      row.cells.insert(row.cells.end(), {num(fr.torque), num(fr.pin_radius * 1000), num(fr.mu), deg(fr.transition_rate)});
    } else {
      row.cells.insert(row.cells.end(), {"-", "-", "-", "-"});
    }
    if (!l.pivot.dampers.empty()) {
      // Several dampers side by side: one value per damper in each column, in spec order.
      std::string c, a, m, w, shaft;
      for (const auto& dm : l.pivot.dampers) {
        const std::string sep = c.empty() ? "" : " + ";
        c += sep + num(dm.coefficient / 1000);
        a += (a.empty() ? "" : ", ") + num(dm.exponent);
        m += (m.empty() ? "" : ", ") + (std::isfinite(dm.max_torque) ? num(dm.max_torque / 1000) : std::string("none"));
        w += (w.empty() ? "" : ", ") + (dm.exponent < 1 ? deg(dm.linear_below) : std::string("-"));
        shaft += (shaft.empty() ? "" : ", ") + damper_axis_label(dm.axis);
      }
      row.cells.insert(row.cells.end(), {c, a, m, w});
      if (shafts) row.cells.push_back(shaft);
    } else {
      row.cells.insert(row.cells.end(), {"-", "-", "-", "-"});
      if (shafts) row.cells.push_back("-");
    }
    piv.rows.push_back(row);
  }
  s.blocks.push_back(table_block(piv));

  s.blocks.push_back(subheading("Dashpots"));
  if (spec.dashpots.empty()) {
    s.blocks.push_back(paragraph("None."));
  } else {
    Table t{"dashpots-table",
            {col("dashpot", 1.5, Align::left, "name"), col("from", 2, Align::left, "from"), col("to", 2, Align::left, "to"),
             col("c [kN s/m]", 1, Align::right, "coefficient")},
            {},
            "",
            7.6};
    for (const auto& dp : spec.dashpots)
      t.rows.push_back({{dp.name, attachment_text(spec, dp.from), attachment_text(spec, dp.to), num(dp.coefficient / 1000)}});
    s.blocks.push_back(table_block(t));
  }

  s.blocks.push_back(subheading("Wind"));
  if (spec.wind.empty()) {
    s.blocks.push_back(paragraph("None."));
  } else {
    // A spatial chain's wind blows in a direction of the horizontal plane: a column of its own.
    const bool directed = spec.motion == Motion::spatial;
    Table t{"wind-table",
            {col("on link", 1.6, Align::left, "link"), col("at [m]", 0.7, Align::right, "at"),
             col("speed [m/s]", 0.9, Align::right, "speed"), col("A [m²]", 0.7, Align::right, "area"),
             col("Cd", 0.6, Align::right, "cd"), col("rho [kg/m³]", 0.9, Align::right, "rho"),
             col("gust", 2.2, Align::left, "gust")},
            {},
            directed ? "Drag F = 1/2 rho Cd A |u - v| (u - v) at the point; the wind blows along its direction, "
                       "measured in the horizontal plane from +x towards +z (0: towards +x)."
                     : "Drag F = 1/2 rho Cd A |u - v| (u - v) at the point; positive speed blows towards +x.",
            7.6};
    if (directed) t.columns.insert(t.columns.begin() + 3, col("direction [deg]", 0.9, Align::right, "direction"));
    for (const auto& w : spec.wind) {
      Row row{{link_name(spec, w.link), num(w.at), num(w.speed), num(w.drag_area), num(w.drag_coefficient),
               num(w.air_density),
               w.gust ? fmt::format("+{} m/s from {:g} s for {:g} s", num(w.gust->speed), w.gust->start,
                                    w.gust->duration)
                      : "none"}};
      if (directed) row.cells.insert(row.cells.begin() + 3, num(w.direction * kDeg));
      t.rows.push_back(row);
    }
    s.blocks.push_back(table_block(t));
  }

  s.blocks.push_back(subheading("Base-motion scenarios"));
  // Acceleration segments alone keep the planar table; drives, slewing and a third axis get a
  // column that says what moves the base.
  const bool spatial = spec.motion == Motion::spatial;
  const bool drives = spatial || std::any_of(spec.scenarios.begin(), spec.scenarios.end(), [](const ScenarioSpec& c) {
                        return c.travel || c.cross_travel || c.slew;
                      });
  Table sc{"scenarios-table",
           {col("scenario", 1.6, Align::left, "name"),
            col(spatial ? "initial velocity (x, y, z) [m/s]" : "initial velocity [m/s]", 1.1, Align::right, "velocity"),
            col(drives ? "base motion: acceleration segments duration [s] at (x, y, z) [m/s²], drives, slewing"
                       : "acceleration segments: duration [s] at (x, y) [m/s²]",
                3.2, Align::left, "accel")},
           {},
           drives ? "After the last segment or move the base keeps its velocity (a slewing boom its slewing speed); a "
                    "slewing scenario's velocity is that of its profiles."
                  : "After the last segment the base keeps its velocity.",
           7.6};
  for (const auto& scn : spec.scenarios) {
    if (!drives) {
      std::vector<std::string> seg;
      for (const auto& a : scn.accel) seg.push_back(fmt::format("{:g} s at ({}, {})", a.duration, num(a.ax), num(a.ay)));
      sc.rows.push_back({{scn.name, fmt::format("({}, {})", num(scn.initial_vx), num(scn.initial_vy)),
                          seg.empty() ? "none (constant velocity)" : fmt::format("{}", fmt::join(seg, "; "))}});
      continue;
    }
    const std::string velocity =
        scn.slew || scn.travel ? "-"
        : spatial ? fmt::format("({}, {}, {})", num(scn.initial_vx), num(scn.initial_vy), num(scn.initial_vz))
                  : fmt::format("({}, {})", num(scn.initial_vx), num(scn.initial_vy));
    sc.rows.push_back({{scn.name, velocity, base_motion_text(scn, spatial)}});
  }
  s.blocks.push_back(table_block(sc));

  s.blocks.push_back(subheading("Initial-condition sets"));
  Table is{"initial-sets-table",
           {col("set", 1.1, Align::left, "name"), col("kind", 0.7, Align::left, "kind"),
            col("starts", 0.6, Align::right, "starts"), col("link angles", 2.4, Align::left, "theta"),
            col("link rates", 1.6, Align::left, "rate"), col("notes", 1.6, Align::left, "notes")},
           {},
           spec.motion == Motion::spatial
               ? "Angles per link, top link first; a link not listed starts at 0. Grids show the count per range. θ "
                 "in the travel plane and φ out of it (the link along (sin θ cos φ, -cos θ cos φ, sin φ)), ω and φ' "
                 "their rates."
               : "Angles per link, top link first; a link not listed starts at 0. Grids show the count per range.",
           7.4};
  for (const auto& set : spec.cases.initial) {
    std::string notes;
    if (set.kind == InitialKind::random)
      notes = fmt::format("seed {}, {}", set.seed, set.method == SamplingMethod::uniform ? "uniform" : "Latin hypercube");
    if (set.kind == InitialKind::ladder) {
      std::vector<std::string> st;
      for (double v : set.steps) st.push_back(fmt::format("{:g}", set.relative ? v : v * kDeg));
      notes = fmt::format("perturbs '{}' by {} [{}]", link_name(spec, set.perturb_link), fmt::join(st, ", "),
                          set.relative ? "relative" : "deg");
    }
    if (start_kind(set) == StartKind::modal)
      notes = (notes.empty() ? "" : notes + "; ") +
              fmt::format("modal start: amplitude {}, phase {} per mode, lowest first",
                          range_text(set.amplitude, set.kind, kDeg, "deg"), range_text(set.phase, set.kind, kDeg, "deg"));
    if (set.kind == InitialKind::equilibrium) {
      // A sampled range is shown as the grid or random set that samples it.
      const InitialKind sampled = set.sampling;
      notes = fmt::format("hanging still under {} and {}",
                          !set.accel_range.empty()
                              ? fmt::format("{} along the travel", range_text(set.accel_range, sampled, 1, "m/s²"))
                          : set.accel_from_scenario ? std::string("each scenario's acceleration at t = 0")
                                                    : fmt::format("{} m/s² along the travel", num(set.accel)),
                          !set.wind_range.empty() ? fmt::format("every wind load at {}", range_text(set.wind_range, sampled, 1, "m/s"))
                          : set.wind_from_spec    ? std::string("the spec's steady wind")
                                                  : fmt::format("every wind load at {} m/s", num(set.wind_speed)));
      if (sampled == InitialKind::random)
        notes += fmt::format("; seed {}, {}", set.seed, set.method == SamplingMethod::uniform ? "uniform" : "Latin hypercube");
    }
    std::string angles = range_text(set.theta, set.kind, kDeg, "deg"), rates = range_text(set.rate, set.kind, kDeg, "deg/s");
    if (!set.phi.empty()) angles = "θ " + angles + "; φ " + range_text(set.phi, set.kind, kDeg, "deg");
    if (!set.phi_rate.empty()) rates = "ω " + rates + "; φ' " + range_text(set.phi_rate, set.kind, kDeg, "deg/s");
    is.rows.push_back({{set.name, kind_name(set.kind), std::to_string(initial_set_size(set)), angles, rates,
                        notes.empty() ? "-" : notes}});
  }
  s.blocks.push_back(table_block(is));
  return s;
}

}  // namespace swaybound::report_doc::build
