#pragma once
/// Predictions of a fitted habitat model: intensity surfaces with standard errors, and the
/// expected number of animals or plants in management units, with every bias (observer
/// effort) term at its reference value.

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/raster_grid.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/habitat/habitat_model.hpp"

namespace stipple {

/// Predicted intensity of one species (or all together) on a grid, per reporting unit.
struct HabitatSurface {
  std::optional<std::size_t> species;
  RasterGrid intensity;                ///< NaN where a covariate has no value
  std::vector<double> standard_error;  ///< delta method, parallel to intensity.values
};

/// The surface of every model on square cells of `cell_m` over `area` (each cell at the
/// covariates under its centre). Throws InputError for a non-positive cell or a grid of
/// more than 10^8 cells.
[[nodiscard]] std::vector<HabitatSurface> predict_surfaces(const Survey& survey,
                                                           const std::vector<HabitatCovariate>& covariates,
                                                           const HabitatOptions& options, const HabitatResult& result,
                                                           const Bounds& area, double cell_m);

/// A management unit.
struct AbundanceUnit {
  std::string id;
  Window window;
};

/// Expected number in one unit for one model, with its interval.
struct AbundanceEstimate {
  std::string unit;
  std::optional<std::size_t> species;
  double area_m2 = 0.0;
  double expected = 0.0;
  double se = 0.0;
  double ci_low = 0.0;
  double ci_high = 0.0;
  std::string method;  ///< "delta (log scale)" or "parametric bootstrap (N draws)"
  /// Share of the unit's area whose covariate values fall outside their range over the
  /// fitted windows: a prediction there extrapolates.
  double extrapolated_share = 0.0;
};

struct AbundanceOptions {
  std::size_t bootstrap = 0;  ///< 0: delta method; else parametric bootstrap draws
  std::uint64_t seed = 0;
};

/// The integral of the predicted intensity over each unit, cut along the covariate cells
/// like the windows. Interval: delta method on the log of the expected number, or the
/// percentiles of a parametric bootstrap (coefficients drawn from their asymptotic normal
/// law, seeded). The interval is for the expected number, not for a realised count.
/// Throws InputError naming the unit when part of it has no covariate value.
[[nodiscard]] std::vector<AbundanceEstimate> predict_abundance(
    const Survey& survey, const std::vector<HabitatCovariate>& covariates, const HabitatOptions& options,
    const HabitatResult& result, const std::vector<AbundanceUnit>& units, const AbundanceOptions& abundance);

}  // namespace stipple
