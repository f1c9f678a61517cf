#include "stipple/habitat/covariate_tests.hpp"

#include <cmath>
#include <random>

#include <gtest/gtest.h>

#include "stipple/error.hpp"
#include "stipple/stats/kolmogorov.hpp"

namespace stipple {
namespace {

// A two-piece window worked by hand: 1 m2 at value 0, 3 m2 at value 1; sightings at
// 0, 0 and 1.
CovariateSample hand_case() {
  return {{1.0, 3.0}, {0.0, 1.0}, {0.0, 0.0, 1.0}};
}

// Berman (1986) Z1 closed form: mu = 3/4, sigma^2 = 3/4 - 9/16 = 3/16, n = 3, S = 1:
// Z1 = (1 - 9/4) / sqrt(9/16) = -5/3. Two-sided p from scipy.stats.norm:
// 2 * norm.sf(5/3) = 0.0955807045456294.
TEST(CovariateTests, BermanZ1MatchesItsClosedForm) {
  const BermanZ1Test t = berman_z1(hand_case());
  EXPECT_DOUBLE_EQ(t.observed_sum, 1.0);
  EXPECT_DOUBLE_EQ(t.expected_sum, 2.25);
  EXPECT_DOUBLE_EQ(t.standard_deviation, 0.75);
  EXPECT_NEAR(t.statistic, -5.0 / 3.0, 1e-14);
  EXPECT_NEAR(t.p_two_sided, 0.0955807045456294, 1e-12);
}

// By hand: F(0) = 1/4, F(1) = 1; F_n(0) = 2/3, F_n(1) = 1, so D = 2/3 - 1/4 = 5/12.
TEST(CovariateTests, KolmogorovSmirnovDistanceIsTheExactSupremum) {
  const CovariateKsTest t = covariate_ks(hand_case());
  EXPECT_NEAR(t.d, 5.0 / 12.0, 1e-15);
  EXPECT_EQ(t.sightings, 3u);
  ASSERT_EQ(t.values.size(), 2u);
  EXPECT_DOUBLE_EQ(t.window_cdf[0], 0.25);
  EXPECT_DOUBLE_EQ(t.sighting_cdf[0], 2.0 / 3.0);
  EXPECT_DOUBLE_EQ(t.p, kolmogorov_smirnov_p(5.0 / 12.0, 3));
  // A sighting value between the window's: the sighting function jumps there alone.
  // F(0.5) = 1/4 and F_n(0.5) = 1 (sightings 0.5, 0.5): D = 3/4.
  const CovariateKsTest between = covariate_ks({{1.0, 3.0}, {0.0, 1.0}, {0.5, 0.5}});
  EXPECT_NEAR(between.d, 0.75, 1e-15);
}

// Calibration under CSR (common practice: a valid test rejects at its nominal rate).
// 400 patterns of 150 sightings placed in 50 pieces of unequal area in proportion to
// area; the 5% Z1 test must reject between 7 and 33 times (binomial(400, 0.05) +- 3 SD),
// and the KS test, conservative with a stepped null, at most 33 times.
TEST(CovariateTests, NominalRejectionUnderCompleteSpatialRandomness) {
  CovariateSample base;
  for (int i = 0; i < 50; ++i) {
    base.piece_area_m2.push_back(50.0 + 10.0 * (i % 7));
    base.piece_value.push_back(std::sin(0.37 * i) + 0.01 * i);
  }
  std::mt19937_64 engine(20261204);
  std::discrete_distribution<int> where(base.piece_area_m2.begin(), base.piece_area_m2.end());
  int z_rejections = 0;
  int ks_rejections = 0;
  for (int rep = 0; rep < 400; ++rep) {
    CovariateSample s = base;
    for (int j = 0; j < 150; ++j) s.point_value.push_back(base.piece_value[static_cast<std::size_t>(where(engine))]);
    if (berman_z1(s).p_two_sided < 0.05) ++z_rejections;
    if (covariate_ks(s).p < 0.05) ++ks_rejections;
  }
  EXPECT_GE(z_rejections, 7);
  EXPECT_LE(z_rejections, 33);
  EXPECT_LE(ks_rejections, 33);
}

// Power: sightings drawn with intensity proportional to exp(2 z) are found.
TEST(CovariateTests, DetectsACovariateEffect) {
  CovariateSample s;
  std::vector<double> weight;
  for (int i = 0; i < 50; ++i) {
    s.piece_area_m2.push_back(100.0);
    s.piece_value.push_back(i / 49.0);
    weight.push_back(100.0 * std::exp(2.0 * i / 49.0));
  }
  std::mt19937_64 engine(7);
  std::discrete_distribution<int> where(weight.begin(), weight.end());
  for (int j = 0; j < 200; ++j) s.point_value.push_back(s.piece_value[static_cast<std::size_t>(where(engine))]);
  const BermanZ1Test z = berman_z1(s);
  EXPECT_GT(z.statistic, 4.0);
  EXPECT_LT(covariate_ks(s).p, 1e-4);
}

TEST(CovariateTests, RefusesWhatCannotBeTested) {
  EXPECT_THROW((void)berman_z1({{1.0, 2.0}, {0.0}, {0.0}}), InputError);
  try {
    (void)berman_z1({{1.0, -2.0}, {0.0, 1.0}, {0.0}});
    FAIL() << "a negative area is refused";
  } catch (const InputError& e) {
    EXPECT_STREQ(e.what(), "covariate test: window piece 1 has area -2");
  }
  EXPECT_THROW((void)covariate_ks({{1.0, 2.0}, {0.0, 1.0}, {}}), AnalysisError);
  EXPECT_THROW((void)covariate_ks({{1.0, 2.0}, {4.0, 4.0}, {4.0}}), AnalysisError);
  EXPECT_THROW((void)berman_z1({{1.0, 2.0}, {0.0, 1.0}, {std::nan("")}}), InputError);
}

}  // namespace
}  // namespace stipple
