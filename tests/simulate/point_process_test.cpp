// Superposition and thinning by simulation, and coverage of the density intervals.
// Fixed seeds; each check states its tolerance.

#include "stipple/simulate/point_process.hpp"

#include <cmath>
#include <numeric>

#include <gtest/gtest.h>
#include <boost/geometry.hpp>

#include "stipple/intensity/density.hpp"

namespace stipple {
namespace {

struct Moments {
  double mean = 0.0;
  double variance = 0.0;
};

Moments moments(const std::vector<double>& values) {
  Moments m;
  const double n = static_cast<double>(values.size());
  m.mean = std::accumulate(values.begin(), values.end(), 0.0) / n;
  for (const double v : values) m.variance += (v - m.mean) * (v - m.mean);
  m.variance /= n - 1.0;
  return m;
}

const Window kWindow = Window::rectangle(0, 0, 100, 100);  // 1 ha

TEST(Superposition, RatesAdd) {
  // Source: Kingman (1993) Superposition Theorem (from memory: section 2.2); REFERENCES.md
  // section 9 simulated Poisson(40) + Poisson(70): mean 109.94, var 109.89.
  // 4000 replicates: SE of the mean = sqrt(110/4000) = 0.17; tolerance 4 SE. The variance
  // of a Poisson count equals its mean; SE of the sample variance ~ 110*sqrt(2/4000) = 2.5.
  Engine engine(derive_seed(7, "superposition"));
  std::vector<double> totals;
  for (int r = 0; r < 4000; ++r) {
    const auto a = simulate_poisson(kWindow, 40.0 / 1e4, engine);
    const auto b = simulate_poisson(kWindow, 70.0 / 1e4, engine);
    totals.push_back(static_cast<double>(a.size() + b.size()));
  }
  const Moments m = moments(totals);
  EXPECT_NEAR(m.mean, 110.0, 4 * 0.17);
  EXPECT_NEAR(m.variance, 110.0, 4 * 2.5);
}

TEST(Thinning, KeptPointsArePoissonWithRatePLambdaAndIndependentOfRemoved) {
  // Source: Kingman (1993) Colouring Theorem (from memory: section 5.1); REFERENCES.md
  // section 9: 0.3-thinned Poisson(50): mean 15.009, var 14.986, corr(kept, removed) -0.0065.
  // 4000 replicates: SE(mean) = 0.061, SE(var) ~ 0.34, SE(corr) ~ 0.016; tolerance 4 SE.
  Engine engine(derive_seed(7, "thinning"));
  std::vector<double> kept;
  std::vector<double> removed;
  for (int r = 0; r < 4000; ++r) {
    const auto all = simulate_poisson(kWindow, 50.0 / 1e4, engine);
    const auto k = thin(all, 0.3, engine);
    kept.push_back(static_cast<double>(k.size()));
    removed.push_back(static_cast<double>(all.size() - k.size()));
  }
  const Moments mk = moments(kept);
  const Moments mr = moments(removed);
  EXPECT_NEAR(mk.mean, 15.0, 4 * 0.061);
  EXPECT_NEAR(mk.variance, 15.0, 4 * 0.34);
  double cov = 0.0;
  for (std::size_t i = 0; i < kept.size(); ++i) cov += (kept[i] - mk.mean) * (removed[i] - mr.mean);
  cov /= static_cast<double>(kept.size() - 1);
  EXPECT_NEAR(cov / std::sqrt(mk.variance * mr.variance), 0.0, 4 * 0.016);
}

TEST(BinomialProcess, PointsFillAnIrregularWindowUniformly) {
  // Common practice: under uniform placement the share of points in a sub-region is its
  // share of the area. Hole of 25% of the box: no point inside; left half gets half.
  BgMultiPolygon shape;
  boost::geometry::read_wkt("MULTIPOLYGON(((0 0,0 100,100 100,100 0,0 0),(25 25,75 25,75 75,25 75,25 25)))", shape);
  const Window w = Window::from_polygons(shape, "test");
  Engine engine(11);
  const auto points = simulate_binomial(w, 20000, engine);
  std::size_t left = 0;
  for (const auto& p : points) {
    EXPECT_FALSE(p.x > 25 && p.x < 75 && p.y > 25 && p.y < 75);
    if (p.x < 50) ++left;
  }
  // Binomial(20000, 0.5): SE = 71; tolerance 4 SE.
  EXPECT_NEAR(static_cast<double>(left), 10000.0, 4 * 71.0);
}

TEST(DensityRecovery, ThinnedSuperposedSpeciesRecoverTheirTrueRates) {
  // Two species at 60 and 25 per ha, detected with p = 0.6 and 0.9, in three plots.
  // Over 400 surveys the corrected pooled intensity is unbiased (tolerance 4 SE of the
  // mean) and the 95% exact interval / p covers the truth at a rate inside the binomial 99%
  // band for 400 trials around 0.95 (at least 0.95 - 2.58 sqrt(.95 .05 / 400) = 0.922;
  // Garwood intervals are conservative, so no upper limit below 1).
  const std::vector<Window> windows{Window::rectangle(0, 0, 100, 100), Window::rectangle(200, 0, 250, 100),
                                    Window::rectangle(300, 0, 450, 100)};
  const double truth[2] = {60.0, 25.0};
  const double p[2] = {0.6, 0.9};
  DensityOptions options;
  options.simulations = 0;
  options.detection = DetectionTable::by_species({{"a", {p[0], 0.0}}, {"b", {p[1], 0.0}}}, std::nullopt, "test");
  std::vector<double> estimates[3];
  int covered[3] = {0, 0, 0};
  const int surveys = 400;
  for (int r = 0; r < surveys; ++r) {
    Engine engine(derive_seed(2026, "recovery/" + std::to_string(r)));
    std::vector<Sighting> sightings;
    std::vector<Plot> plots;
    std::int64_t fid = 0;
    for (std::size_t w = 0; w < windows.size(); ++w) {
      plots.push_back(Plot{"P" + std::to_string(w), windows[w]});
      for (int s = 0; s < 2; ++s) {
        const auto detected = thin(simulate_poisson(windows[w], truth[s] / 1e4, engine), p[s], engine);
        for (const auto& pt : detected) sightings.push_back(Sighting{pt, fid++, s == 0 ? "a" : "b", std::nullopt});
      }
    }
    const DensityResult result = estimate_density(assign_to_plots(sightings, plots), options);
    const double truths[3] = {truth[0], truth[1], truth[0] + truth[1]};
    for (int k = 0; k < 3; ++k) {
      const auto& pooled = result.pooled[static_cast<std::size_t>(k)];
      estimates[k].push_back(pooled.corrected.intensity);
      if (pooled.corrected.ci.lower <= truths[k] && truths[k] <= pooled.corrected.ci.upper) ++covered[k];
    }
  }
  const double truths[3] = {truth[0], truth[1], truth[0] + truth[1]};
  for (int k = 0; k < 3; ++k) {
    const Moments m = moments(estimates[k]);
    EXPECT_NEAR(m.mean, truths[k], 4.0 * std::sqrt(m.variance / surveys)) << "k = " << k;
    EXPECT_GE(covered[k], static_cast<int>(0.922 * surveys)) << "k = " << k;
  }
}

TEST(GarwoodCoverage, AtLeastNominalForSmallMeans) {
  // Common practice: exact Poisson intervals are conservative, coverage >= 95% at every
  // mean. Computed exactly from the Poisson pmf (no simulation).
  for (const double mean : {0.5, 2.0, 7.5, 30.0}) {
    double coverage = 0.0;
    double pmf = std::exp(-mean);
    for (std::uint64_t x = 0; x < 200; ++x) {
      if (x > 0) pmf *= mean / static_cast<double>(x);
      const Interval ci = garwood_interval(x, 0.95);
      if (ci.lower <= mean && mean <= ci.upper) coverage += pmf;
    }
    EXPECT_GE(coverage, 0.95 - 1e-9) << "mean = " << mean;
  }
}

}  // namespace
}  // namespace stipple
