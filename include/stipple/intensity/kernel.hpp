#pragma once
/// Kernel-smoothed intensity surfaces with edge correction.

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/geometry/window.hpp"

namespace stipple {

/// A north-up raster: values row by row from the top; NaN outside every window.
struct IntensityRaster {
  double x_min = 0.0;  ///< left edge, metres
  double y_max = 0.0;  ///< top edge, metres
  double pixel_m = 1.0;
  std::size_t width = 0;
  std::size_t height = 0;
  std::vector<double> values;
  /// Plots whose surface does not integrate to within 2% of their sightings.
  std::vector<std::string> warnings;
};

/// Scott's rule for an isotropic Gaussian kernel: h = n^(-1/6) sqrt((s_x^2 + s_y^2) / 2)
/// (Scott 1992, Multivariate Density Estimation, from memory: the 2-D form). 0 with < 2 points.
[[nodiscard]] double scott_bandwidth(const std::vector<Point>& points);

/// An empty raster covering `bounds` with square pixels of `pixel_m`.
[[nodiscard]] IntensityRaster make_raster(const Bounds& bounds, double pixel_m);

/// The mass of an isotropic Gaussian of standard deviation `bandwidth_m` centred at `u`
/// that lies inside `window`, e_h(u) = integral over W of k_h(u - v) dv, from the window's
/// edges: a signed sum over edges of one-dimensional integrals in polar coordinates about u
/// (Gauss-Kronrod quadrature, Boost.Math, tolerance 1e-9), for any polygon with holes.
[[nodiscard]] double gaussian_window_mass(const Window& window, const Point& u, double bandwidth_m);

/// Adds the Gaussian-kernel intensity of `points` in `window` to the pixels whose centres
/// lie in the window, with the local (mass-preserving) edge correction
/// lambda(u) = sum_i k_h(u - x_i) / e_h(x_i), e_h(x) = integral over W of k_h(x - v) dv from
/// gaussian_window_mass (Diggle 1985; Jones 1993; van Lieshout 2012: the surface integrates
/// over W to exactly n), scaled by `per_unit` (square metres per unit area). Returns the
/// surface's integral over the window's pixels (expected number of sightings), to check its
/// mass. `progress`, when given, is called with (sightings done, sightings in `points`).
double add_kernel_intensity(IntensityRaster& raster, const std::vector<Point>& points, const Window& window,
                            double bandwidth_m, double per_unit,
                            const std::function<void(std::size_t, std::size_t)>& progress = {});

/// The surface of one species (or all together) over every plot of a survey: one raster
/// covering all plots, each plot smoothed in its own window with its own Scott bandwidth
/// (or `bandwidth_m`); a plot with fewer than 2 such sightings uses the bandwidth of all its
/// sightings, and one with none is 0. `pixel_m` defaults to 1/200 of the shorter side of
/// the plots' extent, or a tenth of the smallest bandwidth when that is finer (at most 20
/// million pixels), so every kernel spans many pixels; a given `pixel_m` larger than a bandwidth is refused
/// (InputError). A plot whose surface integrates to more than 2% away from its count gets a
/// warning in the raster. Values per unit area (`per_unit` square metres). `progress`, when
/// given, is called with (sightings smoothed, sightings of the surface) as the work goes on.
[[nodiscard]] IntensityRaster intensity_surface(const Survey& survey, std::optional<std::size_t> species,
                                                double per_unit, std::optional<double> pixel_m,
                                                std::optional<double> bandwidth_m,
                                                const std::function<void(std::size_t, std::size_t)>& progress = {});

}  // namespace stipple
