#pragma once
/// The habitat model of a survey: per species, a Poisson point process whose intensity is
/// log-linear in raster covariates, log lambda(u) = b0 + sum_k b_k z_k(u), fitted by exact
/// maximum likelihood over the raster cells clipped to the plot windows (Berman & Turner
/// 1992; Baddeley & Turner 2000), with Wald intervals, likelihood-ratio tests for each
/// term, species-specific or shared slopes (the marked process), and Berman's tests of
/// each covariate (Berman 1986).

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/distance_field.hpp"
#include "stipple/geometry/raster_grid.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/habitat/covariate_tests.hpp"
#include "stipple/intensity/detection.hpp"

namespace stipple {

/// One covariate: a raster already in the analysis CRS, or the distance to mapped features.
struct HabitatCovariate {
  std::string name;
  RasterGrid grid;  ///< ignored for a distance covariate
  /// A distance covariate: sightings take their exact distance; the window is cut into
  /// square cells of `spacing_m` (0: the finest raster cell among the covariates, else
  /// 1/200 of the survey's extent), each at the distance of its centre, and the fit is
  /// repeated with half that spacing to show the quadrature error.
  std::optional<DistanceField> distance_to;
  double spacing_m = 0.0;
  std::string source;   ///< where it came from, for messages ("moisture.tif (band 1)")
  bool factor = false;  ///< categorical classes (whole numbers): one slope per class but the reference
  /// An observation-process term (observer effort): it thins the sightings. Predictions
  /// set it to `bias_reference`, or by default to the value of best observation (the end of
  /// its range over the windows where the fitted thinning is highest; 0 for a distance
  /// whose features pass through the windows).
  bool bias = false;
  std::optional<double> bias_reference;
};

enum class SlopeMode {
  separate,  ///< each species its own intercept and slopes
  shared,    ///< species-specific intercepts, common slopes
};

struct HabitatOptions {
  SlopeMode slopes = SlopeMode::separate;
  double confidence = 0.95;
  /// Square metres in the reporting unit: intercepts are log intensities per unit.
  double unit_m2 = 1e4;
  /// Exclude window parts and sightings where a covariate has no value, instead of refusing.
  bool drop_missing = false;
  /// Known detection probabilities: a species' intercept is corrected to the intensity of
  /// the whole population, log(lambda / p), its variance adding (se_p / p)^2 (delta method),
  /// as `density` corrects counts. Empty: no correction.
  std::optional<DetectionTable> detection;
};

struct HabitatCoefficient {
  std::string term;                    ///< "(intercept)", the covariate's name, or "name=class" for a factor class
  std::string covariate;               ///< empty for an intercept
  std::optional<std::size_t> species;  ///< the species of an intercept in a shared-slopes model
  double estimate = 0.0;
  double se = 0.0;
  double ci_low = 0.0;
  double ci_high = 0.0;
  double z = 0.0;
  double p_value = 1.0;
  /// exp(estimate) for a slope: the factor by which intensity changes per unit of the
  /// covariate (for a class, relative to the reference class). NaN for an intercept.
  double rate_ratio = 0.0;
  bool bias = false;
  /// For a bias term: the covariate value at which predictions are made.
  std::optional<double> bias_reference;
  /// For an intercept corrected for detection: the probability it was divided by.
  std::optional<double> detection_probability;
};

/// Likelihood-ratio test for dropping a covariate (all classes of a factor together).
struct HabitatTermTest {
  std::string term;
  double statistic = 0.0;
  std::size_t df = 0;
  double p_value = 1.0;
};

struct HabitatModel {
  /// The species fitted; empty for all species together (the superposed pattern) in a
  /// separate-slopes fit, or every species at once in a shared-slopes fit.
  std::optional<std::size_t> species;
  std::size_t n = 0;
  double log_likelihood = 0.0;
  double aic = 0.0;
  std::size_t iterations = 0;
  /// Detection probability the intercept(s) were divided by (1: none); for a shared model,
  /// see each intercept's `detection_probability`.
  double detection_probability = 1.0;
  std::vector<HabitatCoefficient> coefficients;
  std::vector<HabitatTermTest> term_tests;
  /// Covariance of the coefficients as fitted (intercept first, per square metre), row-major.
  std::vector<double> covariance;
};

/// How a factor was coded: the reference class (the one of largest area) and the others.
struct FactorCoding {
  std::string covariate;
  double reference = 0.0;
  std::vector<double> classes;  ///< the classes with a slope, ascending
};

struct HabitatCovariateTest {
  std::optional<std::size_t> species;  ///< empty: all species together
  std::string covariate;
  BermanZ1Test z1;
  CovariateKsTest ks;
};

/// Do the species respond to habitat the same way? Likelihood ratio of separate slopes
/// against shared slopes (species-specific intercepts in both).
struct SlopeTest {
  double statistic = 0.0;
  std::size_t df = 0;
  double p_value = 1.0;
  double shared_log_likelihood = 0.0;
  double separate_log_likelihood = 0.0;
};

/// A sighting left out because a covariate has no value where it was made.
struct HabitatExclusion {
  std::int64_t feature_id = 0;
  std::string plot;
  std::string covariate;
};

/// The change in a coefficient when a distance covariate's quadrature spacing is halved.
struct QuadratureChange {
  std::optional<std::size_t> species;  ///< the model's species, as in HabitatModel
  std::string term;
  double estimate = 0.0;         ///< at the spacing used
  double halved_estimate = 0.0;  ///< at half of it
  double se = 0.0;               ///< of the estimate, for scale
};

/// How the window was cut for distance covariates, and what halving the spacing changed.
struct QuadratureCheck {
  std::vector<std::string> covariates;  ///< the distance covariates
  double spacing_m = 0.0;
  std::vector<QuadratureChange> changes;
  /// Largest |halved - estimate| / se over every coefficient.
  double largest_change_in_se = 0.0;
};

/// A slope column of the models: a numeric covariate, or one class of a factor (1 in that
/// class, 0 elsewhere).
struct DesignColumn {
  std::size_t covariate = 0;    ///< index into the covariates
  std::optional<double> level;  ///< the class, for a factor
};

struct HabitatResult {
  std::vector<HabitatModel> models;
  /// The slope columns of every model, in the order of their coefficients after the
  /// intercept(s).
  std::vector<DesignColumn> columns;
  std::optional<QuadratureCheck> quadrature;
  std::vector<HabitatCovariateTest> covariate_tests;
  std::optional<SlopeTest> slope_test;
  std::vector<FactorCoding> factors;
  double window_area_m2 = 0.0;   ///< area the models were fitted over
  double dropped_area_m2 = 0.0;  ///< window area without a covariate value, left out
  std::size_t pieces = 0;        ///< window pieces of constant covariates (the quadrature)
  std::vector<HabitatExclusion> dropped_sightings;
  std::vector<std::string> notes;
  std::vector<std::string> warnings;
};

/// Fits the habitat model of every species (and of all species together), tests each
/// covariate, and compares shared with separate slopes. The windows are cut along the
/// cell edges of every covariate raster, so each piece has one value of every covariate
/// and the likelihood is exact; a sighting takes the values of the cells holding it.
/// Throws InputError naming the plot, sighting or covariate for a missing value (unless
/// `drop_missing`), a factor that is not whole numbers, or a bad option; AnalysisError when
/// nothing can be fitted. A species that cannot be fitted (too few sightings, a covariate
/// that separates it) is listed in warnings and left out.
[[nodiscard]] HabitatResult fit_habitat(const Survey& survey, const std::vector<HabitatCovariate>& covariates,
                                        const HabitatOptions& options);

}  // namespace stipple
