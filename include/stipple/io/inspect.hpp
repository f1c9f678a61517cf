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
  std::int64_t feature_count = 0;       ///< features actually read
  std::int64_t declared_count = -1;     ///< features the header declares; -1 = no header count
  std::string read_error;               ///< GDAL's message when reading stopped on an error
  std::int64_t undecodable_values = 0;  ///< text values that were not valid UTF-8
  std::string crs;                      ///< "EPSG:N", a CRS name, or "none"
  std::string crs_name;
  std::vector<FieldSummary> fields;
  std::optional<std::map<std::string, std::int64_t>> species_counts;  ///< when the field exists
  std::vector<PlotAreaSummary> plots;                                 ///< polygon layers
  std::string area_crs;         ///< CRS the plot areas were measured in (the analysis rule)
  double max_area_error = 0.0;  ///< largest |planar / geodesic - 1| of the plots in area_crs
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
  std::optional<std::string> encoding;
};

/// Layers, geometry types, fields, CRS, feature and species counts (read, and declared by
/// the header when the format has one), and plot areas in the CRS the analysis would use
/// (the layer's own when projected in metres and within 0.1% of geodesic areas, else a local
/// Lambert azimuthal equal-area CRS).
/// Throws InputError when the source cannot be opened.
[[nodiscard]] SourceSummary inspect_source(const std::string& path, const InspectOptions& options);

/// The kind of geometry a layer holds, from its declared geometry type.
enum class GeometryFamily { point, line, polygon, none, mixed };

struct LayerShape {
  std::string name;
  GeometryFamily family = GeometryFamily::none;
};

/// The layers of a vector source and their geometry families, without reading features
/// (CSV files: point when they have coordinate columns, else none). Lets batch tell a plot
/// file (polygons) from a transect file (lines). Throws InputError when it cannot be opened.
[[nodiscard]] std::vector<LayerShape> layer_shapes(const std::string& path);

}  // namespace stipple
