// Diagnostics of a fitted habitat model against hand computations: the smoothed raw
// residual far from the edges, and partial effects with their Wald bands.

#include "stipple/habitat/diagnostics.hpp"

#include <cmath>

#include <gtest/gtest.h>
#include <boost/math/constants/constants.hpp>

#include "stipple/error.hpp"

namespace stipple {
namespace {

constexpr double pi = boost::math::double_constants::pi;

// One plot 0..100 x 0..50, value 1 on x in [50, 80), 12 sightings there and 9 elsewhere.
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

TEST(HabitatDiagnostics, PartialEffectOfABinaryCovariateIsEachRegionsRate) {
  HabitatOptions options;
  const HabitatResult r = fit_habitat(survey(), covariates(), options);
  const auto effects = partial_effects(survey(), covariates(), options, r);
  ASSERT_EQ(effects.size(), 1u);
  const PartialEffect& e = effects[0];
  ASSERT_EQ(e.x.size(), 50u);
  EXPECT_EQ(e.x.front(), 0.0);
  EXPECT_EQ(e.x.back(), 1.0);
  // At 0 and 1 the fit is the region's rate per ha, with var(log rate) = 1 / n_r.
  EXPECT_NEAR(e.fit.front(), 9.0 / 3500.0 * 1e4, 1e-8);
  EXPECT_NEAR(e.fit.back(), 12.0 / 1500.0 * 1e4, 1e-8);
  EXPECT_NEAR(std::log(e.high.back() / e.fit.back()), 1.959963984540054 * std::sqrt(1.0 / 12.0), 1e-7);
  EXPECT_NEAR(std::log(e.fit.front() / e.low.front()), 1.959963984540054 * std::sqrt(1.0 / 9.0), 1e-7);
}

TEST(HabitatDiagnostics, SmoothedResidualEqualsItsHandComputation) {
  // Baddeley et al. (2005): s(u) = [sum_i k(u - x_i) - integral k(u - v) lambda(v) dv] / e(u).
  // With sigma = 3 m the kernel's reach (4 sigma) around u = (65.25, 25.25) lies inside the
  // plot and inside region 1, where the fitted intensity is the constant 12 / 1500 per m2,
  // so s(u) = sum_i k(u - x_i) / e(u) - 12 / 1500 with e(u) = 1 up to the truncated tails
  // (about 1e-4) and the midpoint rule on 0.5 m cells.
  HabitatOptions options;
  const HabitatResult r = fit_habitat(survey(), covariates(), options);
  const auto fields = smoothed_residuals(survey(), covariates(), options, r, 0.5, 3.0);
  ASSERT_EQ(fields.size(), 1u);
  const ResidualField& f = fields[0];
  EXPECT_EQ(f.bandwidth_m, 3.0);
  const double h = 3.0;
  const Point u{65.25, 25.25};
  double observed = 0.0;
  for (int i = 0; i < 12; ++i) {
    const double dx = 50.5 + 29.0 * (i + 0.5) / 12.0 - u.x;
    const double dy = 25.0 - u.y;
    if (std::abs(dx) < 12.0) observed += std::exp(-(dx * dx + dy * dy) / (2.0 * h * h)) / (2.0 * pi * h * h);
  }
  const double expected_per_ha = (observed - 12.0 / 1500.0) * 1e4;
  EXPECT_NEAR(f.field.value_at(u), expected_per_ha, 1e-3 * std::abs(expected_per_ha));
  EXPECT_TRUE(std::isnan(f.field.value_at({-1.0, 25.0})));  // outside the raster of the map
  EXPECT_THROW((void)smoothed_residuals(survey(), covariates(), options, r, 0.0), InputError);
}

}  // namespace
}  // namespace stipple
