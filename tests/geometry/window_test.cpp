#include "stipple/geometry/window.hpp"

#include <cmath>
#include <memory>

#include <locale>

#include <gtest/gtest.h>
#include <ogr_geometry.h>
#include <boost/geometry.hpp>

#include "stipple/error.hpp"

namespace stipple {
namespace {

namespace bg = boost::geometry;

BgMultiPolygon from_wkt(const std::string& wkt) {
  BgMultiPolygon shape;
  // Boost.Geometry reads WKT numbers through the global locale (the suite runs under a
  // decimal-comma one): read them in the classic locale.
  const std::locale previous = std::locale::global(std::locale::classic());
  bg::read_wkt(wkt, shape);
  std::locale::global(previous);
  return shape;
}

double gdal_area(const std::string& wkt) {
  OGRGeometry* geometry = nullptr;
  EXPECT_EQ(OGRGeometryFactory::createFromWkt(wkt.c_str(), nullptr, &geometry), OGRERR_NONE);
  std::unique_ptr<OGRGeometry> owned(geometry);
  return owned->toMultiPolygon()->get_Area();
}

TEST(Window, AreasMatchGdal) {
  // Source: GDAL's OGRGeometry area (reference library) on the same WKT.
  const std::string cases[] = {
      "MULTIPOLYGON(((0 0,0 100,100 100,100 0,0 0)))",
      "MULTIPOLYGON(((300 400,300 500,500 500,500 400,300 400),(385 435,415 435,415 465,385 465,385 435)))",
      "MULTIPOLYGON(((0 0,40 130,120 150,170 90,150 10,60 -20,0 0)))",
      "MULTIPOLYGON(((400 0,400 80,460 80,460 0,400 0)),((480 0,480 80,540 80,540 0,480 0)))",
      "MULTIPOLYGON(((512000.5 6290000.25,512040.75 6290130.5,512170.125 6290090,512000.5 6290000.25)))",
  };
  for (const auto& wkt : cases) {
    const Window w = Window::from_polygons(from_wkt(wkt), "test");
    EXPECT_NEAR(w.area_m2(), gdal_area(wkt), 1e-6 * gdal_area(wkt)) << wkt;
  }
}

TEST(Window, HolesAndPartsAreCounted) {
  const Window w = Window::from_polygons(
      from_wkt("MULTIPOLYGON(((0 0,0 10,10 10,10 0,0 0),(4 4,6 4,6 6,4 6,4 4)),((20 0,20 5,25 5,25 0,20 0)))"), "test");
  EXPECT_EQ(w.part_count(), 2u);
  EXPECT_EQ(w.hole_count(), 1u);
  EXPECT_NEAR(w.area_m2(), 100.0 - 4.0 + 25.0, 1e-9);
  EXPECT_TRUE(w.contains({1, 1}));
  EXPECT_FALSE(w.contains({5, 5}));   // in the hole
  EXPECT_TRUE(w.contains({22, 2}));   // second part
  EXPECT_FALSE(w.contains({15, 2}));  // between parts
  EXPECT_TRUE(w.contains({0, 5}));    // boundary counts as inside
  EXPECT_FALSE(w.is_rectangle());
}

TEST(Window, RectangleIsRecognised) {
  const Window w = Window::rectangle(0, 0, 100, 50);
  EXPECT_TRUE(w.is_rectangle());
  EXPECT_NEAR(w.area_m2(), 5000.0, 1e-9);
  EXPECT_NEAR(w.perimeter_m(), 300.0, 1e-9);
}

TEST(Window, RefusesSelfIntersectingPolygon) {
  try {
    (void)Window::from_polygons(from_wkt("MULTIPOLYGON(((0 0,10 10,10 0,0 10,0 0)))"), "plots.gpkg");
    FAIL();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("plots.gpkg: plot polygon is not valid"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("repair_geometry"), std::string::npos);
  }
}

TEST(Window, RefusesEmptyAndZeroArea) {
  EXPECT_THROW((void)Window::from_polygons(BgMultiPolygon{}, "x"), InputError);
  EXPECT_THROW((void)Window::from_polygons(from_wkt("MULTIPOLYGON(((0 0,5 0,10 0,0 0)))"), "x"), InputError);
}

// A wobbly 120-vertex outline with a 40-vertex hole and a second 30-vertex part: enough
// edges for the window's edge index.
BgMultiPolygon many_edged_shape() {
  const auto ring = [](double cx, double cy, double rx, double ry, int vertices, bool clockwise) {
    BgPolygon::ring_type out;
    for (int i = 0; i <= vertices; ++i) {
      const double t = 2.0 * 3.141592653589793 * (i % vertices) / vertices * (clockwise ? -1.0 : 1.0);
      const double wobble = 1.0 + 0.08 * std::sin(5.0 * t) + 0.03 * std::cos(17.0 * t);
      out.push_back(BgPoint(cx + rx * wobble * std::cos(t), cy + ry * wobble * std::sin(t)));
    }
    return out;
  };
  BgPolygon main;
  main.outer() = ring(420000.0, 5710000.0, 600.0, 450.0, 120, true);
  main.inners().push_back(ring(420100.0, 5710050.0, 120.0, 80.0, 40, false));
  BgPolygon islet;
  islet.outer() = ring(421100.0, 5710000.0, 150.0, 150.0, 30, true);
  return {main, islet};
}

TEST(Window, IndexedEdgeQueriesEqualBoostGeometryAndDirectSums) {
  // Source: Boost.Geometry (covered_by, distance to the rings) as the reference library;
  // the share of a circle inside by 20,000 equally spaced points on it (error about
  // 1e-4 for a few crossings: common practice).
  const BgMultiPolygon shape = many_edged_shape();
  const Window w = Window::from_polygons(shape, "test");
  ASSERT_GT(w.edges().size(), 16U);
  std::vector<BgPolygon::ring_type> rings;
  for (const auto& polygon : shape) {
    rings.push_back(polygon.outer());
    for (const auto& inner : polygon.inners()) rings.push_back(inner);
  }
  std::uint64_t state = 12345;
  const auto uniform = [&state] {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    return static_cast<double>(state >> 11) / 9007199254740992.0;
  };
  const Bounds& b = w.bounds();
  int inside_count = 0;
  for (int i = 0; i < 4000; ++i) {
    const Point p{b.xmin - 50.0 + uniform() * (b.width() + 100.0), b.ymin - 50.0 + uniform() * (b.height() + 100.0)};
    const bool covered = bg::covered_by(BgPoint(p.x, p.y), shape);
    inside_count += covered ? 1 : 0;
    EXPECT_EQ(w.contains(p), covered) << p.x << " " << p.y;
    EXPECT_EQ(w.contains_almost_surely(p), covered) << p.x << " " << p.y;
    double nearest = std::numeric_limits<double>::infinity();
    for (const auto& r : rings) {
      bg::model::linestring<BgPoint> line(r.begin(), r.end());
      nearest = std::min(nearest, static_cast<double>(bg::distance(BgPoint(p.x, p.y), line)));
    }
    EXPECT_NEAR(w.boundary_distance(p), nearest, 1e-9 * (1.0 + nearest)) << p.x << " " << p.y;
  }
  EXPECT_GT(inside_count, 1000);
  // On the boundary: vertices and edge midpoints count as inside, as Boost says.
  for (const auto& e : w.edges()) {
    EXPECT_TRUE(w.contains(e.a));
    EXPECT_TRUE(w.contains({0.5 * (e.a.x + e.b.x), 0.5 * (e.a.y + e.b.y)}) ==
                bg::covered_by(BgPoint(0.5 * (e.a.x + e.b.x), 0.5 * (e.a.y + e.b.y)), shape));
  }
  for (int i = 0; i < 200; ++i) {
    const Point c{b.xmin + uniform() * b.width(), b.ymin + uniform() * b.height()};
    if (!w.contains(c)) continue;
    const double r = 5.0 + uniform() * 200.0;
    int in = 0;
    const int samples = 20000;
    for (int k = 0; k < samples; ++k) {
      const double t = 2.0 * 3.141592653589793 * (k + 0.5) / samples;
      in += bg::covered_by(BgPoint(c.x + r * std::cos(t), c.y + r * std::sin(t)), shape) ? 1 : 0;
    }
    EXPECT_NEAR(w.circle_fraction_inside(c, r), static_cast<double>(in) / samples, 1e-3)
        << c.x << " " << c.y << " r " << r;
  }
}

TEST(RipleyRassonHull, DilatesHullByPublishedFactor) {
  // Source: Ripley & Rasson (1977): hull dilated about its centroid by 1/sqrt(1 - m/n), so
  // the area grows by n / (n - m). Square hull (m = 4) with 4 interior points: n = 8.
  const std::vector<Point> points{{0, 0}, {10, 0}, {10, 10}, {0, 10}, {3, 3}, {7, 3}, {3, 7}, {7, 7}};
  const Window w = ripley_rasson_hull(points, "test");
  EXPECT_NEAR(w.area_m2(), 100.0 * 8.0 / 4.0, 1e-9);
  EXPECT_THROW((void)ripley_rasson_hull({{0, 0}, {1, 1}, {2, 2}}, "test"), AnalysisError);
  EXPECT_THROW((void)ripley_rasson_hull({{0, 0}, {1, 0}, {0, 1}}, "test"), AnalysisError);
}

}  // namespace
}  // namespace stipple
