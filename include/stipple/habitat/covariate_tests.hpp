#pragma once
/// Tests of whether sightings depend on a covariate, without a model: Berman's Z1 and a
/// Kolmogorov-Smirnov comparison of the covariate at the sightings with its distribution
/// over the window under complete spatial randomness (Berman 1986, Appl. Statist.
/// 35:54-62). Both condition on the number of sightings.

#include <cstddef>
#include <vector>

namespace stipple {

/// One covariate: the window as pieces of constant value (raster cells clipped to the
/// window) and the value at each sighting (that of the cell holding it).
struct CovariateSample {
  std::vector<double> piece_area_m2;
  std::vector<double> piece_value;
  std::vector<double> point_value;
};

/// Berman's Z1 = (S - n mu) / sqrt(n sigma^2), S the sum of the covariate over the n
/// sightings, mu and sigma^2 its mean and variance over the window (area-weighted);
/// standard normal under CSR. Positive: sightings sit at higher values than chance.
struct BermanZ1Test {
  double statistic = 0.0;
  double observed_sum = 0.0;
  double expected_sum = 0.0;
  double standard_deviation = 0.0;
  double p_two_sided = 1.0;
};

/// Kolmogorov-Smirnov distance D = sup_t |F_n(t) - F(t)| between the empirical
/// distribution function of the covariate at the sightings and its area-weighted
/// distribution function F over the window, evaluated exactly (both are step functions,
/// compared at every value either jumps at). The p-value is the continuous-null law
/// (kolmogorov_smirnov_p); with a null that has atoms, as a raster's has, it is
/// conservative (common practice; the exact discrete law is not computed).
struct CovariateKsTest {
  double d = 0.0;
  double p = 1.0;
  std::size_t sightings = 0;
  /// The two distribution functions for a figure: at each distinct value (ascending),
  /// the share of the window and the share of the sightings at or below it.
  std::vector<double> values;
  std::vector<double> window_cdf;
  std::vector<double> sighting_cdf;
};

/// Throw InputError for an inconsistent or non-finite sample (naming the count or the
/// value), AnalysisError for no sightings or a covariate constant over the window.
[[nodiscard]] BermanZ1Test berman_z1(const CovariateSample& sample);
[[nodiscard]] CovariateKsTest covariate_ks(const CovariateSample& sample);

}  // namespace stipple
