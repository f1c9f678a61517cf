#pragma once
/// A north-up raster of values in the planar analysis CRS: covariates such as elevation,
/// soil moisture or land cover, already read and reprojected.

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/point.hpp"

namespace stipple {

/// Cell (row, column) covers x in [x_min + column w, x_min + (column + 1) w) and
/// y in (y_max - (row + 1) h, y_max - row h], w = cell_width, h = cell_height (metres).
/// A point on the edge between two cells belongs to the cell to its east or south (as GDAL
/// counts pixels and lines), so every point of the covered rectangle is in exactly one cell.
struct RasterGrid {
  double x_min = 0.0;
  double y_max = 0.0;
  double cell_width = 1.0;
  double cell_height = 1.0;
  std::size_t columns = 0;
  std::size_t rows = 0;
  /// Row-major from the top row; NaN where the raster has no data.
  std::vector<double> values;

  [[nodiscard]] double x_max() const { return x_min + static_cast<double>(columns) * cell_width; }
  [[nodiscard]] double y_min() const { return y_max - static_cast<double>(rows) * cell_height; }
  /// Index into `values` of the cell holding `p`; empty outside the raster.
  [[nodiscard]] std::optional<std::size_t> cell_of(const Point& p) const;
  /// The value of the cell holding `p`: NaN outside the raster or where it has no data.
  [[nodiscard]] double value_at(const Point& p) const;
};

}  // namespace stipple
