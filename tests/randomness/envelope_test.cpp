#include "stipple/randomness/envelope.hpp"

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

std::vector<std::vector<double>> flat_simulations(std::size_t n, std::size_t m) {
  std::vector<std::vector<double>> sims;
  for (std::size_t i = 0; i < n; ++i) {
    std::vector<double> curve(m);
    for (std::size_t k = 0; k < m; ++k)
      curve[k] = static_cast<double>(k) + 0.01 * (static_cast<double>((i * 37 + k * 11) % 19) - 9.0);
    sims.push_back(curve);
  }
  return sims;
}

TEST(EnvelopeTest, ExtremeObservedGetsSmallestPValues) {
  // Source: Hope (1968) and Myllymaki et al. (2017): an observed curve beyond every
  // simulation has p = 1 / (N + 1) for MAD, DCLF and the extreme rank length test.
  const std::size_t m = 10;
  const auto sims = flat_simulations(99, m);
  std::vector<double> r(m), observed(m), theory(m);
  for (std::size_t k = 0; k < m; ++k) {
    r[k] = static_cast<double>(k + 1);
    theory[k] = static_cast<double>(k);
    observed[k] = static_cast<double>(k) + (k >= 4 ? 1.0 : 0.0);  // above from r = 5 on
  }
  const EnvelopeResult e = envelope_test(r, observed, theory, sims, 0.05);
  EXPECT_DOUBLE_EQ(e.mad_p_value, 0.01);
  EXPECT_DOUBLE_EQ(e.dclf_p_value, 0.01);
  EXPECT_DOUBLE_EQ(e.erl_p_value, 0.01);
  ASSERT_EQ(e.departures.size(), 1u);
  EXPECT_EQ(e.departures[0].direction, "above");
  EXPECT_EQ(e.departures[0].from_m, 5.0);
  EXPECT_EQ(e.departures[0].to_m, 10.0);
  EXPECT_GT(e.mean_deviation, 0.0);
  for (std::size_t k = 0; k < m; ++k) {
    EXPECT_LE(e.global_low[k], e.pointwise_low[k] + 1e-12);
    EXPECT_GE(e.global_high[k], e.pointwise_high[k] - 1e-12);
  }
}

TEST(EnvelopeTest, TypicalObservedIsNotRejected) {
  const auto sims = flat_simulations(99, 10);
  std::vector<double> r(10), theory(10);
  for (std::size_t k = 0; k < 10; ++k) r[k] = theory[k] = static_cast<double>(k + 1);
  const EnvelopeResult e = envelope_test(r, sims[5], theory, sims, 0.05);
  EXPECT_GT(e.dclf_p_value, 0.05);
  EXPECT_TRUE(e.departures.empty());
}

TEST(EnvelopeTest, NeedsSimulations) {
  EXPECT_THROW((void)envelope_test({1.0}, {1.0}, {1.0}, {}, 0.05), AnalysisError);
}

}  // namespace
}  // namespace stipple
