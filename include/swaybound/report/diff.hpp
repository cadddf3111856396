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
  bool regression() const;
};

/// OLD and NEW are results.json files or packet folders. The spec copies (spec.yaml beside
/// results.json) are compared when both exist. Throws RunError when a results file is unreadable
/// or not a swaybound results file.
DiffResult diff_results(const std::string& old_path, const std::string& new_path, double tolerance);

/// Plain-text table, or Markdown for a pull-request comment.
std::string diff_report(const DiffResult& diff, bool markdown);

}  // namespace swaybound
