#pragma once
// Comparing two check results (a design revision against the last one): per check the old and new
// worst value, the margin change and the verdict change, plus the spec keys that changed.
#include <string>
#include <vector>

namespace swaybound {

struct DiffRow {
  std::string check;                     ///< "peak_angle (link 'hoist rope')"
  std::string unit;                      ///< SI unit of worst and margin
  bool in_old = false, in_new = false;
  double old_worst = 0, new_worst = 0;   ///< NaN when not computed
  double old_margin = 0, new_margin = 0;
  double old_ratio = 0, new_ratio = 0;   ///< margin / |limit|
  std::string old_verdict, new_verdict;
  bool newly_failing = false;            ///< passed (or absent) before, fails now
  bool shrunk = false;                   ///< margin ratio fell by more than the tolerance
  bool removed = false;                  ///< in OLD only: can no longer be verified
};

struct SpecChange {
  std::string key, old_value, new_value;  ///< "" where absent
};

struct DiffResult {
  std::vector<DiffRow> rows;
  bool specs_compared = false;
  std::string specs_note;  ///< why the specs were not compared, when they were not
  std::vector<SpecChange> spec_changes;
  double tolerance = 0;
  std::string old_verdict, new_verdict;  ///< the overall verdicts of results.json ("pass" or "fail")
  bool regression() const;
  /// NEW fails a check (or a case failed to run), regression or not.
  bool new_fails() const { return new_verdict != "pass"; }
};

/// OLD and NEW are results.json files or packet folders (check packets or sizing folders). Each is
/// verified first (verify_packet) and refused when it fails. The specs the results were computed
/// from (spec.yaml, or a sizing folder's sized_spec.yaml) are compared when both exist. Throws
/// RunError when a side fails verification (listing the findings), is unreadable, not a swaybound
/// results file, or of a schema version this build does not read.
DiffResult diff_results(const std::string& old_path, const std::string& new_path, double tolerance);

/// Plain-text table, or Markdown for a pull-request comment.
std::string diff_report(const DiffResult& diff, bool markdown);

}  // namespace swaybound
