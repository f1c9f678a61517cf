// Simulation studies of the habitat module's clustering analysis (fixed seeds; each check
// states its band): minimum-contrast fits recover simulated Thomas parameters, and the
// inhomogeneous L of an inhomogeneous Poisson pattern stays inside its envelope at the
// nominal rate.

#include <algorithm>
#include <cmath>

#include <gtest/gtest.h>

#include "stipple/habitat/clustering.hpp"
#include "stipple/randomness/inhomogeneous.hpp"
#include "stipple/simulate/point_process.hpp"

namespace stipple {
namespace {

TEST(ClusterRecovery, MinimumContrastRecoversSimulatedThomasParameters) {
  // Thomas: kappa = 2 parents per ha, mu = 12, sigma = 7 m, on a 400 x 400 m plot (about
  // 32 clusters, 380 points); K with a constant intensity n / |W|, rmax 40 m. Over 40
  // patterns the median estimates must lie within 20% (kappa) and 10% (sigma) of the truth
  // (common practice: minimum contrast is consistent but noisy at this size).
  const Window w = Window::rectangle(0, 0, 400, 400);
  std::vector<double> r;
  for (int i = 1; i <= 32; ++i) r.push_back(40.0 * i / 32.0);
  std::vector<double> kappas;
  std::vector<double> sigmas;
  for (int rep = 0; rep < 40; ++rep) {
    Engine engine(1000 + static_cast<std::uint64_t>(rep));
    const std::vector<Point> p = simulate_thomas(w, 2e-4, 12.0, 7.0, engine);
    const double lambda = static_cast<double>(p.size()) / w.area_m2();
    const InhomogeneousK k = inhomogeneous_k(p, std::vector<double>(p.size(), lambda), w, r);
    const ClusterFit f = fit_cluster_min_contrast(ClusterModel::thomas, r, k.k, lambda);
    kappas.push_back(f.kappa_per_m2);
    sigmas.push_back(f.scale_m);
  }
  std::sort(kappas.begin(), kappas.end());
  std::sort(sigmas.begin(), sigmas.end());
  const double kappa = 0.5 * (kappas[19] + kappas[20]);
  const double sigma = 0.5 * (sigmas[19] + sigmas[20]);
  EXPECT_NEAR(kappa, 2e-4, 0.2 * 2e-4);
  EXPECT_NEAR(sigma, 7.0, 0.1 * 7.0);
}

TEST(ClusterRecovery, InhomogeneousPoissonStaysInsideItsEnvelopeAtTheNominalRate) {
  // 100 inhomogeneous Poisson patterns, log lambda = log(5e-4) + 0.01 x per m2 on 300 x 200 m (about 190 points),
  // fitted on a 10 m raster of x and tested with 39 simulations at alpha = 0.05, the model
  // refitted to every simulation. The rejection count must lie in 1..12: under
  // binomial(100, 0.05), P(X = 0) = 0.006 and P(X > 12) < 0.001.
  const Window w = Window::rectangle(0, 0, 300, 200);
  HabitatCovariate x;
  x.name = "x";
  x.source = "x.tif";
  x.grid.x_min = 0.0;
  x.grid.y_max = 200.0;
  x.grid.cell_width = x.grid.cell_height = 10.0;
  x.grid.columns = 30;
  x.grid.rows = 20;
  for (std::size_t r = 0; r < 20; ++r)
    for (std::size_t c = 0; c < 30; ++c) x.grid.values.push_back(10.0 * static_cast<double>(c) + 5.0);
  int rejections = 0;
  for (int rep = 0; rep < 100; ++rep) {
    Engine engine(500 + static_cast<std::uint64_t>(rep));
    // Thinning a Poisson pattern of the largest intensity (Lewis & Shedler 1979).
    const double lmax = 5e-4 * std::exp(0.01 * 295.0);
    MarkedPattern pattern;
    for (const Point& u : simulate_poisson(w, lmax, engine)) {
      const double lambda = 5e-4 * std::exp(0.01 * x.grid.value_at(u));
      if (std::uniform_real_distribution<double>(0.0, 1.0)(engine) * lmax < lambda) {
        pattern.points.push_back(u);
        pattern.marks.push_back(0);
        pattern.feature_ids.push_back(static_cast<std::int64_t>(pattern.points.size()));
      }
    }
    const Survey survey({"s"}, {Plot{"p", w}}, {pattern});
    const HabitatResult fit = fit_habitat(survey, {x}, HabitatOptions{});
    ClusteringOptions o;
    o.simulations = 39;
    o.seed = 77 + static_cast<std::uint64_t>(rep);
    o.threads = 1;
    const auto c = analyse_clustering(survey, {x}, fit, o);
    ASSERT_EQ(c.size(), 1u);
    if (c[0].verdict != "explained by habitat") ++rejections;
  }
  EXPECT_GE(rejections, 1) << rejections << " of 100 rejected";
  EXPECT_LE(rejections, 12) << rejections << " of 100 rejected";
  RecordProperty("rejections", rejections);
}

}  // namespace
}  // namespace stipple
