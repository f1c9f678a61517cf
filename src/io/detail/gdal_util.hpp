#pragma once
// Private GDAL helpers of the io module. Never included from a public header.

#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include "stipple/cancel.hpp"
#include "stipple/geometry/window.hpp"

namespace stipple::io_detail {

/// Held by every public io function while it runs: GDAL's drivers registered, and GDAL's
/// messages on this thread sent to a quiet handler (the previous handler is restored on
/// destruction). See stipple/io/gdal_session.hpp.
class GdalScope {
 public:
  GdalScope();
  ~GdalScope();
  GdalScope(const GdalScope&) = delete;
  GdalScope& operator=(const GdalScope&) = delete;
};

struct DatasetCloser {
  void operator()(GDALDataset* dataset) const { GDALClose(dataset); }
};
using DatasetPtr = std::unique_ptr<GDALDataset, DatasetCloser>;

struct TransformDeleter {
  void operator()(OGRCoordinateTransformation* ct) const { OGRCoordinateTransformation::DestroyCT(ct); }
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

/// Opens a vector source read-only. With `encoding`, a Shapefile's attribute text is left
/// as raw bytes (ENCODING="") for TextDecoder to convert. Throws InputError: no such file,
/// or not readable.
DatasetPtr open_vector(const std::string& path, const CsvColumns& columns = {},
                       const std::optional<std::string>& encoding = std::nullopt);

/// The layer to read: the named one, the only one, or the only non-empty one of the kind.
/// Throws InputError listing the layers when the choice is ambiguous or the name unknown.
OGRLayer& pick_layer(GDALDataset& dataset, const std::string& path, const std::optional<std::string>& name,
                     LayerKind kind, const std::string& option_name);

/// "path: layer 'name'"
std::string layer_label(const std::string& path, OGRLayer& layer);

/// Comma-separated field names of the layer.
std::string field_list(OGRLayer& layer);

/// Parses a CRS given by the user ("EPSG:32630", WKT, PROJ string); traditional
/// x = easting/longitude axis order. Throws InputError naming the option.
OGRSpatialReference parse_crs(const std::string& text, const std::string& option_name);

/// The layer's CRS, or the assumed one when the layer has none. Throws InputError when
/// the layer has no CRS and none is assumed.
OGRSpatialReference layer_crs(OGRLayer& layer, const std::string& label, const std::optional<std::string>& assume_crs);

/// True for a projected CRS whose linear unit is the metre.
bool is_projected_metres(const OGRSpatialReference& srs);

/// "EPSG:N" when the CRS has (or can be identified with) an authority code, else its name.
std::string crs_code(const OGRSpatialReference& srs);
std::string crs_name(const OGRSpatialReference& srs);

/// Locations that show where the data lie, as (x, y) in `crs`.
struct CentreSample {
  const OGRSpatialReference* crs = nullptr;
  std::vector<std::pair<double, double>> points;
};

/// The Lambert azimuthal equal-area CRS (Snyder 1987, ch. 24) on the datum of `datum_from`,
/// centred on the mean direction of the samples (right across the antimeridian and near the
/// poles). Areas are exact on the ellipsoid everywhere; `centre_text` receives "51.5000N
/// 0.1200W". Throws InputError naming `label` when no sample converts to longitude/latitude.
OGRSpatialReference local_equal_area(const std::vector<CentreSample>& samples, const OGRSpatialReference& datum_from,
                                     const std::string& label, std::string& centre_text);

/// Area (m2) on the ellipsoid of `srs` of polygons given in `srs`, with geodesic edges
/// between their vertices (PROJ's geod_polygonarea; Karney 2013).
double geodesic_area(const BgMultiPolygon& shape, const OGRSpatialReference& srs, const std::string& label);

/// The analysis CRS: `target` when given, which must be projected in metres; else
/// the first candidate CRS projected in metres whose plot areas (`area_error`, the largest
/// |planar / geodesic - 1|; null = nothing to measure) are within 0.1% of the geodesic
/// ones; else the local equal-area CRS of the samples. `reason` says which, for the output.
struct ChosenCrs {
  OGRSpatialReference srs;
  std::string code;
  std::string name;
  std::string reason;
  std::string wkt;
};
ChosenCrs choose_analysis_crs(const std::optional<std::string>& target,
                              const std::vector<std::pair<const OGRSpatialReference*, std::string>>& candidates,
                              const std::vector<CentreSample>& samples,
                              const std::function<double(const OGRSpatialReference&)>& area_error,
                              const std::string& label);

/// Largest relative area error a CRS may have and still be kept for the analysis.
inline constexpr double max_crs_area_error = 1e-3;

/// Refuses (InputError naming `where`) a coordinate no survey can have: beyond +-90 degrees
/// of latitude or +-540 of longitude in a geographic CRS, beyond 1e9 units in a projected one.
void check_coordinate(double x, double y, const OGRSpatialReference& srs, const std::string& where);
/// check_coordinate on the corners of a geometry's envelope.
void check_envelope(const OGRGeometry& geometry, const OGRSpatialReference& srs, const std::string& where);

/// A transformation between two CRSs, or null when they are the same.
TransformPtr make_transform(const OGRSpatialReference& from, const OGRSpatialReference& to, const std::string& label);

/// GDAL's last error message, or empty.
std::string last_gdal_message();

}  // namespace stipple::io_detail

namespace stipple::io_detail {

/// Appends the polygons of a (multi)polygon or collection to `out`; other parts (points and
/// lines MakeValid may leave) carry no area and are dropped.
void collect_polygons(const OGRGeometry& geometry, BgMultiPolygon& out);

/// Planar area of the polygonal parts of a geometry, in its CRS units squared.
double polygonal_area(const OGRGeometry& geometry);

/// What one pass over a layer read.
struct LayerScan {
  std::int64_t features = 0;    ///< features handed to the visitor
  std::int64_t blank_rows = 0;  ///< CSV rows whose fields were all empty, skipped
};

/// Calls `visit` for every feature of `layer`, in order. Rows of a CSV source whose fields
/// are all empty (spreadsheets add them) are skipped and counted. Throws InputError naming
/// `label` when GDAL reports a read error, or when the layer declares (in its header) a
/// different number of features than could be read: a truncated or damaged file. Polls
/// `cancel` every 4096 features.
LayerScan scan_layer(OGRLayer& layer, const std::string& label, bool csv, const std::function<void(OGRFeature&)>& visit,
                     const CancelToken& cancel = {});

/// The number of features the layer's header declares, or -1 when the format has no
/// cheap count (CSV, GeoJSON).
std::int64_t declared_feature_count(OGRLayer& layer);

/// Closes a dataset that was written and checks that GDAL reported no failure while
/// flushing it. Throws InputError naming `label`.
void close_checked(DatasetPtr dataset, const std::string& label);

/// Attribute text as UTF-8. With `encoding` (a name GDAL's CPLRecode knows, such as
/// LATIN1 or CP1252) the raw bytes are converted from it; otherwise bytes that are not
/// valid UTF-8 are replaced by U+FFFD and counted in `replaced`.
class TextDecoder {
 public:
  /// Throws InputError when `encoding` is not one the system's iconv knows.
  explicit TextDecoder(std::optional<std::string> encoding = std::nullopt);
  [[nodiscard]] std::string operator()(const char* raw);
  [[nodiscard]] std::int64_t replaced() const { return replaced_; }
  /// Counts `values` more replaced values (a caller that reuses a decoded value).
  void count_replaced(std::int64_t values) { replaced_ += values; }
  /// A warning for `label` when values were replaced, else empty.
  [[nodiscard]] std::string warning(const std::string& label) const;

 private:
  std::optional<std::string> encoding_;
  std::int64_t replaced_ = 0;
};

}  // namespace stipple::io_detail
