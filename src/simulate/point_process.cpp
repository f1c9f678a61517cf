#include "stipple/simulate/point_process.hpp"

#include <boost/random/bernoulli_distribution.hpp>
#include <boost/random/poisson_distribution.hpp>
#include <boost/random/uniform_real_distribution.hpp>

#include "stipple/error.hpp"

namespace stipple {

std::vector<Point> simulate_binomial(const Window& window, std::size_t n, Engine& engine) {
  const Bounds& b = window.bounds();
  boost::random::uniform_real_distribution<double> ux(b.xmin, b.xmax);
  boost::random::uniform_real_distribution<double> uy(b.ymin, b.ymax);
  std::vector<Point> points;
  points.reserve(n);
  while (points.size() < n) {
    const Point p{ux(engine), uy(engine)};
    if (window.contains(p)) points.push_back(p);
  }
  return points;
}

std::vector<Point> simulate_poisson(const Window& window, double intensity_per_m2,
                                    Engine& engine) {
  if (!(intensity_per_m2 >= 0.0)) throw AnalysisError("intensity must be >= 0");
  const double mean = intensity_per_m2 * window.area_m2();
  if (mean <= 0.0) return {};
  boost::random::poisson_distribution<std::size_t, double> count(mean);
  return simulate_binomial(window, count(engine), engine);
}

std::vector<Point> thin(const std::vector<Point>& points, double keep_probability,
                        Engine& engine) {
  if (!(keep_probability >= 0.0 && keep_probability <= 1.0))
    throw AnalysisError("thinning probability must lie in [0, 1]");
  boost::random::bernoulli_distribution<double> keep(keep_probability);
  std::vector<Point> kept;
  for (const auto& p : points)
    if (keep(engine)) kept.push_back(p);
  return kept;
}

}  // namespace stipple
