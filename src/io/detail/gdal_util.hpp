#pragma once
// Private GDAL helpers of the io module. Never included from a public header.

#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

namespace stipple::io_detail {

struct DatasetCloser {
  void operator()(GDALDataset* dataset) const { GDALClose(dataset); }
};
using DatasetPtr = std::unique_ptr<GDALDataset, DatasetCloser>;

struct TransformDeleter {
  void operator()(OGRCoordinateTransformation* ct) const {
    OGRCoordinateTransformation::DestroyCT(ct);
  }
};
using TransformPtr = std::unique_ptr<OGRCoordinateTransformation, TransformDeleter>;

/// Kind of geometry a layer is read for.
enum class LayerKind { points, polygons, lines };

/// Coordinate column names for CSV sources.
struct CsvColumns {
  std::optional<std::string> x_field;
  std::optional<std::string> y_field;
};

/// Default CSV coordinate column candidates.
inline constexpr const char* default_x_columns = "x,lon,long,longitude,easting";
inline constexpr const char* default_y_columns = "y,lat,latitude,northing";

/// True when the path names a CSV file (by extension).
bool is_csv_path(const std::string& path);

/// Opens a vector source read-only. Throws InputError: no such file, or not readable.
DatasetPtr open_vector(const std::string& path, const CsvColumns& columns = {});

/// The layer to read: the named one, the only one, or the only non-empty one of the kind.
/// Throws InputError listing the layers when the choice is ambiguous or the name unknown.
OGRLayer& pick_layer(GDALDataset& dataset, const std::string& path,
                     const std::optional<std::string>& name, LayerKind kind,
                     const std::string& option_name);

/// "path: layer 'name'"
std::string layer_label(const std::string& path, OGRLayer& layer);

/// Comma-separated field names of the layer.
std::string field_list(OGRLayer& layer);

/// Parses a CRS given by the user ("EPSG:32630", WKT, PROJ string); traditional
/// x = easting/longitude axis order. Throws InputError naming the option.
OGRSpatialReference parse_crs(const std::string& text, const std::string& option_name);

/// The layer's CRS, or the assumed one when the layer has none. Throws InputError when
/// the layer has no CRS and none is assumed.
OGRSpatialReference layer_crs(OGRLayer& layer, const std::string& label,
                              const std::optional<std::string>& assume_crs);

/// True for a projected CRS whose linear unit is the metre.
bool is_projected_metres(const OGRSpatialReference& srs);

/// "EPSG:N" when the CRS has (or can be identified with) an authority code, else its name.
std::string crs_code(const OGRSpatialReference& srs);
std::string crs_name(const OGRSpatialReference& srs);

/// WGS 84 / UTM zone (north or south) containing the given longitude and latitude.
OGRSpatialReference utm_for(double longitude, double latitude, std::string& code);

/// The analysis CRS: `target` (--crs) when given, which must be projected in metres; else
/// the first candidate CRS projected in metres; else the UTM zone of (cx, cy), a point in
/// `centre_crs`. `reason` says which, for the output.
struct ChosenCrs {
  OGRSpatialReference srs;
  std::string code;
  std::string name;
  std::string reason;
  std::string wkt;
};
ChosenCrs choose_analysis_crs(const std::optional<std::string>& target,
                              const std::vector<std::pair<const OGRSpatialReference*, std::string>>& candidates,
                              const OGRSpatialReference& centre_crs, double cx, double cy,
                              const std::string& label);

/// A transformation between two CRSs, or null when they are the same.
TransformPtr make_transform(const OGRSpatialReference& from, const OGRSpatialReference& to,
                            const std::string& label);

/// GDAL's last error message, or empty.
std::string last_gdal_message();

}  // namespace stipple::io_detail
