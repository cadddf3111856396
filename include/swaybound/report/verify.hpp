#pragma once
// Verifying a packet folder (what `check` and `size` write): every MANIFEST hash, the spec copies'
// hashes against what results.json and MANIFEST record, and the internal consistency of
// results.json (each check's margin and verdict against its limit and worst value, the overall
// verdict against the checks). It finds edits made after the packet was written; the MANIFEST is
// not signed, so an edit that rewrites the hashes as well and keeps results.json consistent is
// beyond it.
#include <string>
#include <string_view>
#include <vector>

namespace swaybound {

struct VerifyFinding {
  std::string file;     ///< the file inside the folder, e.g. "results.json" or "MANIFEST"
  std::string problem;  ///< what is wrong, e.g. "check 1 (peak_angle): verdict pass, but margin ... < 0"
  std::string method;   ///< how it was found, e.g. "margin recomputed as limit_value - worst"
};

struct VerifyResult {
  std::string path;          ///< the folder (or results.json file) verified
  std::string kind;          ///< "check packet", "sizing folder" or "results file"
  std::string results_file;  ///< the results.json verified (path)
  std::string spec_copy;     ///< the spec the results were computed from, in the folder ("" when absent)
  long files_hashed = 0;     ///< MANIFEST entries whose SHA-256 was computed
  long checks_verified = 0;  ///< checks of results.json whose margin and verdict were recomputed
  bool cases_csv_counted = false;  ///< cases.csv's rows were counted against results.json
  std::vector<VerifyFinding> findings;
  bool intact() const { return findings.empty(); }
};

/// Verifies PATH: a packet folder (with MANIFEST), or a results.json file. A results.json inside a
/// folder with a MANIFEST verifies that whole folder; a results.json alone is checked for internal
/// consistency and against a spec.yaml beside it. Throws RunError (an input error, not a finding)
/// when PATH does not exist or cannot be read, when a folder holds no MANIFEST (not a packet), or
/// when results.json carries a schema version this build does not read.
VerifyResult verify_packet(const std::string& path);

/// The version N of a results schema "swaybound.results/N"; 0 when `schema` is not of that form.
int results_schema_version(std::string_view schema);

/// The verification as text: one line per finding ("file: problem [method]"), then one verdict line.
std::string verify_report(const VerifyResult& result);

}  // namespace swaybound
