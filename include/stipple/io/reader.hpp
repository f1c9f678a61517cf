#pragma once
/// Reading sightings, plot windows and detection tables from any OGR vector source
/// (GeoPackage, Shapefile, GeoJSON, GPX, KML, CSV with coordinate columns), in one
/// projected analysis CRS in metres.

#include <optional>
#include <string>
#include <vector>

#include "stipple/cancel.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/input_facts.hpp"
#include "stipple/intensity/detection.hpp"

namespace stipple {

/// A vector source and, optionally, the layer to read.
struct SourceSpec {
  std::string path;
  std::optional<std::string> layer;
};

/// Where the survey windows come from.
enum class WindowMode {
  plots,        ///< polygons from `plots`
  convex_hull,  ///< Ripley-Rasson enlarged convex hull of the sightings (model-based)
};

/// How sightings are assigned to plots (or transects).
enum class Assignment {
  automatic,  ///< by the sightings' plot attribute when the layer has it, else by location
  attribute,  ///< by the sightings' plot attribute (the field must exist)
  location,   ///< by point-in-polygon (nearest transect), ignoring the sightings' attribute
};

struct SurveyReadOptions {
  SourceSpec sightings;
  std::optional<SourceSpec> plots;
  WindowMode window = WindowMode::plots;
  std::string species_field = "species";
  std::string plot_field = "plot";                 ///< plot id of the plot polygons
  bool plot_field_given = false;                   ///< the user named the plot field explicitly
  std::optional<std::string> sighting_plot_field;  ///< the sightings' plot attribute; default plot_field
  Assignment assignment = Assignment::automatic;
  std::optional<std::string> encoding;    ///< text encoding of the sources (CPLRecode name); default UTF-8
  std::optional<std::string> x_field;     ///< CSV coordinate columns; default x/lon/longitude/easting
  std::optional<std::string> y_field;     ///< default y/lat/latitude/northing
  std::optional<std::string> target_crs;  ///< analysis CRS, projected, metres
  std::optional<std::string> assume_crs;  ///< for layers without a CRS
  bool repair_geometry = false;           ///< fix invalid polygons with GDAL's MakeValid
  CancelToken cancel;                     ///< polled every 4096 features read
};

/// A survey read from its sources and assigned to plots, with the facts of its reading.
struct LoadedSurvey : InputFacts {
  WindowMode window = WindowMode::plots;
  Survey survey;
};

/// Reads sightings and windows, reprojects them to the analysis CRS and assigns every
/// sighting to a plot. Throws InputError naming the file, layer, field or feature, and
/// when no sighting, or fewer than half of them, fall in a plot (wrong CRS or plots file).
/// Blank CSV rows are skipped with a note; sightings at identical coordinates and species
/// names that differ only in case or surrounding spaces are listed in warnings.
[[nodiscard]] LoadedSurvey load_survey(const SurveyReadOptions& options);

/// Reads a CSV (or any OGR table) of detection probabilities with columns `species`,
/// `p` and optionally `se`; `fallback` covers species not listed. Throws InputError
/// naming the file and row for a bad value or a repeated species.
[[nodiscard]] DetectionTable read_detection_table(const std::string& path, std::optional<Detection> fallback);

}  // namespace stipple
