#pragma once
/// Batch runs over many plot files: discovery, deterministic shards, tidy tables, merge.

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "stipple/intensity/density.hpp"
#include "stipple/intensity/kernel.hpp"
#include "stipple/io/gis_writer.hpp"
#include "stipple/io/reader.hpp"
#include "stipple/io/transect_reader.hpp"
#include "stipple/transect/estimate.hpp"
#include "stipple/randomness/analysis.hpp"

namespace stipple {

/// One input of a batch: the sightings file and where its plots come from.
struct BatchInput {
  std::string path;        ///< as found (absolute or relative to the working folder)
  std::string name;        ///< relative to the batch root: the row key in every table
  std::string plots_path;  ///< the same file unless a plots template names a sibling
};

/// Finds the inputs: every file under `root` (recursively) whose file name matches `pattern`
/// (shell glob with * and ?); when `root` is a vector file (by extension: .csv, .gpkg, .shp,
/// .geojson, ...) that file alone; when it is any other file, the paths it lists one per line
/// (blank lines and lines starting with # skipped). `plots_template` names each input's
/// plots file beside it, with {*} standing for the text the pattern's first * matched
/// (e.g. pattern "*-sightings.shp", template "{*}-plot.shp"); empty = the same file.
/// Sorted by name. Throws InputError when `root` does not exist or nothing matches.
[[nodiscard]] std::vector<BatchInput> discover_inputs(const std::string& root, const std::string& pattern,
                                                      const std::string& plots_template);

/// The K-th (1-based) of N deterministic slices: inputs at positions i with i mod N = K - 1.
[[nodiscard]] std::vector<BatchInput> shard(const std::vector<BatchInput>& inputs, std::size_t k, std::size_t n);
/// Parses "K/N"; throws InputError unless 1 <= K <= N.
[[nodiscard]] std::pair<std::size_t, std::size_t> parse_shard(const std::string& text);

struct BatchOptions {
  SurveyReadOptions read;          ///< field names, CRS options; paths are set per input
  bool run_density = true;
  bool run_randomness = true;
  bool run_transect = false;       ///< each input also holds transect lines and their sightings
  TransectReadOptions transect_read;  ///< field names; paths are set per input
  TransectOptions transect;
  DensityOptions density;
  RandomnessOptions randomness;    ///< threads are forced to 1 inside a file
  unsigned threads = 0;            ///< files in parallel (0 = all cores)
  bool figures = true;             ///< L-envelope figures and plot maps (SVG) for the report
  bool gis = false;                ///< OUT/plot-results.gpkg
  bool surfaces = false;           ///< OUT/surfaces/<input>/<species>.tif
  std::optional<double> pixel_m;
  std::optional<double> bandwidth_m;
};

/// What one input produced: table rows (CSV lines without newline) and JSON records.
struct BatchFileResult {
  BatchInput input;
  bool ok = false;
  std::string failure;             ///< one line, when !ok
  std::optional<std::string> sha256;        ///< of the input file, when it is a readable file
  std::optional<std::string> plots_sha256;  ///< of a separate plots file
  std::vector<std::string> density_rows;
  std::vector<std::string> density_records;     ///< JSON objects, as in `stipple density --json`
  std::vector<std::string> randomness_rows;
  std::vector<std::string> randomness_records;  ///< JSON objects, as in `stipple randomness --json`
  std::vector<std::string> transect_rows;
  std::vector<std::string> transect_records;    ///< JSON objects, as in `stipple transect --json`
  std::vector<std::pair<std::string, std::string>> figures;  ///< (relative path, SVG)
  std::string crs;
  std::vector<std::string> warnings;
  std::vector<PlotResultFeature> gis_features;
  std::vector<std::pair<std::string, IntensityRaster>> surfaces;  ///< (relative path, raster)
  LoadedSurvey survey;             ///< for GIS outputs and surfaces
};

/// Progress callback: (files done, files total, the file just finished).
using BatchProgress = std::function<void(std::size_t, std::size_t, const BatchFileResult&)>;

/// Runs every input (in parallel; each file's results are independent of the others and of
/// the thread count). A file that fails is recorded with its reason; the others finish.
[[nodiscard]] std::vector<BatchFileResult> run_batch(const std::vector<BatchInput>& inputs,
                                                     const BatchOptions& options,
                                                     const BatchProgress& progress);

/// Column headers of the batch tables.
[[nodiscard]] std::string density_table_header();
[[nodiscard]] std::string randomness_table_header();
[[nodiscard]] std::string transect_table_header();

/// Writes OUT/density.csv|json, OUT/randomness.csv|json, OUT/failures.csv, OUT/run.json,
/// OUT/figures/*.svg, through temporary files, never over an input.
void write_batch_outputs(const std::string& out_dir, const std::vector<BatchFileResult>& results,
                         const BatchOptions& options, const std::string& options_text,
                         const std::vector<std::string>& protected_paths);

/// Combines the output folders of shards into `out_dir`: the same files one unsharded run
/// writes (rows ordered by input name, then as each file produced them).
void merge_batch_outputs(const std::vector<std::string>& shard_dirs, const std::string& out_dir);

/// Everything a report written for the batch folder `dir` must never replace: every file in
/// the folder except its own report.html, and every input listed in its run.json (`path`,
/// `plots_path`).
[[nodiscard]] std::vector<std::string> files_a_report_must_not_replace(const std::string& dir);

}  // namespace stipple
