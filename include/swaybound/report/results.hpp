#pragma once
// Machine-readable results of a check: results.json (versioned schema, SI units, no host- or
// time-dependent fields, so the same spec gives the same bytes on any thread count) and the
// per-case table cases.csv.
#include <string>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

inline constexpr const char* kResultsSchema = "swaybound.results/1";

/// The note results.json and the report carry when `count` runs stopped on the wall-clock budget
/// (solver.max_seconds): the results are not reproducible.
std::string time_budget_note(const Spec& spec, long count);

/// results.json text.
std::string results_json(const Spec& spec, const CheckReport& report);

/// cases.csv: header line and one row per case (every column names its SI unit).
std::string cases_csv_header(const Spec& spec);
std::string cases_csv_row(const Spec& spec, const CaseMetrics& metrics);

}  // namespace swaybound
