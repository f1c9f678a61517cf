#include "stipple/geometry/spatial_index.hpp"

#include <algorithm>
#include <cmath>

namespace stipple {

PointGrid::PointGrid(const std::vector<Point>& points, double pointsper_cell) {
  if (points.empty()) {
    start_.assign(2, 0);
    return;
  }
  double xmax = points[0].x;
  double ymax = points[0].y;
  xmin_ = points[0].x;
  ymin_ = points[0].y;
  for (const auto& p : points) {
    xmin_ = std::min(xmin_, p.x);
    ymin_ = std::min(ymin_, p.y);
    xmax = std::max(xmax, p.x);
    ymax = std::max(ymax, p.y);
  }
  const double width = std::max(xmax - xmin_, 1e-9);
  const double height = std::max(ymax - ymin_, 1e-9);
  const double n = static_cast<double>(points.size());
  cell_ = std::sqrt(width * height * pointsper_cell / n);
  // Degenerate spreads (all points on a line) would give a huge grid: bound the cell count.
  cell_ = std::max(cell_, std::max(width, height) / 4096.0);
  nx_ = static_cast<std::size_t>(width / cell_) + 1;
  ny_ = static_cast<std::size_t>(height / cell_) + 1;
  std::vector<std::uint32_t> cell_of(points.size());
  start_.assign(nx_ * ny_ + 1, 0);
  for (std::size_t i = 0; i < points.size(); ++i) {
    cell_of[i] = static_cast<std::uint32_t>(cell_y(points[i].y) * nx_ + cell_x(points[i].x));
    ++start_[cell_of[i] + 1];
  }
  for (std::size_t c = 1; c < start_.size(); ++c) start_[c] += start_[c - 1];
  order_.resize(points.size());
  std::vector<std::uint32_t> fill(start_.begin(), start_.end() - 1);
  for (std::size_t i = 0; i < points.size(); ++i) order_[fill[cell_of[i]]++] = static_cast<std::uint32_t>(i);
  sorted_.resize(points.size());
  for (std::size_t k = 0; k < order_.size(); ++k) sorted_[k] = points[order_[k]];
}

std::size_t PointGrid::cell_x(double x) const {
  const double c = std::floor((x - xmin_) / cell_);
  if (c <= 0.0) return 0;
  return std::min(static_cast<std::size_t>(c), nx_ - 1);
}

std::size_t PointGrid::cell_y(double y) const {
  const double c = std::floor((y - ymin_) / cell_);
  if (c <= 0.0) return 0;
  return std::min(static_cast<std::size_t>(c), ny_ - 1);
}

double PointGrid::nearest_distance(const Point& query, std::size_t exclude) const {
  if (sorted_.empty()) return std::numeric_limits<double>::infinity();
  const std::size_t qx = cell_x(query.x);
  const std::size_t qy = cell_y(query.y);
  double best2 = std::numeric_limits<double>::infinity();
  // Search rings of cells around the query's cell until the ring lies beyond the best.
  const std::size_t max_ring = std::max(nx_, ny_);
  for (std::size_t ring = 0; ring <= max_ring; ++ring) {
    const std::size_t x0 = qx >= ring ? qx - ring : 0;
    const std::size_t x1 = std::min(qx + ring, nx_ - 1);
    const std::size_t y0 = qy >= ring ? qy - ring : 0;
    const std::size_t y1 = std::min(qy + ring, ny_ - 1);
    for (std::size_t cy = y0; cy <= y1; ++cy) {
      const bool edge_row = cy + ring == qy || cy == qy + ring;
      for (std::size_t cx = x0; cx <= x1; ++cx) {
        if (!edge_row && cx + ring != qx && cx != qx + ring) continue;  // inner cells done
        const std::size_t c = cy * nx_ + cx;
        for (std::uint32_t k = start_[c]; k < start_[c + 1]; ++k) {
          if (order_[k] == exclude) continue;
          const double dx = sorted_[k].x - query.x;
          const double dy = sorted_[k].y - query.y;
          best2 = std::min(best2, dx * dx + dy * dy);
        }
      }
    }
    // Every point outside the searched block is farther than ring * cell from the query.
    const double reach = static_cast<double>(ring) * cell_;
    if (best2 <= reach * reach) break;
  }
  return std::sqrt(best2);
}

std::vector<double> PointGrid::nearest_neighbour_distances() const {
  std::vector<double> d(sorted_.size());
  // In cell order: consecutive queries touch the same cells.
  for (std::size_t k = 0; k < sorted_.size(); ++k) d[order_[k]] = nearest_distance(sorted_[k], order_[k]);
  return d;
}

}  // namespace stipple
