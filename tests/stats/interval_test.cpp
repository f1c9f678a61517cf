// Percentile intervals against numpy.percentile's default (linear, Hyndman & Fan type 7).

#include "stipple/stats/interval.hpp"

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

TEST(PercentileInterval, MatchesNumpyLinearPercentiles) {
  // numpy.percentile([1..10], [10, 90]) = [1.9, 9.1]; [2.5, 97.5] = [1.225, 9.775]
  // (h = (n - 1) q + 1 interpolated; from the method's definition, checked by hand).
  const std::vector<double> sample{10, 9, 8, 7, 6, 5, 4, 3, 2, 1};  // order does not matter
  const Interval eighty = percentile_interval(sample, 0.8);
  EXPECT_NEAR(eighty.lower, 1.9, 1e-12);
  EXPECT_NEAR(eighty.upper, 9.1, 1e-12);
  const Interval ninety_five = percentile_interval(sample, 0.95);
  EXPECT_NEAR(ninety_five.lower, 1.225, 1e-12);
  EXPECT_NEAR(ninety_five.upper, 9.775, 1e-12);
  const Interval one = percentile_interval({4.0}, 0.95);
  EXPECT_EQ(one.lower, 4.0);
  EXPECT_EQ(one.upper, 4.0);
}

TEST(PercentileInterval, RefusesEmptySamplesAndLevelsOutsideZeroOne) {
  EXPECT_THROW(static_cast<void>(percentile_interval({}, 0.95)), AnalysisError);
  try {
    static_cast<void>(percentile_interval({1, 2}, 1.5));
    FAIL() << "a level of 1.5 was accepted";
  } catch (const InputError& e) {
    EXPECT_STREQ(e.what(), "confidence must lie strictly between 0 and 1 (got 1.5)");
  }
}

}  // namespace
}  // namespace stipple
