#include "stipple/randomness/clark_evans.hpp"

#include <cmath>

#include <gtest/gtest.h>
#include <boost/geometry.hpp>

#include "stipple/error.hpp"
#include "stipple/geometry/spatial_index.hpp"
#include "stipple/simulate/point_process.hpp"

namespace stipple {
namespace {

ClarkEvansResult run(const std::vector<Point>& points, const Window& window, NeighbourEdgeCorrection correction) {
  const PointGrid grid(points);
  std::vector<double> boundary;
  for (const auto& p : points) boundary.push_back(window.boundary_distance(p));
  return clark_evans(grid.nearest_neighbour_distances(), boundary, window, correction);
}

TEST(ClarkEvans, PublishedFormulaCaseA) {
  // Source: Clark & Evans (1954); REFERENCES.md section 3 case A (NN from SciPy cKDTree).
  const auto r = run({{1, 1}, {4, 5}, {7, 1}, {4, 9}}, Window::rectangle(0, 0, 10, 10), NeighbourEdgeCorrection::none);
  EXPECT_NEAR(r.mean_distance, 4.5, 1e-12);
  EXPECT_NEAR(r.expected_distance, 2.5, 1e-12);
  EXPECT_NEAR(r.ratio, 1.8, 1e-12);
  EXPECT_NEAR(r.standard_error, 0.653400, 1e-6);
  EXPECT_NEAR(r.z, 3.060912, 1e-6);
  EXPECT_NEAR(r.p_value, 0.0022066, 1e-7);
}

TEST(ClarkEvans, PublishedFormulaCaseB) {
  // Source: REFERENCES.md section 3 case B: 3 x 3 grid in [0,3]^2.
  std::vector<Point> grid;
  for (const double x : {0.5, 1.5, 2.5})
    for (const double y : {0.5, 1.5, 2.5}) grid.push_back({x, y});
  const auto r = run(grid, Window::rectangle(0, 0, 3, 3), NeighbourEdgeCorrection::none);
  EXPECT_NEAR(r.expected_distance, 0.5, 1e-12);
  EXPECT_NEAR(r.ratio, 2.0, 1e-12);
  EXPECT_NEAR(r.standard_error, 0.087120, 1e-6);
  EXPECT_NEAR(r.z, 5.739210, 1e-6);
  EXPECT_NEAR(r.p_value, 9.51e-9, 0.01e-9);
}

TEST(ClarkEvans, SeConstantIsPublishedValue) {
  // Source: Clark & Evans (1954): SE = 0.26136 / sqrt(n lambda), the printed rounding of
  // sqrt((4 - pi) / (4 pi)) = 0.2613616 (REFERENCES.md §3).
  const auto r = run({{1, 1}, {4, 5}, {7, 1}, {4, 9}}, Window::rectangle(0, 0, 10, 10), NeighbourEdgeCorrection::none);
  EXPECT_NEAR(r.standard_error * std::sqrt(4 * 0.04), 0.26136, 1e-12);
  EXPECT_NEAR(0.26136, std::sqrt((4 - 3.14159265358979) / (4 * 3.14159265358979)), 2e-6);
}

TEST(ClarkEvans, DonnellyConstants) {
  // Source: Donnelly (1978), constants from memory; REFERENCES.md section 4:
  // 100 x 50 m, n = 30: E = 7.043828, SE = 0.741470; r-bar = 8.0 -> z = 1.289563, p = 0.19720.
  const Window w = Window::rectangle(0, 0, 100, 50);
  const std::vector<double> nearest(30, 8.0);
  const std::vector<double> boundary(30, 10.0);
  const auto r = clark_evans(nearest, boundary, w, NeighbourEdgeCorrection::donnelly);
  EXPECT_EQ(r.edge_correction, NeighbourEdgeCorrection::donnelly);
  EXPECT_NEAR(r.expected_distance, 7.043828, 1e-6);
  EXPECT_NEAR(r.standard_error, 0.741470, 1e-6);
  EXPECT_NEAR(r.z, 1.289563, 1e-6);
  EXPECT_NEAR(r.p_value, 0.19720, 1e-5);
  const auto plain = clark_evans(nearest, boundary, w, NeighbourEdgeCorrection::none);
  EXPECT_NEAR(plain.expected_distance, 6.454972, 1e-6);  // uncorrected, REFERENCES.md §4
}

TEST(ClarkEvans, DonnellyExpectationMatchesSimulation) {
  // Source: REFERENCES.md section 4: 20 000 simulated patterns, 100 x 50, n = 30: mean
  // 7.0418. Here 3000 patterns (SE of the mean about 0.014); tolerance 4 SE = 0.055.
  const Window w = Window::rectangle(0, 0, 100, 50);
  Engine engine(derive_seed(5, "donnelly"));
  double sum = 0.0;
  for (int k = 0; k < 3000; ++k) {
    const PointGrid grid(simulate_binomial(w, 30, engine));
    const auto d = grid.nearest_neighbour_distances();
    for (const double v : d) sum += v;
  }
  EXPECT_NEAR(sum / (3000.0 * 30.0), 7.043828, 0.055);
}

TEST(ClarkEvans, DefaultsPerWindowShape) {
  EXPECT_EQ(default_edge_correction(Window::rectangle(0, 0, 1, 1)), NeighbourEdgeCorrection::donnelly);
  BgMultiPolygon l_shape;
  boost::geometry::read_wkt("MULTIPOLYGON(((0 0,0 10,5 10,5 5,10 5,10 0,0 0)))", l_shape);
  const Window w = Window::from_polygons(l_shape, "test");
  EXPECT_EQ(default_edge_correction(w), NeighbourEdgeCorrection::border);
  // Donnelly asked for on a non-rectangle: border, with a note.
  const std::vector<double> nearest{1, 1, 1, 1};
  const std::vector<double> boundary{2, 2, 2, 2};
  const auto r = clark_evans(nearest, boundary, w, NeighbourEdgeCorrection::donnelly);
  EXPECT_EQ(r.edge_correction, NeighbourEdgeCorrection::border);
  EXPECT_FALSE(r.note.empty());
  EXPECT_THROW((void)parse_edge_correction("toroidal"), InputError);
}

TEST(ClarkEvans, NormalLawRuleFollowsTheSizeStudy) {
  // The rule of clark_evans_normal_holds, from bench/clark_evans_size.cpp (see its doc).
  EXPECT_FALSE(clark_evans_normal_holds(NeighbourEdgeCorrection::donnelly, 9));
  EXPECT_TRUE(clark_evans_normal_holds(NeighbourEdgeCorrection::donnelly, 10));
  EXPECT_FALSE(clark_evans_normal_holds(NeighbourEdgeCorrection::border, 999));
  EXPECT_TRUE(clark_evans_normal_holds(NeighbourEdgeCorrection::border, 1000));
  EXPECT_FALSE(clark_evans_normal_holds(NeighbourEdgeCorrection::none, 1000000));
}

}  // namespace
}  // namespace stipple
