// The habitat model over a survey: windows cut along raster cells, coefficients against the
// closed forms of Poisson rates, factor coding, shared slopes, missing values.

#include "stipple/habitat/habitat_model.hpp"

#include <cmath>
#include <limits>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();

// A raster of 30 m cells from x = -10, y = 60 down to y = -30: one row of values per
// list, north first.
RasterGrid strip_raster(std::vector<double> values, std::size_t columns, std::size_t rows) {
  RasterGrid g;
  g.x_min = -10.0;
  g.y_max = 60.0;
  g.cell_width = 30.0;
  g.cell_height = 30.0;
  g.columns = columns;
  g.rows = rows;
  g.values = std::move(values);
  return g;
}

HabitatCovariate covariate(const std::string& name, RasterGrid grid, bool factor = false) {
  HabitatCovariate c;
  c.name = name;
  c.grid = std::move(grid);
  c.source = name + ".tif (band 1)";
  c.factor = factor;
  return c;
}

// Points spread inside [x0, x1] x [1, 49], distinct.
void add_points(MarkedPattern& p, std::size_t species, std::size_t n, double x0, double x1) {
  for (std::size_t i = 0; i < n; ++i) {
    p.points.push_back({x0 + (x1 - x0) * (static_cast<double>(i) + 0.5) / static_cast<double>(n),
                        1.0 + 48.0 * static_cast<double>((i * 7) % n) / static_cast<double>(n)});
    p.marks.push_back(species);
    p.feature_ids.push_back(static_cast<std::int64_t>(p.feature_ids.size() + 1));
  }
}

// One plot 0..100 x 0..50; the raster's cells [-10,20) [20,50) [50,80) [80,110) cut it,
// with value 1 only on [50, 80): region 1 is 1500 m2, region 0 is 3500 m2.
// Species "a": 12 sightings in region 1 and 9 in region 0; "b": 5 and 20.
Survey two_region_survey() {
  MarkedPattern p;
  add_points(p, 0, 12, 50.5, 79.5);
  add_points(p, 0, 5, 0.5, 49.5);
  add_points(p, 0, 4, 80.5, 99.5);
  add_points(p, 1, 5, 50.5, 79.5);
  add_points(p, 1, 12, 0.5, 49.5);
  add_points(p, 1, 8, 80.5, 99.5);
  return Survey({"a", "b"}, {Plot{"strip", Window::rectangle(0, 0, 100, 50)}}, {p});
}

RasterGrid two_region_raster() {
  // Rows north to south: y in (30, 60], (0, 30], (-30, 0].
  return strip_raster({0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1, 0}, 4, 3);
}

const HabitatModel& model_of(const HabitatResult& r, std::optional<std::size_t> species) {
  for (const auto& m : r.models)
    if (m.species == species) return m;
  throw std::runtime_error("no model");
}

TEST(HabitatModel, TwoRegionsGiveTheClosedFormRates) {
  // Closed form (common practice; Cox & Hinkley 1974, from memory): with a binary covariate
  // the Poisson MLE is each region's rate n_r / A_r, so the slope is the log rate ratio,
  // its variance 1/n_1 + 1/n_0 and the intercept's 1/n_0 (inverse Fisher information).
  HabitatOptions options;  // per ha
  const HabitatResult r = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, options);
  EXPECT_NEAR(r.window_area_m2, 5000.0, 1e-9);
  EXPECT_EQ(r.pieces, 8u);  // 4 columns x 2 rows of cells meet the plot (y = 30 cuts it)
  const HabitatModel& a = model_of(r, 0);
  ASSERT_EQ(a.coefficients.size(), 2u);
  EXPECT_NEAR(a.coefficients[0].estimate, std::log(9.0 / 3500.0 * 1e4), 1e-8);
  EXPECT_NEAR(a.coefficients[0].se, std::sqrt(1.0 / 9.0), 1e-8);
  EXPECT_NEAR(a.coefficients[1].estimate, std::log((12.0 / 1500.0) / (9.0 / 3500.0)), 1e-8);
  EXPECT_NEAR(a.coefficients[1].se, std::sqrt(1.0 / 12.0 + 1.0 / 9.0), 1e-8);
  EXPECT_NEAR(a.coefficients[1].rate_ratio, (12.0 / 1500.0) / (9.0 / 3500.0), 1e-8);
  // Wald interval at 95%: estimate +- 1.959964 se (normal quantile, scipy.stats.norm.ppf(0.975)).
  EXPECT_NEAR(a.coefficients[1].ci_high - a.coefficients[1].estimate, 1.959963984540054 * a.coefficients[1].se, 1e-9);
  // Dropping the covariate: 2 [sum n_r log(n_r / A_r) - n log(n / A)] (the integral terms are n in both).
  const double lr =
      2.0 * (12.0 * std::log(12.0 / 1500.0) + 9.0 * std::log(9.0 / 3500.0) - 21.0 * std::log(21.0 / 5000.0));
  ASSERT_EQ(a.term_tests.size(), 1u);
  EXPECT_NEAR(a.term_tests[0].statistic, lr, 1e-7);
  EXPECT_EQ(a.term_tests[0].df, 1u);
  // All species together: the pooled counts 17 and 29.
  const HabitatModel& all = model_of(r, std::nullopt);
  EXPECT_NEAR(all.coefficients[1].estimate, std::log((17.0 / 1500.0) / (29.0 / 3500.0)), 1e-8);
}

TEST(HabitatModel, SharedSlopesAreTheIndependenceModelOfTheSpeciesByRegionTable) {
  // With species intercepts and one common slope on a binary covariate, the fitted counts are
  // those of independence in the 2 x 2 table of species by region (Agresti 2002, Categorical
  // Data Analysis, log-linear independence model; from memory): the slope is the log ratio
  // of the pooled rates, and separate-vs-shared is the G statistic of that table.
  HabitatOptions options;
  options.slopes = SlopeMode::shared;
  const HabitatResult r = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, options);
  ASSERT_EQ(r.models.size(), 1u);
  const HabitatModel& m = r.models[0];
  EXPECT_FALSE(m.species.has_value());
  EXPECT_EQ(m.n, 46u);
  ASSERT_EQ(m.coefficients.size(), 3u);  // intercepts of a and b, one slope
  EXPECT_NEAR(m.coefficients[2].estimate, std::log((17.0 / 1500.0) / (29.0 / 3500.0)), 1e-8);
  // Intercept of species s: log(n_s * n_0. / n.. / A_0) per ha, n_0. the region-0 total.
  EXPECT_EQ(m.coefficients[1].species, std::optional<std::size_t>(1));
  EXPECT_NEAR(m.coefficients[0].estimate, std::log(21.0 * 29.0 / 46.0 / 3500.0 * 1e4), 1e-8);
  EXPECT_NEAR(m.coefficients[1].estimate, std::log(25.0 * 29.0 / 46.0 / 3500.0 * 1e4), 1e-8);
  const double table[2][2] = {{12, 9}, {5, 20}};
  const double rows[2] = {21, 25};
  const double cols[2] = {17, 29};
  double g = 0.0;
  for (int s = 0; s < 2; ++s)
    for (int c = 0; c < 2; ++c) g += 2.0 * table[s][c] * std::log(table[s][c] * 46.0 / (rows[s] * cols[c]));
  ASSERT_TRUE(r.slope_test.has_value());
  EXPECT_NEAR(r.slope_test->statistic, g, 1e-7);
  EXPECT_EQ(r.slope_test->df, 1u);
}

TEST(HabitatModel, FactorClassesAreRatesRelativeToTheLargestClass) {
  // Classes 4 on [-10, 20), 7 on [20, 80), 9 on [80, 110): areas in the plot 1000, 3000, 1000.
  const RasterGrid g = strip_raster({4, 7, 7, 9, 4, 7, 7, 9, 4, 7, 7, 9}, 4, 3);
  const HabitatResult r = fit_habitat(two_region_survey(), {covariate("cover", g, true)}, HabitatOptions{});
  ASSERT_EQ(r.factors.size(), 1u);
  EXPECT_EQ(r.factors[0].reference, 7.0);
  EXPECT_EQ(r.factors[0].classes, (std::vector<double>{4.0, 9.0}));
  // Species a: 5 points on [0, 49.5] of which those with x < 20 are in class 4.
  const Survey s = two_region_survey();
  double n4 = 0, n7 = 0, n9 = 0;
  for (std::size_t i = 0; i < s.patterns()[0].points.size(); ++i) {
    if (s.patterns()[0].marks[i] != 0) continue;
    const double x = s.patterns()[0].points[i].x;
    (x < 20 ? n4 : x < 80 ? n7 : n9) += 1;
  }
  const HabitatModel& a = model_of(r, 0);
  ASSERT_EQ(a.coefficients.size(), 3u);
  EXPECT_EQ(a.coefficients[1].term, "cover=4");
  EXPECT_NEAR(a.coefficients[0].estimate, std::log(n7 / 3000.0 * 1e4), 1e-8);
  EXPECT_NEAR(a.coefficients[1].estimate, std::log((n4 / 1000.0) / (n7 / 3000.0)), 1e-8);
  EXPECT_NEAR(a.coefficients[2].estimate, std::log((n9 / 1000.0) / (n7 / 3000.0)), 1e-8);
  ASSERT_EQ(a.term_tests.size(), 1u);
  EXPECT_EQ(a.term_tests[0].df, 2u);
  EXPECT_TRUE(r.covariate_tests.empty());  // no KS or Z1 on classes
}

TEST(HabitatModel, PiecesAddUpToTheWindowAcrossCellEdges) {
  // A window with a hole, cut by a raster whose edges fall anywhere: the pieces are an exact
  // partition (Boost.Geometry intersection), so their areas add up to the window's.
  BgMultiPolygon shape;
  shape.resize(1);
  shape[0].outer() = {{0, 0}, {10, 47}, {70, 55}, {95, 20}, {60, -5}, {0, 0}};
  shape[0].inners().push_back({{40, 15}, {55, 15}, {55, 30}, {40, 30}, {40, 15}});
  const Window w = Window::from_polygons(shape, "test");
  MarkedPattern p;
  p.points = {{30, 20}, {60, 10}, {80, 25}, {20, 30}};
  p.marks = {0, 0, 0, 0};
  p.feature_ids = {1, 2, 3, 4};
  RasterGrid g = strip_raster({1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12}, 4, 3);
  g.x_min = -13.7;
  g.y_max = 61.3;
  const HabitatResult r = fit_habitat(Survey({"x"}, {Plot{"odd", w}}, {p}), {covariate("z", g)}, HabitatOptions{});
  EXPECT_NEAR(r.window_area_m2, w.area_m2(), 1e-9 * w.area_m2());
}

TEST(HabitatModel, MissingValuesAreRefusedNamingThePlaceOrLeftOutWhenAsked) {
  RasterGrid g = two_region_raster();
  g.values[4] = nan;  // cell [-10, 20) x (0, 30]: 600 m2 of the plot
  try {
    (void)fit_habitat(two_region_survey(), {covariate("wet", g)}, HabitatOptions{});
    FAIL() << "missing value accepted";
  } catch (const InputError& e) {
    const std::string m = e.what();
    EXPECT_NE(m.find("plot 'strip'"), std::string::npos) << m;
    EXPECT_NE(m.find("covariate 'wet'"), std::string::npos) << m;
  }
  HabitatOptions drop;
  drop.drop_missing = true;
  const HabitatResult r = fit_habitat(two_region_survey(), {covariate("wet", g)}, drop);
  EXPECT_NEAR(r.dropped_area_m2, 600.0, 1e-9);
  EXPECT_NEAR(r.window_area_m2, 4400.0, 1e-9);
  EXPECT_FALSE(r.dropped_sightings.empty());
  for (const auto& d : r.dropped_sightings) EXPECT_EQ(d.covariate, "wet");
  EXPECT_FALSE(r.warnings.empty());
  // Every sighting is either fitted or listed.
  std::size_t fitted = 0;
  for (const auto& m : r.models)
    if (m.species) fitted += m.n;
  EXPECT_EQ(fitted + r.dropped_sightings.size(), 46u);
}

TEST(HabitatModel, PlotPartOutsideTheRasterIsNamed) {
  RasterGrid g = two_region_raster();
  g.columns = 3;  // ends at x = 80: the plot's east fifth has no value
  g.values = {0, 0, 1, 0, 0, 1, 0, 0, 1};
  try {
    (void)fit_habitat(two_region_survey(), {covariate("wet", g)}, HabitatOptions{});
    FAIL() << "a plot part outside the raster was accepted";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("outside the raster"), std::string::npos) << e.what();
  }
}

TEST(HabitatModel, InterceptFollowsTheUnit) {
  HabitatOptions km2;
  km2.unit_m2 = 1e6;
  const HabitatResult ha = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, {});
  const HabitatResult km = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, km2);
  EXPECT_NEAR(model_of(km, 0).coefficients[0].estimate - model_of(ha, 0).coefficients[0].estimate, std::log(100.0),
              1e-9);
  EXPECT_NEAR(model_of(km, 0).coefficients[1].estimate, model_of(ha, 0).coefficients[1].estimate, 1e-12);
}

TEST(HabitatModel, BiasTermPredictsAtBestObservationByDefault) {
  HabitatCovariate effort = covariate("distance", two_region_raster());
  effort.bias = true;
  const HabitatResult r = fit_habitat(two_region_survey(), {effort}, {});
  const HabitatCoefficient& b = model_of(r, 1).coefficients[1];  // species b: fewer where the value is 1
  EXPECT_TRUE(b.bias);
  ASSERT_LT(b.estimate, 0.0);
  EXPECT_EQ(b.bias_reference, std::optional<double>(0.0));
  effort.bias_reference = 0.5;
  const HabitatResult given = fit_habitat(two_region_survey(), {effort}, {});
  EXPECT_EQ(model_of(given, 1).coefficients[1].bias_reference, std::optional<double>(0.5));
}

TEST(HabitatModel, DistanceCovariateMatchesTheExactLikelihoodOfAnExponentialGradient) {
  // A line along the west edge of a 100 x 40 m plot: the distance is x. The exact MLE of
  // log lambda = b0 + b1 x makes the sightings' mean x equal its mean under the density
  // proportional to exp(b1 x) on [0, L]: L e^{b1 L} / (e^{b1 L} - 1) - 1 / b1 (the score
  // equation; solved here by bisection), and e^{b0} = n b1 / (H (e^{b1 L} - 1)).
  const double L = 100.0;
  const double H = 40.0;
  MarkedPattern p;
  const double xs[] = {2, 5, 7, 9, 12, 15, 18, 22, 25, 31, 36, 44, 52, 61, 75, 90};
  for (double x : xs) {
    p.points.push_back({x, 3.0 + x / 4.0});
    p.marks.push_back(0);
    p.feature_ids.push_back(static_cast<std::int64_t>(p.points.size()));
  }
  double mean_x = 0.0;
  for (double x : xs) mean_x += x / 16.0;
  const auto mean_under = [&](double b) { return L * std::exp(b * L) / std::expm1(b * L) - 1.0 / b; };
  double lo = -1.0;
  double hi = -1e-6;
  for (int i = 0; i < 200; ++i) {
    const double mid = 0.5 * (lo + hi);
    (mean_under(mid) > mean_x ? hi : lo) = mid;
  }
  const double b1 = 0.5 * (lo + hi);
  const double b0 = std::log(16.0 * b1 / (H * std::expm1(b1 * L)));
  MappedFeatures line;
  line.segments.push_back({{0, -50}, {0, 90}});
  const auto fit_at = [&](double spacing) {
    HabitatCovariate d;
    d.name = "edge";
    d.source = "edge.gpkg";
    d.distance_to = DistanceField(line);
    d.spacing_m = spacing;
    return fit_habitat(Survey({"x"}, {Plot{"p", Window::rectangle(0, 0, L, H)}}, {p}), {d}, HabitatOptions{});
  };
  const HabitatResult r = fit_at(1.0);
  const HabitatModel& m = model_of(r, 0);
  // Midpoint quadrature errs by O(h^2): about 2 |b1| h^2 / 24 in the mean distance, so about
  // 1.5e-4 of b1 on 1 m cells here, and a quarter of that on 0.5 m cells.
  const double error = std::abs(m.coefficients[1].estimate - b1);
  EXPECT_LT(error, 3e-4 * std::abs(b1));
  EXPECT_NEAR(m.coefficients[0].estimate, b0 + std::log(1e4), 5e-4);
  const double finer = std::abs(model_of(fit_at(0.5), 0).coefficients[1].estimate - b1);
  EXPECT_LT(finer, error / 3.0);
  ASSERT_TRUE(r.quadrature.has_value());
  EXPECT_EQ(r.quadrature->spacing_m, 1.0);
  EXPECT_LT(r.quadrature->largest_change_in_se, 1e-3);
  EXPECT_GT(r.quadrature->largest_change_in_se, 0.0);
}

TEST(HabitatModel, KnownDetectionDividesTheIntensityAsInDensity) {
  // A detected pattern is a thinned Poisson process of intensity p lambda: the corrected
  // intercept is log(rate / p), with variance 1 / n_0 + (se_p / p)^2 (delta method), as
  // `density` corrects a count; slopes do not change.
  HabitatOptions options;
  DetectionTable table = DetectionTable::uniform(make_detection(0.5, 0.05, "test"));
  options.detection = table;
  const HabitatResult plain = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, {});
  const HabitatResult r = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, options);
  const HabitatModel& a = model_of(r, 0);
  EXPECT_NEAR(a.coefficients[0].estimate, std::log(9.0 / 3500.0 * 1e4 / 0.5), 1e-8);
  EXPECT_NEAR(a.coefficients[0].se, std::sqrt(1.0 / 9.0 + 0.01), 1e-8);
  EXPECT_EQ(a.coefficients[0].detection_probability, std::optional<double>(0.5));
  EXPECT_NEAR(a.coefficients[1].estimate, model_of(plain, 0).coefficients[1].estimate, 1e-12);
  EXPECT_NEAR(a.covariance[0], model_of(plain, 0).covariance[0] + 0.01, 1e-12);
  // Shared slopes: each species' intercept by its own p.
  options.slopes = SlopeMode::shared;
  const HabitatResult shared = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, options);
  HabitatOptions shared_plain;
  shared_plain.slopes = SlopeMode::shared;
  const HabitatResult base = fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, shared_plain);
  for (std::size_t i = 0; i < 2; ++i) {
    EXPECT_NEAR(shared.models[0].coefficients[i].estimate, base.models[0].coefficients[i].estimate - std::log(0.5),
                1e-12);
    EXPECT_NEAR(shared.models[0].coefficients[i].se, std::sqrt(std::pow(base.models[0].coefficients[i].se, 2) + 0.01),
                1e-12);
  }
}

TEST(HabitatModel, RefusesWhatCannotBeFitted) {
  EXPECT_THROW((void)fit_habitat(two_region_survey(), {}, {}), InputError);
  HabitatOptions bad;
  bad.confidence = 1.0;
  EXPECT_THROW((void)fit_habitat(two_region_survey(), {covariate("wet", two_region_raster())}, bad), InputError);
  EXPECT_THROW((void)fit_habitat(two_region_survey(),
                                 {covariate("wet", two_region_raster()), covariate("wet", two_region_raster())}, {}),
               InputError);
  RasterGrid fractional = two_region_raster();
  fractional.values[2] = 0.5;
  EXPECT_THROW((void)fit_habitat(two_region_survey(), {covariate("cover", fractional, true)}, {}), InputError);
}

}  // namespace
}  // namespace stipple
