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
#include "swaybound/checks/metrics.hpp"
#include "swaybound/core/units.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace {

/// Parses "10 deg, -5 deg" into SI values of dimension `dim` (bare numbers are SI).
std::vector<double> parse_list(const std::string& option, const std::string& text, const units::Dim& dim) {
  std::vector<double> out;
  std::stringstream in(text);
  std::string item;
  while (std::getline(in, item, ',')) {
    std::string why;
    const auto q = units::parse_quantity(item, why);
    if (!q) throw ArgumentError(fmt::format("{}: cannot read '{}': {}", option, item, why));
    if (q->has_unit && !(q->dim == dim))
      throw ArgumentError(fmt::format("{}: '{}' is {}, expected {}", option, item, units::a_dim_name(q->dim),
                                      units::a_dim_name(dim)));
    out.push_back(q->value);
  }
  return out;
}

double parse_one(const std::string& option, const std::string& text, const units::Dim& dim) {
  const auto values = parse_list(option, text, dim);
  if (values.size() != 1) throw ArgumentError(fmt::format("{}: expected one value, got '{}'", option, text));
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

}  // namespace

Action add_simulate(CLI::App& app) {
  auto* cmd = app.add_subcommand("simulate", "Simulate one case and write its time series as CSV");
  struct Options {
    std::string spec, scenario, theta, rate, duration, output_rate, out;
    long max_samples = kDefaultMaxSamples;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("SPEC", o->spec, "YAML design spec")->required();
  cmd->add_option("--scenario", o->scenario, "Base-motion scenario by name (default: the first)");
  cmd->add_option("--theta", o->theta, "Initial link angles, top first, e.g. \"10 deg, -5 deg\" (default: 0)");
  cmd->add_option("--rate", o->rate, "Initial angular rates, e.g. \"0, 5 deg/s\" (default: 0)");
  cmd->add_option("--duration", o->duration, "Simulated time, e.g. \"20 s\" (default: cases.duration)");
  cmd->add_option("--output-rate", o->output_rate, "Samples per second, e.g. 100 (default: cases.output_rate)");
  cmd->add_option("-o,--output", o->out, "CSV file to write (default: standard output)");
  cmd->add_option("--max-samples", o->max_samples, "Cap on the output samples (duration x output rate)")
      ->check(CLI::PositiveNumber)
      ->capture_default_str();
  return [cmd, o]() {
    if (!cmd->parsed()) return -1;
    const Spec spec = load_spec(o->spec, LoadOptions{kDefaultMaxCases, o->max_samples});
    const Model model = build_model(spec);
    RunSettings settings = RunSettings::from_spec(spec);
    if (!o->duration.empty()) settings.duration = parse_one("--duration", o->duration, units::duration);
    if (!o->output_rate.empty()) settings.output_rate = parse_one("--output-rate", o->output_rate, units::rate);
    if (!(settings.duration > 0) || !(settings.output_rate > 0))
      throw ArgumentError("--duration and --output-rate must be > 0");
    if (const long samples = samples_per_case(settings.duration, settings.output_rate);
        samples > o->max_samples)
      throw ArgumentError(
          fmt::format("--duration/--output-rate: {:g} s at {:g} samples/s gives {} samples, more than "
                      "the cap of {}; lower them or raise the cap with --max-samples N",
                      settings.duration, settings.output_rate, samples, o->max_samples));
    int scenario = 0;
    if (!o->scenario.empty()) {
      scenario = -1;
      std::string names;
      for (std::size_t k = 0; k < model.scenarios.size(); ++k) {
        if (model.scenarios[k].name == o->scenario) scenario = static_cast<int>(k);
        names += (names.empty() ? "'" : ", '") + model.scenarios[k].name + "'";
      }
      if (scenario < 0) throw ArgumentError(fmt::format("--scenario: no scenario '{}' (have {})", o->scenario, names));
    }
    InitialState start;
    if (!o->theta.empty()) start.theta = parse_list("--theta", o->theta, units::angle);
    if (!o->rate.empty()) start.omega = parse_list("--rate", o->rate, units::angular_rate);
    if (start.theta.size() > static_cast<std::size_t>(model.n) || start.omega.size() > static_cast<std::size_t>(model.n))
      throw ArgumentError(fmt::format("--theta/--rate: at most {} values (one per link)", model.n));

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
    for (int i = 0; i < n; ++i) {
      const std::string& name = model.names[static_cast<std::size_t>(i)];
      csv << ',' << csv_quote(fmt::format("theta({}) [rad]", name)) << ','
          << csv_quote(fmt::format("omega({}) [rad/s]", name)) << ','
          << csv_quote(fmt::format("relative_angle({}) [rad]", name));
    }
    for (int i = 0; i < n; ++i) {
      const std::string& name = model.names[static_cast<std::size_t>(i)];
      csv << ',' << csv_quote(fmt::format("pivot_x({}) [N]", name)) << ','
          << csv_quote(fmt::format("pivot_y({}) [N]", name)) << ',' << csv_quote(fmt::format("pivot_load({}) [N]", name))
          << ',' << csv_quote(fmt::format("tension({}) [N]", name));
    }
    csv << ',' << csv_quote("energy [J]") << ',' << csv_quote("dissipated [J]") << ',' << csv_quote("work_in [J]")
        << ',' << csv_quote("audit_residual [J]") << '\n';

    const Observer on_sample = [&](const StepView& v) {
      csv << v.t;
      for (int i = 0; i < n; ++i)
        csv << ',' << v.x[i] << ',' << v.x[n + i] << ',' << v.x[i] - (i > 0 ? v.x[i - 1] : 0.0);
      for (int i = 0; i < n; ++i) {
        double top, bottom;
        link_tension(model, *v.ws, i, top, bottom);
        csv << ',' << v.ws->reaction_x[i] << ',' << v.ws->reaction_y[i] << ',' << v.ws->reaction[i] << ',' << top;
      }
      csv << ',' << v.energy << ',' << v.x[2 * n] << ',' << v.x[2 * n + 1] << ',' << v.audit_residual << '\n';
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
