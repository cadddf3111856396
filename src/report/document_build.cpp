// Builds the review packet as a document (report_model.hpp): the helpers every section uses and
// build_document(), which puts the sections in their order (see document.hpp).
#include "document_build.hpp"

#include <cmath>

#include <fmt/format.h>

#include "swaybound/core/hash.hpp"
#include "swaybound/core/version.hpp"
#include "swaybound/report/format.hpp"

namespace swaybound::report_doc::build {

namespace {

constexpr double kTextWidth = 487;  // PDF text width of A4 with the packet's margins [pt]

}  // namespace

std::string num(double v, int digits) {
  if (std::isnan(v)) return "-";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  return fmt::format("{:.{}g}", v, digits);
}
/// A small difference in engineering units with 3 significant digits ("-3.47e-07 deg").
std::string precise(double v, const std::string& unit) {
  if (!std::isfinite(v)) return engineering(v, unit);
  const std::string u = engineering_unit(unit);
  return fmt::format("{:.3g}", to_engineering(v, unit)) + (u.empty() ? "" : " " + u);
}
/// A quantity that can run to thousands (a mass, an inertia) in plain digits with thousands
/// separators, never in exponent form: 12000 -> "12,000", 1234.5 -> "1,235", 0.25 -> "0.25".
std::string amount(double v) {
  if (!std::isfinite(v) || std::fabs(v) < 1000) return num(v);
  std::string digits = fmt::format("{:.0f}", std::fabs(v));
  for (int at = static_cast<int>(digits.size()) - 3; at > 0; at -= 3) digits.insert(static_cast<std::size_t>(at), 1, ',');
  return (v < 0 ? "-" : "") + digits;
}
std::string deg(double rad, int digits) { return std::isfinite(rad) ? num(rad * kDeg, digits) : num(rad); }

Block paragraph(Rich text) {
  Block b;
  b.kind = Block::Kind::paragraph;
  b.text = std::move(text);
  return b;
}
Block paragraph(std::string text) { return paragraph(plain(std::move(text))); }

Block subheading(std::string text) {
  Block b;
  b.kind = Block::Kind::subheading;
  b.text = plain(std::move(text));
  return b;
}

Block bullets(std::vector<Rich> items) {
  Block b;
  b.kind = Block::Kind::bullets;
  b.items = std::move(items);
  return b;
}

Block bullets(const std::vector<std::string>& items) {
  std::vector<Rich> r;
  for (const auto& s : items) r.push_back(plain(s));
  return bullets(std::move(r));
}

Block table_block(Table t) {
  Block b;
  b.kind = Block::Kind::table;
  b.table = std::move(t);
  return b;
}

Block figures(std::vector<Figure> f) {
  Block b;
  b.kind = Block::Kind::figures;
  b.figures = std::move(f);
  return b;
}

Block callout(Rich text, Tone tone) {
  Block b;
  b.kind = Block::Kind::callout;
  b.text = std::move(text);
  b.tone = tone;
  return b;
}

Figure figure(plot::Plot p, std::string caption, double height, double share) {
  Figure f;
  p.width = kTextWidth * share - (share < 1 ? 6 : 0);
  p.height = height;
  f.plot = std::move(p);
  f.caption = std::move(caption);
  f.height = height;
  f.width_share = share;
  return f;
}

Column col(std::string title, double weight, Align align, std::string key, bool note) {
  return Column{std::move(title), weight, align, std::move(key), note};
}

std::string link_name(const Spec& spec, int link) {
  return link >= 0 && static_cast<std::size_t>(link) < spec.links.size() ? spec.links[static_cast<std::size_t>(link)].name
                                                                          : std::string();
}

}  // namespace swaybound::report_doc::build

namespace swaybound::report_doc {

using namespace build;

Rich plain(std::string text) { return {Span{std::move(text)}}; }

Document build_document(const Spec& spec, const CheckReport& r, const ReportMeta& meta, const std::vector<CaseEnvelopeRow>* cases) {
  Document d;
  d.title = spec.report.title.empty() ? spec.name : spec.report.title;
  d.mechanism = spec.name;
  d.project = spec.report.project;
  d.revision = spec.report.revision;
  d.prepared_by = spec.report.prepared_by;
  d.date = meta.date;
  d.tool_version = meta.tool_version.empty() ? std::string(tool_version()) : meta.tool_version;
  d.commit = meta.commit.empty() ? std::string(git_commit()) : meta.commit;
  d.sha256 = spec_sha256(spec);
  d.sha_prefix = d.sha256.substr(0, 12);
  d.pass = r.pass;
  d.paper = spec.report.paper;
  d.sections.push_back(title_section(d, spec, r));
  if (meta.sizing && meta.sizing_input && meta.sizing_input->sizing)
    d.sections.push_back(sizing_section(*meta.sizing_input, *meta.sizing));
  d.sections.push_back(scope_section(spec, r, d));
  d.sections.push_back(design_section(spec, r));
  d.sections.push_back(verdict_section(spec, r, cases));
  if (r.searched) d.sections.push_back(search_section(spec, r));
  if (!r.shaping.empty()) d.sections.push_back(drive_section(spec, r));
  d.sections.push_back(modal_section(spec, r));
  d.sections.push_back(governing_section(spec, r));
  d.sections.push_back(chaos_section(spec, r));
  d.sections.push_back(envelope_section(spec, r, cases));
  d.sections.push_back(trust_section(spec, r));
  d.sections.push_back(caution_section(spec));
  return d;
}

}  // namespace swaybound::report_doc
