#pragma once
/// A uniform-grid spatial index for nearest-neighbour and fixed-radius pair queries.
/// Measured faster than a Boost.Geometry rtree for these queries (bench/nearest_bench.cpp).

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <vector>

#include "stipple/geometry/point.hpp"

namespace stipple {

/// Buckets points into square cells of about `points_per_cell` points each.
/// Holds the points in cell order (its own copy, 20 bytes a point); queries are const and
/// thread-safe.
class PointGrid {
 public:
  explicit PointGrid(const std::vector<Point>& points, double points_per_cell = 2.0);

  [[nodiscard]] std::size_t size() const { return sorted_.size(); }

  /// Distance from each point to its nearest other point (infinity when alone).
  [[nodiscard]] std::vector<double> nearest_neighbour_distances() const;
  /// Distance from `query` to the nearest indexed point (infinity when empty).
  /// `exclude` skips one index (the query point itself).
  [[nodiscard]] double nearest_distance(const Point& query,
                                        std::size_t exclude = std::numeric_limits<std::size_t>::max()) const;

  /// Calls visit(i, j, distance) once for every unordered pair i < j not farther than
  /// `radius` (in cell order, not index order).
  template <typename Visit>
  void for_each_pair_within(double radius, Visit&& visit) const;

  /// Calls visit(j, distance) for every indexed point within `radius` of `query`.
  template <typename Visit>
  void for_each_within(const Point& query, double radius, Visit&& visit) const;

 private:
  [[nodiscard]] std::size_t cell_x(double x) const;
  [[nodiscard]] std::size_t cell_y(double y) const;
  std::vector<Point> sorted_;         // the points in cell order, for cache-friendly scans
  std::vector<std::uint32_t> order_;  // original index of each sorted point
  std::vector<std::uint32_t> start_;  // first position in order_ of each cell, plus sentinel
  double xmin_ = 0.0;
  double ymin_ = 0.0;
  double cell_ = 1.0;
  std::size_t nx_ = 1;
  std::size_t ny_ = 1;
};

template <typename Visit>
void PointGrid::for_each_within(const Point& query, double radius, Visit&& visit) const {
  if (sorted_.empty()) return;
  const double r2 = radius * radius;
  const std::size_t x0 = cell_x(query.x - radius);
  const std::size_t x1 = cell_x(query.x + radius);
  const std::size_t y0 = cell_y(query.y - radius);
  const std::size_t y1 = cell_y(query.y + radius);
  for (std::size_t cy = y0; cy <= y1; ++cy) {
    for (std::size_t cx = x0; cx <= x1; ++cx) {
      const std::size_t c = cy * nx_ + cx;
      for (std::uint32_t k = start_[c]; k < start_[c + 1]; ++k) {
        const double dx = sorted_[k].x - query.x;
        const double dy = sorted_[k].y - query.y;
        const double d2 = dx * dx + dy * dy;
        if (d2 <= r2) visit(static_cast<std::size_t>(order_[k]), std::sqrt(d2));
      }
    }
  }
}

template <typename Visit>
void PointGrid::for_each_pair_within(double radius, Visit&& visit) const {
  if (sorted_.empty()) return;
  const double r2 = radius * radius;
  const auto reach = static_cast<std::size_t>(std::ceil(radius / cell_));
  const auto pair = [&](std::uint32_t k, std::uint32_t l) {
    const double dx = sorted_[k].x - sorted_[l].x;
    const double dy = sorted_[k].y - sorted_[l].y;
    const double d2 = dx * dx + dy * dy;
    if (d2 > r2) return;
    const std::size_t i = order_[k];
    const std::size_t j = order_[l];
    if (i < j)
      visit(i, j, std::sqrt(d2));
    else
      visit(j, i, std::sqrt(d2));
  };
  // Each unordered pair once: same cell (k < l), then only "forward" neighbour cells.
  for (std::size_t cy = 0; cy < ny_; ++cy) {
    for (std::size_t cx = 0; cx < nx_; ++cx) {
      const std::size_t c = cy * nx_ + cx;
      if (start_[c] == start_[c + 1]) continue;
      for (std::uint32_t k = start_[c]; k < start_[c + 1]; ++k)
        for (std::uint32_t l = k + 1; l < start_[c + 1]; ++l) pair(k, l);
      const std::size_t y_end = std::min(ny_ - 1, cy + reach);
      for (std::size_t oy = cy; oy <= y_end; ++oy) {
        const std::size_t x_begin = oy == cy ? cx + 1 : (cx >= reach ? cx - reach : 0);
        const std::size_t x_end = std::min(nx_ - 1, cx + reach);
        for (std::size_t ox = x_begin; ox <= x_end; ++ox) {
          const std::size_t o = oy * nx_ + ox;
          for (std::uint32_t k = start_[c]; k < start_[c + 1]; ++k)
            for (std::uint32_t l = start_[o]; l < start_[o + 1]; ++l) pair(k, l);
        }
      }
    }
  }
}

}  // namespace stipple
