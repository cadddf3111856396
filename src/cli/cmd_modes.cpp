// swaybound modes: small-signal modes of the chain about its hanging rest position.
#include <cmath>
#include <iostream>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "commands.hpp"
#include "swaybound/modal/modes.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::cli {

namespace {

/// Finite numbers as numbers, infinities and NaN as null (JSON has neither).
nlohmann::json number(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr); }

nlohmann::json modal_json(const ModalResult& r, const Model& model, const std::string& spec_path) {
  nlohmann::json out;
  out["spec"] = spec_path;
  out["links"] = model.names;
  nlohmann::json modes = nlohmann::json::array();
  for (std::size_t k = 0; k < r.modes.size(); ++k) {
    const Mode& m = r.modes[k];
    nlohmann::json j;
    j["mode"] = k + 1;
    j["frequency_hz"] = number(m.frequency_hz);
    j["period_s"] = number(m.period_s);
    j["natural_frequency_with_damping_hz"] = number(m.natural_frequency_with_damping_hz);
    j["damped_frequency_hz"] = number(m.damped_frequency_hz);
    j["damping_ratio"] = number(m.damping_ratio);
    j["overdamped"] = m.overdamped;
    j["eigenvalue_real_per_s"] = number(m.eigenvalue.real());
    j["eigenvalue_imag_per_s"] = number(m.eigenvalue.imag());
    j["partner_eigenvalue_real_per_s"] = number(m.partner.real());
    j["partner_eigenvalue_imag_per_s"] = number(m.partner.imag());
    nlohmann::json shape = nlohmann::json::object();
    for (std::size_t i = 0; i < m.shape.size(); ++i) shape[model.names[i]] = number(m.shape[i]);
    j["shape_rad_per_rad"] = shape;
    if (model.spatial) {  // pairs: the travel plane and across it
      j["plane"] = plane_name(m.plane);
      j["pair_mode"] = m.pair >= 0 ? nlohmann::json(m.pair + 1) : nlohmann::json(nullptr);
    }
    if (!model.elastic_links.empty()) {
      j["kind"] = m.axial ? "axial" : "sway";
      nlohmann::json stretch = nlohmann::json::object();
      for (std::size_t r = 0; r < m.stretch_shape.size(); ++r)
        stretch[model.names[static_cast<std::size_t>(model.elastic_links[r])]] = number(m.stretch_shape[r]);
      j["stretch_shape"] = stretch;
    }
    modes.push_back(std::move(j));
  }
  out["modes"] = std::move(modes);
  out["least_damping_ratio"] = number(r.least_damping_ratio);
  if (!r.closed_loops.empty()) {
    nlohmann::json loops = nlohmann::json::array();
    for (const ClosedLoop& loop : r.closed_loops) {
      nlohmann::json l;
      l["scenario"] = loop.scenario_name;
      l["stable"] = loop.stable;
      l["least_damping_ratio"] = number(loop.least_damping_ratio);
      nlohmann::json poles = nlohmann::json::array();
      for (const ClosedLoopPole& p : loop.poles)
        poles.push_back({{"eigenvalue_real_per_s", number(p.eigenvalue.real())},
                         {"eigenvalue_imag_per_s", number(p.eigenvalue.imag())},
                         {"natural_frequency_hz", number(p.natural_frequency_hz)},
                         {"damping_ratio", number(p.damping_ratio)}});
      l["poles"] = std::move(poles);
      loops.push_back(std::move(l));
    }
    out["closed_loops"] = std::move(loops);
  }
  out["notes"] = r.notes;
  return out;
}

void print_table(const ModalResult& r, const Model& model, const std::string& spec_path) {
  std::cout << fmt::format("Modes of {} about the hanging rest position ({} link{})\n\n", spec_path, model.n,
                           model.n == 1 ? "" : "s");
  std::cout << fmt::format("{:>4}  {:>14}  {:>10}  {:>17}  {:>20}  {:>20}", "mode", "frequency [Hz]", "period [s]",
                           "damping ratio [-]", "damped frequency [Hz]", "w_n with damping [Hz]");
  for (const auto& name : model.names) std::cout << "  " << fmt::format("{:>12}", "shape(" + name + ")");
  if (model.spatial) std::cout << "  " << fmt::format("{:>14}", "plane");
  const bool ropes = !model.elastic_links.empty();
  if (ropes) {
    std::cout << "  " << fmt::format("{:>5}", "kind");
    for (int link : model.elastic_links)
      std::cout << "  " << fmt::format("{:>12}", "stretch(" + model.names[static_cast<std::size_t>(link)] + ")");
  }
  std::cout << '\n';
  for (std::size_t k = 0; k < r.modes.size(); ++k) {
    const Mode& m = r.modes[k];
    std::cout << fmt::format("{:>4}  {:>14.6g}  {:>10.6g}  {:>17.6g}  {:>20}  {:>20.6g}", k + 1, m.frequency_hz,
                             m.period_s, m.damping_ratio,
                             m.overdamped ? std::string("overdamped") : fmt::format("{:.6g}", m.damped_frequency_hz),
                             m.natural_frequency_with_damping_hz);
    for (std::size_t i = 0; i < m.shape.size(); ++i)
      std::cout << "  " << fmt::format("{:>{}.6g}", m.shape[i], std::max<std::size_t>(12, model.names[i].size() + 7));
    if (model.spatial) std::cout << "  " << fmt::format("{:>14}", m.plane == SwayPlane::travel ? "travel (x-y)" : m.plane == SwayPlane::across ? "across (z-y)" : "vertical (y)");
    if (ropes) {
      std::cout << "  " << fmt::format("{:>5}", m.axial ? "axial" : "sway");  // + 0.0 below: no "-0"
      for (std::size_t r = 0; r < m.stretch_shape.size(); ++r)
        std::cout << "  "
                  << fmt::format("{:>{}.6g}", m.stretch_shape[r] + 0.0,
                                 std::max<std::size_t>(12, model.names[static_cast<std::size_t>(model.elastic_links[r])].size() + 9));
    }
    std::cout << '\n';
  }
  std::cout << fmt::format("\nleast damping ratio: {:.6g}\n", r.least_damping_ratio);
  for (const ClosedLoop& loop : r.closed_loops) {
    std::cout << fmt::format("\nclosed loop of the travel controller, scenario '{}': {}\n", loop.scenario_name,
                             loop.stable ? "stable" : "NOT stable (a pole with Re >= 0)");
    std::cout << fmt::format("{:>4}  {:>22}  {:>20}  {:>17}\n", "pole", "eigenvalue [1/s]", "w_n [Hz]",
                             "damping ratio [-]");
    for (std::size_t k = 0; k < loop.poles.size(); ++k) {
      const ClosedLoopPole& p = loop.poles[k];
      const std::string value = p.eigenvalue.imag() > 0
                                    ? fmt::format("{:.6g} +- {:.6g}i", p.eigenvalue.real(), p.eigenvalue.imag())
                                    : fmt::format("{:.6g}", p.eigenvalue.real() + 0.0);
      std::cout << fmt::format("{:>4}  {:>22}  {:>20.6g}  {:>17.6g}\n", k + 1, value, p.natural_frequency_hz,
                               p.damping_ratio);
    }
  }
  std::cout << (ropes ? "mode shapes: link angles [rad] and rope stretches [m] of one mode vector, its largest angle "
                        "1 for a sway mode, its largest stretch 1 for an axial (bounce) mode\n"
                      : "mode shapes: link angles [rad per rad], largest 1\n");
  for (const auto& note : r.notes) std::cout << "note: " << note << '\n';
}

}  // namespace

Action add_modes(CLI::App& app) {
  auto* cmd = app.add_subcommand("modes", "Natural frequencies, damping ratios and mode shapes about the rest position");
  auto spec_path = std::make_shared<std::string>();
  auto json = std::make_shared<bool>(false);
  auto max_samples = std::make_shared<long>(kDefaultMaxSamples);
  cmd->add_option("SPEC", *spec_path, "YAML design spec")->required();
  cmd->add_flag("--json", *json, "Print JSON (units in the key names) instead of a table");
  cmd->add_option("--max-samples", *max_samples,
                  "Cap on the output samples per case (cases.duration x cases.output_rate)")
      ->default_val(kDefaultMaxSamples)
      ->check(CLI::PositiveNumber);
  return [cmd, spec_path, json, max_samples]() {
    if (!cmd->parsed()) return -1;
    require_input_file("SPEC", *spec_path);
    const Spec spec = load_spec(*spec_path, LoadOptions{kDefaultMaxCases, *max_samples});
    const Model model = build_model(spec);
    const ModalResult result = modal_analysis(model);
    if (*json)
      std::cout << modal_json(result, model, *spec_path).dump(2) << '\n';
    else
      print_table(result, model, *spec_path);
    return kExitPass;
  };
}

}  // namespace swaybound::cli
