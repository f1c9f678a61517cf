// Neyman-Scott K functions against their closed forms, the inhomogeneous K against a
// hand-computed case, and the clustering analysis on small surveys.

#include "stipple/habitat/clustering.hpp"

#include <cmath>

#include <gtest/gtest.h>
#include <boost/math/constants/constants.hpp>
#include <boost/math/quadrature/gauss_kronrod.hpp>

#include "stipple/error.hpp"
#include "stipple/randomness/inhomogeneous.hpp"
#include "stipple/randomness/summary_functions.hpp"
#include "stipple/simulate/point_process.hpp"

namespace stipple {
namespace {

constexpr double pi = boost::math::double_constants::pi;

TEST(ClusterK, ThomasIsTheClosedForm) {
  // K(r) = pi r^2 + (1 - exp(-r^2 / (4 sigma^2))) / kappa (Stoyan, Kendall & Mecke 1995, section 5.3;
  // from memory: section).
  const double kappa = 2e-4;
  const double sigma = 6.0;
  for (double r : {1.0, 5.0, 12.0, 40.0})
    EXPECT_NEAR(cluster_k(ClusterModel::thomas, kappa, sigma, r),
                pi * r * r + (1.0 - std::exp(-r * r / (4.0 * sigma * sigma))) / kappa, 1e-9);
}

TEST(ClusterK, MaternDistanceLawHasTheKnownMeanAndLimits) {
  // Two independent uniform points in a disc of radius R: mean distance 128 R / (45 pi)
  // (a classical result of geometric probability; from memory), P(D <= r) ~ r^2 / R^2 for
  // small r, and P(D <= 2R) = 1.
  const double R = 10.0;
  const double kappa = 1.0;
  const auto cdf = [&](double r) { return (cluster_k(ClusterModel::matern, kappa, R, r) - pi * r * r) * kappa; };
  EXPECT_NEAR(cdf(2.0 * R), 1.0, 1e-10);
  EXPECT_NEAR(cdf(3.0 * R), 1.0, 1e-12);
  EXPECT_NEAR(cdf(0.01 * R) / 1e-4, 1.0, 0.01);
  const double mean = boost::math::quadrature::gauss_kronrod<double, 61>::integrate(
      [&](double r) { return 1.0 - cdf(r); }, 0.0, 2.0 * R, 10, 1e-12);
  EXPECT_NEAR(mean, 128.0 * R / (45.0 * pi), 1e-6);
}

TEST(InhomogeneousK, HandComputedPairsFarFromTheEdge) {
  // Three points in the middle of a 1000 m square: no edge weights; K(r) sums
  // 2 / (lambda_i lambda_j) over the pairs within r, divided by |W|.
  const Window w = Window::rectangle(0, 0, 1000, 1000);
  const std::vector<Point> p{{500, 500}, {503, 504}, {510, 500}};  // distances 5, 10, ~8.06
  const std::vector<double> lambda{1e-3, 2e-3, 4e-3};
  const InhomogeneousK k = inhomogeneous_k(p, lambda, w, {4.0, 6.0, 9.0, 11.0});
  const double a = 2.0 / (1e-3 * 2e-3);
  const double b = 2.0 / (2e-3 * 4e-3);
  const double c = 2.0 / (1e-3 * 4e-3);
  EXPECT_EQ(k.k[0], 0.0);
  EXPECT_NEAR(k.k[1], a / 1e6, 1e-12);
  EXPECT_NEAR(k.k[2], (a + b) / 1e6, 1e-12);
  EXPECT_NEAR(k.k[3], (a + b + c) / 1e6, 1e-12);
  EXPECT_NEAR(k.l[3], std::sqrt(k.k[3] / pi), 1e-12);
  EXPECT_THROW((void)inhomogeneous_k(p, {1e-3, 0.0, 1e-3}, w, {1.0}), AnalysisError);
  EXPECT_THROW((void)inhomogeneous_k(p, lambda, w, {2.0, 1.0}), InputError);
}

TEST(InhomogeneousK, ConstantIntensityIsRipleysIsotropicK) {
  // With lambda_i = sqrt(n (n - 1)) / |W| the estimator is Ripley's isotropic K (Ripley
  // 1977), which the randomness module computes with the same edge weights.
  const Window w = Window::rectangle(0, 0, 200, 120);
  Engine engine(11);
  const std::vector<Point> p = simulate_binomial(w, 150, engine);
  SummaryOptions o;
  o.rmax_m = 30.0;
  o.steps = 30;
  const SummaryContext ctx(w, o);
  const SummaryCurves ripley = summary_functions(p, ctx);
  const double n = 150.0;
  const InhomogeneousK k =
      inhomogeneous_k(p, std::vector<double>(p.size(), std::sqrt(n * (n - 1.0)) / w.area_m2()), w, ripley.r);
  for (std::size_t i = 0; i < k.k.size(); ++i) EXPECT_NEAR(k.k[i], ripley.k[i], 1e-9 * (1.0 + ripley.k[i])) << i;
}

TEST(ClusterFit, RecoversTheParametersOfItsOwnK) {
  // Minimum contrast on an exact Thomas K must return its parameters.
  std::vector<double> r;
  std::vector<double> k;
  for (int i = 1; i <= 32; ++i) {
    r.push_back(1.5 * i);
    k.push_back(cluster_k(ClusterModel::thomas, 3e-4, 7.0, r.back()));
  }
  const ClusterFit f = fit_cluster_min_contrast(ClusterModel::thomas, r, k, 3e-3);
  EXPECT_TRUE(f.converged);
  EXPECT_FALSE(f.poisson_limit);
  EXPECT_NEAR(f.kappa_per_m2, 3e-4, 3e-4 * 1e-4);
  EXPECT_NEAR(f.scale_m, 7.0, 7.0 * 1e-4);
  EXPECT_NEAR(f.mean_offspring, 10.0, 1e-3);
  // A Poisson K (pi r^2) has nothing to fit.
  for (std::size_t i = 0; i < r.size(); ++i) k[i] = pi * r[i] * r[i];
  EXPECT_TRUE(fit_cluster_min_contrast(ClusterModel::matern, r, k, 3e-3).poisson_limit);
}

TEST(SimulateMaternCluster, IntensityIsKappaTimesMu) {
  // E n = kappa mu |W| (edge effects cancel for a stationary process); 200 replicates.
  const Window w = Window::rectangle(0, 0, 300, 300);
  Engine engine(3);
  double total = 0.0;
  for (int i = 0; i < 200; ++i)
    total += static_cast<double>(simulate_matern_cluster(w, 2e-4, 8.0, 10.0, engine).size());
  const double expected = 2e-4 * 8.0 * 9e4;  // 144
  // Var n ~ kappa |W| (mu + mu^2) = 1296 for small clusters: the mean of 200 has sd 2.5;
  // the band is 3 sd.
  EXPECT_NEAR(total / 200.0, expected, 7.5);
}

}  // namespace
}  // namespace stipple
