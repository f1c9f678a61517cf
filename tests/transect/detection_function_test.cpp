#include "stipple/transect/detection_function.hpp"

#include <cmath>
#include <limits>

#include <gtest/gtest.h>
#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <boost/math/special_functions/erf.hpp>
#include <boost/math/special_functions/gamma.hpp>

#include "stipple/error.hpp"

namespace stipple {
namespace {

constexpr double pi = 3.14159265358979323846;
constexpr double inf = std::numeric_limits<double>::infinity();

DistanceData lines(std::vector<double> x, double w = inf) {
  DistanceData d;
  d.kind = TransectKind::line;
  d.exact = std::move(x);
  d.truncation_m = w;
  return d;
}

TEST(EffectiveStripWidth, HalfNormalMatchesPublishedValues) {
  // Source: Buckland et al. (2001); REFERENCES.md section 8: sigma = 10, w = 25:
  // mu = 12.377488, P_a = 0.4950995; untruncated sigma sqrt(pi/2) = 12.533141.
  const DetectionFunction hn({KeyFunction::half_normal, Adjustment::none, 0}, {10.0}, 25.0);
  EXPECT_NEAR(hn.effective_strip_width(), 12.377488, 1e-6);
  EXPECT_NEAR(hn.effective_strip_width() / 25.0, 0.4950995, 1e-7);
  const DetectionFunction untruncated({KeyFunction::half_normal, Adjustment::none, 0}, {10.0}, inf);
  EXPECT_NEAR(untruncated.effective_strip_width(), 12.533141, 1e-6);
  // Closed form sigma sqrt(2 pi) (Phi(w / sigma) - 1/2), Phi by Boost.Math erf.
  EXPECT_NEAR(hn.effective_strip_width(), 10.0 * std::sqrt(2 * pi) * 0.5 * boost::math::erf(2.5 / std::sqrt(2.0)),
              1e-9);
}

TEST(EffectiveStripWidth, HazardRateMatchesPublishedValues) {
  // Source: Hayes & Buckland (1983); REFERENCES.md section 8: sigma = 10, b = 3, w = 25:
  // mu = 12.751284, P_a = 0.5100514; untruncated sigma Gamma(1 - 1/b) = 13.541179.
  const DetectionFunction hr({KeyFunction::hazard_rate, Adjustment::none, 0}, {10.0, 3.0}, 25.0);
  EXPECT_NEAR(hr.effective_strip_width(), 12.751284, 1e-6);
  EXPECT_NEAR(hr.effective_strip_width() / 25.0, 0.5100514, 1e-7);
  const DetectionFunction untruncated({KeyFunction::hazard_rate, Adjustment::none, 0}, {10.0, 3.0}, inf);
  EXPECT_NEAR(untruncated.effective_strip_width(), 10.0 * boost::math::tgamma(1.0 - 1.0 / 3.0), 1e-5);
  EXPECT_NEAR(untruncated.effective_strip_width(), 13.541179, 1e-5);
}

TEST(EffectiveArea, PointTransectsMatchPublishedValues) {
  // Source: REFERENCES.md section 8: half-normal sigma = 20, w = 50: nu = 2402.8486 m2,
  // P_a = 0.3059402, rho = 27.65593; untruncated 2 pi sigma^2 = 2513.2741; hazard-rate
  // sigma 10, b 3, w 25: nu = 592.27233.
  const DetectionFunction hn({KeyFunction::half_normal, Adjustment::none, 0}, {20.0}, 50.0);
  EXPECT_NEAR(hn.effective_area(), 2402.8486, 1e-4);
  EXPECT_NEAR(hn.effective_area() / (pi * 2500.0), 0.3059402, 1e-7);
  EXPECT_NEAR(std::sqrt(hn.effective_area() / pi), 27.65593, 1e-5);
  const DetectionFunction untruncated({KeyFunction::half_normal, Adjustment::none, 0}, {20.0}, inf);
  EXPECT_NEAR(untruncated.effective_area(), 2513.2741, 1e-4);
  const DetectionFunction hr({KeyFunction::hazard_rate, Adjustment::none, 0}, {10.0, 3.0}, 25.0);
  EXPECT_NEAR(hr.effective_area(), 592.27233, 1e-4);
}

TEST(EffectiveStripWidth, AdjustedModelsAgreeWithIndependentQuadrature) {
  // Source: Boost.Math Gauss-Kronrod quadrature (reference library) of g written out here.
  const double w = 40.0;
  const DetectionFunction f({KeyFunction::half_normal, Adjustment::cosine, 1}, {15.0, 0.2}, w);
  const auto g = [&](double x) {
    const double key = std::exp(-x * x / (2 * 15.0 * 15.0));
    return key * (1 + 0.2 * std::cos(2 * pi * x / w)) / (1 + 0.2);
  };
  const double expected = boost::math::quadrature::gauss_kronrod<double, 61>::integrate(g, 0.0, w);
  EXPECT_NEAR(f.effective_strip_width(), expected, 1e-8);
  EXPECT_NEAR(f.g(0.0), 1.0, 1e-15);
}

TEST(HalfNormalFit, UntruncatedMleIsClosedForm) {
  // Source: Buckland et al. (2001); REFERENCES.md section 8: lines sigma^2 = sum x^2 / n:
  // x = [0,3,4,5,12] -> 38.8, sigma = 6.228965.
  const DetectionFit fit =
      fit_detection_function(lines({0, 3, 4, 5, 12}), {KeyFunction::half_normal, Adjustment::none, 0});
  EXPECT_NEAR(fit.function.parameters()[0], 6.228965, 1e-5);
  EXPECT_NEAR(fit.function.parameters()[0] * fit.function.parameters()[0], 38.8, 1e-3);
  // Points: sigma^2 = sum r^2 / (2n): r = [3,4,5,6,12] -> 4.795832.
  DistanceData points;
  points.kind = TransectKind::point;
  points.exact = {3, 4, 5, 6, 12};
  const DetectionFit p = fit_detection_function(points, {KeyFunction::half_normal, Adjustment::none, 0});
  EXPECT_NEAR(p.function.parameters()[0], 4.795832, 1e-5);
}

TEST(HalfNormalFit, TruncatedMleMatchesReference) {
  // Source: REFERENCES.md section 8 (numerical MLE): w = 10, x = [0,3,4,5,8]: sigma = 5.999587.
  const DetectionFit fit =
      fit_detection_function(lines({0, 3, 4, 5, 8}, 10.0), {KeyFunction::half_normal, Adjustment::none, 0});
  EXPECT_NEAR(fit.function.parameters()[0], 5.999587, 1e-4);
  EXPECT_EQ(fit.parameter_count, 1u);
  EXPECT_NEAR(fit.aic, -2 * fit.log_likelihood + 2, 1e-12);
}

TEST(HalfNormalFit, BinnedAndExactAgreeOnFineBins) {
  // Common practice: the binned likelihood tends to the exact one as bins shrink.
  std::vector<double> x;
  for (int i = 0; i < 200; ++i)
    x.push_back(30.0 * std::fabs(std::sin(0.37 * i + 0.1 * i * i)) * std::fabs(std::cos(0.11 * i)));
  const DistanceData exact = lines(x, 30.0);
  DistanceData binned;
  binned.kind = TransectKind::line;
  for (int k = 0; k <= 300; ++k) binned.bin_edges.push_back(0.1 * k);
  binned.bin_counts.assign(300, 0);
  for (const double v : x) ++binned.bin_counts[std::min<std::size_t>(299, static_cast<std::size_t>(v / 0.1))];
  const DetectionModel model{KeyFunction::half_normal, Adjustment::none, 0};
  const DetectionFit a = fit_detection_function(exact, model);
  const DetectionFit b = fit_detection_function(binned, model);
  EXPECT_NEAR(a.function.parameters()[0], b.function.parameters()[0], 0.01 * a.function.parameters()[0]);
  EXPECT_NEAR(a.effective_strip_width_m, b.effective_strip_width_m, 0.01 * a.effective_strip_width_m);
}

TEST(CandidateFits, AdjustedFitsStayMonotone) {
  std::vector<double> x;
  for (int i = 0; i < 150; ++i) x.push_back(std::fmod(i * 7.3, 50.0) * (i % 3 == 0 ? 0.5 : 1.0));
  const auto fits =
      fit_candidates(lines(x, 50.0), {KeyFunction::half_normal, KeyFunction::hazard_rate, KeyFunction::uniform},
                     {Adjustment::cosine, Adjustment::polynomial, Adjustment::hermite});
  ASSERT_FALSE(fits.empty());
  for (std::size_t i = 1; i < fits.size(); ++i) EXPECT_LE(fits[i - 1].aic, fits[i].aic);
  for (const auto& f : fits) EXPECT_TRUE(f.monotone);
}

TEST(Fit, RefusesTooFewDetections) {
  EXPECT_THROW((void)fit_detection_function(lines({3.0, 4.0}, 20.0), {KeyFunction::hazard_rate, Adjustment::none, 0}),
               AnalysisError);
}

TEST(GoodnessOfFit, CramerVonMisesLawMatchesPublishedCriticalValues) {
  // Source: Anderson & Darling (1952), asymptotic upper points of W^2 (from memory):
  // 0.347 at 10%, 0.461 at 5%, 0.743 at 1%; tolerance 0.002 for the 3-figure table.
  EXPECT_NEAR(cramer_von_mises_p(0.347), 0.10, 0.002);
  EXPECT_NEAR(cramer_von_mises_p(0.461), 0.05, 0.002);
  EXPECT_NEAR(cramer_von_mises_p(0.743), 0.01, 0.002);
}

TEST(GoodnessOfFit, KolmogorovLawMatchesCriticalValues) {
  // Source: the Kolmogorov distribution's upper points (from memory, common practice):
  // sqrt(n) D = 1.358 at 5%, 1.628 at 1% for large n.
  EXPECT_NEAR(kolmogorov_smirnov_p(1.358 / std::sqrt(1e6), 1000000), 0.05, 0.001);
  EXPECT_NEAR(kolmogorov_smirnov_p(1.628 / std::sqrt(1e6), 1000000), 0.01, 0.001);
}

TEST(GoodnessOfFit, PerfectUniformFitIsNotRejected) {
  // A uniform key on [0, w] with x_i at the plotting positions gives W^2 = 1/(12 n).
  std::vector<double> x;
  for (int i = 0; i < 100; ++i) x.push_back(100.0 * (i + 0.5) / 100.0);
  const DistanceData d = lines(x, 100.0);
  const DetectionFit fit = fit_detection_function(d, {KeyFunction::uniform, Adjustment::none, 0});
  const GoodnessOfFit gof = goodness_of_fit(fit, d);
  ASSERT_TRUE(gof.cvm_statistic);
  EXPECT_NEAR(*gof.cvm_statistic, 1.0 / 1200.0, 1e-9);
  EXPECT_NEAR(*gof.cvm_p, 1.0, 1e-6);
  EXPECT_NEAR(*gof.ks_p, 1.0, 1e-6);
}

TEST(DetectionFunction, RefusesParametersThatDoNotFitItsModel) {
  // A half-normal with one cosine term has sigma and a1: two parameters.
  EXPECT_THROW(DetectionFunction({KeyFunction::half_normal, Adjustment::cosine, 1}, {15.0}, 50.0), InputError);
  EXPECT_THROW(DetectionFunction({KeyFunction::hazard_rate, Adjustment::none, 0}, {15.0}, 50.0), InputError);
  EXPECT_THROW(DetectionFunction({KeyFunction::half_normal, Adjustment::none, 0}, {15.0}, 0.0), InputError);
  EXPECT_THROW(
      DetectionFunction({KeyFunction::uniform, Adjustment::none, 0}, {}, std::numeric_limits<double>::infinity()),
      InputError);
  EXPECT_NO_THROW(DetectionFunction({KeyFunction::half_normal, Adjustment::none, 0}, {15.0},
                                    std::numeric_limits<double>::infinity()));
}

}  // namespace
}  // namespace stipple
