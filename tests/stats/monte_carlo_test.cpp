// The one Monte Carlo p-value rule: p = (1 + k) / (N + 1) (Davison & Hinkley 1997,
// eq. 4.11; Hope 1968), ties counted.

#include "stipple/stats/monte_carlo.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>

namespace stipple {
namespace {

TEST(MonteCarloPValue, IsOnePlusExtremeOverSimulationsPlusOne) {
  EXPECT_DOUBLE_EQ(monte_carlo_p_value(0, 999), 0.001);
  EXPECT_DOUBLE_EQ(monte_carlo_p_value(49, 999), 0.05);
  EXPECT_DOUBLE_EQ(monte_carlo_p_value(999, 999), 1.0);
  EXPECT_DOUBLE_EQ(monte_carlo_p_value(0, 0), 1.0);  // no simulation: no evidence
}

TEST(MonteCarloPValue, TiesWithinRoundingCountAsExtreme) {
  EXPECT_TRUE(at_least_as_large(3.0, 3.0));
  EXPECT_TRUE(at_least_as_large(3.0 - 1e-12, 3.0));        // rounding of the same value
  EXPECT_FALSE(at_least_as_large(3.0 - 1e-6, 3.0));        // a real difference
  EXPECT_TRUE(at_least_as_large(1e6 * (1 - 1e-12), 1e6));  // relative to the size
  EXPECT_FALSE(at_least_as_large(2.9, 3.0));
}

TEST(MonteCarloTails, CountsBothTailsAndSkipsUndefinedDraws) {
  // Observed 5 among 1..9: four draws above (6..9) plus the tie, four below plus the tie.
  const std::vector<double> sims{1, 2, 3, 4, 5, 6, 7, 8, 9, std::numeric_limits<double>::quiet_NaN()};
  const MonteCarloTails t = monte_carlo_tails(5.0, sims);
  EXPECT_DOUBLE_EQ(t.upper, 6.0 / 10.0);  // (1 + 5) / (9 + 1): the NaN draw is left out
  EXPECT_DOUBLE_EQ(t.lower, 6.0 / 10.0);
  EXPECT_DOUBLE_EQ(t.two_sided, 1.0);
  const MonteCarloTails high = monte_carlo_tails(10.0, sims);
  EXPECT_DOUBLE_EQ(high.upper, 0.1);
  EXPECT_DOUBLE_EQ(high.lower, 1.0);
  EXPECT_DOUBLE_EQ(high.two_sided, 0.2);
  const MonteCarloTails none = monte_carlo_tails(1.0, {});
  EXPECT_DOUBLE_EQ(none.upper, 1.0);
  EXPECT_DOUBLE_EQ(none.two_sided, 1.0);
}

}  // namespace
}  // namespace stipple
