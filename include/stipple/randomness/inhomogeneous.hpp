#pragma once
/// Summary functions of a pattern whose intensity varies over the window.

#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/window.hpp"

namespace stipple {

struct InhomogeneousK {
  std::vector<double> r;
  std::vector<double> k;
  std::vector<double> l;  ///< sqrt(K / pi)
};

/// The inhomogeneous K function (Baddeley, Moller & Waagepetersen 2000, Statistica
/// Neerlandica 54:329-350): K(r) = (1/|W|) sum over ordered pairs i != j with d_ij <= r of
/// w_ij / (lambda_i lambda_j), lambda_i the intensity (per m2) at point i and w_ij Ripley's
/// isotropic edge weight. For a Poisson process with that intensity, E K(r) = pi r^2 (L = r)
/// whatever the intensity. Throws AnalysisError for a non-positive or non-finite intensity
/// and InputError unless points and intensities are parallel and r is increasing and positive.
[[nodiscard]] InhomogeneousK inhomogeneous_k(const std::vector<Point>& points,
                                             const std::vector<double>& intensity_per_m2, const Window& window,
                                             const std::vector<double>& r);

}  // namespace stipple
