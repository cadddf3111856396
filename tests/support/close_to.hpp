#pragma once
// IsCloseTo(expected, abs, rel): a Catch2 v2 matcher for floating-point closeness with an absolute
// and a relative part, |actual - expected| <= abs + rel |expected| (as numpy.isclose). Unlike
// Catch's Approx it has no hidden default tolerance: a check states both parts, and the failure
// message prints the values at full precision with the difference and the bound.
//   CHECK_THAT(period, IsCloseTo(2 * pi / w, 0, 1e-10));
#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include <fmt/format.h>

namespace swaybound::testing {

class CloseTo : public Catch::MatcherBase<double> {
 public:
  CloseTo(double expected, double abs, double rel) : expected_(expected), abs_(abs), rel_(rel) {}

  /// The allowed difference abs + rel |expected|.
  double bound() const { return abs_ + rel_ * std::fabs(expected_); }

  bool match(const double& actual) const override {
    if (std::isnan(actual) || std::isnan(expected_)) return false;
    if (std::isinf(expected_)) return actual == expected_;
    return std::fabs(actual - expected_) <= bound();
  }

  std::string describe() const override {
    return fmt::format("is close to {:.17g} (abs {:g} + rel {:g}: within {:.3g})", expected_, abs_, rel_, bound());
  }

 private:
  double expected_, abs_, rel_;
};

/// |actual - expected| <= abs + rel |expected|; abs and rel must not both be zero unless an exact
/// match is meant.
inline CloseTo IsCloseTo(double expected, double abs, double rel) { return CloseTo(expected, abs, rel); }

}  // namespace swaybound::testing
