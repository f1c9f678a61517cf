#pragma once
/// Diagnostics of a fitted habitat model for figures: smoothed raw residuals and partial
/// effects of each covariate.

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/raster_grid.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/habitat/habitat_model.hpp"

namespace stipple {

/// The smoothed raw residual field of one model (Baddeley, Turner, Moller & Hazelton 2005,
/// JRSS B 67:617-666): s(u) = [sum_i k(u - x_i) - integral over W of k(u - v) lambda(v) dv] / e(u),
/// k an isotropic Gaussian of standard deviation `bandwidth_m`, e(u) the kernel's mass inside
/// the windows (both integrals over the window pieces), per reporting unit. Positive: more
/// sightings than the model expects there. NaN outside the windows.
struct ResidualField {
  std::optional<std::size_t> species;
  RasterGrid field;
  double bandwidth_m = 0.0;
};

/// For every separate-slopes model (or each species of a shared one), on square cells of
/// `cell_m` over the plots' extent, the integrals by the midpoint rule on those cells; the
/// bandwidth is `bandwidth_m`, or when 0 the median over plots of Scott's rule on each plot's
/// sightings (at least 2 cells). Throws InputError for a non-positive cell or more than 4 million cells.
[[nodiscard]] std::vector<ResidualField> smoothed_residuals(const Survey& survey,
                                                            const std::vector<HabitatCovariate>& covariates,
                                                            const HabitatOptions& options, const HabitatResult& result,
                                                            double cell_m, double bandwidth_m = 0.0);

/// The fitted intensity against one covariate with every other covariate at its
/// area-weighted mean over the windows (a factor at its reference class; bias terms at
/// their reference), with a pointwise Wald band at the fit's confidence: 50 values across the
/// covariate's range over the windows, or one per class of a factor (the reference first).
struct PartialEffect {
  std::optional<std::size_t> species;
  std::string covariate;
  bool factor = false;
  std::vector<double> x;
  std::vector<double> fit;  ///< intensity per unit
  std::vector<double> low;
  std::vector<double> high;
};

[[nodiscard]] std::vector<PartialEffect> partial_effects(const Survey& survey,
                                                         const std::vector<HabitatCovariate>& covariates,
                                                         const HabitatOptions& options, const HabitatResult& result);

}  // namespace stipple
