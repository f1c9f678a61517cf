// The uniform-grid index against brute force over random, clustered and duplicated points.

#include "stipple/geometry/spatial_index.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>
#include <utility>
#include <vector>

#include <boost/random/uniform_real_distribution.hpp>

#include "stipple/simulate/engine.hpp"

namespace stipple {
namespace {

double distance(const Point& a, const Point& b) {
  return std::hypot(a.x - b.x, a.y - b.y);
}

std::vector<Point> test_points() {
  Engine engine(derive_seed(1, "spatial-index-test"));
  boost::random::uniform_real_distribution<double> u(0.0, 100.0);
  boost::random::uniform_real_distribution<double> near(-0.5, 0.5);
  std::vector<Point> points;
  for (int i = 0; i < 300; ++i) points.push_back({u(engine), u(engine) * 0.3});                // a long strip
  for (int i = 0; i < 100; ++i) points.push_back({50.0 + near(engine), 10.0 + near(engine)});  // a tight cluster
  points.push_back(points[7]);                                                                 // an exact duplicate
  points.push_back({1e3, 1e3});  // far outlier: a sparse grid corner
  return points;
}

TEST(PointGrid, NearestNeighbourDistancesEqualBruteForce) {
  const std::vector<Point> points = test_points();
  for (const double per_cell : {0.5, 2.0, 50.0}) {
    const PointGrid grid(points, per_cell);
    const std::vector<double> nn = grid.nearest_neighbour_distances();
    ASSERT_EQ(nn.size(), points.size());
    for (std::size_t i = 0; i < points.size(); ++i) {
      double best = std::numeric_limits<double>::infinity();
      for (std::size_t j = 0; j < points.size(); ++j)
        if (j != i) best = std::min(best, distance(points[i], points[j]));
      EXPECT_DOUBLE_EQ(nn[i], best) << "point " << i << ", " << per_cell << " per cell";
    }
  }
  EXPECT_TRUE(std::isinf(PointGrid({{1, 1}}).nearest_neighbour_distances().front()));
}

TEST(PointGrid, NearestDistanceToAQueryEqualsBruteForce) {
  const std::vector<Point> points = test_points();
  const PointGrid grid(points);
  for (const Point q : {Point{0, 0}, Point{50, 10}, Point{-40, 200}, Point{99.9, 29.9}, Point{2000, -5}}) {
    double best = std::numeric_limits<double>::infinity();
    for (const auto& p : points) best = std::min(best, distance(q, p));
    EXPECT_DOUBLE_EQ(grid.nearest_distance(q), best);
  }
  // Excluding the query's own index finds its neighbour, here the duplicate at distance 0.
  EXPECT_EQ(grid.nearest_distance(points[7], 7), 0.0);
  EXPECT_TRUE(std::isinf(PointGrid({}).nearest_distance({0, 0})));
}

TEST(PointGrid, PairsWithinARadiusAreExactlyTheBruteForcePairs) {
  const std::vector<Point> points = test_points();
  const PointGrid grid(points);
  for (const double radius : {0.0, 0.3, 4.0, 25.0}) {
    std::set<std::pair<std::size_t, std::size_t>> found;
    grid.for_each_pair_within(radius, [&](std::size_t i, std::size_t j, double d) {
      EXPECT_NEAR(d, distance(points[i], points[j]), 1e-12);
      EXPECT_TRUE(found.insert({std::min(i, j), std::max(i, j)}).second) << "pair visited twice";
    });
    std::size_t expected = 0;
    for (std::size_t i = 0; i < points.size(); ++i)
      for (std::size_t j = i + 1; j < points.size(); ++j)
        if (distance(points[i], points[j]) <= radius) {
          ++expected;
          EXPECT_TRUE(found.count({i, j})) << "missed pair " << i << "," << j << " at radius " << radius;
        }
    EXPECT_EQ(found.size(), expected) << "radius " << radius;
  }
}

TEST(PointGrid, PointsWithinARadiusOfAQueryAreExactlyTheBruteForceOnes) {
  const std::vector<Point> points = test_points();
  const PointGrid grid(points);
  for (const Point q : {Point{50, 10}, Point{0, 0}, Point{120, 15}}) {
    std::set<std::size_t> found;
    grid.for_each_within(q, 6.0, [&](std::size_t j, double) { EXPECT_TRUE(found.insert(j).second); });
    std::set<std::size_t> expected;
    for (std::size_t j = 0; j < points.size(); ++j)
      if (distance(q, points[j]) <= 6.0) expected.insert(j);
    EXPECT_EQ(found, expected);
  }
}

}  // namespace
}  // namespace stipple
