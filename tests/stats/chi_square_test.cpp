#include "stipple/stats/chi_square.hpp"

#include <algorithm>
#include <cmath>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

TEST(PearsonGoodnessOfFit, EqualCellsWorkedExample) {
  // Source: ../shared/REFERENCES.md section 5 (SciPy chisquare): cells [3,1,4,1,5,9,2,6,5].
  const std::vector<std::uint64_t> observed{3, 1, 4, 1, 5, 9, 2, 6, 5};
  const std::vector<double> expected(9, 4.0);
  const ChiSquareTest t = pearson_goodness_of_fit(observed, expected);
  EXPECT_NEAR(t.statistic, 13.5, 1e-12);
  EXPECT_EQ(t.df, 8.0);
  EXPECT_NEAR(t.p_upper, 0.0957651, 1e-7);
  EXPECT_NEAR(t.p_lower, 0.9042349, 1e-7);
  EXPECT_NEAR(t.p_two_sided, 0.1915303, 1e-7);
  EXPECT_DOUBLE_EQ(t.min_expected, 4.0);
}

TEST(PearsonGoodnessOfFit, UnequalAreasWorkedExample) {
  // Source: REFERENCES.md section 5: areas [1, 0.5, 1.5], counts [12, 7, 11].
  const ChiSquareTest t = pearson_goodness_of_fit({12, 7, 11}, {10.0, 5.0, 15.0});
  EXPECT_NEAR(t.statistic, 2.266667, 1e-6);
  EXPECT_EQ(t.df, 2.0);
  EXPECT_NEAR(t.p_upper, 0.3219583, 1e-7);
  EXPECT_NEAR(t.p_upper, std::exp(-t.statistic / 2.0), 1e-12);  // chi-square, df 2
}

TEST(PearsonGoodnessOfFit, TailsAgreeWithChiSquareDistribution) {
  // For even df = 2m the chi-square upper tail has the closed form
  // exp(-x/2) * sum_{k<m} (x/2)^k / k! (the Poisson-chi-square relation; Abramowitz & Stegun
  // 1964, 26.4.21, from memory), independent of the Boost.Math code the implementation uses.
  for (const double x2 : {0.5, 3.0, 9.49, 20.0, 45.0}) {
    for (const int m : {1, 2, 3, 5}) {
      double term = 1.0;
      double sum = 0.0;
      for (int k = 0; k < m; ++k) {
        sum += term;
        term *= (x2 / 2.0) / (k + 1);
      }
      const double expected = std::exp(-x2 / 2.0) * sum;
      EXPECT_NEAR(chi_square_upper_tail(x2, 2.0 * m), expected, 1e-12 * std::max(1.0, expected))
          << "x2 " << x2 << ", df " << 2 * m;
      EXPECT_NEAR(chi_square_upper_tail(x2, 2.0 * m) / expected, 1.0, 1e-9) << "relative, x2 " << x2;
    }
  }
  // 9.487729 is the 95% point of chi-square with 4 df (common practice: every table).
  EXPECT_NEAR(chi_square_upper_tail(9.487729, 4.0), 0.05, 1e-7);
}

TEST(PearsonGoodnessOfFit, RefusesSingleCell) {
  EXPECT_THROW((void)pearson_goodness_of_fit({5}, {5.0}), AnalysisError);
}

TEST(PearsonContingency, WorkedExample) {
  // Source: REFERENCES.md section 5 (SciPy chi2_contingency): [[12,7,11],[8,13,9]].
  const ChiSquareTest t = pearson_contingency({{12, 7, 11}, {8, 13, 9}});
  EXPECT_NEAR(t.statistic, 2.8, 1e-12);
  EXPECT_EQ(t.df, 2.0);
  EXPECT_NEAR(t.p_upper, 0.2465970, 1e-7);
}

TEST(PearsonContingency, DropsEmptyRowsAndColumns) {
  const ChiSquareTest t = pearson_contingency({{12, 0, 7, 11}, {0, 0, 0, 0}, {8, 0, 13, 9}});
  EXPECT_NEAR(t.statistic, 2.8, 1e-12);
  EXPECT_EQ(t.df, 2.0);
}

TEST(MonteCarloPValue, AgreesWithChiSquareForLargeCounts) {
  // Common practice: with large expected counts the Monte Carlo p approaches the
  // chi-square p. 4999 draws: Monte Carlo SE about 0.007 at p = 0.32.
  Engine engine(1);
  const std::vector<std::uint64_t> counts{120, 70, 110};
  const std::vector<double> expected{100.0, 50.0, 150.0};
  const ChiSquareTest t = pearson_goodness_of_fit(counts, expected);
  const double mc = multinomial_monte_carlo(counts, expected, 4999, engine).upper;
  EXPECT_NEAR(mc, t.p_upper, 0.03);
}

TEST(MonteCarloPValue, ContingencyAgreesWithChiSquare) {
  Engine engine(2);
  const std::vector<std::vector<std::uint64_t>> table{{60, 35, 55}, {40, 65, 45}};
  const ChiSquareTest t = pearson_contingency(table);
  EXPECT_NEAR(contingency_monte_carlo_p(table, 4999, engine), t.p_upper, 0.02);
}

TEST(MonteCarloPValue, NeverZero) {
  // Source: Hope (1968): p = (1 + #extreme) / (N + 1) >= 1 / (N + 1).
  Engine engine(3);
  const double p = multinomial_monte_carlo({100, 0, 0}, {1.0, 1.0, 1.0}, 99, engine).upper;
  EXPECT_DOUBLE_EQ(p, 1.0 / 100.0);
}

}  // namespace
}  // namespace stipple
