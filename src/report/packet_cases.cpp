#include "packet_cases.hpp"

#include <fmt/format.h>

#include "swaybound/core/error.hpp"
#include "swaybound/report/results.hpp"

namespace swaybound::packet_detail {

CaseStream::CaseStream(const Spec& spec, const std::string& path, bool header_first)
    : spec_(spec), path_(path), csv_(path, std::ios::binary) {
  if (!csv_) throw RunError(fmt::format("cannot write {}", path_));
  if (header_first) write_header();
}

void CaseStream::write_header() {
  csv_ << cases_csv_header(spec_);
  header_written_ = true;
}

void CaseStream::add(const CaseMetrics& metrics) {
  if (!header_written_) write_header();
  csv_ << cases_csv_row(spec_, metrics);
  rows_.push_back(case_envelope_row(spec_, metrics));
}

void CaseStream::close() {
  csv_.close();
  if (!csv_) throw RunError(fmt::format("writing {} failed (disk full or not writable?)", path_));
}

void write_review_documents(PacketWriter& packet, const Spec& spec, const CheckReport& report,
                            const std::string& date_utc, ReportMeta meta,
                            const std::vector<CaseEnvelopeRow>* cases) {
  meta.date = date_utc.substr(0, 10);
  write_report_pdf(spec, report, packet.path("report.pdf"), meta, cases);
  packet.write("report.html", report_html(spec, report, meta, cases));
}

}  // namespace swaybound::packet_detail
