// Reading layers without losing rows, closing written datasets with their errors, and
// attribute text in the source's encoding.

#include <cpl_conv.h>
#include <cpl_error.h>
#include <cpl_string.h>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple::io_detail {

namespace {

bool blank_row(OGRFeature& feature) {
  const OGRGeometry* geometry = feature.GetGeometryRef();
  if (geometry != nullptr && !geometry->IsEmpty()) return false;
  for (int i = 0; i < feature.GetFieldCount(); ++i) {
    if (!feature.IsFieldSetAndNotNull(i)) continue;
    const std::string text = feature.GetFieldAsString(i);
    if (text.find_first_not_of(" \t\r\n") != std::string::npos) return false;
  }
  return true;
}

void append_polygon_parts(const OGRPolygon& polygon, BgMultiPolygon& out) {
  BgPolygon bg_polygon;
  const auto copy_ring = [](const OGRLinearRing& ring, BgPolygon::ring_type& target) {
    for (int i = 0; i < ring.getNumPoints(); ++i) target.emplace_back(ring.getX(i), ring.getY(i));
  };
  if (polygon.getExteriorRing() == nullptr) return;
  copy_ring(*polygon.getExteriorRing(), bg_polygon.outer());
  for (int i = 0; i < polygon.getNumInteriorRings(); ++i) {
    bg_polygon.inners().emplace_back();
    copy_ring(*polygon.getInteriorRing(i), bg_polygon.inners().back());
  }
  out.push_back(std::move(bg_polygon));
}

}  // namespace

void collect_polygons(const OGRGeometry& geometry, BgMultiPolygon& out) {
  const auto type = wkbFlatten(geometry.getGeometryType());
  if (type == wkbPolygon) {
    append_polygon_parts(*geometry.toPolygon(), out);
  } else if (type == wkbMultiPolygon || type == wkbGeometryCollection) {
    for (const auto* part : *geometry.toGeometryCollection()) collect_polygons(*part, out);
  }
  // Points and lines left over from MakeValid carry no area and are dropped.
}

// Area of the polygonal parts of a geometry (MakeValid may add points or lines).
double polygonal_area(const OGRGeometry& geometry) {
  const auto type = wkbFlatten(geometry.getGeometryType());
  if (type == wkbPolygon || type == wkbCurvePolygon) return dynamic_cast<const OGRSurface&>(geometry).get_Area();
  if (type == wkbMultiPolygon || type == wkbGeometryCollection || type == wkbMultiSurface) {
    double area = 0.0;
    for (const auto* part : *geometry.toGeometryCollection()) area += polygonal_area(*part);
    return area;
  }
  return 0.0;
}

std::int64_t declared_feature_count(OGRLayer& layer) {
  if (!layer.TestCapability(OLCFastFeatureCount)) return -1;
  return static_cast<std::int64_t>(layer.GetFeatureCount(FALSE));
}

LayerScan scan_layer(OGRLayer& layer, const std::string& label, bool csv, const std::function<void(OGRFeature&)>& visit,
                     const CancelToken& cancel) {
  LayerScan scan;
  const std::int64_t declared = declared_feature_count(layer);
  layer.ResetReading();
  CPLErrorReset();
  std::int64_t read = 0;
  while (true) {
    std::unique_ptr<OGRFeature> feature(layer.GetNextFeature());
    if (!feature) break;
    if (++read % 4096 == 0) cancel.check();
    if (csv && blank_row(*feature)) {
      ++scan.blank_rows;
      continue;
    }
    ++scan.features;
    visit(*feature);
  }
  if (CPLGetLastErrorType() >= CE_Failure)
    throw InputError(label +
                     (declared >= 0 ? ": declares " + std::to_string(declared) + " features but only " : ": only ") +
                     std::to_string(read) + " could be read (truncated or damaged file?): " + last_gdal_message());
  if (declared >= 0 && declared != read)
    throw InputError(label + ": declares " + std::to_string(declared) + " features but " + std::to_string(read) +
                     " could be read (truncated or damaged file?)");
  return scan;
}

void close_checked(DatasetPtr dataset, const std::string& label) {
  if (!dataset) return;
  CPLErrorReset();
  dataset.reset();  // GDALClose flushes; GDAL 3.6 reports failures only through CPLError
  if (CPLGetLastErrorType() >= CE_Failure)
    throw InputError(label + ": could not be written completely (" + last_gdal_message() + ")");
}

TextDecoder::TextDecoder(std::optional<std::string> encoding) : encoding_(std::move(encoding)) {
  if (!encoding_) return;
  CPLErrorReset();
  char* probe = CPLRecode("a", encoding_->c_str(), CPL_ENC_UTF8);
  CPLFree(probe);
  if (CPLGetLastErrorType() != CE_None || encoding_->empty())
    throw InputError("text encoding '" + *encoding_ +
                     "' is not one this system knows (try LATIN1, "
                     "CP1252 or UTF-8)");
}

std::string TextDecoder::operator()(const char* raw) {
  if (raw == nullptr) return {};
  if (encoding_) {
    char* recoded = CPLRecode(raw, encoding_->c_str(), CPL_ENC_UTF8);
    std::string out = recoded ? recoded : "";
    CPLFree(recoded);
    return out;
  }
  std::size_t bad = 0;
  std::string out = repair_utf8(raw, &bad);
  if (bad > 0) ++replaced_;
  return out;
}

std::string TextDecoder::warning(const std::string& label) const {
  if (replaced_ == 0) return {};
  return label + ": " + std::to_string(replaced_) +
         " attribute value(s) are not valid UTF-8; the invalid bytes are shown as U+FFFD. "
         "Name the source's encoding (the encoding option: LATIN1 or CP1252 for most older field "
         "software)";
}

}  // namespace stipple::io_detail
