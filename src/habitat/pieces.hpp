#pragma once
// The window as pieces of constant covariate value, shared by the habitat fits and tests
// (internal).

#include <cmath>
#include <cstddef>
#include <string>
#include <vector>

#include <algorithm>
#include <functional>

#include <boost/geometry.hpp>

#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/habitat/habitat_model.hpp"

namespace stipple::habitat_detail {

// The window's total area; throws InputError, naming `who` and the piece, unless every
// area is finite and positive and there is at least one.
inline double total_piece_area(const std::vector<double>& area_m2, const std::string& who) {
  if (area_m2.empty()) throw InputError(who + ": the window has no pieces");
  double total = 0.0;
  for (std::size_t i = 0; i < area_m2.size(); ++i) {
    const double a = area_m2[i];
    if (!(a > 0.0) || !std::isfinite(a))
      throw InputError(who + ": window piece " + std::to_string(i) + " has area " + format_general(a));
    total += a;
  }
  return total;
}

struct Moments {
  double mean = 0.0;
  double variance = 0.0;
};

// Area-weighted mean and variance over the window of the values at offset, offset +
// stride, ... (one per piece).
inline Moments area_moments(const std::vector<double>& area_m2, double total, const std::vector<double>& values,
                            std::size_t stride = 1, std::size_t offset = 0) {
  Moments m;
  for (std::size_t i = 0; i < area_m2.size(); ++i) m.mean += area_m2[i] * values[i * stride + offset];
  m.mean /= total;
  for (std::size_t i = 0; i < area_m2.size(); ++i) {
    const double e = values[i * stride + offset] - m.mean;
    m.variance += area_m2[i] * e * e;
  }
  m.variance /= total;
  return m;
}

// The breaks of a grid's cell edges strictly inside (low, high).
inline void add_breaks(std::vector<double>& breaks, double origin, double step, std::size_t count, bool descending,
                       double low, double high) {
  for (std::size_t j = 0; j <= count; ++j) {
    const double b = descending ? origin - static_cast<double>(j) * step : origin + static_cast<double>(j) * step;
    if (b > low && b < high) breaks.push_back(b);
  }
}

inline std::vector<double> sorted_breaks(std::vector<double> breaks, double low, double high) {
  breaks.push_back(low);
  breaks.push_back(high);
  std::sort(breaks.begin(), breaks.end());
  breaks.erase(std::unique(breaks.begin(), breaks.end()), breaks.end());
  return breaks;
}

// The covariate values at a point: a raster's cell value, or the exact distance.
inline void values_at(const std::vector<HabitatCovariate>& covariates, const Point& p, std::vector<double>& v) {
  v.resize(covariates.size());
  for (std::size_t k = 0; k < covariates.size(); ++k)
    v[k] = covariates[k].distance_to ? covariates[k].distance_to->distance(p) : covariates[k].grid.value_at(p);
}

// Cuts `w` along the cell edges of every covariate's grid (a distance covariate's grid is
// its quadrature cells) and calls visit(centre, area, values) for each piece of positive
// area; values (NaN where missing) are those at the piece's rectangle centre, which lies
// in one cell of every grid. Cells far from the boundary are whole; the others are clipped
// exactly by Boost.Geometry.
inline void cut_window(const Window& w, const std::vector<HabitatCovariate>& covariates,
                       const std::function<void(const Point&, double, const std::vector<double>&)>& visit) {
  namespace bg = boost::geometry;
  const Bounds& b = w.bounds();
  std::vector<double> xs;
  std::vector<double> ys;
  for (const auto& c : covariates) {
    add_breaks(xs, c.grid.x_min, c.grid.cell_width, c.grid.columns, false, b.xmin, b.xmax);
    add_breaks(ys, c.grid.y_max, c.grid.cell_height, c.grid.rows, true, b.ymin, b.ymax);
  }
  xs = sorted_breaks(std::move(xs), b.xmin, b.xmax);
  ys = sorted_breaks(std::move(ys), b.ymin, b.ymax);
  std::vector<double> v;
  for (std::size_t r = 0; r + 1 < ys.size(); ++r) {
    for (std::size_t c = 0; c + 1 < xs.size(); ++c) {
      const double x0 = xs[c];
      const double x1 = xs[c + 1];
      const double y0 = ys[r];
      const double y1 = ys[r + 1];
      const Point centre{0.5 * (x0 + x1), 0.5 * (y0 + y1)};
      const double half_diagonal = 0.5 * std::hypot(x1 - x0, y1 - y0);
      double area = 0.0;
      if (w.boundary_distance(centre) > half_diagonal) {
        if (!w.contains_almost_surely(centre)) continue;
        area = (x1 - x0) * (y1 - y0);
      } else {
        const BgBox box(BgPoint(x0, y0), BgPoint(x1, y1));
        BgMultiPolygon clipped;
        bg::intersection(box, w.shape(), clipped);
        area = bg::area(clipped);
        if (!(area > 0.0)) continue;
      }
      // A distance covariate's cells only cut the window; each piece is at the distance of
      // its own centre (midpoint quadrature).
      values_at(covariates, centre, v);
      visit(centre, area, v);
    }
  }
}

}  // namespace stipple::habitat_detail
