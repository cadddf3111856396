#include "swaybound/report/check_packet.hpp"

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "packet_cases.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/report/results.hpp"

namespace swaybound {

struct CheckPacket::State {
  State(const Spec& s, std::string text, PacketOptions o)
      : spec(s),
        spec_text(std::move(text)),
        options(std::move(o)),
        packet(options.dir, spec.name, sha256_hex(spec_text), options.force),
        cases(spec, packet.path("cases.csv"), true) {}
  const Spec& spec;
  std::string spec_text;
  PacketOptions options;
  PacketWriter packet;
  packet_detail::CaseStream cases;
};

CheckPacket::CheckPacket(const Spec& spec, std::string spec_text, PacketOptions options)
    : state_(std::make_unique<State>(spec, std::move(spec_text), std::move(options))) {}

CheckPacket::~CheckPacket() = default;

void CheckPacket::attach(CheckOptions& options) {
  auto previous = std::move(options.on_case);
  options.on_case = [this, previous = std::move(previous)](const CaseMetrics& m) {
    if (previous) previous(m);
    on_case(m);
  };
}

void CheckPacket::on_case(const CaseMetrics& metrics) { state_->cases.add(metrics); }

void CheckPacket::finish(const CheckReport& report) {
  State& s = *state_;
  s.cases.close();
  s.packet.write("results.json", results_json(s.spec, report));
  s.packet.write("spec.yaml", s.spec_text);
  const std::string date = s.options.date_utc.empty() ? now_utc_iso8601() : s.options.date_utc;
  packet_detail::write_review_documents(s.packet, s.spec, report, date, {}, s.cases.rows());
  throw_if_cancelled();
  ManifestInfo info;
  info.spec_file = "spec.yaml";
  info.spec_name = s.spec.name;
  info.spec_sha256 = sha256_hex(s.spec_text);
  info.date_utc = date;
  info.settings = check_manifest_settings(s.spec, report, s.options.audit);
  info.execution = s.options.execution;
  s.packet.commit(info);
}

const std::string& CheckPacket::target() const { return state_->packet.target(); }

std::vector<std::string> CheckPacket::take_notices() { return state_->packet.take_notices(); }

std::vector<std::string> check_manifest_settings(const Spec& spec, const CheckReport& report, bool audit) {
  std::vector<std::string> out;
  out.push_back(fmt::format("solver: {} rtol={:g} atol={:g} max_steps={} min_step={:g} s max_seconds={:g} s",
                            spec.solver.method == Stepper::dopri5 ? "dopri5" : "rkf78", spec.solver.rtol,
                            spec.solver.atol, spec.solver.max_steps, spec.solver.min_step, spec.solver.max_seconds));
  std::string seeds;
  for (const auto& set : spec.cases.initial)
    if (set.kind == InitialKind::random) seeds += fmt::format("{}{}={}", seeds.empty() ? "" : " ", set.name, set.seed);
  out.push_back("seeds: " + (seeds.empty() ? std::string("none") : seeds));
  out.push_back(fmt::format("cases: {} x {:g} s, output_rate={:g} /s", report.case_count, spec.cases.duration,
                            spec.cases.output_rate));
  std::string chaos = fmt::format("chaos: horizon={:g} s separation={:g} renormalise={:g} s", spec.chaos.horizon,
                                  spec.chaos.separation, spec.chaos.renormalise);
  if (spec.chaos.rate_weight > 0) chaos += fmt::format(" rate_weight={:g} s", spec.chaos.rate_weight);
  if (!spec.chaos.direction.empty()) chaos += fmt::format(" direction=[{:g}]", fmt::join(spec.chaos.direction, ", "));
  out.push_back(chaos);
  out.push_back(fmt::format("accuracy_audit: {}", audit ? "governing cases at rtol/100, atol/100" : "off"));
  return out;
}

}  // namespace swaybound
