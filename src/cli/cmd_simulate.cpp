// swaybound simulate: one case as a time series (CSV), with a short summary on stderr.
#include <unistd.h>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/cases/case_space.hpp"
#include "swaybound/checks/metrics.hpp"
#include "swaybound/core/units.hpp"
#include "swaybound/dynamics/posture.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace {

/// Parses "10 deg, -5 deg" into SI values of dimension `dim`. Bare numbers are SI, except where the
/// unit holds an angle: there a bare number other than 0 is refused, as in a spec.
std::vector<double> parse_list(const std::string& option, const std::string& text, const units::Dim& dim) {
  std::vector<double> out;
  std::stringstream in(text);
  std::string item;
  while (std::getline(in, item, ',')) {
    std::string why;
    const auto q = units::parse_quantity(item, why);
    if (!q) throw UsageError(option, fmt::format("cannot read '{}': {}", item, why));
    if (q->has_unit && !(q->dim == dim))
      throw UsageError(option, fmt::format("'{}' is {}, expected {}", item, units::a_dim_name(q->dim),
                                           units::a_dim_name(dim)));
    if (!q->has_unit && q->value != 0 && units::angle_unit_required(dim))
      throw UsageError(option,
                       fmt::format("'{}' has no unit, and {} must say whether it is in deg or rad", item,
                                   units::a_dim_name(dim)),
                       units::bare_angle_fix(q->value, dim));
    out.push_back(q->value);
  }
  return out;
}

double parse_one(const std::string& option, const std::string& text, const units::Dim& dim) {
  const auto values = parse_list(option, text, dim);
  if (values.size() != 1) throw UsageError(option, fmt::format("expected one value, got '{}'", text));
  return values[0];
}

/// A file written beside its target and renamed onto it when complete; removed when not committed
/// (a failed run, an exception, an interrupt), so the target is complete or untouched.
class PartialFile {
 public:
  explicit PartialFile(std::filesystem::path target)
      : target_(std::move(target)), temp_(target_.string() + fmt::format(".partial-{}", ::getpid())) {
    if (std::filesystem::exists(temp_))
      throw RunError(fmt::format(
          "{} exists and was not written by this run; remove it or choose another output", temp_.string()));
    stream_.open(temp_, std::ios::binary);
    if (!stream_) throw RunError(fmt::format("cannot write {}", temp_.string()));
  }
  PartialFile(const PartialFile&) = delete;
  PartialFile& operator=(const PartialFile&) = delete;
  ~PartialFile() {
    if (committed_) return;
    stream_.close();
    std::error_code ignored;
    std::filesystem::remove(temp_, ignored);
  }
  std::ofstream& stream() { return stream_; }
  const std::filesystem::path& temp() const { return temp_; }
  /// Flushes, checks every write succeeded and renames the file onto its target.
  void commit() {
    stream_.close();
    if (!stream_)
      throw RunError(fmt::format("writing {} failed (disk full or not writable?)", temp_.string()));
    std::filesystem::rename(temp_, target_);
    committed_ = true;
  }

 private:
  std::filesystem::path target_, temp_;
  std::ofstream stream_;
  bool committed_ = false;
};

std::string csv_quote(const std::string& s) {
  std::string out = "\"";
  for (char c : s) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

/// The case to run: by id, else the first case (of `scenario` when >= 0).
CaseDef pick_case(const CaseSpace& space, const std::string& id, int scenario) {
  std::string some;
  for (long k = 0; k < space.size(); ++k) {
    CaseDef def = space.at(k);
    if (id.empty() ? scenario < 0 || def.scenario == scenario : def.id == id) return def;
    if (k < 5) some += (some.empty() ? "" : ", ") + def.id;
  }
  if (id.empty()) throw UsageError("--scenario", "the case set has no case of this scenario");
  throw UsageError("--case",
                   fmt::format("no case '{}' in the spec's case set ({} cases: {}{})", id, space.size(), some,
                               space.size() > 5 ? ", ..." : ""),
                   "case ids are listed in cases.csv of a check packet");
}

/// "theta = [10 deg, 5 deg], omega = [0 deg/s, 0 deg/s]" for every link (missing values are 0).
std::string describe_start(const Model& model, const InitialState& start) {
  std::string theta, omega;
  for (int i = 0; i < model.n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    theta += fmt::format("{}{:.6g} deg", i ? ", " : "", (k < start.theta.size() ? start.theta[k] : 0.0) * 180 / M_PI);
    omega += fmt::format("{}{:.6g} deg/s", i ? ", " : "", (k < start.omega.size() ? start.omega[k] : 0.0) * 180 / M_PI);
  }
  std::string out = "theta = [" + theta + "], omega = [" + omega + "]";
  if (model.spatial) {
    std::string phi, phi_rate;
    for (int i = 0; i < model.n; ++i) {
      const auto k = static_cast<std::size_t>(i);
      phi += fmt::format("{}{:.6g} deg", i ? ", " : "", (k < start.phi.size() ? start.phi[k] : 0.0) * 180 / M_PI);
      phi_rate += fmt::format("{}{:.6g} deg/s", i ? ", " : "", (k < start.phi_rate.size() ? start.phi_rate[k] : 0.0) * 180 / M_PI);
    }
    out += ", phi = [" + phi + "], phi_rate = [" + phi_rate + "]";
  }
  return out;
}

}  // namespace

Action add_simulate(CLI::App& app) {
  auto* cmd = app.add_subcommand("simulate", "Simulate one case and write its time series as CSV");
  struct Options {
    std::string spec, case_id, scenario, theta, rate, phi, phi_rate, duration, output_rate, out;
    bool ftle = false;
    long max_samples = kDefaultMaxSamples;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("SPEC", o->spec, "YAML design spec")->required();
  cmd->add_option("--case", o->case_id,
                  "Run this case of the spec's case set, by its id (as in cases.csv and the packet); default: the first "
                  "case, or the first of --scenario");
  cmd->add_option("--scenario", o->scenario, "Base-motion scenario by name (default: the first)");
  cmd->add_option("--theta", o->theta,
                  "A start of your own instead of a case: link angles, top first, e.g. \"10 deg, -5 deg\" (missing: 0)");
  cmd->add_option("--rate", o->rate, "With --theta: angular rates, e.g. \"0, 5 deg/s\" (missing: 0)");
  cmd->add_option("--phi", o->phi,
                  "Spatial chains, a start of your own: angles out of the travel plane, e.g. \"3 deg, 0\" (missing: 0)");
  cmd->add_option("--phi-rate", o->phi_rate, "Spatial chains: rates of --phi, e.g. \"0, 2 deg/s\" (missing: 0)");
  cmd->add_option("--duration", o->duration, "Simulated time, e.g. \"20 s\" (default: cases.duration)");
  cmd->add_option("--output-rate", o->output_rate, "Samples per second, e.g. 100 (default: cases.output_rate)");
  cmd->add_option("-o,--output", o->out, "CSV file to write (default: standard output)");
  cmd->add_flag("--ftle", o->ftle,
                "Also compute the finite-time Lyapunov exponent of this start (chaos settings of the spec; horizon: "
                "chaos.horizon, else the ftle_max limit's, else cases.duration)");
  cmd->add_option("--max-samples", o->max_samples, "Cap on the output samples (duration x output rate)")
      ->check(CLI::PositiveNumber)
      ->capture_default_str();
  return [cmd, o]() {
    if (!cmd->parsed()) return -1;
    require_input_file("SPEC", o->spec);
    const Spec spec = load_spec(o->spec, LoadOptions{kDefaultMaxCases, o->max_samples});
    const Model model = build_model(spec);
    if (o->ftle && !model.elastic_links.empty())
      throw UsageError("--ftle", "the FTLE does not follow an elastic rope's switches between slack and taut yet; run "
                                 "it on a copy of the spec with the rope inextensible (without its elastic: section)");
    RunSettings settings = RunSettings::from_spec(spec);
    if (!o->duration.empty()) settings.duration = parse_one("--duration", o->duration, units::duration);
    if (!o->output_rate.empty()) settings.output_rate = parse_one("--output-rate", o->output_rate, units::rate);
    if (!(settings.duration > 0) || !(settings.output_rate > 0))
      throw UsageError(o->duration.empty() || !(settings.duration > 0) ? "--duration" : "--output-rate",
                       "must be > 0");
    if (const long samples = samples_per_case(settings.duration, settings.output_rate);
        samples > o->max_samples)
      throw UsageError("--duration/--output-rate",
                       fmt::format("{:g} s at {:g} samples/s gives {} samples, more than the cap of {}",
                                   settings.duration, settings.output_rate, samples, o->max_samples),
                       "lower them or raise the cap with --max-samples N");
    int scenario = 0;
    if (!o->scenario.empty()) {
      scenario = -1;
      std::string names;
      for (std::size_t k = 0; k < model.scenarios.size(); ++k) {
        if (model.scenarios[k].name == o->scenario) scenario = static_cast<int>(k);
        names += (names.empty() ? "'" : ", '") + model.scenarios[k].name + "'";
      }
      if (scenario < 0) throw UsageError("--scenario", fmt::format("no scenario '{}' (have {})", o->scenario, names));
    }
    InitialState start;
    const bool own_start = !o->theta.empty() || !o->rate.empty() || !o->phi.empty() || !o->phi_rate.empty();
    if (!o->case_id.empty() && (own_start || !o->scenario.empty()))
      throw UsageError("--case",
                       "names both the start and the scenario, so it conflicts with --theta, --rate, --phi, --phi-rate "
                       "and --scenario",
                       "leave out --theta, --rate, --phi, --phi-rate and --scenario, or leave out --case");
    if (!model.spatial && (!o->phi.empty() || !o->phi_rate.empty()))
      throw UsageError(o->phi.empty() ? "--phi-rate" : "--phi", "a planar chain has no swing out of its plane",
                       "leave it out, or give the spec 'motion: spatial'");
    std::string start_label;
    if (own_start) {
      if (!o->theta.empty()) start.theta = parse_list("--theta", o->theta, units::angle);
      if (!o->rate.empty()) start.omega = parse_list("--rate", o->rate, units::angular_rate);
      if (!o->phi.empty()) start.phi = parse_list("--phi", o->phi, units::angle);
      if (!o->phi_rate.empty()) start.phi_rate = parse_list("--phi-rate", o->phi_rate, units::angular_rate);
      const auto n_links = static_cast<std::size_t>(model.n);
      for (const auto& [option, list] : {std::pair{"--theta", &start.theta}, {"--rate", &start.omega},
                                         {"--phi", &start.phi}, {"--phi-rate", &start.phi_rate}})
        if (list->size() > n_links) throw UsageError(option, fmt::format("at most {} values (one per link)", model.n));
      start_label = model.spatial ? "your start (--theta/--rate/--phi/--phi-rate)" : "your start (--theta/--rate)";
    } else {
      const CaseDef def = pick_case(CaseSpace(spec), o->case_id, o->scenario.empty() ? -1 : scenario);
      start = def.initial;
      scenario = def.scenario;
      start_label = o->case_id.empty() ? fmt::format("case {} (the first{} of the spec's case set; --case ID runs another)",
                                                     def.id, o->scenario.empty() ? "" : " of this scenario")
                                       : fmt::format("case {}", def.id);
    }
    std::cerr << fmt::format("start: {}, scenario '{}': {}\n", start_label,
                             model.scenarios[static_cast<std::size_t>(scenario)].name, describe_start(model, start));

    const int n = model.n;
    // Samples stream to a file beside the output (or in the temporary folder for standard output),
    // so memory does not grow with duration x output rate; it becomes the output only when complete.
    const std::filesystem::path target =
        o->out.empty() ? std::filesystem::temp_directory_path() / "swaybound_simulate.csv"
                       : std::filesystem::path(o->out);
    PartialFile partial(target);
    std::ofstream& csv = partial.stream();
    csv.precision(10);
    csv << csv_quote("t [s]");
    for (const char* name : {"base_x [m]", "base_y [m]", "base_vx [m/s]", "base_vy [m/s]", "base_ax [m/s^2]",
                             "base_ay [m/s^2]"})
      csv << ',' << csv_quote(name);
    if (model.spatial)
      for (const char* name : {"base_z (across the travel) [m]", "base_vz [m/s]", "base_az [m/s^2]"})
        csv << ',' << csv_quote(name);
    for (int i = 0; i < n; ++i) {
      const std::string& name = model.names[static_cast<std::size_t>(i)];
      if (model.spatial)
        csv << ',' << csv_quote(fmt::format("travel_plane_angle({}) (projection on x-y from the vertical) [rad]", name))
            << ',' << csv_quote(fmt::format("cross_plane_angle({}) (projection on z-y from the vertical) [rad]", name))
            << ',' << csv_quote(fmt::format("swing_angle({}) (from the vertical in any direction) [rad]", name)) << ','
            << csv_quote(fmt::format("swing_rate({}) [rad/s]", name)) << ','
            << csv_quote(fmt::format("relative_angle({}) (to the link above) [rad]", name));
      else
        csv << ',' << csv_quote(fmt::format("theta({}) [rad]", name)) << ','
            << csv_quote(fmt::format("omega({}) [rad/s]", name)) << ','
            << csv_quote(fmt::format("relative_angle({}) [rad]", name));
    }
    for (int i = 0; i < n; ++i) {
      const std::string& name = model.names[static_cast<std::size_t>(i)];
      csv << ',' << csv_quote(fmt::format("pivot_x({}) [N]", name)) << ','
          << csv_quote(fmt::format("pivot_y({}) [N]", name));
      if (model.spatial) csv << ',' << csv_quote(fmt::format("pivot_z({}) [N]", name));
      csv << ',' << csv_quote(fmt::format("pivot_load({}) [N]", name))
          << ',' << csv_quote(fmt::format("tension_top({}) [N]", name)) << ','
          << csv_quote(fmt::format("tension_bottom({}) [N]", name));
    }
    // A slewing scenario also reads in the boom frame (posture.hpp): radial out from the slewing axis
    // through the top pivot, tangential the way a positive slewing speed moves it, y up.
    const bool slewing = model.scenarios[static_cast<std::size_t>(scenario)].phases.front().slew_radius > 0;
    if (slewing) {
      for (int i = 0; i < n; ++i) {
        const std::string& name = model.names[static_cast<std::size_t>(i)];
        csv << ',' << csv_quote(fmt::format("in_plane_sway({}) (in the boom's vertical plane; + outwards) [rad]", name))
            << ',' << csv_quote(fmt::format("out_of_plane_sway({}) (across the boom's plane; + the way a positive "
                                            "slewing speed moves the tip) [rad]", name));
      }
      csv << ',' << csv_quote("support_force_radial (of the chain on the boom tip; + outwards) [N]") << ','
          << csv_quote("support_force_tangential (of the chain on the boom tip; + the way a positive slewing speed "
                       "moves the tip) [N]")
          << ',' << csv_quote("support_force_vertical (of the chain on the boom tip; + up) [N]");
    }
    for (std::size_t w = 0; w < model.wind.size(); ++w) {
      const std::string& on = model.names[static_cast<std::size_t>(model.wind[w].point.link)];
      csv << ',' << csv_quote(fmt::format("wind_force_x(wind[{}] on {}) [N]", w, on)) << ','
          << csv_quote(fmt::format("wind_force_y(wind[{}] on {}) [N]", w, on));
      if (model.spatial) csv << ',' << csv_quote(fmt::format("wind_force_z(wind[{}] on {}) [N]", w, on));
    }
    // Ropes of variable length: length, unstretched length, stretch, the fall's tension, slack flag.
    for (int i = 0; i < n; ++i) {
      const auto k = static_cast<std::size_t>(i);
      if (model.length_kind[k] == LengthKind::fixed) continue;
      const std::string& name = model.names[k];
      csv << ',' << csv_quote(fmt::format("rope_length({}) [m]", name));
      if (model.length_kind[k] == LengthKind::elastic)
        csv << ',' << csv_quote(fmt::format("unstretched_length({}) [m]", name)) << ','
            << csv_quote(fmt::format("stretch({}) [m]", name)) << ','
            << csv_quote(fmt::format("rope_tension({}) [N]", name)) << ','
            << csv_quote(fmt::format("slack({}) (1 while slack)", name));
      else
        csv << ',' << csv_quote(fmt::format("drum_force({}) [N]", name));
    }
    if (model.variable_length())
      csv << ',' << csv_quote("drum_hauled_in (rope wound onto the drum since t = 0) [m]") << ','
          << csv_quote("drum_speed [m/s]") << ',' << csv_quote("ground_force_y (on a load held on the ground) [N]");
    csv << ',' << csv_quote("energy (kinetic + potential in the ground frame; potential 0 at the top pivot's start height; plus the ropes' strain energy) [J]")
        << ',' << csv_quote("dissipated (by dampers, friction, dashpots and rope damping, since t = 0) [J]") << ','
        << csv_quote("work_in (done on the chain by the moving base and the wind, and by a hoist drum, since t = 0) [J]") << ','
        << csv_quote("audit_residual (energy + dissipated - work_in - energy at t = 0) [J]") << '\n';

    const Observer on_sample = [&](const StepView& v) {
      csv << v.t;
      const Workspace& w = *v.ws;
      csv << ',' << w.base_x << ',' << w.base_y << ',' << w.base_vx << ',' << w.base_vy << ',' << w.base_ax << ','
          << w.base_ay;
      if (model.spatial) csv << ',' << w.base_z << ',' << w.base_vz << ',' << w.base_az;
      for (int i = 0; i < n; ++i)
        if (model.spatial)
          csv << ',' << travel_plane_angle(model, v.x, i) << ',' << cross_plane_angle(model, v.x, i) << ','
              << swing_angle(model, v.x, i) << ',' << swing_rate(model, v.x, i) << ',' << relative_swing(model, v.x, i);
        else
          csv << ',' << v.x[i] << ',' << v.x[model.dof + i] << ',' << v.x[i] - (i > 0 ? v.x[i - 1] : 0.0);
      for (int i = 0; i < n; ++i) {
        double top, bottom;
        link_tension(model, *v.ws, i, top, bottom);
        csv << ',' << v.ws->reaction_x[i] << ',' << v.ws->reaction_y[i];
        if (model.spatial) csv << ',' << v.ws->reaction_z[i];
        csv << ',' << v.ws->reaction[i] << ',' << top << ',' << bottom + 0.0;
      }
      if (slewing) {
        const BoomFrame frame = boom_frame(*v.phase, w);
        for (int i = 0; i < n; ++i)
          csv << ',' << in_plane_sway(model, v.x, i, frame) << ',' << out_of_plane_sway(model, v.x, i, frame);
        const LoadComponents support = pivot_load_components(model, w, 0, frame);  // F = -R on the top link
        csv << ',' << -support.radial + 0.0 << ',' << -support.tangential + 0.0 << ',' << -support.vertical + 0.0;
      }
      for (std::size_t k = 0; k < model.wind.size(); ++k) {
        double fx, fy, vx, vy;
        wind_load_force(model, w, *v.phase, k, fx, fy, vx, vy);
        csv << ',' << fx + 0.0 << ',' << fy + 0.0;  // + 0.0: no "-0"
        if (model.spatial) csv << ',' << wind_load_force_z(model, w, *v.phase, k) + 0.0;
      }
      for (int i = 0; i < n; ++i) {
        const auto k = static_cast<std::size_t>(i);
        if (model.length_kind[k] == LengthKind::fixed) continue;
        csv << ',' << w.len[k];
        if (model.length_kind[k] == LengthKind::elastic) {
          const auto r = static_cast<std::size_t>(model.length_coordinate[k] - model.length_start());
          csv << ',' << w.unstretched[r] << ',' << w.stretch[r] << ',' << w.rope_force[r] + 0.0 << ','
              << (w.rope_slack[r] ? 1 : 0);
        } else {
          csv << ',' << w.drum_force[k];
        }
      }
      if (model.variable_length()) csv << ',' << w.drum_s << ',' << w.drum_v << ',' << (w.grounded ? w.ground_y : 0.0);
      const auto dof = static_cast<std::size_t>(model.dof);
      csv << ',' << v.energy << ',' << v.x[2 * dof] << ',' << v.x[2 * dof + 1] << ',' << v.audit_residual << '\n';
    };
    // The same extremes as a check reports, located between steps and on both sides of jumps.
    CaseExtremes extremes(model, spec);
    const Observer on_step = [&](const StepView& v) { extremes.observe(v); };
    Workspace ws(model);
    const RunOutcome outcome = simulate_case(model, ws, scenario, start, settings, on_step, on_sample);
    CaseMetrics peaks;
    extremes.write(peaks);
    const auto& angle = peaks.peak_angle;
    const auto& rate = peaks.peak_rate;
    const auto& load = peaks.peak_load;

    std::cerr << fmt::format("scenario '{}', {:g} s, {} steps ({} rejected), {} evaluations\n",
                             model.scenarios[static_cast<std::size_t>(scenario)].name, outcome.t_reached,
                             outcome.steps, outcome.rejected, outcome.evaluations);
    for (int i = 0; i < n; ++i) {
      std::cerr << fmt::format("  {:<20} peak angle {:8.3f} deg at {:7.3f} s, peak rate {:8.3f} deg/s, "
                               "peak pivot load {:10.1f} N at {:7.3f} s",
                               model.names[i], angle[i].value * 180 / M_PI, angle[i].time, rate[i].value * 180 / M_PI,
                               load[i].value, load[i].time);
      if (model.kind[i] == LinkKind::rope)
        std::cerr << fmt::format(", least rope tension at the top end {:.1f} N at {:.3f} s",
                                 peaks.min_tension_top[i].value, peaks.min_tension_top[i].time)
                  << (i + 1 < n ? fmt::format(", at the bottom end {:.1f} N at {:.3f} s",
                                              peaks.min_tension_bottom[i].value, peaks.min_tension_bottom[i].time)
                                : std::string());
      std::cerr << '\n';
    }
    std::cerr << fmt::format("  extremes located between steps: {} brackets searched, {} interpolant evaluations\n",
                             extremes.finder().searches(), extremes.finder().probes());
    std::cerr << fmt::format("  energy audit: largest residual {:.3g} J ({:.3g} of the energy scale {:.4g} J)\n",
                             outcome.max_audit_residual, outcome.max_audit_residual / outcome.audit_scale,
                             outcome.audit_scale);
    if (o->ftle) {
      FtleSettings fs = ftle_settings(spec, RunSettings::from_spec(spec));
      const FtleResult f = chain_ftle(model, ws, scenario, start, fs);
      if (f.status == FtleStatus::ok)
        std::cerr << fmt::format("  FTLE over {:g} s: {:.6g} 1/s (separation {:g}, renormalised every {:g} s, rate "
                                 "weight {:.4g} s{})\n",
                                 fs.horizon, f.exponent, fs.separation, fs.renormalise,
                                 fs.rate_weight > 0 ? fs.rate_weight : ftle_rate_weight(model),
                                 fs.direction.empty() ? ", equal initial direction" : ", initial direction of the spec");
      else
        std::cerr << fmt::format("  FTLE: the run failed: {}\n", f.reason);
    }
    if (outcome.status != RunStatus::ok) {
      std::cerr << fmt::format("swaybound: run failed ({}): {}; no output written\n", status_name(outcome.status),
                               outcome.reason);
      return kExitError;
    }
    if (o->out.empty()) {
      csv.close();
      if (!csv) throw RunError(fmt::format("writing {} failed (disk full?)", partial.temp().string()));
      std::ifstream in(partial.temp(), std::ios::binary);
      std::cout << in.rdbuf();  // the temporary file is removed when `partial` goes
    } else {
      partial.commit();
    }
    return kExitPass;
  };
}

}  // namespace swaybound::cli
