#pragma once
/// What habitat leaves unexplained: the inhomogeneous K of each species with the fitted
/// intensity, tested against simulations of the fitted Poisson model, and Neyman-Scott
/// cluster processes (Thomas, Matern cluster) fitted by minimum contrast.

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string_view>
#include <vector>

#include "stipple/cancel.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/habitat/habitat_model.hpp"
#include "stipple/randomness/envelope.hpp"

namespace stipple {

enum class ClusterModel {
  thomas,  ///< offspring displaced by isotropic Gaussian steps of standard deviation sigma
  matern,  ///< offspring uniform in a disc of radius R about the parent
};

[[nodiscard]] std::string_view cluster_model_name(ClusterModel model);

/// K of a stationary Neyman-Scott process with parent intensity kappa: pi r^2 + P(D <= r) /
/// kappa, D the distance between two offspring of one parent (Stoyan, Kendall & Mecke 1995,
/// Stochastic Geometry, section 5.3). Thomas: P(D <= r) = 1 - exp(-r^2 / (4 sigma^2)) (D is
/// the length of a N(0, 2 sigma^2 I) vector). Matern cluster: P(D <= r) integrates the set
/// covariance of a disc of radius R, 2 R^2 acos(s / 2R) - (s / 2) sqrt(4 R^2 - s^2), over the
/// plane, divided by (pi R^2)^2.
[[nodiscard]] double cluster_k(ClusterModel model, double kappa_per_m2, double scale_m, double r);

struct ClusterFit {
  ClusterModel model = ClusterModel::thomas;
  double kappa_per_m2 = 0.0;    ///< parent intensity
  double scale_m = 0.0;         ///< sigma (Thomas) or R (Matern cluster)
  double mean_offspring = 0.0;  ///< mean intensity / kappa
  double contrast = 0.0;        ///< the minimised discrepancy
  bool converged = false;
  /// The fit ran to its largest kappa or to clusters wider than 10 rmax: no clustering to
  /// describe within the distances studied (the Poisson limit).
  bool poisson_limit = false;
};

/// Minimum contrast (Diggle 1983, Statistical Analysis of Spatial Point Patterns; Diggle
/// 2003, section 6.3): the kappa and scale minimising sum over r_k of (K_hat(r_k)^c -
/// K(r_k)^c)^2 with c = 1/4, by NLopt's subplex on log kappa and log scale from several
/// starts. On an inhomogeneous K with the fitted intensity this is Waagepetersen's (2007,
/// Biometrics 63:252-258) two-step estimate, kappa then a relative parent intensity.
/// Throws InputError unless r and K are parallel and positive, AnalysisError without a
/// positive mean intensity.
[[nodiscard]] ClusterFit fit_cluster_min_contrast(ClusterModel model, const std::vector<double>& r,
                                                  const std::vector<double>& k_hat, double mean_intensity_per_m2);

struct ClusteringOptions {
  std::size_t simulations = 199;
  std::uint64_t seed = 42;
  unsigned threads = 0;  ///< 0: all cores; results do not depend on it
  double alpha = 0.05;
  double rmax_m = 0.0;  ///< 0: the smaller of a quarter of the smallest plot's short side and 4 / sqrt(lambda)
  std::size_t steps = 32;
  double unit_m2 = 1e4;  ///< the unit of the fit's intercepts (HabitatOptions::unit_m2)
  CancelToken cancel;
};

/// One species (or all together, for a shared or pooled model).
struct SpeciesClustering {
  std::optional<std::size_t> species;
  std::size_t n = 0;
  double rmax_m = 0.0;
  /// Pooled inhomogeneous L (plots weighted by area) against simulations of the fitted
  /// Poisson model (Lewis & Shedler 1979 thinning), with the fitted intensity in both.
  EnvelopeResult l_envelope;
  /// "clustered beyond habitat", "regular beyond habitat" or "explained by habitat", from the
  /// DCLF test at alpha.
  std::string verdict;
  std::optional<ClusterFit> thomas;
  std::optional<ClusterFit> matern;
  /// L against simulations of the fitted inhomogeneous Thomas and Matern cluster processes
  /// (the fitted intensity kept, each point of a stationary process with the largest
  /// intensity thinned): a test of the cluster model's fit.
  std::optional<EnvelopeResult> thomas_test;
  std::optional<EnvelopeResult> matern_test;
};

/// For every fitted model with at least 10 sightings. Throws Cancelled when `cancel` is set.
[[nodiscard]] std::vector<SpeciesClustering> analyse_clustering(const Survey& survey,
                                                                const std::vector<HabitatCovariate>& covariates,
                                                                const HabitatResult& result,
                                                                const ClusteringOptions& options);

}  // namespace stipple
