#include "stipple/simulate/point_process.hpp"

#include <boost/random/bernoulli_distribution.hpp>
#include <boost/random/poisson_distribution.hpp>
#include <boost/random/uniform_real_distribution.hpp>

#include <boost/random/normal_distribution.hpp>

#include "stipple/error.hpp"
#include "stipple/geometry/spatial_index.hpp"

namespace stipple {

std::vector<Point> simulate_binomial(const Window& window, std::size_t n, Engine& engine) {
  const Bounds& b = window.bounds();
  boost::random::uniform_real_distribution<double> ux(b.xmin, b.xmax);
  boost::random::uniform_real_distribution<double> uy(b.ymin, b.ymax);
  std::vector<Point> points;
  points.reserve(n);
  while (points.size() < n) {
    const double x = ux(engine);
    const Point p{x, uy(engine)};
    if (window.contains_almost_surely(p)) points.push_back(p);
  }
  return points;
}

std::vector<Point> simulate_poisson(const Window& window, double intensity_per_m2, Engine& engine) {
  if (!(intensity_per_m2 >= 0.0)) throw AnalysisError("intensity must be >= 0");
  const double mean = intensity_per_m2 * window.area_m2();
  if (mean <= 0.0) return {};
  boost::random::poisson_distribution<std::size_t, double> count(mean);
  return simulate_binomial(window, count(engine), engine);
}

std::vector<Point> thin(const std::vector<Point>& points, double keep_probability, Engine& engine) {
  if (!(keep_probability >= 0.0 && keep_probability <= 1.0))
    throw AnalysisError("thinning probability must lie in [0, 1]");
  boost::random::bernoulli_distribution<double> keep(keep_probability);
  std::vector<Point> kept;
  for (const auto& p : points)
    if (keep(engine)) kept.push_back(p);
  return kept;
}

namespace {

Point uniform_in(const Bounds& b, Engine& engine) {
  boost::random::uniform_real_distribution<double> ux(b.xmin, b.xmax);
  boost::random::uniform_real_distribution<double> uy(b.ymin, b.ymax);
  const double x = ux(engine);
  return Point{x, uy(engine)};
}

Bounds dilate(const Bounds& b, double by) {
  return Bounds{b.xmin - by, b.ymin - by, b.xmax + by, b.ymax + by};
}

}  // namespace

std::vector<Point> simulate_thomas(const Window& window, double kappa_per_m2, double mean_offspring, double sigma_m,
                                   Engine& engine) {
  if (!(kappa_per_m2 >= 0.0 && mean_offspring >= 0.0 && sigma_m > 0.0))
    throw AnalysisError("Thomas process needs kappa >= 0, mu >= 0 and sigma > 0");
  const Bounds outer = dilate(window.bounds(), 4.0 * sigma_m);
  boost::random::poisson_distribution<std::size_t, double> parents(
      std::max(1e-12, kappa_per_m2 * outer.width() * outer.height()));
  boost::random::poisson_distribution<std::size_t, double> offspring(std::max(1e-12, mean_offspring));
  boost::random::normal_distribution<double> step(0.0, sigma_m);
  std::vector<Point> points;
  const std::size_t n_parents = parents(engine);
  for (std::size_t k = 0; k < n_parents; ++k) {
    const Point parent = uniform_in(outer, engine);
    const std::size_t n_children = offspring(engine);
    for (std::size_t c = 0; c < n_children; ++c) {
      const double dx = step(engine);
      const Point child{parent.x + dx, parent.y + step(engine)};
      if (window.contains_almost_surely(child)) points.push_back(child);
    }
  }
  return points;
}

std::vector<Point> simulate_matern_cluster(const Window& window, double kappa_per_m2, double mean_offspring,
                                           double radius_m, Engine& engine) {
  if (!(kappa_per_m2 >= 0.0 && mean_offspring >= 0.0 && radius_m > 0.0))
    throw AnalysisError("Matern cluster process needs kappa >= 0, mu >= 0 and R > 0");
  const Bounds outer = dilate(window.bounds(), radius_m);
  boost::random::poisson_distribution<std::size_t, double> parents(
      std::max(1e-12, kappa_per_m2 * outer.width() * outer.height()));
  boost::random::poisson_distribution<std::size_t, double> offspring(std::max(1e-12, mean_offspring));
  boost::random::uniform_real_distribution<double> unit(0.0, 1.0);
  std::vector<Point> points;
  const std::size_t n_parents = parents(engine);
  for (std::size_t k = 0; k < n_parents; ++k) {
    const Point parent = uniform_in(outer, engine);
    const std::size_t n_children = offspring(engine);
    for (std::size_t c = 0; c < n_children; ++c) {
      // Uniform in the disc: radius R sqrt(U), angle 2 pi V.
      const double rho = radius_m * std::sqrt(unit(engine));
      const double theta = 2.0 * 3.14159265358979323846 * unit(engine);
      const Point child{parent.x + rho * std::cos(theta), parent.y + rho * std::sin(theta)};
      if (window.contains_almost_surely(child)) points.push_back(child);
    }
  }
  return points;
}

std::vector<Point> simulate_matern_ii(const Window& window, double intensity_per_m2, double hard_core_m,
                                      Engine& engine) {
  if (!(intensity_per_m2 >= 0.0 && hard_core_m >= 0.0))
    throw AnalysisError("Matern II process needs intensity >= 0 and a hard core >= 0");
  const Bounds outer = dilate(window.bounds(), hard_core_m);
  boost::random::poisson_distribution<std::size_t, double> count(
      std::max(1e-12, intensity_per_m2 * outer.width() * outer.height()));
  const std::size_t n = count(engine);
  std::vector<Point> proposal;
  std::vector<double> mark;
  boost::random::uniform_real_distribution<double> uniform(0.0, 1.0);
  for (std::size_t i = 0; i < n; ++i) {
    proposal.push_back(uniform_in(outer, engine));
    mark.push_back(uniform(engine));
  }
  const PointGrid grid(proposal);
  std::vector<Point> kept;
  for (std::size_t i = 0; i < n; ++i) {
    if (!window.contains_almost_surely(proposal[i])) continue;
    bool survives = true;
    grid.for_each_within(proposal[i], hard_core_m, [&](std::size_t j, double) {
      if (j != i && mark[j] < mark[i]) survives = false;
    });
    if (survives) kept.push_back(proposal[i]);
  }
  return kept;
}

std::vector<Point> simulate_sequential_inhibition(const Window& window, std::size_t n, double inhibition_m,
                                                  Engine& engine, std::size_t max_attempts) {
  std::vector<Point> points;
  const double d2 = inhibition_m * inhibition_m;
  std::size_t failures = 0;
  while (points.size() < n && failures < max_attempts) {
    const Point p = simulate_binomial(window, 1, engine).front();
    bool ok = true;
    for (const auto& q : points) {
      const double dx = p.x - q.x;
      const double dy = p.y - q.y;
      if (dx * dx + dy * dy < d2) {
        ok = false;
        break;
      }
    }
    if (ok) {
      points.push_back(p);
      failures = 0;
    } else {
      ++failures;
    }
  }
  return points;
}

}  // namespace stipple
