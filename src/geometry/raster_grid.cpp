#include "stipple/geometry/raster_grid.hpp"

#include <cmath>
#include <limits>

namespace stipple {

std::optional<std::size_t> RasterGrid::cell_of(const Point& p) const {
  if (columns == 0 || rows == 0) return std::nullopt;
  const double column = std::floor((p.x - x_min) / cell_width);
  // As GDAL counts pixels and lines: the floor of the fractional position.
  const double r = std::floor((y_max - p.y) / cell_height);
  if (!(column >= 0.0 && column < static_cast<double>(columns) && r >= 0.0 && r < static_cast<double>(rows)))
    return std::nullopt;
  return static_cast<std::size_t>(r) * columns + static_cast<std::size_t>(column);
}

double RasterGrid::value_at(const Point& p) const {
  const auto cell = cell_of(p);
  if (!cell || *cell >= values.size()) return std::numeric_limits<double>::quiet_NaN();
  return values[*cell];
}

}  // namespace stipple
