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

TEST(MonteCarloPValue, EstimatesTheExactMultinomialPValue) {
  // Counts 108, 55, 137 against 100, 50, 150: X2 = 0.64 + 0.5 + 1.1267 = 2.2667, df 2,
  // chi-square p = exp(-X2 / 2) = 0.3220 (closed form for df 2). The Monte Carlo p estimates
  // the exact multinomial P(X2 >= 2.2667) = 0.32735 (every outcome of n = 300 enumerated in
  // an independent Python script); 4999 draws: within 4 standard errors (0.027).
  Engine engine(1);
  const std::vector<std::uint64_t> counts{108, 55, 137};
  const std::vector<double> expected{100.0, 50.0, 150.0};
  const ChiSquareTest t = pearson_goodness_of_fit(counts, expected);
  EXPECT_NEAR(t.p_upper, std::exp(-2.266667 / 2.0), 1e-6);
  const double mc = multinomial_monte_carlo(counts, expected, 4999, engine).upper;
  EXPECT_NEAR(mc, 0.32735, 4.0 * std::sqrt(0.32735 * (1 - 0.32735) / 5000.0));
}

TEST(MonteCarloPValue, ContingencyEstimatesTheExactConditionalPValue) {
  // Rows of 150 over columns of 100: every expected count is 50; deviations 2, -5, 3 give
  // X2 = 2 (4 + 25 + 9) / 50 = 1.52, df 2, chi-square p = exp(-0.76) = 0.4677 (closed form).
  // The permutation p estimates the exact conditional P(X2 >= 1.52) given both margins,
  // 0.51161 (every table with these margins enumerated with hypergeometric weights in an
  // independent Python script; the lattice of X2 values puts much mass on ties); 4999
  // permutations: within 4 standard errors (0.028).
  Engine engine(2);
  const std::vector<std::vector<std::uint64_t>> table{{52, 45, 53}, {48, 55, 47}};
  const ChiSquareTest t = pearson_contingency(table);
  EXPECT_NEAR(t.statistic, 1.52, 1e-12);
  EXPECT_NEAR(t.p_upper, std::exp(-0.76), 1e-12);
  EXPECT_NEAR(contingency_monte_carlo_p(table, 4999, engine), 0.51161,
              4.0 * std::sqrt(0.51161 * (1 - 0.51161) / 5000.0));
}

TEST(MonteCarloPValue, NeverZero) {
  // Source: Hope (1968): p = (1 + #extreme) / (N + 1) >= 1 / (N + 1).
  Engine engine(3);
  const double p = multinomial_monte_carlo({100, 0, 0}, {1.0, 1.0, 1.0}, 99, engine).upper;
  EXPECT_DOUBLE_EQ(p, 1.0 / 100.0);
}

}  // namespace
}  // namespace stipple
