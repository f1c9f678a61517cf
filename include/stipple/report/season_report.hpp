#pragma once
/// The HTML report of a season (a batch run): built from typed results, never from files,
/// so it can be made from results that did not come from a batch folder. `stipple batch`
/// fills it as files finish; `load_batch_folder` (batch/folder.hpp) rebuilds it from a
/// batch output folder for `stipple report`.

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "stipple/intensity/density.hpp"
#include "stipple/randomness/analysis.hpp"
#include "stipple/transect/estimate.hpp"

namespace stipple {

/// The facts of a run the methods paragraph is written from: the options actually used.
struct SeasonRun {
  std::string version;
  std::string options_text;  ///< the options as given, for the record
  bool density = false;
  bool randomness = false;
  bool transect = false;
  std::uint64_t seed = 0;
  std::size_t simulations = 0;
  std::string unit = "ha";            ///< density unit of the plot analyses
  std::string transect_unit = "km2";  ///< density unit of the transect analyses
  double confidence = 0.95;
  std::string crs;  ///< the batch CRS (every GIS feature is in it)
  std::string crs_name;
  std::string quadrats = "4x4";
  std::string edge_correction;  ///< Clark-Evans: empty = per window shape
  std::string pair_correction = "isotropic";
  std::string distance_correction = "kaplan-meier";
  std::optional<double> rmax_m;  ///< empty = the default rule per group
  std::string detection;         ///< how densities were corrected, one phrase
  std::string transect_models;   ///< keys and adjustments tried
  std::string truncation;        ///< as given
  std::size_t bootstrap = 0;
};

struct SeasonInput {
  std::string name;
  std::string plots;   ///< separate plots file, or empty
  std::string kind;    ///< plots | transects | unknown
  std::string crs;     ///< the file's own analysis CRS
  std::string status;  ///< ok | failed | skipped
  std::string reason;  ///< why it failed or was skipped
  std::string sha256;
  std::vector<std::string> warnings;
};

struct SeasonDensityRow {
  std::string file;
  DensityEstimate estimate;
};

struct SeasonRandomnessRow {
  std::string file;
  std::string plot;
  std::optional<std::string> species;
  std::size_t n = 0;
  std::optional<double> quadrat_p;
  bool quadrat_monte_carlo = false;
  std::optional<double> clark_evans_ratio;
  std::optional<double> clark_evans_p;
  std::optional<double> mad_p;
  std::optional<double> dclf_p;
  std::optional<double> erl_p;
  std::optional<double> rmax_m;
  std::vector<Departure> departures;  ///< where L leaves the global envelope
  std::string verdict;
};

struct SeasonInteractionRow {
  std::string file;
  std::string plot;
  std::string species_a;
  std::string species_b;
  std::size_t n_a = 0;
  std::size_t n_b = 0;
  double p_value = 1.0;
  std::string direction;
  std::vector<Departure> departures;
};

struct SeasonTransectRow {
  std::string file;
  std::optional<std::string> species;
  std::optional<std::string> stratum;
  std::string model;
  std::size_t n = 0;
  bool lines = true;
  double effort = 0.0;             ///< km (lines) or visits (points)
  double effective_width_m = 0.0;  ///< ESW (lines) or effective radius (points)
  double detection_probability = 0.0;
  double density = 0.0;  ///< per SeasonRun::transect_unit
  std::optional<double> density_cv;
  Interval density_ci;
  std::optional<Interval> bootstrap_ci;
  std::optional<double> gof_p;
};

/// A figure of the season, inlined from its SVG text.
struct SeasonFigure {
  std::string section;  ///< map | L | detection
  std::string path;     ///< relative to the output folder
  std::string title;
};

struct SeasonReport {
  SeasonRun run;
  std::vector<SeasonInput> inputs;
  std::vector<SeasonDensityRow> densities;
  /// Season pooling: `pooled` and `composition` over every plot of every file.
  std::optional<DensityResult> pooled;
  std::vector<SeasonRandomnessRow> randomness;
  std::vector<SeasonInteractionRow> interactions;
  std::vector<SeasonTransectRow> transects;
  std::vector<SeasonFigure> figures;
  std::vector<std::string> warnings;  ///< season-wide (pooling) warnings
};

/// Reads a figure's SVG text by its path relative to the output folder.
using FigureSource = std::function<std::string(const std::string& path)>;

/// One self-contained HTML page: inputs with checksums, run facts, the season's pooled
/// table with its tests, per-plot densities, randomness results with the distance ranges
/// where L leaves its global envelope, between-species results, transect densities, a
/// methods paragraph generated from `run`, figures (every id made unique), the cautions of
/// the analyses that ran and the references the page cites.
[[nodiscard]] std::string season_report_html(const SeasonReport& report, const FigureSource& figures);

/// The report rows of one file's results.
[[nodiscard]] std::vector<SeasonDensityRow> season_density_rows(const std::string& file, const DensityResult& result);
[[nodiscard]] std::vector<SeasonRandomnessRow> season_randomness_rows(const std::string& file,
                                                                      const RandomnessResult& result);
[[nodiscard]] std::vector<SeasonInteractionRow> season_interaction_rows(const std::string& file,
                                                                        const RandomnessResult& result);
[[nodiscard]] std::vector<SeasonTransectRow> season_transect_rows(const std::string& file,
                                                                  const TransectResult& result);

}  // namespace stipple
