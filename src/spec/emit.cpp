// The normalised spec: every value in SI, with its unit and whether it came from a default.
// Reason it stays one file: it walks the whole spec in the order of specs/README.md, one block per
// section, so that a key added to the loader has one obvious place to be written back.
#include <algorithm>
#include <cmath>

#include <fmt/format.h>
#include <yaml-cpp/yaml.h>

#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/spec/case_set_kinds.hpp"
#include "swaybound/spec/loader.hpp"
#include "swaybound/spec/paths.hpp"

namespace swaybound {

namespace {
namespace u = units;

/// An SI value at 12 significant digits; with its unit where the unit holds an angle, since the
/// loader reads no bare angle (e.g. "0.20943951024 rad", "4000 N m s/rad").
std::string number(double v, const u::Dim& dim) {
  return u::angle_unit_required(dim) ? fmt::format("{:.12g} {}", v, u::si_unit(dim)) : fmt::format("{:.12g}", v);
}

class Writer {
 public:
  explicit Writer(const Spec& spec) : spec_(spec) {}
  YAML::Emitter out;

  void begin(const std::string& key) {
    path_.push_back(key);
    out << YAML::Key << key << YAML::Value << YAML::BeginMap;
  }
  void end() {
    out << YAML::EndMap;
    path_.pop_back();
  }
  void value(const std::string& key, double v, const u::Dim& dim) {
    out << YAML::Key << key << YAML::Value;
    if (std::isinf(v))
      out << ".inf";
    else
      out << number(v, dim);
    std::string note = u::angle_unit_required(dim) ? std::string() : u::si_unit(dim);
    if (is_default(key)) note += note.empty() ? "default" : ", default";
    if (!note.empty()) out << YAML::Comment(note);
  }
  void value_unless_inf(const std::string& key, double v, const u::Dim& dim) {
    if (std::isinf(v))
      out << YAML::Comment(key + ": none");
    else
      value(key, v, dim);
  }
  void text(const std::string& key, const std::string& v) {
    out << YAML::Key << key << YAML::Value << v;
    if (is_default(key)) out << YAML::Comment("default");
  }
  /// Sets the key path that `is_default` compares against, e.g. "links[0]".
  void at(std::string path) { path_ = {std::move(path)}; }
  /// A "default" comment when `key` (under the current path) was filled in by the loader, for values
  /// written directly to `out`.
  void mark_default(const std::string& key) {
    if (is_default(key)) out << YAML::Comment("default");
  }
  /// True when `key` (under the current path) was filled in by the loader.
  bool defaulted(const std::string& key) const { return is_default(key); }

 private:
  bool is_default(const std::string& key) const {
    std::string p;
    for (const auto& part : path_) p += (p.empty() ? "" : ".") + part;
    p += (p.empty() ? "" : ".") + key;
    const auto& d = spec_.defaults_filled;
    return std::find(d.begin(), d.end(), p) != d.end();
  }
  const Spec& spec_;
  std::vector<std::string> path_;
};

void emit_ranges(YAML::Emitter& out, const char* key, const std::vector<Range>& ranges, bool with_count,
                 const u::Dim& dim) {
  if (ranges.empty()) return;
  out << YAML::Key << key << YAML::Value << YAML::Flow << YAML::BeginSeq;
  for (const auto& r : ranges) {
    out << YAML::Flow << YAML::BeginSeq << number(r.lo, dim) << number(r.hi, dim);
    if (with_count) out << r.count;
    out << YAML::EndSeq;
  }
  out << YAML::EndSeq;
}
}  // namespace

std::string normalised_yaml(const Spec& spec) {
  Writer w(spec);
  auto& out = w.out;
  out << YAML::Comment("normalised spec: every number in SI (angles in rad); 'default' marks filled-in values");
  out << YAML::BeginMap;
  out << YAML::Key << "swaybound" << YAML::Value << spec.version;
  w.text("name", spec.name);
  if (spec.motion == Motion::spatial) w.text("motion", "spatial");
  w.value("gravity", spec.gravity, u::acceleration);
  out << YAML::Key << "links" << YAML::Value << YAML::BeginSeq;
  for (std::size_t i = 0; i < spec.links.size(); ++i) {
    const auto& l = spec.links[i];
    w.at(fmt::format("links[{}]", i));
    out << YAML::BeginMap;
    w.text("name", l.name);
    w.text("kind", l.kind == LinkKind::rope ? "rope" : "rigid");
    w.value("length", l.length, u::length);
    w.value("mass", l.mass, u::mass);
    w.value("com", l.com, u::length);
    w.value("inertia", l.inertia, u::moment_of_inertia);
    if (l.kind == LinkKind::rope) {
      // Written when it is not the default 1 or was given, so a spec without the key stays as it was.
      if (l.parts_of_line != 1 || !w.defaulted("parts_of_line"))
        w.value("parts_of_line", l.parts_of_line, u::dimensionless);
      if (const auto& e = l.elastic) {
        w.begin("elastic");
        if (e->ea > 0)
          w.value("ea", e->ea, u::force);
        else
          w.value("stiffness", e->stiffness, u::stiffness);
        if (e->damping_ratio >= 0)
          w.value("damping_ratio", e->damping_ratio, u::dimensionless);
        else
          w.value("damping", e->damping, u::linear_damping);
        w.end();
      }
    }
    if (l.pivot.friction || !l.pivot.dampers.empty()) {
      w.begin("pivot");
      if (const auto& f = l.pivot.friction) {
        w.begin("friction");
        w.value("torque", f->torque, u::torque);
        w.value("pin_radius", f->pin_radius, u::length);
        w.value("mu", f->mu, u::dimensionless);
        w.value("transition_rate", f->transition_rate, u::angular_rate);
        w.end();
      }
      const auto emit_damper = [&](const DamperSpec& d) {
        w.value("coefficient", d.coefficient, u::rotary_damping);
        w.value("exponent", d.exponent, u::dimensionless);
        w.value_unless_inf("max_torque", d.max_torque, u::torque);
        w.value("linear_below", d.linear_below, u::angular_rate);
        if (!d.axis) return;
        if (*d.axis == 0 || *d.axis == kDamperAcross)
          w.text("axis", *d.axis == 0 ? "along" : "across");
        else
          w.value("axis", *d.axis, u::angle);
      };
      if (l.pivot.dampers.size() == 1) {
        w.begin("damper");
        emit_damper(l.pivot.dampers[0]);
        w.end();
      } else if (l.pivot.dampers.size() > 1) {
        out << YAML::Key << "dampers" << YAML::Value << YAML::BeginSeq;
        for (std::size_t k = 0; k < l.pivot.dampers.size(); ++k) {
          w.at(fmt::format("links[{}].pivot.dampers[{}]", i, k));
          out << YAML::BeginMap;
          emit_damper(l.pivot.dampers[k]);
          out << YAML::EndMap;
        }
        out << YAML::EndSeq;
        w.at(fmt::format("links[{}].pivot", i));
      }
      w.end();
    }
    out << YAML::EndMap;
  }
  out << YAML::EndSeq;
  if (!spec.dashpots.empty()) {
    out << YAML::Key << "dashpots" << YAML::Value << YAML::BeginSeq;
    for (std::size_t i = 0; i < spec.dashpots.size(); ++i) {
      const auto& d = spec.dashpots[i];
      w.at(fmt::format("dashpots[{}]", i));
      out << YAML::BeginMap;
      w.text("name", d.name);
      for (auto [key, a] : {std::pair{"from", &d.from}, {"to", &d.to}}) {
        out << YAML::Key << key << YAML::Value << YAML::Flow << YAML::BeginMap;
        if (a->link >= 0)
          out << YAML::Key << "link" << YAML::Value << spec.links[static_cast<std::size_t>(a->link)].name
              << YAML::Key << "at" << YAML::Value << fmt::format("{:.12g}", a->at);
        else
          out << YAML::Key << "base" << YAML::Value << YAML::Flow << YAML::BeginSeq
              << fmt::format("{:.12g}", a->base_x) << fmt::format("{:.12g}", a->base_y) << YAML::EndSeq;
        out << YAML::EndMap << YAML::Comment("m");
      }
      w.value("coefficient", d.coefficient, u::linear_damping);
      out << YAML::EndMap;
    }
    out << YAML::EndSeq;
  }
  if (!spec.wind.empty()) {
    out << YAML::Key << "wind" << YAML::Value << YAML::BeginSeq;
    for (std::size_t i = 0; i < spec.wind.size(); ++i) {
      const auto& wd = spec.wind[i];
      w.at(spec.wind.size() == 1 ? "wind" : fmt::format("wind[{}]", i));
      out << YAML::BeginMap;
      w.text("link", spec.links[static_cast<std::size_t>(wd.link)].name);
      w.value("at", wd.at, u::length);
      w.value("speed", wd.speed, u::speed);
      w.value("drag_area", wd.drag_area, u::area);
      w.value("drag_coefficient", wd.drag_coefficient, u::dimensionless);
      w.value("air_density", wd.air_density, u::density);
      if (spec.motion == Motion::spatial) w.value("direction", wd.direction, u::angle);
      if (wd.gust) {
        w.begin("gust");
        w.value("start", wd.gust->start, u::duration);
        w.value("for", wd.gust->duration, u::duration);
        w.value("speed", wd.gust->speed, u::speed);
        w.end();
      }
      out << YAML::EndMap;
    }
    out << YAML::EndSeq;
  }
  w.at("base");
  out << YAML::Key << "base" << YAML::Value << YAML::BeginMap << YAML::Key << "scenarios" << YAML::Value;
  if (std::find(spec.defaults_filled.begin(), spec.defaults_filled.end(), "base.scenarios") !=
      spec.defaults_filled.end())
    out << YAML::Comment("default: a fixed top pivot");
  out << YAML::BeginSeq;
  for (std::size_t i = 0; i < spec.scenarios.size(); ++i) {
    const ScenarioSpec& s = spec.scenarios[i];
    out << YAML::BeginMap << YAML::Key << "name" << YAML::Value << s.name;
    // Speed moves of a drum or a travel drive, one flow map each.
    // Speed moves in SI; a slewing drive's in rad/s (an angular quantity must carry its unit).
    const auto write_moves = [&](const std::vector<DrumMoveSpec>& moves, bool angular = false) {
      if (moves.empty()) return;
      const char* unit[3] = {angular ? " rad/s" : "", angular ? " rad/s^2" : "", angular ? " rad/s^3" : ""};
      out << YAML::Key << "moves" << YAML::Value << YAML::BeginSeq;
      for (const auto& m : moves) {
        out << YAML::Flow << YAML::BeginMap << YAML::Key << "at" << YAML::Value << fmt::format("{:.12g}", m.at)
            << YAML::Key << "to" << YAML::Value << fmt::format("{:.12g}{}", m.to, unit[0]) << YAML::Key << "accel"
            << YAML::Value << fmt::format("{:.12g}{}", m.accel, unit[1]);
        if (m.jerk > 0) out << YAML::Key << "jerk" << YAML::Value << fmt::format("{:.12g}{}", m.jerk, unit[2]);
        out << YAML::EndMap;
        if (!angular) out << YAML::Comment(m.jerk > 0 ? "s, m/s, m/s^2, m/s^3" : "s, m/s, m/s^2");
      }
      out << YAML::EndSeq;
    };
    if (!s.travel && !s.slew) {
      out << YAML::Key << "initial_velocity" << YAML::Value << YAML::Flow << YAML::BeginMap << YAML::Key << "x"
          << YAML::Value << fmt::format("{:.12g}", s.initial_vx) << YAML::Key << "y" << YAML::Value
          << fmt::format("{:.12g}", s.initial_vy);
      if (spec.motion == Motion::spatial && !s.cross_travel) out << YAML::Key << "z" << YAML::Value << fmt::format("{:.12g}", s.initial_vz);
      out << YAML::EndMap << YAML::Comment("m/s");
      out << YAML::Key << "accel" << YAML::Value << YAML::BeginSeq;
      for (const auto& seg : s.accel) {
        out << YAML::Flow << YAML::BeginMap << YAML::Key << "for" << YAML::Value << fmt::format("{:.12g}", seg.duration)
            << YAML::Key << "x" << YAML::Value << fmt::format("{:.12g}", seg.ax) << YAML::Key << "y" << YAML::Value
            << fmt::format("{:.12g}", seg.ay);
        if (spec.motion == Motion::spatial && !s.cross_travel) out << YAML::Key << "z" << YAML::Value << fmt::format("{:.12g}", seg.az);
        out << YAML::EndMap << YAML::Comment("s, m/s^2");
      }
      out << YAML::EndSeq;
    }
    w.at(fmt::format("base.scenarios[{}]", i));
    // A drive axis's shaper and stop (a slewing drive's stop in rad/s^2, rad/s^3). A shaper designed
    // from a mode keeps `mode` (its frequency follows the chain) and the damping ratio only if given.
    const auto write_shaper_and_stop = [&](const std::optional<ScenarioSpec::Travel::Shaper>& shaper,
                                           const std::optional<ScenarioSpec::Travel::Stop>& stop, bool angular) {
      if (const auto& sh = shaper) {
        w.begin("shaper");
        w.text("kind", sh->kind == ShaperKind::zv ? "zv" : sh->kind == ShaperKind::zvd ? "zvd" : "ei");
        if (sh->mode > 0) {
          out << YAML::Key << "mode" << YAML::Value << sh->mode
              << YAML::Comment(fmt::format("designed at {:.6g} Hz, damping ratio {:.4g}", sh->frequency,
                                           sh->damping_ratio));
          if (const auto& d = sh->design_for) {
            w.begin("design_for");
            w.text("link", d->link);
            if (d->length) w.value("length", *d->length, u::length);
            if (d->mass) w.value("mass", *d->mass, u::mass);
            w.end();
          }
        } else {
          w.value("frequency", sh->frequency, u::rate);
        }
        if (sh->mode == 0 || sh->damping_given) w.value("damping_ratio", sh->damping_ratio, u::dimensionless);
        if (sh->kind == ShaperKind::ei) w.value("vibration_tolerance", sh->vibration_tolerance, u::dimensionless);
        w.end();
      }
      if (const auto& st = stop) {
        w.begin("stop");
        w.value("at", st->at, u::duration);
        w.value("decel", st->decel, angular ? u::angular_acceleration : u::acceleration);
        w.value("jerk", st->jerk, angular ? u::angular_jerk : u::jerk);
        w.end();
      }
    };
    if (const auto& sl = s.slew) {
      w.begin("slew");
      w.value("radius", sl->radius, u::length);
      w.value("speed", sl->initial_rate, u::angular_rate);
      write_moves(sl->moves, true);
      if (const auto& lu = sl->luff) {
        w.begin("luff");
        const bool boom = lu->boom > 0;
        if (boom) {
          w.value("boom", lu->boom, u::length);
          w.value("angle", lu->angle, u::angle);
        }
        w.value("speed", lu->initial_speed, boom ? u::angular_rate : u::speed);
        write_moves(lu->moves, boom);
        w.end();
      }
      write_shaper_and_stop(sl->shaper, sl->stop, true);
      w.end();
    }
    if (const auto& t = s.travel) {
      w.begin("travel");
      w.value("speed", t->initial_speed, u::speed);
      write_moves(t->moves);
      write_shaper_and_stop(t->shaper, t->stop, false);
      if (const auto& c = t->controller) {
        w.begin("controller");
        w.text("measure", spec.links[static_cast<std::size_t>(c->measure)].name);
        w.value("angle_gain", c->angle_gain, u::sway_angle_gain);
        w.value("rate_gain", c->rate_gain, u::sway_rate_gain);
        w.value("speed_gain", c->speed_gain, u::rate);
        w.value("accel_limit", c->accel_limit, u::acceleration);
        w.end();
      }
      w.end();
    }
    if (const auto& t = s.cross_travel) {
      w.begin("cross_travel");
      w.value("speed", t->initial_speed, u::speed);
      write_moves(t->moves);
      write_shaper_and_stop(t->shaper, t->stop, false);
      w.end();
    }
    if (const auto& h = s.hoist) {
      w.begin("hoist");
      if (h->link >= 0) w.text("rope", spec.links[static_cast<std::size_t>(h->link)].name);
      w.value("drum_speed", h->initial_speed, u::speed);
      write_moves(h->moves);
      w.end();
    }
    if (const auto& l = s.lift_off) {
      w.begin("lift_off");
      w.value("slack", l->slack, u::length);
      w.end();
    }
    if (!s.uncertain.empty()) {
      out << YAML::Key << "uncertain" << YAML::Value << YAML::BeginSeq;
      for (const UncertainSpec& v : s.uncertain) {
        std::string why;
        const auto target = parse_uncertain_path(spec, static_cast<int>(i), v.path, why);
        const u::Dim dim = target ? spec_path_dim(*target) : u::dimensionless;
        out << YAML::Flow << YAML::BeginMap << YAML::Key << "path" << YAML::Value << v.path << YAML::Key << "range"
            << YAML::Value << YAML::Flow << YAML::BeginSeq << number(v.lo, dim) << number(v.hi, dim) << YAML::EndSeq
            << YAML::EndMap << YAML::Comment(u::si_unit(dim));
      }
      out << YAML::EndSeq;
    }
    out << YAML::EndMap;
  }
  out << YAML::EndSeq << YAML::EndMap;

  w.at("");
  w.begin("cases");
  w.value("duration", spec.cases.duration, u::duration);
  w.value("output_rate", spec.cases.output_rate, u::rate);
  w.value("settling_band", spec.cases.settling_band, u::angle);
  out << YAML::Key << "search" << YAML::Value;
  if (spec.cases.search.enabled)
    out << YAML::Flow << YAML::BeginMap << YAML::Key << "evaluations" << YAML::Value << spec.cases.search.evaluations
        << YAML::Key << "starts" << YAML::Value << spec.cases.search.starts << YAML::EndMap;
  else
    out << "false";
  w.mark_default("search");
  out << YAML::Key << "initial" << YAML::Value << YAML::BeginSeq;
  for (std::size_t i = 0; i < spec.cases.initial.size(); ++i) {
    const auto& set = spec.cases.initial[i];
    w.at(fmt::format("cases.initial[{}]", i));
    out << YAML::BeginMap;
    w.text("name", set.name);
    const InitialKindInfo& kind = initial_kind(set.kind);
    out << YAML::Key << std::string(kind.name) << YAML::Value << YAML::BeginMap;
    if (set.kind == InitialKind::ladder) out << YAML::Key << "from" << YAML::Value << YAML::BeginMap;
    const bool ranged = kind.shape != StartShape::values;
    if (set.kind == InitialKind::random)
      out << YAML::Key << "count" << YAML::Value << set.count << YAML::Key << "seed" << YAML::Value << set.seed
          << YAML::Key << "method" << YAML::Value
          << (set.method == SamplingMethod::uniform ? "uniform" : "latin_hypercube");
    if (set.kind == InitialKind::random) w.mark_default("random.method");
    if (ranged) {
      const bool counted = kind.shape == StartShape::counted_ranges;
      emit_ranges(out, "theta", set.theta, counted, u::angle);
      emit_ranges(out, "rate", set.rate, counted, u::angular_rate);
      emit_ranges(out, "phi", set.phi, counted, u::angle);
      emit_ranges(out, "phi_rate", set.phi_rate, counted, u::angular_rate);
      emit_ranges(out, "amplitude", set.amplitude, counted, u::angle);
      emit_ranges(out, "phase", set.phase, counted, u::angle);
    } else if (set.kind == InitialKind::equilibrium) {
      // A sampled range is written as a grid's [low, high, count] or a random set's [low, high].
      const auto range = [&](const Range& r, const u::Dim& dim) {
        out << YAML::Flow << YAML::BeginSeq << number(r.lo, dim) << number(r.hi, dim);
        if (set.sampling == InitialKind::grid) out << r.count;
        out << YAML::EndSeq;
      };
      if (set.sampling == InitialKind::random)
        out << YAML::Key << "count" << YAML::Value << set.count << YAML::Key << "seed" << YAML::Value << set.seed
            << YAML::Key << "method" << YAML::Value
            << (set.method == SamplingMethod::uniform ? "uniform" : "latin_hypercube");
      out << YAML::Key << "acceleration" << YAML::Value;
      if (!set.accel_range.empty())
        range(set.accel_range.front(), u::acceleration);
      else if (set.accel_from_scenario)
        out << "scenario";
      else
        out << number(set.accel, u::acceleration);
      w.mark_default("equilibrium.acceleration");
      out << YAML::Key << "wind_speed" << YAML::Value;
      if (!set.wind_range.empty())
        range(set.wind_range.front(), u::speed);
      else if (set.wind_from_spec)
        out << "steady";
      else
        out << number(set.wind_speed, u::speed);
      w.mark_default("equilibrium.wind_speed");
    } else {
      for (auto [key, list, dim] : {std::tuple{"theta", &set.theta, u::angle}, {"rate", &set.rate, u::angular_rate},
                                    {"phi", &set.phi, u::angle}, {"phi_rate", &set.phi_rate, u::angular_rate},
                                    {"amplitude", &set.amplitude, u::angle}, {"phase", &set.phase, u::angle}}) {
        if (list->empty()) continue;
        out << YAML::Key << key << YAML::Value << YAML::Flow << YAML::BeginSeq;
        for (const auto& r : *list) out << number(r.lo, dim);
        out << YAML::EndSeq;
      }
    }
    if (set.kind == InitialKind::ladder) {
      out << YAML::EndMap << YAML::Key << (set.relative ? "relative" : "absolute") << YAML::Value << YAML::Flow << YAML::BeginSeq;
      for (double s : set.steps) out << (set.relative ? fmt::format("{:.6g}", s) : fmt::format("{:.6g} rad", s));
      out << YAML::EndSeq;
      out << YAML::Key << "link" << YAML::Value << spec.links[static_cast<std::size_t>(set.perturb_link)].name;
      w.mark_default("ladder.link");
    }
    out << YAML::EndMap << YAML::EndMap << YAML::Comment(fmt::format("{} starts", initial_set_size(set)));
  }
  out << YAML::EndSeq;
  w.at("");
  w.end();
  out << YAML::Comment(fmt::format("{} cases in all (starts x {} scenarios)", case_count(spec), spec.scenarios.size()));

  if (!spec.limits.empty()) {
    out << YAML::Key << "limits" << YAML::Value << YAML::BeginSeq;
    for (const auto& l : spec.limits) {
      const LimitKindInfo& info = limit_kind(l.kind);
      const u::Dim& dim = info.dim;
      out << YAML::Flow << YAML::BeginMap << YAML::Key << l.key << YAML::Value << number(l.value, dim);
      if (l.link >= 0) out << YAML::Key << "link" << YAML::Value << spec.links[static_cast<std::size_t>(l.link)].name;
      if (info.options.after) out << YAML::Key << "after" << YAML::Value << fmt::format("{:.12g}", l.after);
      if (info.options.horizon) out << YAML::Key << "horizon" << YAML::Value << fmt::format("{:.12g}", l.horizon);
      if (l.end != RopeEnd::either)
        out << YAML::Key << "end" << YAML::Value << (l.end == RopeEnd::top ? "top" : "bottom");
      out << YAML::EndMap;
      if (const auto unit = u::si_unit(dim); !unit.empty() && !u::angle_unit_required(dim)) out << YAML::Comment(unit);
    }
    out << YAML::EndSeq;
  }
  if (spec.chaos.given) {  // a chaos section switches the onset search on: written only when the spec has one
    const ChaosSpec& c = spec.chaos;
    w.at("");
    w.begin("chaos");
    w.value("separation", c.separation, u::dimensionless);
    w.value("renormalise", c.renormalise, u::duration);
    w.value("horizon", c.horizon, u::duration);
    if (c.rate_weight > 0) w.value("rate_weight", c.rate_weight, u::duration);
    if (!c.direction.empty()) {
      const std::size_t n = c.direction.size() / 2;
      out << YAML::Key << "direction" << YAML::Value << YAML::Flow << YAML::BeginMap;
      for (const auto& [key, offset] : {std::pair{"theta", std::size_t{0}}, std::pair{"rate", n}}) {
        out << YAML::Key << key << YAML::Value << YAML::Flow << YAML::BeginSeq;
        for (std::size_t i = 0; i < n; ++i) out << fmt::format("{:.12g}", c.direction[offset + i]);
        out << YAML::EndSeq;
      }
      out << YAML::EndMap;
    }
    w.value("uncertainty", c.uncertainty, u::angle);
    w.value("tolerance", c.tolerance, u::angle);
    w.value("threshold", c.threshold, u::rate);
    w.begin("onset");
    out << YAML::Key << "direction" << YAML::Value << YAML::Flow << YAML::BeginSeq;
    for (double d : c.onset_direction) out << fmt::format("{:.12g}", d);
    out << YAML::EndSeq;
    w.mark_default("direction");
    w.value("max", c.onset_max, u::angle);
    w.value("resolution", c.onset_resolution, u::angle);
    w.end();
    if (c.map) {
      out << YAML::Key << "map" << YAML::Value << YAML::BeginMap;
      emit_ranges(out, "theta", {c.map_x, c.map_y}, true, u::angle);
      out << YAML::EndMap;
    }
    w.end();
  }
  if (spec.sizing) {
    const auto& s = *spec.sizing;
    w.begin("sizing");
    out << YAML::Key << "variables" << YAML::Value << YAML::BeginSeq;
    for (std::size_t i = 0; i < s.variables.size(); ++i) {
      const auto& v = s.variables[i];
      w.at(fmt::format("sizing.variables[{}]", i));
      std::string why;
      const auto target = parse_spec_path(spec, v.path, why);
      const u::Dim dim = target ? spec_path_dim(*target) : u::dimensionless;
      out << YAML::BeginMap << YAML::Key << "path" << YAML::Value << v.path;
      if (v.catalogue.empty()) {
        out << YAML::Key << "range" << YAML::Value << YAML::Flow << YAML::BeginSeq << number(v.lo, dim)
            << number(v.hi, dim) << YAML::EndSeq;
      } else {
        out << YAML::Key << "catalogue" << YAML::Value << YAML::Flow << YAML::BeginSeq;
        for (double c : v.catalogue) out << number(c, dim);
        out << YAML::EndSeq;
      }
      if (target && !u::angle_unit_required(dim)) out << YAML::Comment(u::si_unit(dim));
      w.value("cost", v.cost, u::dimensionless);
      if (v.step > 0) out << YAML::Key << "step" << YAML::Value << number(v.step, dim);
      out << YAML::EndMap;
    }
    out << YAML::EndSeq;
    w.at("sizing");
    out << YAML::Key << "objective" << YAML::Value;
    if (s.objective == Objective::min_metric) {
      out << YAML::Flow << YAML::BeginMap << YAML::Key << "min" << YAML::Value << s.metric;
      if (s.metric_link >= 0) out << YAML::Key << "link" << YAML::Value << spec.links[static_cast<std::size_t>(s.metric_link)].name;
      out << YAML::EndMap;
    } else {
      out << (s.objective == Objective::min_cost ? "min_cost" : "max_margin");
    }
    w.mark_default("objective");
    w.begin("budget");
    w.value("evaluations", static_cast<double>(s.max_evaluations), u::dimensionless);  // a count
    w.value("seconds", s.max_seconds, u::duration);
    w.end();
    w.text("seed", std::to_string(s.seed));
    w.text("mode", s.mode == SearchMode::local ? "local" : "global");
    w.value("required_margin", s.required_margin, u::dimensionless);
    if (s.search_in_screening) w.text("search_in_screening", "true");
    w.end();
  }
  w.begin("solver");
  w.text("method", spec.solver.method == Stepper::dopri5 ? "dopri5" : "rkf78");
  w.value("rtol", spec.solver.rtol, u::dimensionless);
  w.value("atol", spec.solver.atol, u::dimensionless);
  w.value("max_steps", static_cast<double>(spec.solver.max_steps), u::dimensionless);  // a count
  w.value("min_step", spec.solver.min_step, u::duration);
  w.value("max_seconds", spec.solver.max_seconds, u::duration);
  w.end();
  w.begin("report");
  w.text("title", spec.report.title);
  w.text("project", spec.report.project);
  w.text("revision", spec.report.revision);
  w.text("prepared_by", spec.report.prepared_by);
  w.text("paper", spec.report.paper == Paper::a4 ? "a4" : "letter");
  w.end();
  out << YAML::EndMap;
  return std::string(out.c_str()) + "\n";
}

}  // namespace swaybound
