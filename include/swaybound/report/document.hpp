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
#include "swaybound/checks/metrics.hpp"
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

/// The envelope row of one case (`metrics` of a case of `spec`), with the values as cases.csv
/// records them (report/results.hpp: 10 significant digits), so the envelope section shows the
/// figures of the packet's cases.csv without reading it back. The packet writer collects one row
/// per case, in case order, as the cases stream in.
CaseEnvelopeRow case_envelope_row(const Spec& spec, const CaseMetrics& metrics);

/// Writes report.pdf to `path` (paper size from spec.report.paper). `cases` are the envelope rows
/// of every case (case_envelope_row), in case order; nullptr: the section says they were not
/// supplied.
/// Throws RunError when the file cannot be written.
void write_report_pdf(const Spec& spec, const CheckReport& report, const std::string& path,
                      const ReportMeta& meta = {}, const std::vector<CaseEnvelopeRow>* cases = nullptr);

/// The glyph outlines of every inline SVG of an HTML page (cairo writes each text glyph as a
/// <symbol> per SVG) moved into one hidden SVG at the top of the body, equal outlines kept once,
/// and every reference pointed at the shared copy. The page renders the same, smaller.
std::string share_svg_glyphs(const std::string& html);

/// report.html text, the same content as the PDF.
std::string report_html(const Spec& spec, const CheckReport& report, const ReportMeta& meta = {},
                        const std::vector<CaseEnvelopeRow>* cases = nullptr);

}  // namespace swaybound
