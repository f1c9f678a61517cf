#pragma once
/// What reports say about where their numbers came from: the inputs, the analysis CRS and
/// what reading them noted. The readers fill it (LoadedSurvey and LoadedTransects are
/// InputFacts); a program whose data did not come from a file fills it by hand.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/point.hpp"

namespace stipple {

/// The analysis CRS and why it was chosen.
struct AnalysisCrs {
  std::string code;    ///< "EPSG:32630", or the CRS name when it has no authority code
  std::string name;    ///< "WGS 84 / UTM zone 30N"
  std::string reason;  ///< how it was chosen, for the output
  std::string wkt;     ///< WKT, for GIS outputs
  /// Largest |planar area / geodesic area - 1| of any plot window (or study-area polygon)
  /// in this CRS (0 when there are no windows to measure).
  double max_area_error = 0.0;
};

/// Several sightings recorded at exactly the same coordinates.
struct DuplicateLocation {
  Point location;  ///< in the analysis CRS, metres
  std::vector<std::int64_t> feature_ids;
};

/// Where a survey's data came from and what reading them noted.
struct InputFacts {
  AnalysisCrs crs;
  std::string sightings_label;          ///< "path: layer 'name'"
  std::string plots_label;              ///< the plot polygons; empty for a model-based window or transects
  std::string transects_label;          ///< the transect lines or stations; empty for plots
  bool model_based_window = false;      ///< windows estimated from the points (convex hull), not surveyed
  std::optional<double> study_area_m2;  ///< transects: the area they stand for, square metres
  std::vector<DuplicateLocation> duplicate_locations;  ///< zero nearest-neighbour distances
  std::vector<std::string> notes;                      ///< facts worth printing (reprojection, repairs)
  std::vector<std::string> warnings;                   ///< things the user must know (exclusions, model-based)
};

}  // namespace stipple
