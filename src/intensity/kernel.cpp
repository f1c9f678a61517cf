#include "stipple/intensity/kernel.hpp"

#include <cmath>
#include <limits>

#include "stipple/error.hpp"

namespace stipple {

double scott_bandwidth(const std::vector<Point>& points) {
  const std::size_t n = points.size();
  if (n < 2) return 0.0;
  double mx = 0.0, my = 0.0;
  for (const auto& p : points) {
    mx += p.x;
    my += p.y;
  }
  mx /= static_cast<double>(n);
  my /= static_cast<double>(n);
  double sx = 0.0, sy = 0.0;
  for (const auto& p : points) {
    sx += (p.x - mx) * (p.x - mx);
    sy += (p.y - my) * (p.y - my);
  }
  const double variance = (sx + sy) / (2.0 * static_cast<double>(n - 1));
  return std::pow(static_cast<double>(n), -1.0 / 6.0) * std::sqrt(variance);
}

IntensityRaster make_raster(const Bounds& bounds, double pixel_m) {
  if (!(pixel_m > 0.0)) throw InputError("the pixel size must be positive");
  IntensityRaster r;
  r.pixel_m = pixel_m;
  r.x_min = bounds.xmin;
  r.y_max = bounds.ymax;
  r.width = static_cast<std::size_t>(std::ceil(bounds.width() / pixel_m));
  r.height = static_cast<std::size_t>(std::ceil(bounds.height() / pixel_m));
  if (r.width == 0 || r.height == 0 || r.width * r.height > 50'000'000)
    throw InputError("the surface would have " + std::to_string(r.width) + " x " + std::to_string(r.height) +
                     " pixels; choose a larger --pixel");
  r.values.assign(r.width * r.height, std::numeric_limits<double>::quiet_NaN());
  return r;
}

void add_kernel_intensity(IntensityRaster& raster, const std::vector<Point>& points, const Window& window,
                          double bandwidth_m, double per_unit) {
  if (!(bandwidth_m > 0.0)) throw AnalysisError("the kernel bandwidth must be positive");
  const double h2 = bandwidth_m * bandwidth_m;
  const double norm = 1.0 / (2.0 * 3.14159265358979323846 * h2);
  const double reach = 4.0 * bandwidth_m;
  const double px = raster.pixel_m;
  const auto centre = [&](std::size_t col, std::size_t row) {
    return Point{raster.x_min + (static_cast<double>(col) + 0.5) * px, raster.y_max - (static_cast<double>(row) + 0.5) * px};
  };
  // Pixels of this window.
  std::vector<std::size_t> inside;
  std::vector<char> in_window(raster.values.size(), 0);
  const Bounds& b = window.bounds();
  const auto col_of = [&](double x) { return static_cast<long>(std::floor((x - raster.x_min) / px)); };
  const auto row_of = [&](double y) { return static_cast<long>(std::floor((raster.y_max - y) / px)); };
  const long c0 = std::max(0L, col_of(b.xmin)), c1 = std::min(static_cast<long>(raster.width) - 1, col_of(b.xmax));
  const long r0 = std::max(0L, row_of(b.ymax)), r1 = std::min(static_cast<long>(raster.height) - 1, row_of(b.ymin));
  for (long row = r0; row <= r1; ++row) {
    for (long col = c0; col <= c1; ++col) {
      const auto idx = static_cast<std::size_t>(row) * raster.width + static_cast<std::size_t>(col);
      if (window.contains_almost_surely(centre(static_cast<std::size_t>(col), static_cast<std::size_t>(row)))) {
        inside.push_back(idx);
        in_window[idx] = 1;
      }
    }
  }
  const long span = static_cast<long>(std::ceil(reach / px));
  std::vector<double> sum(raster.values.size(), 0.0);
  for (const auto& p : points) {
    const long pc = col_of(p.x), pr = row_of(p.y);
    for (long row = std::max(0L, pr - span); row <= std::min(static_cast<long>(raster.height) - 1, pr + span); ++row) {
      for (long col = std::max(0L, pc - span); col <= std::min(static_cast<long>(raster.width) - 1, pc + span); ++col) {
        const auto idx = static_cast<std::size_t>(row) * raster.width + static_cast<std::size_t>(col);
        if (!in_window[idx]) continue;
        const Point u = centre(static_cast<std::size_t>(col), static_cast<std::size_t>(row));
        const double d2 = (u.x - p.x) * (u.x - p.x) + (u.y - p.y) * (u.y - p.y);
        sum[idx] += norm * std::exp(-d2 / (2.0 * h2));
      }
    }
  }
  // Edge correction: the kernel mass inside the window around each pixel, on the same
  // pixels. The Gaussian is separable, so the window mask is convolved row by row, then
  // column by column.
  std::vector<double> kernel_1d(static_cast<std::size_t>(2 * span + 1));
  for (long d = -span; d <= span; ++d)
    kernel_1d[static_cast<std::size_t>(d + span)] =
        std::exp(-static_cast<double>(d * d) * px * px / (2.0 * h2)) * px / std::sqrt(2.0 * 3.14159265358979323846 * h2);
  const auto w = static_cast<long>(raster.width);
  const auto hgt = static_cast<long>(raster.height);
  std::vector<double> rows_pass(raster.values.size(), 0.0);
  for (long row = std::max(0L, r0 - span); row <= std::min(hgt - 1, r1 + span); ++row) {
    for (long col = std::max(0L, c0 - span); col <= std::min(w - 1, c1 + span); ++col) {
      double acc = 0.0;
      for (long d = -span; d <= span; ++d) {
        const long cc = col + d;
        if (cc < c0 || cc > c1) continue;
        if (in_window[static_cast<std::size_t>(row * w + cc)]) acc += kernel_1d[static_cast<std::size_t>(d + span)];
      }
      rows_pass[static_cast<std::size_t>(row * w + col)] = acc;
    }
  }
  for (const auto idx : inside) {
    const long row = static_cast<long>(idx / raster.width);
    const long col = static_cast<long>(idx % raster.width);
    double mass = 0.0;
    for (long d = -span; d <= span; ++d) {
      const long rr = row + d;
      if (rr < 0 || rr >= hgt) continue;
      mass += kernel_1d[static_cast<std::size_t>(d + span)] * rows_pass[static_cast<std::size_t>(rr * w + col)];
    }
    raster.values[idx] = mass > 0.0 ? sum[idx] / mass * per_unit : 0.0;
  }
}

IntensityRaster intensity_surface(const Survey& survey, std::optional<std::size_t> species, double per_unit,
                                  std::optional<double> pixel_m, std::optional<double> bandwidth_m) {
  if (survey.plots.empty()) throw AnalysisError("an intensity surface needs at least one plot");
  Bounds all = survey.plots.front().window.bounds();
  for (const auto& plot : survey.plots) {
    const Bounds& b = plot.window.bounds();
    all = {std::min(all.xmin, b.xmin), std::min(all.ymin, b.ymin), std::max(all.xmax, b.xmax), std::max(all.ymax, b.ymax)};
  }
  const double pixel = pixel_m.value_or(std::max(0.1, std::min(all.width(), all.height()) / 200.0));
  IntensityRaster raster = make_raster(all, pixel);
  for (std::size_t p = 0; p < survey.plots.size(); ++p) {
    const MarkedPattern& pattern = survey.patterns[p];
    std::vector<Point> points;
    for (std::size_t i = 0; i < pattern.points.size(); ++i)
      if (!species || pattern.marks[i] == *species) points.push_back(pattern.points[i]);
    double h = bandwidth_m.value_or(scott_bandwidth(points));
    if (!(h > 0.0)) h = scott_bandwidth(pattern.points);
    if (!(h > 0.0)) h = std::sqrt(survey.plots[p].window.area_m2()) / 4.0;
    add_kernel_intensity(raster, points, survey.plots[p].window, h, per_unit);
  }
  return raster;
}

}  // namespace stipple
