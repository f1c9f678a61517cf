#include "stipple/randomness/quadrat.hpp"

#include <cmath>

#include <gtest/gtest.h>
#include <boost/geometry.hpp>

#include "stipple/error.hpp"

namespace stipple {
namespace {

// Points placed at the centres of unit cells of an nx x ny grid, counts[cell] in each.
std::vector<Point> fill_cells(std::size_t nx, const std::vector<std::uint64_t>& counts) {
  std::vector<Point> points;
  for (std::size_t c = 0; c < counts.size(); ++c) {
    const double x = static_cast<double>(c % nx);
    const double y = static_cast<double>(c / nx);
    for (std::uint64_t k = 0; k < counts[c]; ++k)
      points.push_back({x + 0.1 + 0.8 * static_cast<double>(k + 1) / static_cast<double>(counts[c] + 1), y + 0.5});
  }
  return points;
}

TEST(QuadratTest, WorkedExampleEqualCells) {
  // Source: REFERENCES.md section 5 (SciPy chisquare): cells [3,1,4,1,5,9,2,6,5]:
  // X2 = 13.5, df 8, p_upper 0.0957651, p_lower 0.9042349, two-sided 0.1915303, ID 1.6875.
  const std::vector<std::uint64_t> counts{3, 1, 4, 1, 5, 9, 2, 6, 5};
  Engine engine(1);
  QuadratOptions o;
  o.nx = 3;
  o.ny = 3;
  o.simulations = 0;
  const QuadratResult q = quadrat_test(fill_cells(3, counts), Window::rectangle(0, 0, 3, 3), o, engine);
  EXPECT_EQ(q.cells_used, 9u);
  EXPECT_NEAR(q.chi_square.statistic, 13.5, 1e-9);
  EXPECT_EQ(q.chi_square.df, 8.0);
  EXPECT_NEAR(q.chi_square.p_upper, 0.0957651, 1e-7);
  EXPECT_NEAR(q.chi_square.p_lower, 0.9042349, 1e-7);
  EXPECT_NEAR(q.p_value, 0.1915303, 1e-7);
  ASSERT_TRUE(q.dispersion_index);
  EXPECT_NEAR(*q.dispersion_index, 1.6875, 1e-12);
  EXPECT_TRUE(q.cells_too_small);  // E = 4 < 5
}

TEST(QuadratTest, FlyingBombWorkedExample) {
  // Source: Clarke R.D. (1946) J. Inst. Actuaries 72:481 (from memory, confident), values
  // from REFERENCES.md section 10: 576 squares, 537 hits; per quadrat ID = 1.041584,
  // X2 = 598.911, df 575, p_upper = 0.23726.
  std::vector<std::uint64_t> counts;
  const std::pair<std::uint64_t, int> table[] = {{0, 229}, {1, 211}, {2, 93}, {3, 35}, {4, 7}, {7, 1}};
  for (const auto& [hits, squares] : table)
    for (int k = 0; k < squares; ++k) counts.push_back(hits);
  Engine engine(2);
  QuadratOptions o;
  o.nx = 24;
  o.ny = 24;
  o.simulations = 0;
  const QuadratResult q = quadrat_test(fill_cells(24, counts), Window::rectangle(0, 0, 24, 24), o, engine);
  EXPECT_EQ(q.cells_used, 576u);
  EXPECT_NEAR(*q.dispersion_index, 1.041584, 1e-6);
  EXPECT_NEAR(q.chi_square.statistic, 598.911, 1e-3);
  EXPECT_EQ(q.chi_square.df, 575.0);
  EXPECT_NEAR(q.chi_square.p_upper, 0.23726, 1e-5);
}

TEST(QuadratTest, ClippedCellsExpectByArea) {
  // An L-shaped window over a 2 x 2 grid: the missing quarter is no cell; the others are
  // whole. With a hole the cell's expected count shrinks with its clipped area.
  BgMultiPolygon shape;
  boost::geometry::read_wkt("MULTIPOLYGON(((0 0,0 10,5 10,5 5,10 5,10 0,0 0),(1 1,4 1,4 4,1 4,1 1)))", shape);
  const Window w = Window::from_polygons(shape, "test");
  const std::vector<Point> points{{0.5, 0.5}, {6, 2}, {7, 3}, {2, 7}, {3, 8}, {8, 1}};
  Engine engine(3);
  QuadratOptions o;
  o.nx = 2;
  o.ny = 2;
  o.simulations = 1999;
  const QuadratResult q = quadrat_test(points, w, o, engine);
  EXPECT_EQ(q.cells_used, 3u);
  const double area = 75.0 - 9.0;
  EXPECT_NEAR(q.expected[0], 6.0 * 16.0 / area, 1e-9);  // lower-left, minus the hole
  EXPECT_NEAR(q.expected[1], 6.0 * 25.0 / area, 1e-9);
  EXPECT_FALSE(q.dispersion_index);  // unequal cells
  ASSERT_TRUE(q.monte_carlo_p_value);
  // Counts 1, 3, 2 against 6 x (16, 25, 25)/66: X2 = 0.4075. The quadrat p-value is
  // two-sided, 2 min(P(X2 >= x), P(X2 <= x)); exactly, under the multinomial, P(X2 >= x) =
  // 0.89111 and P(X2 <= x) = 0.33574, so p = 0.67147 (all outcomes enumerated in an
  // independent Python script). 1999 draws: within 4 standard errors (0.084), which
  // excludes the one-sided 0.891.
  EXPECT_NEAR(q.chi_square.statistic, 0.4075, 1e-9);
  EXPECT_NEAR(*q.monte_carlo_p_value, 0.67147, 4.0 * 2.0 * std::sqrt(0.33574 * (1 - 0.33574) / 2000.0));
}

TEST(QuadratTest, RefusesDegenerateGrid) {
  Engine engine(4);
  QuadratOptions o;
  o.nx = 1;
  o.ny = 1;
  EXPECT_THROW((void)quadrat_test({{1, 1}}, Window::rectangle(0, 0, 2, 2), o, engine), AnalysisError);
}

}  // namespace
}  // namespace stipple
