#include "stipple/intensity/kernel.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <boost/math/constants/constants.hpp>
#include <boost/math/quadrature/gauss_kronrod.hpp>

#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple {

namespace {
constexpr double pi = boost::math::double_constants::pi;
}  // namespace

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

double gaussian_window_mass(const Window& window, const Point& u, double bandwidth_m) {
  // Each directed edge (a, b) and the centre u span a signed triangle; summed over every
  // ring the signed triangles cover the window once (outer rings and holes with opposite
  // orientations). In polar coordinates about u the Gaussian mass of a triangle is
  // (1 / 2 pi) integral over its angle of 1 - exp(-rho(theta)^2 / 2 h^2), rho(theta) =
  // p / cos(theta - theta_n) the distance to the edge's line at perpendicular distance p.
  const double two_h2 = 2.0 * bandwidth_m * bandwidth_m;
  const auto edge_mass = [&](const BgPoint& a, const BgPoint& b) {
    const double ax = a.x() - u.x, ay = a.y() - u.y, bx = b.x() - u.x, by = b.y() - u.y;
    const double cross = ax * by - ay * bx;
    const double span = std::atan2(cross, ax * bx + ay * by);  // signed angle a -> b
    const double length = std::hypot(bx - ax, by - ay);
    if (length == 0.0 || span == 0.0) return 0.0;
    const double p = std::abs(cross) / length;
    if (p * p > 40.0 * two_h2) return span / (2.0 * pi);  // the Gaussian is all inside: e^-40
    // Angles measured from the foot of the perpendicular: theta_a = angle of a from it.
    const double foot_x = ax + (bx - ax) * (-(ax * (bx - ax) + ay * (by - ay)) / (length * length));
    const double foot_y = ay + (by - ay) * (-(ax * (bx - ax) + ay * (by - ay)) / (length * length));
    const double theta_n = std::atan2(foot_y, foot_x);
    double start = std::atan2(ay, ax) - theta_n;
    start = std::remainder(start, 2.0 * pi);
    const auto integrand = [&](double t) {
      const double c = std::cos(t);
      return 1.0 - std::exp(-(p * p) / (c * c * two_h2));
    };
    const double value = boost::math::quadrature::gauss_kronrod<double, 21>::integrate(
        integrand, std::min(start, start + span), std::max(start, start + span), 8, 1e-9);
    return (span > 0.0 ? value : -value) / (2.0 * pi);
  };
  double total = 0.0;
  const auto ring_mass = [&](const auto& ring) {
    for (std::size_t k = 0; k + 1 < ring.size(); ++k) total += edge_mass(ring[k], ring[k + 1]);
  };
  for (const auto& polygon : window.shape()) {
    ring_mass(polygon.outer());
    for (const auto& hole : polygon.inners()) ring_mass(hole);
  }
  return std::clamp(std::abs(total), 0.0, 1.0);
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
                         " pixels; choose a larger pixel_m",
                     {"pixel_m"});
  r.values.assign(r.width * r.height, std::numeric_limits<double>::quiet_NaN());
  return r;
}

double add_kernel_intensity(IntensityRaster& raster, const std::vector<Point>& points, const Window& window,
                            double bandwidth_m, double per_unit,
                            const std::function<void(std::size_t, std::size_t)>& progress) {
  if (!(bandwidth_m > 0.0)) throw AnalysisError("the kernel bandwidth must be positive");
  const double h2 = bandwidth_m * bandwidth_m;
  const double norm = 1.0 / (boost::math::double_constants::two_pi * h2);
  const double reach = 4.0 * bandwidth_m;
  const double px = raster.pixel_m;
  const auto centre = [&](std::size_t col, std::size_t row) {
    return Point{raster.x_min + (static_cast<double>(col) + 0.5) * px,
                 raster.y_max - (static_cast<double>(row) + 0.5) * px};
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
  // Local edge correction: each sighting's kernel is divided by its own mass inside the
  // window, e_h(x_i), computed from the window's edges (gaussian_window_mass).
  std::vector<double> sum(raster.values.size(), 0.0);
  for (std::size_t i = 0; i < points.size(); ++i) {
    const Point& p = points[i];
    if (progress) progress(i, points.size());
    const double mass = gaussian_window_mass(window, p, bandwidth_m);
    const double weight = mass > 0.0 ? norm / mass : 0.0;
    const long pc = col_of(p.x), pr = row_of(p.y);
    for (long row = std::max(0L, pr - span); row <= std::min(static_cast<long>(raster.height) - 1, pr + span); ++row) {
      for (long col = std::max(0L, pc - span); col <= std::min(static_cast<long>(raster.width) - 1, pc + span); ++col) {
        const auto idx = static_cast<std::size_t>(row) * raster.width + static_cast<std::size_t>(col);
        if (!in_window[idx]) continue;
        const Point u = centre(static_cast<std::size_t>(col), static_cast<std::size_t>(row));
        const double d2 = (u.x - p.x) * (u.x - p.x) + (u.y - p.y) * (u.y - p.y);
        sum[idx] += weight * std::exp(-d2 / (2.0 * h2));
      }
    }
  }
  if (progress) progress(points.size(), points.size());
  for (const auto idx : inside) raster.values[idx] = sum[idx] * per_unit;
  double integral = 0.0;
  for (const auto idx : inside) integral += raster.values[idx];
  return integral * px * px / per_unit;
}

IntensityRaster intensity_surface(const Survey& survey, std::optional<std::size_t> species, double per_unit,
                                  std::optional<double> pixel_m, std::optional<double> bandwidth_m,
                                  const std::function<void(std::size_t, std::size_t)>& progress) {
  if (survey.plots().empty()) throw AnalysisError("an intensity surface needs at least one plot");
  Bounds all = survey.plots().front().window.bounds();
  for (const auto& plot : survey.plots()) {
    const Bounds& b = plot.window.bounds();
    all = {std::min(all.xmin, b.xmin), std::min(all.ymin, b.ymin), std::max(all.xmax, b.xmax),
           std::max(all.ymax, b.ymax)};
  }
  // Each plot's points and bandwidth first: the pixel must be finer than every kernel.
  std::vector<std::vector<Point>> points(survey.plots().size());
  std::vector<double> bandwidths(survey.plots().size());
  double finest = std::numeric_limits<double>::infinity();
  for (std::size_t p = 0; p < survey.plots().size(); ++p) {
    const MarkedPattern& pattern = survey.patterns()[p];
    for (std::size_t i = 0; i < pattern.points.size(); ++i)
      if (!species || pattern.marks[i] == *species) points[p].push_back(pattern.points[i]);
    double h = bandwidth_m.value_or(scott_bandwidth(points[p]));
    if (!(h > 0.0)) h = scott_bandwidth(pattern.points);
    if (!(h > 0.0)) h = std::sqrt(survey.plots()[p].window.area_m2()) / 4.0;
    bandwidths[p] = h;
    if (!points[p].empty()) finest = std::min(finest, h);
  }
  if (pixel_m && std::isfinite(finest) && *pixel_m > finest)
    throw InputError("the pixel size " + format_significant(*pixel_m, 3) + " m is larger than the kernel bandwidth " +
                     format_significant(finest, 3) + " m: the surface would not keep its mass; use a pixel of " +
                     format_significant(finest / 2.0, 3) + " m or less");
  double pixel = pixel_m.value_or(std::max(0.1, std::min(all.width(), all.height()) / 200.0));
  // By default a tenth of the finest bandwidth (pixel-centre sums then keep each plot's mass
  // to about 1%), but no finer than 20 million pixels over the extent.
  if (!pixel_m && std::isfinite(finest))
    pixel = std::max(std::min(pixel, finest / 10.0), std::sqrt(all.width() * all.height() / 20e6));
  IntensityRaster raster = make_raster(all, pixel);
  std::size_t total = 0;
  for (const auto& plot_points : points) total += plot_points.size();
  std::size_t done = 0;
  for (std::size_t p = 0; p < survey.plots().size(); ++p) {
    std::function<void(std::size_t, std::size_t)> plot_progress;
    if (progress) plot_progress = [&](std::size_t i, std::size_t) { progress(done + i, total); };
    const double integral =
        add_kernel_intensity(raster, points[p], survey.plots()[p].window, bandwidths[p], per_unit, plot_progress);
    done += points[p].size();
    const auto n = static_cast<double>(points[p].size());
    if (n > 0.0 && std::abs(integral - n) > 0.02 * n) {
      raster.warnings.push_back("plot '" + survey.plots()[p].id + "': the surface integrates to " +
                                format_significant(integral, 4) + " against " + std::to_string(points[p].size()) +
                                " sightings (more than 2% off: a plot narrower than a few pixels, or a kernel "
                                "mostly outside the plot)");
    }
  }
  return raster;
}

}  // namespace stipple
