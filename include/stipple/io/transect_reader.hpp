#pragma once
/// Reading transect surveys: transect lines or point stations, and sightings with recorded
/// distances or locations, into one projected CRS in metres.

#include <map>
#include <optional>
#include <string>
#include <vector>

#include "stipple/io/reader.hpp"
#include "stipple/transect/estimate.hpp"

namespace stipple {

struct TransectReadOptions {
  SourceSpec sightings;
  std::optional<SourceSpec> lines;                     ///< line layer, one or more features per transect
  std::optional<SourceSpec> stations;                  ///< point layer, one feature per station
  std::string transect_field = "transect";             ///< transect id of the lines or stations
  std::optional<std::string> sighting_transect_field;  ///< the sightings' one; default transect_field
  Assignment assignment = Assignment::automatic;       ///< location = nearest transect
  std::optional<std::string> encoding;                 ///< text encoding of the sources
  std::optional<std::string> effort_field;             ///< line length in km instead of the geometry's
  std::optional<std::string> visits_field;             ///< default: field 'visits' when present, else 1
  std::optional<std::string> distance_field;           ///< recorded distance (m); else from locations
  std::optional<std::string> angle_field;              ///< sighting angle (degrees): x = r sin(angle)
  std::optional<std::string> size_field;               ///< cluster size, default 1
  std::string species_field = "species";
  std::optional<std::string> stratum_field;  ///< on the transect layer
  std::optional<std::string> x_field;
  std::optional<std::string> y_field;
  std::optional<std::string> target_crs;
  std::optional<std::string> assume_crs;
  double max_offset_m = 1000.0;          ///< farther from every transect is an error
  std::vector<double> bin_edges;         ///< recorded distances must fall inside them
  std::optional<SourceSpec> study_area;  ///< polygons; with stratum_field: per stratum
};

/// Transects and sightings as read, with the facts of their reading (`study_area_m2` when a
/// study area was given; warnings: undecodable text, area error).
struct LoadedTransects : InputFacts {
  TransectSurvey survey;
  std::map<std::string, double> stratum_area_m2;
};

/// Reads transects and sightings. Throws InputError naming the file, layer, field and
/// feature for: missing or negative distances, distances beyond all bins, a sighting farther
/// than `max_offset_m` from every transect (or naming an unknown one), zero-length lines,
/// non-positive visits or cluster sizes, and missing fields or CRS.
[[nodiscard]] LoadedTransects load_transects(const TransectReadOptions& options);

}  // namespace stipple
