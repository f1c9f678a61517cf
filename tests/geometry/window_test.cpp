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
