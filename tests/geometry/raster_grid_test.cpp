// Which raster cell holds a point: GDAL's pixel/line convention (the floor of the
// fractional pixel position; GDAL raster data model, "Affine GeoTransform").

#include "stipple/geometry/raster_grid.hpp"

#include <cmath>

#include <gtest/gtest.h>

namespace stipple {
namespace {

RasterGrid grid() {
  RasterGrid g;
  g.x_min = 100.0;
  g.y_max = 500.0;
  g.cell_width = 10.0;
  g.cell_height = 20.0;
  g.columns = 3;
  g.rows = 2;
  g.values = {1, 2, 3, 4, 5, std::nan("")};
  return g;
}

TEST(RasterGrid, CellHoldingAPointFollowsGdalsPixelLineConvention) {
  const RasterGrid g = grid();
  EXPECT_EQ(g.value_at({105, 495}), 1.0);
  EXPECT_EQ(g.value_at({115, 470}), 5.0);
  // Edges: x = 110 is the west edge of column 1; y = 480 is the top edge of row 1.
  EXPECT_EQ(g.value_at({110, 490}), 2.0);
  EXPECT_EQ(g.value_at({105, 480}), 4.0);
  EXPECT_EQ(g.value_at({100, 500}), 1.0);           // the north-west corner is inside
  EXPECT_TRUE(std::isnan(g.value_at({125, 465})));  // no data
  EXPECT_TRUE(std::isnan(g.value_at({130, 470})));  // east edge of the raster: outside
  EXPECT_TRUE(std::isnan(g.value_at({105, 460})));  // south edge: outside
  EXPECT_TRUE(std::isnan(g.value_at({99.99, 490})));
  EXPECT_FALSE(g.cell_of({105, 500.01}).has_value());
  EXPECT_EQ(g.x_max(), 130.0);
  EXPECT_EQ(g.y_min(), 460.0);
}

}  // namespace
}  // namespace stipple
