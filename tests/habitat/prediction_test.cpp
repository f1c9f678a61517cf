// Predictions of the habitat model against closed forms of the two-region case: each
// region's rate n_r / A_r, var(log rate) = 1 / n_r, and independent regions.

#include "stipple/habitat/prediction.hpp"

#include <cmath>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

// One plot 0..100 x 0..50, value 1 on x in [50, 80) (1500 m2), 0 elsewhere (3500 m2);
// 12 sightings in region 1, 9 in region 0.
Survey survey() {
  MarkedPattern p;
  const auto add = [&](std::size_t n, double x0, double x1) {
    for (std::size_t i = 0; i < n; ++i) {
      p.points.push_back({x0 + (x1 - x0) * (static_cast<double>(i) + 0.5) / static_cast<double>(n), 25.0});
      p.marks.push_back(0);
      p.feature_ids.push_back(static_cast<std::int64_t>(p.points.size()));
    }
  };
  add(12, 50.5, 79.5);
  add(9, 0.5, 49.5);
  return Survey({"a"}, {Plot{"strip", Window::rectangle(0, 0, 100, 50)}}, {p});
}

std::vector<HabitatCovariate> covariates() {
  HabitatCovariate c;
  c.name = "wet";
  c.source = "wet.tif";
  c.grid.x_min = -10.0;
  c.grid.y_max = 60.0;
  c.grid.cell_width = c.grid.cell_height = 30.0;
  c.grid.columns = 4;
  c.grid.rows = 3;
  c.grid.values = {0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1, 0};
  return {c};
}

TEST(HabitatPrediction, SurfaceIsEachRegionsRateWithItsDeltaMethodError) {
  const HabitatOptions options;  // per ha
  const HabitatResult r = fit_habitat(survey(), covariates(), options);
  const auto surfaces = predict_surfaces(survey(), covariates(), options, r, Bounds{0, 0, 100, 50}, 10.0);
  ASSERT_EQ(surfaces.size(), 1u);
  const HabitatSurface& s = surfaces[0];
  EXPECT_EQ(s.intensity.columns, 10u);
  EXPECT_EQ(s.intensity.rows, 5u);
  const double rate1 = 12.0 / 1500.0 * 1e4;
  const double rate0 = 9.0 / 3500.0 * 1e4;
  // Cell centred at (65, 45): region 1; at (15, 45): region 0.
  EXPECT_NEAR(s.intensity.values[6], rate1, 1e-8 * rate1);
  EXPECT_NEAR(s.standard_error[6], rate1 * std::sqrt(1.0 / 12.0), 1e-7 * rate1);
  EXPECT_NEAR(s.intensity.values[1], rate0, 1e-8 * rate0);
  EXPECT_NEAR(s.standard_error[1], rate0 * std::sqrt(1.0 / 9.0), 1e-7 * rate0);
  EXPECT_THROW((void)predict_surfaces(survey(), covariates(), options, r, Bounds{0, 0, 100, 50}, 0.0), InputError);
}

TEST(HabitatPrediction, AbundanceIsTheIntegralOfTheRatesWithTheDeltaMethodVariance) {
  HabitatOptions options;
  const HabitatResult r = fit_habitat(survey(), covariates(), options);
  // A unit 40..75 x 10..40: 25 x 30 = 750 m2 of region 1 and 10 x 30 = 300 m2 of region 0.
  const std::vector<AbundanceUnit> units{{"u", Window::rectangle(40, 10, 75, 40)}};
  const auto a = predict_abundance(survey(), covariates(), options, r, units, {});
  ASSERT_EQ(a.size(), 1u);
  const double n1 = 750.0 * 12.0 / 1500.0;
  const double n0 = 300.0 * 9.0 / 3500.0;
  EXPECT_NEAR(a[0].expected, n1 + n0, 1e-8);
  // The two log rates are independent with variances 1/12 and 1/9 (two-region closed form).
  EXPECT_NEAR(a[0].se, std::sqrt(n1 * n1 / 12.0 + n0 * n0 / 9.0), 1e-7);
  EXPECT_NEAR(a[0].area_m2, 1050.0, 1e-9);
  EXPECT_NEAR(std::log(a[0].ci_high / a[0].expected), 1.959963984540054 * a[0].se / a[0].expected, 1e-9);
  EXPECT_EQ(a[0].extrapolated_share, 0.0);
  // Parametric bootstrap: reproducible for a seed, near the delta interval for 4000 draws.
  AbundanceOptions boot;
  boot.bootstrap = 4000;
  boot.seed = 5;
  const auto b1 = predict_abundance(survey(), covariates(), options, r, units, boot);
  const auto b2 = predict_abundance(survey(), covariates(), options, r, units, boot);
  EXPECT_EQ(b1[0].ci_low, b2[0].ci_low);
  EXPECT_EQ(b1[0].ci_high, b2[0].ci_high);
  EXPECT_NEAR(b1[0].ci_low, a[0].ci_low, 0.15 * a[0].expected);
  EXPECT_NEAR(b1[0].ci_high, a[0].ci_high, 0.15 * a[0].expected);
  boot.seed = 6;
  EXPECT_NE(predict_abundance(survey(), covariates(), options, r, units, boot)[0].ci_low, b1[0].ci_low);
}

TEST(HabitatPrediction, UnitWithoutCovariateValuesIsNamed) {
  const HabitatResult r = fit_habitat(survey(), covariates(), {});
  const std::vector<AbundanceUnit> units{{"far field", Window::rectangle(500, 500, 600, 600)}};
  try {
    (void)predict_abundance(survey(), covariates(), {}, r, units, {});
    FAIL() << "unit outside the raster accepted";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("management unit 'far field'"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace stipple
