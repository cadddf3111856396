#pragma once
// The packet's content as a format-neutral document (internal to src/report): sections of
// paragraphs, bullet lists, tables and figures. build_document() decides WHAT the packet says;
// pdf_report.cpp and html_report.cpp only decide how it looks, so both show the same content.
#include <string>
#include <string_view>
#include <vector>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/plot.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound::report_doc {

/// A run of text with one style.
struct Span {
  std::string text;
  bool bold = false, italic = false, mono = false;
};
using Rich = std::vector<Span>;

Rich plain(std::string text);

enum class Align { left, right, center };
enum class Tone { normal, pass, fail, warn, muted };

struct Column {
  std::string title;
  double weight = 1;          ///< share of the table width (PDF)
  Align align = Align::left;
  std::string key;            ///< class / data name in HTML, e.g. "worst"
  bool pdf_note = false;      ///< PDF: shown on a second line under the row ("title: value")
};

struct Row {
  std::vector<std::string> cells;
  Tone tone = Tone::normal;
  std::vector<Tone> cell_tone{};  ///< optional, per cell
};

struct Table {
  std::string id;  ///< HTML id, e.g. "verdict-table"
  std::vector<Column> columns;
  std::vector<Row> rows;
  std::string caption;
  double font_size = 7.6;  ///< PDF [pt]
};

struct Figure {
  plot::Plot plot;
  std::string caption;
  double height = 230;       ///< PDF [pt]; the width is the text width
  double width_share = 1;    ///< PDF/HTML: fraction of the text width (two at 0.5 share a row)
};

/// A labelled field of the title block; `line` draws a signature/date line when empty.
struct Field {
  std::string label, value;
};

struct Block {
  enum class Kind { paragraph, bullets, table, figures, subheading, fields, signatures, callout };
  Kind kind = Kind::paragraph;
  Rich text;                      ///< paragraph, subheading, callout
  std::vector<Rich> items;        ///< bullets
  Table table;
  std::vector<Figure> figures;    ///< figures: one row of one or more
  std::vector<Field> field_list;  ///< fields
  std::vector<std::string> roles; ///< signatures: "Prepared by", "Reviewed by", "Approved by"
  std::vector<std::string> names; ///< signatures: the name per role, empty when not known
  Tone tone = Tone::normal;       ///< callout
};

struct Section {
  std::string id;      ///< HTML anchor
  std::string number;  ///< "4"
  std::string title;
  std::vector<Block> blocks;
  bool new_page = false;  ///< PDF: start on a fresh page
};

struct Document {
  std::string title;         ///< report title
  std::string mechanism;     ///< spec name
  std::string project, revision, prepared_by, date;
  std::string tool_version, commit;
  std::string sha256, sha_prefix;
  bool pass = false;
  Paper paper = Paper::a4;
  std::vector<Section> sections;
};

Document build_document(const Spec& spec, const CheckReport& report, const ReportMeta& meta,
                        const std::vector<CaseEnvelopeRow>* cases);

}  // namespace swaybound::report_doc
