// Reads cases.csv back for the envelope plots of the packet.
#include <cmath>
#include <cstdlib>
#include <string>

#include <fmt/format.h>

#include "swaybound/core/error.hpp"
#include "swaybound/report/document.hpp"

namespace swaybound {

namespace {

/// Splits CSV text (RFC 4180 quoting: "..." with "" for a quote) into records of fields.
class CsvReader {
 public:
  explicit CsvReader(std::string_view text) : text_(text) {}
  /// Next record; false at the end of the text.
  bool next(std::vector<std::string>& fields) {
    fields.clear();
    if (pos_ >= text_.size()) return false;
    std::string field;
    bool quoted = false;
    while (pos_ < text_.size()) {
      const char c = text_[pos_++];
      if (quoted) {
        if (c == '"') {
          if (pos_ < text_.size() && text_[pos_] == '"') {
            field += '"';
            ++pos_;
          } else {
            quoted = false;
          }
        } else {
          field += c;
        }
      } else if (c == '"') {
        quoted = true;
      } else if (c == ',') {
        fields.push_back(std::move(field));
        field.clear();
      } else if (c == '\n' || c == '\r') {
        if (c == '\r' && pos_ < text_.size() && text_[pos_] == '\n') ++pos_;
        break;
      } else {
        field += c;
      }
    }
    fields.push_back(std::move(field));
    ++line_;
    return true;
  }
  long line() const { return line_; }

 private:
  std::string_view text_;
  std::size_t pos_ = 0;
  long line_ = 0;
};

double parse_number(const std::string& s) {
  if (s.empty()) return std::nan("");
  char* end = nullptr;
  const double v = std::strtod(s.c_str(), &end);
  return end && *end == '\0' ? v : std::nan("");
}

}  // namespace

std::vector<CaseEnvelopeRow> read_case_envelope(const Spec& spec, std::string_view csv) {
  std::vector<CaseEnvelopeRow> rows;
  CsvReader reader(csv);
  std::vector<std::string> header, fields;
  if (!reader.next(header)) return rows;
  const auto column = [&](const std::string& name) {
    for (std::size_t i = 0; i < header.size(); ++i)
      if (header[i] == name) return i;
    throw RunError(fmt::format("cases.csv: no column \"{}\"", name));
  };
  const std::size_t id = column("case"), scenario = column("scenario"), status = column("status");
  std::vector<std::size_t> theta0, peak_angle, peak_load;
  for (const auto& l : spec.links) {
    theta0.push_back(column(fmt::format("theta0({}) [rad]", l.name)));
    peak_angle.push_back(column(fmt::format("peak_angle({}) [rad]", l.name)));
    peak_load.push_back(column(fmt::format("peak_pivot_load({}) [N]", l.name)));
  }
  while (reader.next(fields)) {
    if (fields.size() == 1 && fields[0].empty()) continue;  // blank line
    if (fields.size() != header.size())
      throw RunError(fmt::format("cases.csv line {}: {} fields, the header has {}", reader.line(), fields.size(),
                                 header.size()));
    CaseEnvelopeRow r;
    r.id = fields[id];
    r.scenario = fields[scenario];
    r.status = fields[status];
    r.ok = r.status == "ok";
    for (std::size_t k = 0; k < spec.links.size(); ++k) {
      const double t = parse_number(fields[theta0[k]]);
      if (std::isfinite(t)) r.amplitude = std::max(r.amplitude, std::fabs(t));
      r.peak_angle.push_back(r.ok ? parse_number(fields[peak_angle[k]]) : std::nan(""));
      r.peak_load.push_back(r.ok ? parse_number(fields[peak_load[k]]) : std::nan(""));
    }
    rows.push_back(std::move(r));
  }
  return rows;
}

}  // namespace swaybound
