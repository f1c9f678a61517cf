// Distance to mapped features: point-to-segment distance (closed form) through the R-tree,
// checked against a brute-force minimum, and zero inside polygons.

#include "stipple/geometry/distance_field.hpp"

#include <cmath>
#include <random>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

// Distance from p to segment ab: projection clamped to the segment (common practice).
double segment_distance(const Point& p, const Point& a, const Point& b) {
  const double dx = b.x - a.x;
  const double dy = b.y - a.y;
  const double t = std::clamp(((p.x - a.x) * dx + (p.y - a.y) * dy) / (dx * dx + dy * dy), 0.0, 1.0);
  return std::hypot(p.x - a.x - t * dx, p.y - a.y - t * dy);
}

TEST(DistanceField, NearestSegmentEqualsTheBruteForceMinimum) {
  std::mt19937_64 engine(7);
  std::uniform_real_distribution<double> u(0.0, 1000.0);
  MappedFeatures f;
  Point last{u(engine), u(engine)};
  for (int i = 0; i < 300; ++i) {
    const Point next{u(engine), u(engine)};
    f.segments.push_back({last, next});
    last = next;
  }
  const DistanceField field(f);
  for (int i = 0; i < 500; ++i) {
    const Point p{u(engine) * 1.2 - 100.0, u(engine) * 1.2 - 100.0};
    double best = 1e300;
    for (const auto& s : f.segments) best = std::min(best, segment_distance(p, s.a, s.b));
    EXPECT_NEAR(field.distance(p), best, 1e-9 * (1.0 + best));
  }
}

TEST(DistanceField, InsideAPolygonIsZeroAndOutsideIsToItsBoundary) {
  MappedFeatures f;
  const Point ring[] = {{0, 0}, {0, 10}, {10, 10}, {10, 0}, {0, 0}};
  for (int i = 0; i < 4; ++i) f.segments.push_back({ring[i], ring[i + 1]});
  f.polygons.resize(1);
  f.polygons[0].outer() = {{0, 0}, {0, 10}, {10, 10}, {10, 0}, {0, 0}};
  const DistanceField field(f);
  EXPECT_EQ(field.distance({5, 5}), 0.0);
  EXPECT_EQ(field.distance({10, 5}), 0.0);
  EXPECT_NEAR(field.distance({13, 14}), 5.0, 1e-12);
  EXPECT_NEAR(field.distance({-2, 5}), 2.0, 1e-12);
  EXPECT_THROW(DistanceField(MappedFeatures{}), InputError);
}

}  // namespace
}  // namespace stipple
