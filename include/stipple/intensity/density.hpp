#pragma once
/// Intensity (density) of each species per plot and pooled across plots, with exact
/// Poisson intervals, tests that plots share one intensity and one species mix, and
/// correction for imperfect detection.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/survey.hpp"
#include "stipple/intensity/detection.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/simulate/engine.hpp"
#include "stipple/stats/chi_square.hpp"

namespace stipple {

struct DensityOptions {
  AreaUnit unit = AreaUnit::hectare;
  double confidence = 0.95;  ///< two-sided level of every interval; alpha = 1 - level
  DetectionTable detection;  ///< p = 1 for every species unless given
  std::uint64_t seed = default_seed;
  std::size_t simulations = 999;  ///< Monte Carlo draws when expected counts are small
};

/// One plot x species (species empty = all species together, the superposed process).
struct DensityEstimate {
  std::string plot;
  std::optional<std::string> species;
  std::uint64_t count = 0;
  double area_in_unit = 0.0;  ///< in the reporting unit (DensityResult::unit)
  double area_m2 = 0.0;       ///< the same in square metres, as measured
  double intensity = 0.0;     ///< count / area, per unit
  Interval ci;                ///< exact Garwood interval, per unit
  CorrectedIntensity corrected;
};

/// Do the plots share one intensity? Pearson X2 of the plot counts against expectations
/// proportional to plot area, df = plots - 1 (common practice; e.g. Diggle 2003, ch. 2).
struct HomogeneityTest {
  ChiSquareTest chi_square;
  double p_value = 1.0;  ///< Monte Carlo when any expected count < 5, else chi-square
  bool monte_carlo = false;
  double dispersion_ratio = 0.0;  ///< X2 / df: about 1 when plots share one intensity
  /// Between-plot (ratio-estimator) standard error of the pooled intensity:
  /// var = k / (k - 1) * sum (n_i - R a_i)^2 / A^2, R = sum n / sum a
  /// (Cochran W.G. 1977, Sampling Techniques, 3rd ed., ch. 6, from memory: chapter).
  double between_plot_se = 0.0;
  Interval between_plot_ci;  ///< R +- t_{k-1} se, lower limit clipped at 0 (observed scale)
  /// The same on the detection-corrected scale, to be read beside the corrected intensity:
  /// the ratio estimator of the corrected plot counts y_i = sum_s n_is / p_s, plus the
  /// uncertainty of each p by the delta method, var(p part) = sum_s (N_s se_s / p_s^2)^2 / A^2
  /// (N_s the pooled count of species s), as for the Poisson rows; interval
  /// R_c +- t_df se, df by Satterthwaite (1946) from the k - 1 of the between-plot part
  /// (the p part is taken as known to infinite df). With p = 1 it equals the observed one;
  /// with one p known exactly it is the observed interval divided by p.
  double corrected_between_plot_se = 0.0;
  Interval corrected_between_plot_ci;
  double corrected_between_plot_df = 0.0;
  bool significant = false;  ///< p_value < alpha
};

/// One species (or all together) pooled over plots: sum n / sum |W| (superposition).
struct PooledEstimate {
  std::optional<std::string> species;
  std::size_t plots = 0;
  std::uint64_t count = 0;
  double area_in_unit = 0.0;  ///< summed over the plots, in the reporting unit
  double intensity = 0.0;
  Interval ci;
  CorrectedIntensity corrected;
  std::optional<HomogeneityTest> homogeneity;  ///< with two or more plots and n > 0
};

/// Is the species mix the same in every plot? Pearson X2 of the plot x species table.
struct CompositionTest {
  ChiSquareTest chi_square;
  double p_value = 1.0;
  bool monte_carlo = false;
  bool significant = false;
};

struct DensityResult {
  AreaUnit unit = AreaUnit::hectare;
  double confidence = 0.95;
  double alpha = 0.05;
  std::uint64_t seed = default_seed;
  std::size_t simulations = 0;
  std::vector<DensityEstimate> estimates;      ///< per plot: each species, then all together
  std::vector<PooledEstimate> pooled;          ///< each species, then all together
  std::optional<CompositionTest> composition;  ///< with two or more plots and species
};

/// The counts density needs, without the locations: plots with their areas and the number of
/// sightings of each species in each. Built from a survey or accumulated over many surveys
/// (a season of plot files) without holding their sightings.
struct PlotCounts {
  std::vector<std::string> species;                ///< sorted names
  std::vector<std::string> plots;                  ///< plot ids, unique
  std::vector<double> areas_m2;                    ///< parallel to `plots`
  std::vector<std::vector<std::uint64_t>> counts;  ///< counts[plot][species]

  /// The counts of a survey's plots.
  [[nodiscard]] static PlotCounts of(const Survey& survey);
  /// Appends the plots of `other` (ids prefixed with `prefix`), merging the species lists.
  /// Throws InputError when a prefixed plot id is already present.
  void append(const PlotCounts& other, const std::string& prefix);
};

/// Densities of every species in every plot of the survey, pooled, tested and corrected.
/// Throws InputError when a species has no detection probability.
[[nodiscard]] DensityResult estimate_density(const Survey& survey, const DensityOptions& options);

/// The same from counts alone: `estimate_density(s, o)` equals
/// `estimate_density(PlotCounts::of(s), o)` exactly.
[[nodiscard]] DensityResult estimate_density(const PlotCounts& counts, const DensityOptions& options);

}  // namespace stipple
