#include "stipple/randomness/inhomogeneous.hpp"

#include <algorithm>
#include <cmath>

#include <boost/math/constants/constants.hpp>

#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/geometry/spatial_index.hpp"

namespace stipple {

InhomogeneousK inhomogeneous_k(const std::vector<Point>& points, const std::vector<double>& intensity,
                               const Window& window, const std::vector<double>& r) {
  if (points.size() != intensity.size())
    throw InputError("inhomogeneous K: " + std::to_string(points.size()) + " points but " +
                     std::to_string(intensity.size()) + " intensities");
  if (r.empty() || !(r.front() > 0.0))
    throw InputError("inhomogeneous K: the distances must be positive and increasing");
  for (std::size_t k = 1; k < r.size(); ++k)
    if (!(r[k] > r[k - 1])) throw InputError("inhomogeneous K: the distances must be positive and increasing");
  for (std::size_t i = 0; i < intensity.size(); ++i)
    if (!(intensity[i] > 0.0) || !std::isfinite(intensity[i]))
      throw AnalysisError("inhomogeneous K: intensity " + format_general(intensity[i]) + " at point " +
                          std::to_string(i));
  constexpr double pi = boost::math::double_constants::pi;
  InhomogeneousK out;
  out.r = r;
  std::vector<double> sums(r.size(), 0.0);
  if (points.size() >= 2) {
    std::vector<double> boundary(points.size());
    for (std::size_t i = 0; i < points.size(); ++i) boundary[i] = window.boundary_distance(points[i]);
    const auto weight = [&](std::size_t i, double d) {
      if (d <= boundary[i]) return 1.0;
      return 1.0 / std::max(window.circle_fraction_inside(points[i], d), 1e-6);
    };
    const PointGrid grid(points);
    grid.for_each_pair_within(r.back(), [&](std::size_t i, std::size_t j, double d) {
      // Both ordered pairs, each with its own centre's edge weight.
      const double w = (weight(i, d) + weight(j, d)) / (intensity[i] * intensity[j]);
      const auto at = std::lower_bound(r.begin(), r.end(), d);
      if (at != r.end()) sums[static_cast<std::size_t>(at - r.begin())] += w;
    });
  }
  out.k.resize(r.size());
  out.l.resize(r.size());
  double cumulative = 0.0;
  for (std::size_t k = 0; k < r.size(); ++k) {
    cumulative += sums[k];
    out.k[k] = cumulative / window.area_m2();
    out.l[k] = std::sqrt(out.k[k] / pi);
  }
  return out;
}

}  // namespace stipple
