#include "stipple/habitat/loglinear_fit.hpp"

#include <cmath>
#include <random>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

// The invented 12-cell design of tests/habitat/loglinear_fit_reference.py, as pieces and
// sightings (each sighting takes its cell's values).
LoglinearDesign reference_design() {
  const double area[] = {400, 400, 400, 250, 400, 400, 400, 310, 400, 400, 120, 55};
  const double moisture[] = {0.12, 0.35, 0.51, 0.77, 0.20, 0.44, 0.63, 0.91, 0.05, 0.29, 0.58, 0.83};
  const double elevation[] = {3.10, 3.05, 2.98, 2.91, 3.22, 3.14, 3.02, 2.95, 3.31, 3.20, 3.08, 2.99};
  const int counts[] = {1, 3, 4, 6, 0, 2, 5, 7, 0, 1, 2, 1};
  LoglinearDesign d;
  d.names = {"moisture", "elevation"};
  for (int c = 0; c < 12; ++c) {
    d.piece_area_m2.push_back(area[c]);
    d.piece_values.insert(d.piece_values.end(), {moisture[c], elevation[c]});
    for (int i = 0; i < counts[c]; ++i) {
      d.point_values.insert(d.point_values.end(), {moisture[c], elevation[c]});
      ++d.sightings;
    }
  }
  return d;
}

// Source: statsmodels 0.13.5 (Debian python3-statsmodels) GLM, Poisson family, log link,
// offset log(area), on the cell counts: tests/habitat/loglinear_fit_reference.py prints these.
// The cell-wise likelihood differs from the point-process one by terms free of the
// coefficients, so estimates and standard errors agree; compared within 1e-6 (relative).
TEST(LoglinearFit, EqualsPoissonGlmOnCellCounts) {
  const LoglinearFit fit = fit_loglinear_intensity(reference_design());
  const double coefficients[] = {10.642254327739497, 1.7118426725832658, -5.376793732915367};
  const double errors[] = {11.052088546305459, 1.2663498217394384, 3.462551152903665};
  ASSERT_EQ(fit.coefficients.size(), 3u);
  for (std::size_t j = 0; j < 3; ++j) {
    EXPECT_NEAR(fit.coefficients[j], coefficients[j], 1e-6 * std::abs(coefficients[j])) << j;
    EXPECT_NEAR(fit.standard_errors[j], errors[j], 1e-6 * errors[j]) << j;
  }
  // Same script: sum_i eta(x_i) - sum_c a_c exp(eta_c) at the statsmodels optimum.
  EXPECT_NEAR(fit.log_likelihood, -172.56393459485764, 1e-8);
  EXPECT_NEAR(fit.aic, 2.0 * 172.56393459485764 + 6.0, 1e-7);
}

// Closed form: with no covariates the MLE is the homogeneous intensity n / |W|, and the
// Fisher information |W| exp(b0) = n gives SE(b0) = 1 / sqrt(n); the log-likelihood at
// the optimum is n log(n / |W|) - n.
TEST(LoglinearFit, InterceptOnlyIsHomogeneousIntensity) {
  LoglinearDesign d;
  d.piece_area_m2 = {2500.0, 1500.0, 6000.0};
  d.piece_values = {};
  d.sightings = 37;
  const LoglinearFit fit = fit_loglinear_intensity(d);
  ASSERT_EQ(fit.coefficients.size(), 1u);
  EXPECT_NEAR(fit.coefficients[0], std::log(37.0 / 10000.0), 1e-12);
  EXPECT_NEAR(fit.standard_errors[0], 1.0 / std::sqrt(37.0), 1e-12);
  EXPECT_NEAR(fit.log_likelihood, 37.0 * std::log(37.0 / 10000.0) - 37.0, 1e-10);
}

// Closed form: one binary covariate splits the window into two regions; the MLE gives
// each its own homogeneous intensity, b0 = log(n0 / A0), b1 = log(n1 A0 / (n0 A1)), and
// SE(b1) = sqrt(1/n0 + 1/n1) (the log rate ratio of two Poisson counts).
TEST(LoglinearFit, BinaryCovariateIsTwoRegionRates) {
  LoglinearDesign d;
  d.names = {"wet"};
  d.piece_area_m2 = {3000.0, 1000.0, 2000.0};
  d.piece_values = {0.0, 1.0, 1.0};
  d.point_values.assign(12, 0.0);
  d.point_values.resize(12 + 27, 1.0);
  d.sightings = d.point_values.size();
  const LoglinearFit fit = fit_loglinear_intensity(d);
  EXPECT_NEAR(fit.coefficients[0], std::log(12.0 / 3000.0), 1e-9);
  EXPECT_NEAR(fit.coefficients[1], std::log(27.0 * 3000.0 / (12.0 * 3000.0)), 1e-9);
  EXPECT_NEAR(fit.standard_errors[1], std::sqrt(1.0 / 12.0 + 1.0 / 27.0), 1e-9);
}

TEST(LoglinearFit, RefusesWhatHasNoEstimate) {
  LoglinearDesign d = reference_design();
  d.point_values.pop_back();
  EXPECT_THROW((void)fit_loglinear_intensity(d), InputError);

  d = reference_design();
  d.point_values[2 * 4 + 1] = std::nan("");
  try {
    (void)fit_loglinear_intensity(d);
    FAIL() << "a missing covariate value is refused";
  } catch (const InputError& e) {
    EXPECT_STREQ(e.what(), "habitat model: sighting 4 has a non-finite value of 'elevation'");
  }

  d = reference_design();
  for (std::size_t i = 0; i < d.piece_area_m2.size(); ++i) d.piece_values[2 * i + 1] = 3.0;
  for (std::size_t j = 0; j < d.sightings; ++j) d.point_values[2 * j + 1] = 3.0;
  try {
    (void)fit_loglinear_intensity(d);
    FAIL() << "a constant covariate has no slope";
  } catch (const AnalysisError& e) {
    EXPECT_NE(std::string(e.what()).find("'elevation' is constant"), std::string::npos) << e.what();
  }

  // Sightings only where wet = 1: the slope runs to infinity.
  LoglinearDesign s;
  s.names = {"wet"};
  s.piece_area_m2 = {1000.0, 1000.0};
  s.piece_values = {0.0, 1.0};
  s.sightings = 5;
  s.point_values.assign(5, 1.0);
  EXPECT_THROW((void)fit_loglinear_intensity(s), AnalysisError);

  // The second covariate is a multiple of the first.
  LoglinearDesign twice = reference_design();
  for (std::size_t i = 0; i < twice.piece_area_m2.size(); ++i)
    twice.piece_values[2 * i + 1] = 2.0 * twice.piece_values[2 * i];
  for (std::size_t j = 0; j < twice.sightings; ++j) twice.point_values[2 * j + 1] = 2.0 * twice.point_values[2 * j];
  EXPECT_THROW((void)fit_loglinear_intensity(twice), AnalysisError);

  LoglinearDesign none;
  none.piece_area_m2 = {100.0};
  EXPECT_THROW((void)fit_loglinear_intensity(none), AnalysisError);
}

// Recovery and coverage (common practice for an ML estimator: unbiased to first order,
// Wald intervals at their nominal level when counts are large). 200 patterns on a 20 x 20
// raster of 100 m2 cells, log lambda = log(0.05) + 0.8 x - 0.5 y with x, y in [0, 1)
// (about 2,000 sightings each), counts per cell Poisson. Coverage of the 95% Wald interval
// of each slope must lie in [180, 200] of 200 (binomial(200, 0.95) +- 3.3 SD); the mean
// estimate within 4 standard errors of the mean of the truth; the mean standard error
// within 15% of the estimates' spread (the spread of 200 estimates is known to about 5%).
TEST(LoglinearFit, RecoversSlopesWithNominalCoverage) {
  const double truth[] = {std::log(0.05), 0.8, -0.5};
  std::mt19937_64 engine(20261204);
  LoglinearDesign base;
  base.names = {"x", "y"};
  for (int r = 0; r < 20; ++r) {
    for (int c = 0; c < 20; ++c) {
      base.piece_area_m2.push_back(100.0);
      base.piece_values.insert(base.piece_values.end(), {(c + 0.5) / 20.0, (r + 0.5) / 20.0});
    }
  }
  const int replicates = 200;
  int covered[3] = {0, 0, 0};
  double sum[3] = {0, 0, 0};
  double se_sum[3] = {0, 0, 0};
  double square_sum[3] = {0, 0, 0};
  for (int rep = 0; rep < replicates; ++rep) {
    LoglinearDesign d = base;
    for (std::size_t i = 0; i < d.piece_area_m2.size(); ++i) {
      const double x = d.piece_values[2 * i];
      const double y = d.piece_values[2 * i + 1];
      const double mean = 100.0 * std::exp(truth[0] + truth[1] * x + truth[2] * y);
      const int count = std::poisson_distribution<int>(mean)(engine);
      for (int k = 0; k < count; ++k) d.point_values.insert(d.point_values.end(), {x, y});
      d.sightings += static_cast<std::size_t>(count);
    }
    const LoglinearFit fit = fit_loglinear_intensity(d);
    for (std::size_t j = 0; j < 3; ++j) {
      sum[j] += fit.coefficients[j];
      se_sum[j] += fit.standard_errors[j];
      square_sum[j] += fit.coefficients[j] * fit.coefficients[j];
      if (std::abs(fit.coefficients[j] - truth[j]) <= 1.959963984540054 * fit.standard_errors[j]) ++covered[j];
    }
  }
  for (std::size_t j = 0; j < 3; ++j) {
    EXPECT_GE(covered[j], 180) << j;
    EXPECT_LE(covered[j], 200) << j;
    const double mean_se = se_sum[j] / replicates;
    EXPECT_NEAR(sum[j] / replicates, truth[j], 4.0 * mean_se / std::sqrt(static_cast<double>(replicates))) << j;
    const double mean = sum[j] / replicates;
    const double spread = std::sqrt((square_sum[j] - replicates * mean * mean) / (replicates - 1));
    EXPECT_NEAR(mean_se / spread, 1.0, 0.15) << j;
  }
}

}  // namespace
}  // namespace stipple
