#include "common_options.hpp"

#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <csignal>
#include <filesystem>
#include <iostream>

#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/io/output.hpp"

namespace stipple::cli {

namespace {

std::optional<std::string> optional(const std::string& value) {
  return value.empty() ? std::nullopt : std::optional<std::string>(value);
}

}  // namespace

void add_sighting_options(CLI::App& command, CommonOptions& o) {
  command
      .add_option("SIGHTINGS", o.sightings,
                  "Sightings: any OGR vector source (GeoPackage, Shapefile, GeoJSON, GPX, "
                  "KML, CSV with coordinate columns)")
      ->required();
  command.add_option("--layer", o.layer, "Layer of SIGHTINGS to read (default: the only point layer)");
  command.add_option("--species-field", o.species_field, "Species attribute of the sightings")->capture_default_str();
  command.add_option("--x-field", o.x_field, "CSV column of x or longitude (default: x, lon, longitude or easting)");
  command.add_option("--y-field", o.y_field, "CSV column of y or latitude (default: y, lat, latitude or northing)");
  command.add_option("--crs", o.crs,
                     "Analysis CRS, projected in metres, e.g. EPSG:32630 (default: the data's "
                     "own projected CRS when plot areas in it are within 0.1% of the geodesic "
                     "ones, else a Lambert azimuthal equal-area CRS centred on the data)");
  command.add_option("--assume-crs", o.assume_crs,
                     "CRS of layers that carry none, e.g. EPSG:4326 for GPS longitude/latitude "
                     "(default: none; a layer without a CRS is refused)");
  command.add_option("--encoding", o.encoding,
                     "Text encoding of the inputs' attributes, e.g. LATIN1 or CP1252 (default: "
                     "UTF-8, or what a Shapefile's .cpg says; invalid bytes are shown as U+FFFD "
                     "with a warning)");
}

std::string nearest_name(const std::string& word, const std::vector<std::string>& candidates,
                         std::size_t max_distance) {
  // Levenshtein distance, one row at a time.
  const auto distance = [](const std::string& a, const std::string& b) {
    std::vector<std::size_t> row(b.size() + 1);
    for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
    for (std::size_t i = 1; i <= a.size(); ++i) {
      std::size_t diagonal = row[0];
      row[0] = i;
      for (std::size_t j = 1; j <= b.size(); ++j) {
        const std::size_t above = row[j];
        row[j] = std::min({row[j] + 1, row[j - 1] + 1, diagonal + (a[i - 1] == b[j - 1] ? 0u : 1u)});
        diagonal = above;
      }
    }
    return row[b.size()];
  };
  std::string best;
  std::size_t best_distance = max_distance + 1;
  for (const auto& candidate : candidates) {
    const std::size_t d = distance(word, candidate);
    if (d < best_distance) best_distance = d, best = candidate;
  }
  return best;
}

Assignment parse_assignment(const std::string& text) {
  if (text == "attribute") return Assignment::attribute;
  if (text == "location") return Assignment::location;
  return Assignment::automatic;
}

CLI::Option* add_assign_option(CLI::App& command, std::string& target, const std::string& unit) {
  return command
      .add_option("--assign", target,
                  "How sightings find their " + unit + ": attribute (the sightings' " + unit + " field), location (" +
                      (unit == "plot" ? std::string("point in polygon") : std::string("nearest transect")) +
                      ") or auto (attribute when the sightings have the field)")
      ->check(CLI::IsMember({"auto", "attribute", "location"}))
      ->capture_default_str();
}

void add_window_options(CLI::App& command, CommonOptions& o) {
  command.add_option("--plots", o.plots, "Plot polygons (survey windows): any OGR polygon source");
  command.add_option("--plots-layer", o.plots_layer, "Layer of --plots to read");
  o.plot_field_option = command
                            .add_option("--plot-field", o.plot_field,
                                        "Plot-id attribute of the plot polygons (and of the sightings, unless "
                                        "--sightings-plot-field names theirs)")
                            ->capture_default_str();
  command.add_option("--sightings-plot-field", o.sightings_plot_field,
                     "Plot attribute of the sightings (default: the --plot-field name)");
  add_assign_option(command, o.assign, "plot");
  command
      .add_option("--window", o.window,
                  "Survey windows: plots (from --plots) or convex-hull (Ripley-Rasson "
                  "estimate from the points; model-based)")
      ->check(CLI::IsMember({"plots", "convex-hull"}))
      ->capture_default_str();
  command.add_flag("--repair-geometry", o.repair_geometry,
                   "Repair invalid plot polygons with GDAL's MakeValid instead of refusing them");
}

void add_output_options(CLI::App& command, CommonOptions& o) {
  command.add_option("--unit", o.unit, "Area unit of intensities: m2, ha or km2")
      ->check(CLI::IsMember({"m2", "ha", "km2"}))
      ->capture_default_str();
  command.add_option("--confidence", o.confidence, "Two-sided confidence level of intervals")
      ->check(number_between(0.0, 1.0, "e.g. 0.95"))
      ->capture_default_str();
  command.add_option("--json", o.json, "Write JSON results to FILE ('-' = standard output; default: none)");
  command.add_option("--csv", o.csv, "Write CSV results to FILE ('-' = standard output; default: none)");
}

void add_common_options(CLI::App& command, CommonOptions& o) {
  add_sighting_options(command, o);
  add_window_options(command, o);
  add_output_options(command, o);
}

SurveyReadOptions to_read_options(const CommonOptions& o) {
  SurveyReadOptions r;
  r.sightings = SourceSpec{o.sightings, optional(o.layer)};
  if (!o.plots.empty()) r.plots = SourceSpec{o.plots, optional(o.plots_layer)};
  r.window = o.window == "convex-hull" ? WindowMode::convex_hull : WindowMode::plots;
  r.species_field = o.species_field;
  r.plot_field = o.plot_field;
  r.plot_field_given = o.plot_field_option != nullptr && o.plot_field_option->count() > 0;
  r.sighting_plot_field = optional(o.sightings_plot_field);
  r.assignment = parse_assignment(o.assign);
  r.encoding = optional(o.encoding);
  r.x_field = optional(o.x_field);
  r.y_field = optional(o.y_field);
  r.target_crs = optional(o.crs);
  r.assume_crs = optional(o.assume_crs);
  r.repair_geometry = o.repair_geometry;
  r.cancel = interrupt_token();
  return r;
}

std::vector<std::string> input_paths(const CommonOptions& o) {
  std::vector<std::string> paths{o.sightings};
  if (!o.plots.empty()) paths.push_back(o.plots);
  return paths;
}

CLI::Validator whole_number(std::uint64_t min, std::uint64_t max) {
  const std::string range = std::to_string(min) + "-" + std::to_string(max);
  return CLI::Validator(
      [min, max, range](std::string& text) -> std::string {
        const auto value = parse_whole_number(text);
        if (!value || *value < min || *value > max)
          return "must be a whole number from " + range + " (got '" + text + "')";
        return {};
      },
      "whole number " + range);
}

CLI::Validator positive_number() {
  return CLI::Validator(
      [](std::string& text) -> std::string {
        const auto value = parse_finite_number(text);
        if (!value || !(*value > 0.0)) return "must be a number greater than 0 (got '" + text + "')";
        return {};
      },
      "number > 0");
}

CLI::Validator probability() {
  return CLI::Validator(
      [](std::string& text) -> std::string {
        const auto value = parse_finite_number(text);
        if (!value || !(*value > 0.0 && *value <= 1.0)) return "must be a probability in (0, 1] (got '" + text + "')";
        return {};
      },
      "number in (0, 1]");
}

CLI::Validator non_negative_number() {
  return CLI::Validator(
      [](std::string& text) -> std::string {
        const auto value = parse_finite_number(text);
        if (!value || !(*value >= 0.0)) return "must be a number >= 0 (got '" + text + "')";
        return {};
      },
      "number >= 0");
}

CLI::Validator number_between(double low, double high, const std::string& hint) {
  const std::string range = format_general(low) + " and " + format_general(high);
  return CLI::Validator(
      [low, high, range, hint](std::string& text) -> std::string {
        const auto value = parse_finite_number(text);
        if (!value || !(*value > low) || !(*value < high))
          return "must lie strictly between " + range + " (got '" + text + "')" + (hint.empty() ? "" : "; " + hint);
        return {};
      },
      "number in (" + format_general(low) + ", " + format_general(high) + ")");
}

void check_outputs(const std::vector<std::pair<std::string, std::string>>& outputs,
                   const std::vector<std::string>& inputs) {
  std::vector<std::pair<std::string, std::string>> seen;  // flag, resolved path
  for (const auto& [flag, value] : outputs) {
    if (value.empty()) continue;
    std::string resolved = value;
    if (value != "-") {
      std::error_code ec;
      resolved = std::filesystem::weakly_canonical(checked_output_path(value, inputs), ec).string();
      if (ec) resolved = value;
    }
    for (const auto& [other_flag, other] : seen) {
      if (other != resolved) continue;
      throw InputError(flag + " and " + other_flag + " both write to " +
                       (value == "-" ? std::string("standard output") : "'" + value + "'") +
                       "; give each output its own file");
    }
    seen.emplace_back(flag, resolved);
  }
}

void write_output(const std::string& path, const std::string& content, const std::vector<std::string>& inputs) {
  if (path == "-") {
    std::cout << content << std::flush;
    return;
  }
  write_file_safely(path, content, inputs);
}

void write_folder(const std::string& folder, const std::vector<FigureFile>& files,
                  const std::vector<std::string>& inputs) {
  make_folder(folder);
  for (const auto& f : files) write_file_safely((std::filesystem::path(folder) / f.name).string(), f.content, inputs);
}

namespace {

// The one flag a signal handler may touch: lock-free, so setting it is async-signal-safe.
std::atomic<bool> interrupted{false};
static_assert(std::atomic<bool>::is_always_lock_free);

extern "C" void on_interrupt(int signal) {
  if (interrupted.exchange(true)) {
    std::signal(signal, SIG_DFL);  // a second Ctrl-C: stop now
    std::raise(signal);
    return;
  }
  constexpr char message[] = "\nstipple: interrupted, stopping (press Ctrl-C again to quit at once)\n";
  [[maybe_unused]] const auto written = ::write(2, message, sizeof message - 1);
}

}  // namespace

void install_interrupt_handler() {
  std::signal(SIGINT, on_interrupt);
  std::signal(SIGTERM, on_interrupt);
}

CancelToken interrupt_token() {
  return CancelToken(interrupted);
}

}  // namespace stipple::cli
