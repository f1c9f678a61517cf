#pragma once
/// What a vector source holds: the first thing to run on a new file.

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace stipple {

struct FieldSummary {
  std::string name;
  std::string type;  ///< OGR field type name: String, Integer, Real, ...
};

struct PlotAreaSummary {
  std::string id;      ///< plot-field value, or "feature N"
  double area_m2 = 0;  ///< planar area in `LayerSummary::area_crs`
  bool valid = true;   ///< false for self-intersecting or otherwise invalid polygons
};

struct LayerSummary {
  std::string name;
  std::string geometry_type;
  std::int64_t feature_count = 0;
  std::string crs;       ///< "EPSG:N", a CRS name, or "none"
  std::string crs_name;
  std::vector<FieldSummary> fields;
  std::optional<std::map<std::string, std::int64_t>> species_counts;  ///< when the field exists
  std::vector<PlotAreaSummary> plots;  ///< polygon layers
  std::string area_crs;  ///< CRS the plot areas were measured in
};

struct SourceSummary {
  std::string path;
  std::string driver;
  std::vector<LayerSummary> layers;
};

struct InspectOptions {
  std::string species_field = "species";
  std::string plot_field = "plot";
  std::optional<std::string> x_field;
  std::optional<std::string> y_field;
  std::optional<std::string> assume_crs;
};

/// Layers, geometry types, fields, CRS, feature and species counts, and plot areas (in the
/// layer's CRS when projected in metres, else in the UTM zone of the layer's centre).
/// Throws InputError when the source cannot be opened.
[[nodiscard]] SourceSummary inspect_source(const std::string& path, const InspectOptions& options);

}  // namespace stipple
