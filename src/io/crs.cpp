// GDAL helpers shared by the io module: opening sources, choosing layers, CRSs.

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>

#include <cpl_conv.h>
#include <cpl_error.h>
#include <cpl_string.h>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple::io_detail {

namespace {

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return s;
}

bool matches_kind(OGRwkbGeometryType type, LayerKind kind) {
  const auto flat = wkbFlatten(type);
  switch (kind) {
    case LayerKind::points: return flat == wkbPoint || flat == wkbMultiPoint;
    case LayerKind::polygons:
      return flat == wkbPolygon || flat == wkbMultiPolygon || flat == wkbCurvePolygon || flat == wkbMultiSurface;
    case LayerKind::lines:
      return flat == wkbLineString || flat == wkbMultiLineString || flat == wkbCompoundCurve || flat == wkbMultiCurve;
  }
  return false;
}

std::string layer_names(GDALDataset& dataset) {
  std::string names;
  for (int i = 0; i < dataset.GetLayerCount(); ++i) {
    if (!names.empty()) names += ", ";
    names += dataset.GetLayer(i)->GetName();
  }
  return names.empty() ? "none" : names;
}

const char* kind_name(LayerKind kind) {
  switch (kind) {
    case LayerKind::points: return "point";
    case LayerKind::polygons: return "polygon";
    case LayerKind::lines: return "line";
  }
  return "";
}

}  // namespace

std::string last_gdal_message() {
  const char* message = CPLGetLastErrorMsg();
  return message ? std::string(message) : std::string();
}

bool is_csv_path(const std::string& path) {
  return lower(std::filesystem::path(path).extension().string()) == ".csv";
}

DatasetPtr open_vector(const std::string& path, const CsvColumns& columns, const std::optional<std::string>& encoding) {
  std::error_code ec;
  if (!std::filesystem::exists(path, ec)) throw InputError(path + ": no such file or folder");
  CPLErrorReset();
  CPLStringList open_options;
  const char* csv_only[] = {"CSV", nullptr};
  const bool csv = is_csv_path(path);
  if (csv) {
    const std::string x = columns.x_field.value_or(default_x_columns);
    const std::string y = columns.y_field.value_or(default_y_columns);
    open_options.SetNameValue("X_POSSIBLE_NAMES", x.c_str());
    open_options.SetNameValue("Y_POSSIBLE_NAMES", y.c_str());
    // Coordinate columns stay as fields so a bad value can be quoted back to the user.
    open_options.SetNameValue("KEEP_GEOM_COLUMNS", "YES");
  }
  const bool shapefile = lower(std::filesystem::path(path).extension().string()) == ".shp" ||
                         lower(std::filesystem::path(path).extension().string()) == ".dbf" ||
                         std::filesystem::is_directory(path, ec);
  // With an encoding named, a Shapefile's text stays raw bytes for TextDecoder to convert.
  if (encoding && shapefile) open_options.SetNameValue("ENCODING", "");
  auto* handle = GDALOpenEx(path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY, csv ? csv_only : nullptr,
                            open_options.List(), nullptr);
  if (handle == nullptr) {
    const std::string detail = last_gdal_message();
    throw InputError(path + ": cannot be read as a vector data source" +
                     (detail.empty() ? std::string() : " (" + detail + ")"));
  }
  return DatasetPtr(GDALDataset::FromHandle(handle));
}

OGRLayer& pick_layer(GDALDataset& dataset, const std::string& path, const std::optional<std::string>& name,
                     LayerKind kind, const std::string& option_name) {
  if (name) {
    OGRLayer* layer = dataset.GetLayerByName(name->c_str());
    if (layer == nullptr)
      throw InputError(path + ": layer '" + *name + "' not found (layers: " + layer_names(dataset) + ")");
    return *layer;
  }
  const int count = dataset.GetLayerCount();
  if (count == 0) throw InputError(path + ": holds no vector layer");
  if (count == 1) return *dataset.GetLayer(0);
  std::vector<OGRLayer*> of_kind;
  for (int i = 0; i < count; ++i) {
    OGRLayer* layer = dataset.GetLayer(i);
    if (matches_kind(layer->GetGeomType(), kind) && layer->GetFeatureCount() != 0) of_kind.push_back(layer);
  }
  if (of_kind.size() == 1) return *of_kind.front();
  if (option_name.empty())
    throw InputError(path + ": " + std::to_string(of_kind.size()) + " non-empty " + kind_name(kind) +
                     " layers; give a source with one (layers: " + layer_names(dataset) + ")");
  throw InputError(path + ": " + std::to_string(of_kind.size()) + " non-empty " + kind_name(kind) +
                       " layers; name one with " + option_name + " (layers: " + layer_names(dataset) + ")",
                   {option_name});
}

std::string layer_label(const std::string& path, OGRLayer& layer) {
  return path + ": layer '" + layer.GetName() + "'";
}

std::string field_list(OGRLayer& layer) {
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  std::string names;
  for (int i = 0; i < defn->GetFieldCount(); ++i) {
    if (!names.empty()) names += ", ";
    names += defn->GetFieldDefn(i)->GetNameRef();
  }
  return names.empty() ? "none" : names;
}

OGRSpatialReference parse_crs(const std::string& text, const std::string& option_name) {
  OGRSpatialReference srs;
  CPLErrorReset();
  if (srs.SetFromUserInput(text.c_str()) != OGRERR_NONE)
    throw InputError(option_name + " " + text + ": not a coordinate reference system GDAL knows", {option_name});
  srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  return srs;
}

OGRSpatialReference layer_crs(OGRLayer& layer, const std::string& label, const std::optional<std::string>& assume_crs) {
  const OGRSpatialReference* srs = layer.GetSpatialRef();
  if (srs == nullptr) {
    if (!assume_crs)
      throw InputError(label +
                           ": has no CRS; give it with assume_crs EPSG:N "
                           "(EPSG:4326 for GPS longitude/latitude)",
                       {"assume_crs"});
    return parse_crs(*assume_crs, "assume_crs");
  }
  OGRSpatialReference copy(*srs);
  copy.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  return copy;
}

bool is_projected_metres(const OGRSpatialReference& srs) {
  if (!srs.IsProjected()) return false;
  return std::abs(srs.GetLinearUnits(nullptr) - 1.0) < 1e-12;
}

std::string crs_code(const OGRSpatialReference& srs) {
  const char* target = srs.IsProjected() ? "PROJCS" : (srs.IsGeographic() ? "GEOGCS" : nullptr);
  const char* authority = srs.GetAuthorityName(target);
  const char* code = srs.GetAuthorityCode(target);
  if (authority && code) return std::string(authority) + ":" + code;
  OGRSpatialReference copy(srs);
  if (copy.AutoIdentifyEPSG() == OGRERR_NONE) {
    authority = copy.GetAuthorityName(target);
    code = copy.GetAuthorityCode(target);
    if (authority && code) return std::string(authority) + ":" + code;
  }
  int matches = 0;
  int* confidence = nullptr;
  OGRSpatialReferenceH* found = copy.FindMatches(nullptr, &matches, &confidence);
  std::string result;
  if (found && matches > 0 && confidence[0] >= 90) {
    const auto* best = OGRSpatialReference::FromHandle(found[0]);
    if (best->GetAuthorityName(nullptr) && best->GetAuthorityCode(nullptr))
      result = std::string(best->GetAuthorityName(nullptr)) + ":" + best->GetAuthorityCode(nullptr);
  }
  OSRFreeSRSArray(found);
  CPLFree(confidence);
  if (!result.empty()) return result;
  return crs_name(srs);
}

std::string crs_name(const OGRSpatialReference& srs) {
  const char* name = srs.GetName();
  return name ? std::string(name) : std::string("unnamed CRS");
}

ChosenCrs choose_analysis_crs(const std::optional<std::string>& target,
                              const std::vector<std::pair<const OGRSpatialReference*, std::string>>& candidates,
                              const std::vector<CentreSample>& samples,
                              const std::function<double(const OGRSpatialReference&)>& area_error,
                              const std::string& label) {
  ChosenCrs chosen;
  bool local = false;
  if (target) {
    chosen.srs = parse_crs(*target, "target_crs");
    if (!is_projected_metres(chosen.srs))
      throw InputError("target_crs " + *target + ": not a projected CRS in metres (analysis needs planar metres)",
                       {"target_crs"});
    chosen.reason = "given by the user";
  } else {
    bool found = false;
    std::string rejected;
    for (const auto& [srs, role] : candidates) {
      if (srs == nullptr || !is_projected_metres(*srs)) continue;
      const double error = area_error ? area_error(*srs) : 0.0;
      if (error <= max_crs_area_error) {
        chosen.srs = *srs;
        chosen.reason = "the CRS of the " + role;
        found = true;
        break;
      }
      rejected = "the " + role + "' CRS " + crs_code(*srs) + " would misstate plot areas by up to " +
                 format_significant(100.0 * error, 2) + "%";
    }
    if (!found) {
      const OGRSpatialReference* datum = nullptr;
      for (const auto& candidate : candidates)
        if (candidate.first != nullptr && datum == nullptr) datum = candidate.first;
      if (datum == nullptr) throw InputError(label + ": no CRS to work from");
      std::string centre;
      chosen.srs = local_equal_area(samples, *datum, label, centre);
      local = true;
      chosen.reason = "chosen automatically: Lambert azimuthal equal-area centred on the data (" + centre +
                      "), areas exact anywhere on Earth (" +
                      (rejected.empty() ? "input is " + crs_code(*datum) + ", not projected in metres" : rejected) +
                      "); another analysis CRS can be named instead";
    }
  }
  if (local) {
    // A CRS of our own: its PROJ string is the code, so naming it as the target CRS repeats it exactly.
    char* proj = nullptr;
    if (chosen.srs.exportToProj4(&proj) == OGRERR_NONE && proj != nullptr) chosen.code = proj;
    CPLFree(proj);
    while (!chosen.code.empty() && chosen.code.back() == ' ') chosen.code.pop_back();
  }
  if (chosen.code.empty()) chosen.code = crs_code(chosen.srs);
  chosen.name = crs_name(chosen.srs);
  char* wkt = nullptr;
  const OGRErr exported = chosen.srs.exportToWkt(&wkt);
  chosen.wkt = wkt ? wkt : "";
  CPLFree(wkt);
  if (exported != OGRERR_NONE || chosen.wkt.empty())
    throw InputError(label + ": the analysis CRS " + chosen.code + " cannot be written as WKT");
  return chosen;
}

void check_coordinate(double x, double y, const OGRSpatialReference& srs, const std::string& where) {
  const bool geographic = srs.IsGeographic() != 0;
  const bool ok = std::isfinite(x) && std::isfinite(y) &&
                  (geographic ? std::abs(y) <= 90.0 && std::abs(x) <= 540.0 : std::abs(x) <= 1e9 && std::abs(y) <= 1e9);
  if (ok) return;
  throw InputError(where + ": coordinate (" + format_general(x) + ", " + format_general(y) +
                   ") is outside any survey in " + crs_code(srs) +
                   (geographic ? " (longitude/latitude in degrees)" : "") +
                   " (wrong CRS, swapped columns or a typing error?)");
}

void check_envelope(const OGRGeometry& geometry, const OGRSpatialReference& srs, const std::string& where) {
  OGREnvelope e;
  geometry.getEnvelope(&e);
  check_coordinate(e.MinX, e.MinY, srs, where);
  check_coordinate(e.MaxX, e.MaxY, srs, where);
}

TransformPtr make_transform(const OGRSpatialReference& from, const OGRSpatialReference& to, const std::string& label) {
  if (from.IsSame(&to)) return nullptr;
  CPLErrorReset();
  OGRCoordinateTransformation* ct = OGRCreateCoordinateTransformation(&from, &to);
  if (ct == nullptr)
    throw InputError(label + ": cannot reproject from " + crs_code(from) + " to " + crs_code(to) + " (" +
                     last_gdal_message() + ")");
  return TransformPtr(ct);
}

}  // namespace stipple::io_detail
