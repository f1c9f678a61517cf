// Edge-corrected kernel intensity surfaces (Diggle 1985) against closed forms.

#include "stipple/intensity/kernel.hpp"

#include <algorithm>
#include <cmath>
#include <optional>

#include <gtest/gtest.h>
#include <boost/geometry.hpp>
#include <boost/math/distributions/normal.hpp>

#include "stipple/error.hpp"
#include "stipple/geometry/survey.hpp"

namespace stipple {
namespace {

constexpr double pi = 3.14159265358979323846;

// Gaussian mass of N(u, h^2 I) inside [x0, x1] x [y0, y1]: the product of two normal
// probabilities, the bivariate isotropic normal being separable (common practice; normal
// CDF from Boost.Math).
double box_mass(const Point& u, double h, double x0, double y0, double x1, double y1) {
  const boost::math::normal law(0.0, h);
  return (boost::math::cdf(law, x1 - u.x) - boost::math::cdf(law, x0 - u.x)) *
         (boost::math::cdf(law, y1 - u.y) - boost::math::cdf(law, y0 - u.y));
}

TEST(GaussianWindowMass, RectangleEqualsTheProductOfNormalProbabilities) {
  const Window w = Window::rectangle(0, 0, 40, 25);
  const double h = 6.0;
  for (const Point u :
       {Point{20, 12.5}, Point{0.3, 0.2}, Point{1, 12}, Point{39.9, 24.5}, Point{10, 0.0}, Point{5, 5}, Point{38, 3}}) {
    EXPECT_NEAR(gaussian_window_mass(w, u, h), box_mass(u, h, 0, 0, 40, 25), 1e-9) << u.x << "," << u.y;
  }
}

TEST(GaussianWindowMass, PolygonWithHoleIsTheSumOfItsRectangles) {
  // L shape [0,60]x[0,40] u [0,30]x[40,70], less the hole [10,20]x[10,20]: masses add over
  // disjoint rectangles (common practice).
  BgMultiPolygon shape;
  boost::geometry::read_wkt("MULTIPOLYGON(((0 0,0 70,30 70,30 40,60 40,60 0,0 0),(10 10,20 10,20 20,10 20,10 10)))",
                            shape);
  const Window w = Window::from_polygons(shape, "test");
  const double h = 5.0;
  for (const Point u : {Point{25, 38}, Point{9, 15}, Point{31, 41}, Point{2, 68}, Point{58, 2}, Point{15, 21}}) {
    const double expected =
        box_mass(u, h, 0, 0, 60, 40) + box_mass(u, h, 0, 40, 30, 70) - box_mass(u, h, 10, 10, 20, 20);
    EXPECT_NEAR(gaussian_window_mass(w, u, h), expected, 1e-9) << u.x << "," << u.y;
  }
}

TEST(KernelSurface, EdgeCorrectionUsesTheExactWindowMassOfEachSighting) {
  // Local edge correction (Diggle 1985; Jones 1993): lambda(u) = sum_i k_h(u - x_i) /
  // e_h(x_i). Every pixel within 4h of a sighting, edge pixels included, must equal that with
  // e_h from the closed form above to within 0.5% (a pixel-mask estimate of e_h was off by
  // up to 2.6% at the edges). The sightings lie more than 8h apart, so no pixel there misses
  // a kernel the surface truncates at 4h. The raster is shared with other plots (as in a
  // survey surface), so this plot's edges cut through pixels.
  const Window w = Window::rectangle(0, 0, 50, 30);
  const std::vector<Point> points{{1, 1}, {49, 29}, {25, 15}, {1, 29}, {49, 1}, {0.2, 15}};
  const double h = 1.5;
  IntensityRaster raster = make_raster(Bounds{-0.4, -0.3, 50.0, 30.0}, 0.5);
  (void)add_kernel_intensity(raster, points, w, h, 1.0);
  double worst = 0.0;
  std::size_t compared = 0;
  for (std::size_t row = 0; row < raster.height; ++row) {
    for (std::size_t col = 0; col < raster.width; ++col) {
      const Point u{raster.x_min + (static_cast<double>(col) + 0.5) * raster.pixel_m,
                    raster.y_max - (static_cast<double>(row) + 0.5) * raster.pixel_m};
      if (!(u.x > 0 && u.x < 50 && u.y > 0 && u.y < 30)) continue;
      double expected = 0.0;
      bool near = false;
      for (const auto& p : points) {
        const double d2 = (u.x - p.x) * (u.x - p.x) + (u.y - p.y) * (u.y - p.y);
        near = near || d2 <= 16.0 * h * h;
        expected += std::exp(-d2 / (2 * h * h)) / (2 * pi * h * h) / box_mass(p, h, 0, 0, 50, 30);
      }
      if (!near) continue;
      worst = std::max(worst, std::abs(raster.values[row * raster.width + col] / expected - 1.0));
      ++compared;
    }
  }
  EXPECT_GT(compared, 1000u);
  EXPECT_LT(worst, 0.005);
}

TEST(KernelSurface, KeepsItsMassAtTheEdges) {
  // The local correction integrates to exactly n over the window (van Lieshout 2012, from
  // memory); on pixels a tenth of the bandwidth wide, within 2% even for sightings on the
  // edge and in a corner.
  const Window w = Window::rectangle(0, 0, 50, 30);
  const std::vector<Point> points{{0.1, 0.1}, {49.9, 15}, {25, 29.9}, {10, 10}, {30, 0.5}};
  const double h = 3.0;
  IntensityRaster raster = make_raster(Bounds{-0.17, -0.23, 50.0, 30.0}, 0.3);
  const double integral = add_kernel_intensity(raster, points, w, h, 1.0);
  EXPECT_NEAR(integral, 5.0, 0.1);
}

// Two plots, two species: plot A holds 6 oaks and 2 ashes, plot B 3 oaks.
Survey two_plot_survey() {
  std::vector<Sighting> sightings;
  std::int64_t fid = 0;
  for (const Point p : {Point{5, 5}, Point{12, 8}, Point{20, 20}, Point{30, 12}, Point{35, 30}, Point{8, 33}})
    sightings.push_back({p, ++fid, "oak", std::nullopt});
  for (const Point p : {Point{15, 25}, Point{28, 6}}) sightings.push_back({p, ++fid, "ash", std::nullopt});
  for (const Point p : {Point{65, 10}, Point{72, 25}, Point{80, 18}})
    sightings.push_back({p, ++fid, "oak", std::nullopt});
  return assign_to_plots(sightings,
                         {Plot{"A", Window::rectangle(0, 0, 40, 40)}, Plot{"B", Window::rectangle(60, 0, 90, 30)}});
}

// Sum of the raster's values over the pixels whose centres lie in `w`, times the pixel area.
double mass_in(const IntensityRaster& raster, const Window& w) {
  double sum = 0.0;
  for (std::size_t row = 0; row < raster.height; ++row)
    for (std::size_t col = 0; col < raster.width; ++col) {
      const Point u{raster.x_min + (static_cast<double>(col) + 0.5) * raster.pixel_m,
                    raster.y_max - (static_cast<double>(row) + 0.5) * raster.pixel_m};
      const double v = raster.values[row * raster.width + col];
      if (w.contains_almost_surely(u) && std::isfinite(v)) sum += v;
    }
  return sum * raster.pixel_m * raster.pixel_m;
}

TEST(IntensitySurface, EachPlotKeepsItsOwnSpeciesCount) {
  // Every plot is smoothed in its own window with the local correction, so each plot's
  // surface integrates to its own count of the species (van Lieshout 2012, from memory),
  // within the 2% the pixel grid allows; per hectare the same mass divided by 1e4.
  const Survey s = two_plot_survey();
  const std::size_t oak = 1;  // species are sorted: ash, oak
  ASSERT_EQ(s.species()[oak], "oak");
  const IntensityRaster per_m2 = intensity_surface(s, oak, 1.0, std::nullopt, 4.0);
  EXPECT_NEAR(mass_in(per_m2, s.plots()[0].window), 6.0, 0.12);
  EXPECT_NEAR(mass_in(per_m2, s.plots()[1].window), 3.0, 0.06);
  const IntensityRaster all = intensity_surface(s, std::nullopt, 1.0, std::nullopt, 4.0);
  EXPECT_NEAR(mass_in(all, s.plots()[0].window), 8.0, 0.16);
  const IntensityRaster per_ha = intensity_surface(s, oak, 1e4, std::nullopt, 4.0);
  EXPECT_NEAR(mass_in(per_ha, s.plots()[0].window) / 1e4, 6.0, 0.12);
  EXPECT_TRUE(per_m2.warnings.empty());
  // Between the plots there is no window: no value.
  const auto col = static_cast<std::size_t>((50.0 - per_m2.x_min) / per_m2.pixel_m);
  EXPECT_TRUE(std::isnan(per_m2.values[col]));
}

TEST(IntensitySurface, RefusesAPixelCoarserThanTheKernel) {
  EXPECT_THROW(static_cast<void>(intensity_surface(two_plot_survey(), std::nullopt, 1.0, 5.0, 4.0)), InputError);
}

TEST(IntensitySurface, ReportsProgressOverTheSightingsItSmooths) {
  // Progress counts the sightings of the surface (9 oaks), never goes back, and ends at
  // (9, 9); a surface of all species counts all 11.
  const Survey s = two_plot_survey();
  for (const auto& [species, expected] : {std::pair{std::optional<std::size_t>(1), std::size_t{9}},
                                          std::pair{std::optional<std::size_t>(), std::size_t{11}}}) {
    std::vector<std::pair<std::size_t, std::size_t>> calls;
    static_cast<void>(intensity_surface(s, species, 1.0, std::nullopt, 4.0,
                                        [&](std::size_t done, std::size_t total) { calls.emplace_back(done, total); }));
    ASSERT_FALSE(calls.empty());
    EXPECT_EQ(calls.back(), (std::pair{expected, expected}));
    for (std::size_t i = 0; i < calls.size(); ++i) {
      EXPECT_EQ(calls[i].second, expected);
      if (i > 0) {
        EXPECT_GE(calls[i].first, calls[i - 1].first);
      }
    }
  }
}

}  // namespace
}  // namespace stipple
