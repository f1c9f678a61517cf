#pragma once
/// Batch: a season of plot (or transect) files analysed as one, an application layer above
/// the analysis core: discovery, deterministic shards, streamed tables, season pooling, merge.

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "stipple/error.hpp"
#include "stipple/intensity/density.hpp"
#include "stipple/intensity/kernel.hpp"
#include "stipple/io/gis_writer.hpp"
#include "stipple/io/reader.hpp"
#include "stipple/io/transect_reader.hpp"
#include "stipple/randomness/analysis.hpp"
#include "stipple/report/season_report.hpp"
#include "stipple/transect/estimate.hpp"

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
  SurveyReadOptions read;  ///< field names, CRS options; paths are set per input
  /// One plots layer for every input (a folder of sighting files over one plots file):
  /// sightings are assigned by their plot attribute or by location, as `read.assignment` says.
  std::optional<SourceSpec> shared_plots;
  bool run_density = true;
  bool run_randomness = true;
  bool run_transect = false;          ///< inputs holding transect lines and their sightings
  TransectReadOptions transect_read;  ///< field names; paths are set per input
  TransectOptions transect;
  DensityOptions density;
  RandomnessOptions randomness;  ///< threads are forced to 1 inside a file
  unsigned threads = 0;          ///< files in parallel (0 = all cores)
  bool figures = true;           ///< L-envelope figures and plot maps (SVG) for the report
  bool gis = false;              ///< OUT/plot-results.gpkg
  bool surfaces = false;         ///< OUT/surfaces/<input>/<species>.tif
  std::optional<double> pixel_m;
  std::optional<double> bandwidth_m;
  /// The input whose analysis CRS is the batch CRS when `read.target_crs` is not set: the
  /// first of all inputs, also when this run is one shard, so shards agree.
  std::optional<BatchInput> crs_reference;
  SeasonRun run;  ///< run facts for run.json and the report (version, options text...)
  /// How a failed file's error is worded in failures.csv and run.json; by default its
  /// message (a front end can name its own options, see Error::parameters).
  std::function<std::string(const Error&)> describe_error;
};

/// What a file holds, judged from its layers' geometry before any analysis.
enum class InputKind { plots, transects, unknown };
[[nodiscard]] const char* input_kind_name(InputKind kind);

/// Progress callback: (files done, files total, the file just finished, its status).
using BatchProgress = std::function<void(std::size_t, std::size_t, const SeasonInput&)>;

/// What a batch run leaves for its caller: the report's typed content and the counts.
struct BatchSummary {
  SeasonReport report;
  std::size_t failed = 0;
  std::size_t skipped = 0;
};

/// Runs every input (files in parallel, results independent of the thread count) and
/// writes each file's outputs as it finishes, in input order, into `out_dir`:
/// density.csv|json, randomness.csv|json, interactions.csv|json, transect.csv|json,
/// pooled.csv|json (the season pooled over every plot of every file), failures.csv,
/// figures.csv, run.json, figures/, maps/, plot-results.gpkg, surfaces/. Each table has a
/// `file` column in front of the single command's columns (tables.hpp). A file that fails
/// is recorded with its reason and the others finish; a file of the wrong kind for the
/// analyses asked (transect lines for density, plot polygons for transect) is skipped with
/// its reason. Memory holds a few files' results at a time, whatever the number of files,
/// plus the per-plot counts of the pooling and the report's rows. Nothing is written over
/// `protected_paths`.
[[nodiscard]] BatchSummary run_batch(const std::vector<BatchInput>& inputs, const BatchOptions& options,
                                     const std::string& out_dir, const std::vector<std::string>& protected_paths,
                                     const BatchProgress& progress);

/// Combines the output folders of shards into `out_dir`: the same files one unsharded run
/// writes (rows ordered by input name, then as each file produced them).
void merge_batch_outputs(const std::vector<std::string>& shard_dirs, const std::string& out_dir);

/// Reads a batch output folder back into the report's typed content: run.json (run facts
/// and inputs), density.json, pooled.json, randomness.json, interactions.json,
/// transect.json and figures.csv, whichever are present (README "Batch output folder").
/// Throws InputError naming the file when the folder has no run.json or a file is damaged.
[[nodiscard]] SeasonReport load_batch_folder(const std::string& dir);

/// Everything a report written for the batch folder `dir` must never replace: every file in
/// the folder except its own report.html, and every input listed in its run.json (`path`,
/// `plots_path`).
[[nodiscard]] std::vector<std::string> files_a_report_must_not_replace(const std::string& dir);

}  // namespace stipple
