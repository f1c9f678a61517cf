#pragma once

#include <cstdint>
// Options shared by every analysis command, and output helpers of the front end.

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include <CLI/CLI.hpp>

#include "stipple/cancel.hpp"
#include "stipple/io/reader.hpp"
#include "stipple/report/figure.hpp"

namespace stipple::cli {

struct CommonOptions {
  std::string sightings;
  std::string layer;
  std::string plots;
  std::string plots_layer;
  std::string plot_field = "plot";
  std::string sightings_plot_field;
  std::string assign = "auto";
  std::string encoding;
  std::string species_field = "species";
  std::string x_field;
  std::string y_field;
  std::string crs;
  std::string assume_crs;
  std::string window = "plots";
  bool repair_geometry = false;
  std::string unit = "ha";
  double confidence = 0.95;
  std::string json;
  std::string csv;
  CLI::Option* plot_field_option = nullptr;
};

/// A whole number in [min, max], written with digits only (no sign, no exponent): checked on
/// the text, before CLI11 converts it, so "-1" can never wrap to a huge unsigned value.
[[nodiscard]] CLI::Validator whole_number(std::uint64_t min, std::uint64_t max);
/// A finite number strictly greater than 0 (0, negative values and NaN are refused).
[[nodiscard]] CLI::Validator positive_number();
/// A detection probability: a finite number in (0, 1].
[[nodiscard]] CLI::Validator probability();
/// A finite number >= 0 (a standard error).
[[nodiscard]] CLI::Validator non_negative_number();
/// A finite number strictly between `low` and `high`; `hint` is added to the refusal.
[[nodiscard]] CLI::Validator number_between(double low, double high, const std::string& hint = {});

/// Adds SIGHTINGS, the shared input, window, CRS and output options to a subcommand.
void add_common_options(CLI::App& command, CommonOptions& options);
/// The parts: SIGHTINGS, --layer, --species-field, --x-field, --y-field, --crs, --assume-crs,
/// --encoding.
void add_sighting_options(CLI::App& command, CommonOptions& options);
/// --plots, --plots-layer, --plot-field, --sightings-plot-field, --assign, --window,
/// --repair-geometry.
void add_window_options(CLI::App& command, CommonOptions& options);
/// --unit, --confidence, --json, --csv.
void add_output_options(CLI::App& command, CommonOptions& options);

/// The candidate closest to `word` by edit distance (Levenshtein 1966), if at most
/// `max_distance` edits away; empty otherwise. For "did you mean" hints.
[[nodiscard]] std::string nearest_name(const std::string& word, const std::vector<std::string>& candidates,
                                       std::size_t max_distance = 3);

/// The --assign option (auto, attribute, location) as the library's value.
[[nodiscard]] Assignment parse_assignment(const std::string& text);
/// Adds --assign: how sightings find their plot or transect.
CLI::Option* add_assign_option(CLI::App& command, std::string& target, const std::string& unit);

/// The library's read options from the parsed command line.
[[nodiscard]] SurveyReadOptions to_read_options(const CommonOptions& options);

/// Makes Ctrl-C (SIGINT) and SIGTERM stop a running command: the first sets the flag
/// behind interrupt_token(), which the library polls, so outputs in progress are
/// discarded; a second one ends the process at once. Called once by main.
void install_interrupt_handler();
/// The token every long computation of the command line is given.
[[nodiscard]] CancelToken interrupt_token();

/// Every input path named on the command line (outputs must never replace one).
[[nodiscard]] std::vector<std::string> input_paths(const CommonOptions& options);

/// Checks the output options before any work: no two name the same file (or both standard
/// output), and each file may be written (checked_output_path). `outputs` are (flag, value)
/// pairs; empty values are skipped. Throws InputError naming the flags.
void check_outputs(const std::vector<std::pair<std::string, std::string>>& outputs,
                   const std::vector<std::string>& inputs);

/// Writes `content` to `path` ("-" = standard output) safely.
void write_output(const std::string& path, const std::string& content, const std::vector<std::string>& inputs);

/// Writes (file name, content) pairs into `folder`, creating it, safely.
void write_folder(const std::string& folder, const std::vector<FigureFile>& files,
                  const std::vector<std::string>& inputs);

}  // namespace stipple::cli
