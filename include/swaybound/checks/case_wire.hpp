#pragma once
// Per-case metrics as bytes, for the ranks of a distributed run (checks/case_farm.hpp): every field
// of CaseMetrics, doubles bit for bit, so a case computed on another rank gives the checks exactly
// what it would have given here. The bytes are native-endian: every rank of a job runs the same
// build on the same kind of machine.
#include <string>
#include <string_view>
#include <vector>

#include "swaybound/checks/metrics.hpp"

namespace swaybound {

/// Appends the bytes of `cases` to `out`.
void encode_cases(const std::vector<CaseMetrics>& cases, std::string& out);

/// The cases encoded at the start of `bytes` (one encode_cases call). Throws RunError when the
/// bytes are short or malformed.
std::vector<CaseMetrics> decode_cases(std::string_view bytes);

}  // namespace swaybound
