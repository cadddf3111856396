#pragma once
// Component-wise comparison of a vector with a reference vector, for the outside-derivation tests.
#include <algorithm>
#include <cmath>
#include <vector>

#include <catch2/catch.hpp>

namespace swaybound::testing {

inline double max_abs(const std::vector<double>& v) {
  double s = 0;
  for (double x : v) s = std::max(s, std::fabs(x));
  return s;
}

/// The largest |a - b| over two series of samples, relative to the largest |b| (REQUIREs equal sizes).
inline double relative_gap(const std::vector<double>& a, const std::vector<double>& b) {
  REQUIRE(a.size() == b.size());
  double gap = 0;
  for (std::size_t k = 0; k < a.size(); ++k) gap = std::max(gap, std::fabs(a[k] - b[k]));
  return gap / std::max(max_abs(b), 1e-300);
}

/// Component-wise comparison: |a - b| <= rel * max(|b|, scale), scale = the largest magnitude of
/// the reference quantity at this state. The floor keeps a component that is small only because of
/// cancellation (e.g. a reaction component near zero while the others are ~100 N) from demanding
/// more than relative accuracy of the quantity as a whole.
inline void check_close(const std::vector<double>& got, const std::vector<double>& want, double rel, const char* what) {
  REQUIRE(got.size() == want.size());
  const double scale = max_abs(want);
  for (std::size_t i = 0; i < got.size(); ++i) {
    INFO(what << "[" << i << "]: engine " << got[i] << ", reference " << want[i] << ", scale " << scale);
    CHECK(std::fabs(got[i] - want[i]) <= rel * std::max(std::fabs(want[i]), scale));
  }
}

}  // namespace swaybound::testing
