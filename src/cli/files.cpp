#include <fstream>
#include <iostream>
#include <sstream>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/packet.hpp"

namespace swaybound::cli {

std::string read_file_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  if (!in && !in.eof()) throw RunError(fmt::format("cannot read {}", path));
  return s.str();
}

void print_notices(PacketWriter& packet) {
  for (const auto& notice : packet.take_notices()) std::cerr << "swaybound: " << notice << '\n';
}

void write_review_documents(PacketWriter& packet, const Spec& spec, const CheckReport& report,
                            const std::string& date_utc, ReportMeta meta) {
  meta.date = date_utc.substr(0, 10);
  const std::string cases_text = read_file_text(packet.path("cases.csv"));
  write_report_pdf(spec, report, packet.path("report.pdf"), meta, cases_text);
  packet.write("report.html", report_html(spec, report, meta, cases_text));
}

}  // namespace swaybound::cli
