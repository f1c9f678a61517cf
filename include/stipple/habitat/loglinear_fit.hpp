#pragma once
/// Maximum-likelihood fit of a log-linear Poisson point-process intensity,
/// log lambda(u) = b0 + sum_k b_k z_k(u), over a window cut into pieces of constant
/// covariate value (raster cells clipped to the window). The likelihood's integral term is
/// then an exact sum over the pieces, so the fit is the exact maximum-likelihood estimate
/// (Berman & Turner 1992, Appl. Statist. 41:31-38; Baddeley & Turner 2000,
/// Aust. N. Z. J. Stat. 42:283-322, with the cells as quadrature).
///
/// This is the numerical core of the habitat model; reading rasters and the command come
/// on top of it.

#include <cstddef>
#include <string>
#include <vector>

namespace stipple {

/// The data of one fit, in analysis units (square metres; covariates in their own units).
struct LoglinearDesign {
  /// Covariate names, one per slope (the intercept is implicit).
  std::vector<std::string> names;
  /// Area of each window piece (> 0, m2).
  std::vector<double> piece_area_m2;
  /// Covariate values of each piece, piece-major: piece i, covariate k at [i * names.size() + k].
  std::vector<double> piece_values;
  /// Number of sightings in the window.
  std::size_t sightings = 0;
  /// Covariate values at each sighting, sighting-major like piece_values.
  std::vector<double> point_values;
};

struct LoglinearFit {
  /// Intercept (log intensity per m2 at all covariates 0) then one slope per covariate.
  std::vector<double> coefficients;
  /// Standard errors from the inverse Fisher information at the optimum.
  std::vector<double> standard_errors;
  /// Inverse Fisher information, row-major, (1 + k) x (1 + k).
  std::vector<double> covariance;
  /// sum_i eta(x_i) - integral of lambda over the window, at the optimum.
  double log_likelihood = 0.0;
  /// -2 log_likelihood + 2 (1 + k).
  double aic = 0.0;
  std::size_t iterations = 0;
};

/// Newton-Raphson on the concave log-likelihood (Fisher scoring is Newton here), with step
/// halving, from b0 = log(n / |W|) and zero slopes. Throws InputError for an inconsistent
/// or non-finite design, AnalysisError for no sightings, covariates that are constant or
/// collinear over the window, or a likelihood that has no finite maximum (a covariate that
/// separates the sightings from part of the window, recognised as a slope of more than 10
/// units of log intensity per standard deviation of the covariate over the window).
[[nodiscard]] LoglinearFit fit_loglinear_intensity(const LoglinearDesign& design);

}  // namespace stipple
