#pragma once
// The review packet: report.pdf (cairo + Pango) and report.html (one self-contained file with
// inline SVG plots and CSS, no network), with the same content in the same order:
//    1 title block, signature fields        6 governing cases (time histories, phase portrait)
//    2 scope and assumptions                7 chaotic onset (FTLE map, ladders, onset scan)
//    3 design summary                       8 envelope over the case set (from cases.csv)
//    4 verdict table, failed runs           9 numerical trust (accuracy and energy audits)
//    5 modal table and mode-shape sketches 10 cautions
// Numbers are shown in engineering units by the rules of report/format.hpp; the verdict table
// shows exactly the digits those rules give for the values in results.json.
//
// Nothing here reads the clock, the environment or the host: the same inputs give the same
// HTML text, so the packet can be compared between runs.
#include <string>
#include <string_view>
#include <vector>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

struct SizingResult;  // sizing/sizing.hpp

/// What the report shows that the check itself does not know.
struct ReportMeta {
  std::string date;          ///< date of the report as it should be printed, e.g. "2024-05-01"
  std::string tool_version;  ///< empty: the build's tool_version()
  std::string commit;        ///< empty: the build's git_commit()
  /// A sized design's packet (`swaybound size`): the sizing run and the spec as given. The report
  /// then has a section "Sizing" after the title block: the search's summary (objective, budget,
  /// required margin, steps), the design variables before and after, and every check before and
  /// after. Both or neither.
  const SizingResult* sizing = nullptr;
  const Spec* sizing_input = nullptr;
};

/// One row of cases.csv, reduced to what the envelope plots need.
struct CaseEnvelopeRow {
  std::string id, scenario, status;
  bool ok = false;
  double amplitude = 0;             ///< max over links of |theta0| [rad]
  std::vector<double> peak_angle;   ///< per link [rad] (NaN when the run failed)
  std::vector<double> peak_load;    ///< per link, at its upper pivot [N] (NaN when the run failed)
};

/// Reads the text of cases.csv (the format of cases_csv_header / cases_csv_row in
/// report/results.hpp, for this spec's links). Columns are found by their header names, so
/// extra columns do not matter. Throws RunError when a needed column is missing or a row has the
/// wrong number of fields.
std::vector<CaseEnvelopeRow> read_case_envelope(const Spec& spec, std::string_view cases_csv);

/// Writes report.pdf to `path` (paper size from spec.report.paper). `cases_csv` is the text of
/// cases.csv for the envelope section; empty: the section says it was not supplied.
/// Throws RunError when the file cannot be written.
void write_report_pdf(const Spec& spec, const CheckReport& report, const std::string& path,
                      const ReportMeta& meta = {}, std::string_view cases_csv = {});

/// The glyph outlines of every inline SVG of an HTML page (cairo writes each text glyph as a
/// <symbol> per SVG) moved into one hidden SVG at the top of the body, equal outlines kept once,
/// and every reference pointed at the shared copy. The page renders the same, smaller.
std::string share_svg_glyphs(const std::string& html);

/// report.html text, the same content as the PDF.
std::string report_html(const Spec& spec, const CheckReport& report, const ReportMeta& meta = {},
                        std::string_view cases_csv = {});

}  // namespace swaybound
