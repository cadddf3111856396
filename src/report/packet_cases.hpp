#pragma once
// What the check and sizing packets share: cases.csv and the envelope rows taken as the cases
// stream in, and the review documents.
#include <fstream>
#include <string>
#include <vector>

#include "swaybound/report/document.hpp"
#include "swaybound/report/packet.hpp"

namespace swaybound::packet_detail {

/// cases.csv written row by row as the cases arrive, and each case's envelope row for the report.
class CaseStream {
 public:
  /// Opens `path` (created empty). With `header_first` the header is written now, else before the
  /// first case (a run that checks no case then leaves cases.csv empty).
  CaseStream(const Spec& spec, const std::string& path, bool header_first);
  void add(const CaseMetrics& metrics);
  /// Closes cases.csv; RunError when a write failed (a full disk).
  void close();
  /// The envelope rows in case order; nullptr when cases.csv stayed empty (the report then says
  /// the table was not supplied).
  const std::vector<CaseEnvelopeRow>* rows() const { return header_written_ ? &rows_ : nullptr; }

 private:
  void write_header();

  const Spec& spec_;
  std::string path_;
  std::ofstream csv_;
  bool header_written_ = false;
  std::vector<CaseEnvelopeRow> rows_;
};

/// report.pdf and report.html of `report` into the packet, dated `date_utc` (ISO 8601).
void write_review_documents(PacketWriter& packet, const Spec& spec, const CheckReport& report,
                            const std::string& date_utc, ReportMeta meta,
                            const std::vector<CaseEnvelopeRow>* cases);

}  // namespace swaybound::packet_detail
