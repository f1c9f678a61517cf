#pragma once
// A uniform grid whose cells (and, if asked, rows) list the items whose bounding boxes
// overlap them, in item order (internal). Windows index their edges with it, plot
// assignment its plots.

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <vector>

#include "stipple/geometry/window.hpp"

namespace stipple::geometry_detail {

class BoxGrid {
 public:
  // The items of one cell or row, ascending.
  struct Items {
    const std::uint32_t* first;
    const std::uint32_t* last;
    [[nodiscard]] const std::uint32_t* begin() const { return first; }
    [[nodiscard]] const std::uint32_t* end() const { return last; }
  };

  BoxGrid() = default;
  // About `cells` cells over `bounds`, shaped like it, at most `max_side` a side; item i
  // covers boxes[i]. With `rows`, each row also lists the items whose y-range overlaps it.
  BoxGrid(const Bounds& bounds, const std::vector<Bounds>& boxes, double cells, double max_side, bool rows)
      : bounds_(bounds) {
    const double w = std::max(bounds.width(), 1e-9);
    const double h = std::max(bounds.height(), 1e-9);
    nx_ = static_cast<std::size_t>(std::clamp(std::ceil(std::sqrt(cells * w / h)), 1.0, max_side));
    ny_ = static_cast<std::size_t>(std::clamp(std::ceil(cells / static_cast<double>(nx_)), 1.0, max_side));
    cell_w_ = w / static_cast<double>(nx_);
    cell_h_ = h / static_cast<double>(ny_);
    fill(nx_ * ny_, boxes, false, cell_start_, cell_items_);
    if (rows) fill(ny_, boxes, true, row_start_, row_items_);
  }

  [[nodiscard]] bool empty() const { return cell_start_.empty(); }
  [[nodiscard]] bool has_rows() const { return !row_start_.empty(); }
  [[nodiscard]] const Bounds& bounds() const { return bounds_; }
  [[nodiscard]] std::size_t columns() const { return nx_; }
  [[nodiscard]] std::size_t rows() const { return ny_; }
  [[nodiscard]] double cell_width() const { return cell_w_; }
  [[nodiscard]] double cell_height() const { return cell_h_; }
  // The column (row) of x (y), clamped to the grid.
  [[nodiscard]] std::size_t column(double x) const { return clamped(x, bounds_.xmin, cell_w_, nx_); }
  [[nodiscard]] std::size_t row(double y) const { return clamped(y, bounds_.ymin, cell_h_, ny_); }
  [[nodiscard]] Items cell(std::size_t column, std::size_t row) const {
    const std::size_t c = row * nx_ + column;
    return {cell_items_.data() + cell_start_[c], cell_items_.data() + cell_start_[c + 1]};
  }
  [[nodiscard]] Items row_items(std::size_t row) const {
    return {row_items_.data() + row_start_[row], row_items_.data() + row_start_[row + 1]};
  }

 private:
  static std::size_t clamped(double v, double origin, double size, std::size_t count) {
    const double c = std::floor((v - origin) / size);
    if (!(c > 0.0)) return 0;
    return std::min(static_cast<std::size_t>(c), count - 1);
  }

  // Compressed lists: a count pass, then a fill pass in item order.
  void fill(std::size_t keys, const std::vector<Bounds>& boxes, bool by_row, std::vector<std::uint32_t>& start,
            std::vector<std::uint32_t>& items) const {
    const auto for_each_key = [&](const Bounds& b, auto&& visit) {
      const std::size_t x0 = column(b.xmin);
      const std::size_t x1 = column(b.xmax);
      for (std::size_t y = row(b.ymin); y <= row(b.ymax); ++y) {
        if (by_row) {
          visit(y);
          continue;
        }
        for (std::size_t x = x0; x <= x1; ++x) visit(y * nx_ + x);
      }
    };
    start.assign(keys + 1, 0);
    for (const auto& b : boxes) for_each_key(b, [&](std::size_t key) { ++start[key + 1]; });
    for (std::size_t k = 0; k < keys; ++k) start[k + 1] += start[k];
    items.resize(start[keys]);
    std::vector<std::uint32_t> next(start.begin(), start.end() - 1);
    for (std::size_t i = 0; i < boxes.size(); ++i)
      for_each_key(boxes[i], [&](std::size_t key) { items[next[key]++] = static_cast<std::uint32_t>(i); });
  }

  Bounds bounds_;
  std::size_t nx_ = 1;
  std::size_t ny_ = 1;
  double cell_w_ = 1.0;
  double cell_h_ = 1.0;
  std::vector<std::uint32_t> cell_start_;
  std::vector<std::uint32_t> cell_items_;
  std::vector<std::uint32_t> row_start_;
  std::vector<std::uint32_t> row_items_;
};

}  // namespace stipple::geometry_detail
