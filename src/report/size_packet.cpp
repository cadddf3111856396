#include "swaybound/report/size_packet.hpp"

#include <cmath>
#include <filesystem>

#include <fmt/format.h>

#include "packet_cases.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/report/plot.hpp"
#include "swaybound/report/results.hpp"

namespace swaybound {

namespace {

/// The convergence plots: the objective and the least constraint value of every evaluation.
void write_convergence_plots(PacketWriter& packet, const SizingResult& result) {
  plot::Series objective{"objective", {}, {}, false, true, 0}, least{"least margin (constraint value)", {}, {}, false, true, 1};
  for (const auto& e : result.history) {
    objective.x.push_back(static_cast<double>(e.number));
    objective.y.push_back(e.objective);
    least.x.push_back(static_cast<double>(e.number));
    least.y.push_back(std::isfinite(e.least) ? e.least : std::nan(""));
  }
  const plot::Plot objective_plot =
      plot::scatter_chart("Sizing: objective per evaluation", plot::Axis{"evaluation", ""},
                          plot::Axis{result.objective_label, result.objective_unit}, {objective});
  const plot::Plot margin_plot =
      plot::scatter_chart("Sizing: least margin per evaluation (>= 0 passes)", plot::Axis{"evaluation", ""},
                          plot::Axis{"least constraint value", ""}, {least}, {plot::RefLine{0.0, "feasible above"}});
  packet.write("convergence_objective.svg", plot::to_svg(objective_plot, "obj"));
  packet.write("convergence_margin.svg", plot::to_svg(margin_plot, "mar"));
  packet.write("convergence_objective.png", plot::to_png(objective_plot));
  packet.write("convergence_margin.png", plot::to_png(margin_plot));
}

/// The host-independent sizing settings MANIFEST records.
std::vector<std::string> sizing_manifest_settings(const SizingSpec& s, const SizingResult& result, bool audit) {
  std::vector<std::string> out;
  out.push_back(fmt::format("sizing: objective={} mode={} seed={} budget={} evaluations, {:g} s; "
                            "screening={} cases; required_margin={:g}",
                            s.objective == Objective::min_cost     ? "min_cost"
                            : s.objective == Objective::max_margin ? "max_margin"
                                                                   : "min_metric",
                            s.mode == SearchMode::local ? "local" : "global", s.seed, s.max_evaluations, s.max_seconds,
                            result.screening_size, s.required_margin));
  out.push_back(
      fmt::format("sized spec: sized_spec.yaml sha256={} (results.json is its check)", spec_sha256(result.sized)));
  out.push_back(fmt::format("accuracy_audit: {}", audit ? "governing cases at rtol/100, atol/100" : "off"));
  return out;
}

}  // namespace

struct SizingPacket::State {
  State(const Spec& s, std::string text, PacketOptions o)
      : spec(s),
        spec_text(std::move(text)),
        options(std::move(o)),
        packet(options.dir, spec.name, sha256_hex(spec_text), options.force),
        cases(spec, packet.path("cases.csv"), false) {}
  const Spec& spec;
  std::string spec_text;
  PacketOptions options;
  PacketWriter packet;
  packet_detail::CaseStream cases;
};

SizingPacket::SizingPacket(const Spec& spec, std::string spec_text, PacketOptions options)
    : state_(std::make_unique<State>(spec, std::move(spec_text), std::move(options))) {}

SizingPacket::~SizingPacket() = default;

void SizingPacket::attach(SizingOptions& options) {
  auto previous = std::move(options.on_final_case);
  options.on_final_case = [this, previous = std::move(previous)](const CaseMetrics& m) {
    if (previous) previous(m);
    on_final_case(m);
  };
  options.write_sized_spec = [this](const std::string& text) { return write_sized_spec(text); };
}

void SizingPacket::on_final_case(const CaseMetrics& metrics) { state_->cases.add(metrics); }

std::string SizingPacket::write_sized_spec(const std::string& text) {
  state_->packet.write("sized_spec.yaml", text);
  return state_->packet.path("sized_spec.yaml");
}

void SizingPacket::finish(const SizingResult& result) {
  State& s = *state_;
  s.cases.close();
  s.packet.write("results.json", results_json(result.sized, result.after));
  s.packet.write("sizing_history.csv", sizing_history_csv(s.spec, result));
  write_convergence_plots(s.packet, result);
  s.packet.write("sizing.md", sizing_table_markdown(s.spec, result));
  s.packet.write("sizing.json", sizing_summary_json(s.spec, result));
  s.packet.write("input_spec.yaml", s.spec_text);
  // The review documents of the sized design's full check, as a check packet has them for a spec.
  // The report names the sized spec where the user finds it (the packet is written in a temporary
  // folder and renamed when complete), and shows the sizing (before/after, summary).
  const std::string date = s.options.date_utc.empty() ? now_utc_iso8601() : s.options.date_utc;
  Spec shown = result.sized;
  shown.source_file = (std::filesystem::path(s.packet.target()) / "sized_spec.yaml").string();
  ReportMeta meta;
  meta.sizing = &result;
  meta.sizing_input = &s.spec;
  packet_detail::write_review_documents(s.packet, shown, result.after, date, meta, s.cases.rows());
  throw_if_cancelled();
  ManifestInfo info;
  info.spec_file = "input_spec.yaml";
  info.spec_name = s.spec.name;
  info.spec_sha256 = sha256_hex(s.spec_text);
  info.date_utc = date;
  info.settings = sizing_manifest_settings(*s.spec.sizing, result, s.options.audit);
  info.execution = s.options.execution;
  s.packet.commit(info);
}

const std::string& SizingPacket::target() const { return state_->packet.target(); }

std::vector<std::string> SizingPacket::take_notices() { return state_->packet.take_notices(); }

}  // namespace swaybound
