#include "stipple/io/covariate_reader.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <memory>
#include <set>
#include <string>
#include <vector>

#include <gdal_utils.h>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple {

using namespace io_detail;

namespace {

struct WarpOptionsDeleter {
  void operator()(GDALWarpAppOptions* options) const { GDALWarpAppOptionsFree(options); }
};

// " (GDAL's message)", or nothing when GDAL left none.
std::string gdal_reason() {
  const std::string m = last_gdal_message();
  return m.empty() ? std::string() : " (" + m + ")";
}

std::string describe_bounds(double xmin, double ymin, double xmax, double ymax) {
  return "x " + format_general(xmin) + " to " + format_general(xmax) + ", y " + format_general(ymin) + " to " +
         format_general(ymax);
}

// Band 1 of `dataset`, cells [col0, col0 + columns) x [row0, row0 + rows), as a grid;
// the no-data value and masked cells become NaN.
RasterGrid read_cells(GDALDataset& dataset, const double* gt, int col0, int row0, int columns, int rows,
                      const std::string& label) {
  GDALRasterBand* band = dataset.GetRasterBand(1);
  RasterGrid grid;
  grid.x_min = gt[0] + col0 * gt[1];
  grid.y_max = gt[3] + row0 * gt[5];
  grid.cell_width = gt[1];
  grid.cell_height = -gt[5];
  grid.columns = static_cast<std::size_t>(columns);
  grid.rows = static_cast<std::size_t>(rows);
  grid.values.assign(grid.columns * grid.rows, 0.0);
  if (band->RasterIO(GF_Read, col0, row0, columns, rows, grid.values.data(), columns, rows, GDT_Float64, 0, 0) !=
      CE_None)
    throw InputError(label + ": cannot read the cells" + gdal_reason());
  int has_nodata = 0;
  const double nodata = band->GetNoDataValue(&has_nodata);
  const int mask_flags = band->GetMaskFlags();
  std::vector<std::uint8_t> mask;
  if ((mask_flags & (GMF_ALL_VALID | GMF_NODATA)) == 0) {
    mask.assign(grid.values.size(), 255);
    if (band->GetMaskBand()->RasterIO(GF_Read, col0, row0, columns, rows, mask.data(), columns, rows, GDT_Byte, 0, 0) !=
        CE_None)
      throw InputError(label + ": cannot read the mask of valid cells" + gdal_reason());
  }
  for (std::size_t i = 0; i < grid.values.size(); ++i) {
    double& v = grid.values[i];
    if ((has_nodata != 0 && (v == nodata || (std::isnan(nodata) && std::isnan(v)))) ||
        (!mask.empty() && mask[i] == 0) || !std::isfinite(v))
      v = std::numeric_limits<double>::quiet_NaN();
  }
  return grid;
}

}  // namespace

CovariateRaster read_covariate_raster(const std::string& path, const AnalysisCrs& crs, const Bounds& area) {
  GdalScope scope;
  CovariateRaster out;
  out.label = path + " (band 1)";
  DatasetPtr dataset(
      GDALDataset::FromHandle(GDALOpenEx(path.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr)));
  if (!dataset) {
    std::error_code ec;
    if (!std::filesystem::exists(path, ec)) throw InputError(path + ": no such file");
    throw InputError(path + ": not a raster GDAL can read" + gdal_reason());
  }
  if (dataset->GetRasterCount() < 1) throw InputError(path + ": has no raster band");
  if (dataset->GetRasterCount() > 1)
    out.notes.push_back(out.label + ": band 1 used of " + std::to_string(dataset->GetRasterCount()));
  double gt[6];
  if (dataset->GetGeoTransform(gt) != CE_None)
    throw InputError(path + ": has no georeferencing (no geotransform); a covariate must be placed on the map");
  const OGRSpatialReference* source = dataset->GetSpatialRef();
  if (source == nullptr || source->IsEmpty())
    throw InputError(path + ": has no CRS; set one with GDAL (gdal_edit.py -a_srs) so its cells can be placed");
  OGRSpatialReference source_srs(*source);
  source_srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  out.source_crs = crs_code(source_srs);
  OGRSpatialReference target;
  if (target.importFromWkt(crs.wkt.c_str()) != OGRERR_NONE)
    throw InputError("analysis CRS " + crs.code + ": cannot be read back from its WKT");
  target.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);

  const int width = dataset->GetRasterXSize();
  const int height = dataset->GetRasterYSize();
  const bool north_up = gt[2] == 0.0 && gt[4] == 0.0 && gt[1] > 0.0 && gt[5] < 0.0;
  if (north_up && source_srs.IsSame(&target)) {
    const double rx0 = gt[0];
    const double ry1 = gt[3];
    const double rx1 = gt[0] + width * gt[1];
    const double ry0 = gt[3] + height * gt[5];
    const double c0 = std::floor((area.xmin - rx0) / gt[1]) - 1.0;
    const double c1 = std::ceil((area.xmax - rx0) / gt[1]) + 1.0;
    const double r0 = std::floor((ry1 - area.ymax) / -gt[5]) - 1.0;
    const double r1 = std::ceil((ry1 - area.ymin) / -gt[5]) + 1.0;
    const int col0 = static_cast<int>(std::clamp(c0, 0.0, static_cast<double>(width)));
    const int col1 = static_cast<int>(std::clamp(c1, 0.0, static_cast<double>(width)));
    const int row0 = static_cast<int>(std::clamp(r0, 0.0, static_cast<double>(height)));
    const int row1 = static_cast<int>(std::clamp(r1, 0.0, static_cast<double>(height)));
    if (col1 <= col0 || row1 <= row0 || rx1 <= area.xmin || rx0 >= area.xmax || ry1 <= area.ymin || ry0 >= area.ymax)
      throw InputError(path + ": does not overlap the survey (raster " + describe_bounds(rx0, ry0, rx1, ry1) +
                       "; plots " + describe_bounds(area.xmin, area.ymin, area.xmax, area.ymax) + " in " + crs.code +
                       ")");
    out.grid = read_cells(*dataset, gt, col0, row0, col1 - col0, row1 - row0, out.label);
    return out;
  }

  // Another CRS, or a rotated or south-up grid: warp into the analysis CRS over the survey
  // area (a margin of 2% of its extent) by nearest neighbour, GDAL choosing the cell size.
  const double margin = 0.02 * std::max(area.width(), area.height()) + 1.0;
  std::vector<std::string> args = {"-of",
                                   "MEM",
                                   "-r",
                                   "near",
                                   "-ot",
                                   "Float64",
                                   "-dstnodata",
                                   "nan",
                                   "-t_srs",
                                   crs.wkt,
                                   "-te",
                                   format_round_trip(area.xmin - margin),
                                   format_round_trip(area.ymin - margin),
                                   format_round_trip(area.xmax + margin),
                                   format_round_trip(area.ymax + margin)};
  std::vector<char*> argv;
  argv.reserve(args.size() + 1);
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  std::unique_ptr<GDALWarpAppOptions, WarpOptionsDeleter> options(GDALWarpAppOptionsNew(argv.data(), nullptr));
  if (!options) throw InputError(path + ": cannot set up the reprojection" + gdal_reason());
  GDALDatasetH source_handle = GDALDataset::ToHandle(dataset.get());
  int usage_error = 0;
  DatasetPtr warped(GDALDataset::FromHandle(GDALWarp("", nullptr, 1, &source_handle, options.get(), &usage_error)));
  if (!warped)
    throw InputError(path + ": cannot be reprojected from " + out.source_crs + " to " + crs.code + gdal_reason());
  double wgt[6];
  warped->GetGeoTransform(wgt);
  out.grid = read_cells(*warped, wgt, 0, 0, warped->GetRasterXSize(), warped->GetRasterYSize(), out.label);
  if (std::none_of(out.grid.values.begin(), out.grid.values.end(), [](double v) { return !std::isnan(v); }))
    throw InputError(path + ": has no data over the survey (plots " +
                     describe_bounds(area.xmin, area.ymin, area.xmax, area.ymax) + " in " + crs.code + ")");
  out.reprojected = true;
  out.notes.push_back(out.label + ": reprojected from " + out.source_crs + " to " + crs.code +
                      " by nearest-neighbour resampling onto " + format_general(out.grid.cell_width) + " x " +
                      format_general(out.grid.cell_height) +
                      " m cells (each cell takes the source value under its centre; no interpolation)");
  return out;
}

namespace {

void add_ring(const OGRLinearRing& ring, MappedFeatures& out) {
  for (int i = 0; i + 1 < ring.getNumPoints(); ++i)
    out.segments.push_back({{ring.getX(i), ring.getY(i)}, {ring.getX(i + 1), ring.getY(i + 1)}});
}

// Adds a line, polygon or collection; returns false for any other geometry.
bool add_geometry(const OGRGeometry& g, MappedFeatures& out) {
  const auto type = wkbFlatten(g.getGeometryType());
  if (type == wkbLineString) {
    const auto* line = g.toLineString();
    for (int i = 0; i + 1 < line->getNumPoints(); ++i)
      out.segments.push_back({{line->getX(i), line->getY(i)}, {line->getX(i + 1), line->getY(i + 1)}});
    return true;
  }
  if (type == wkbPolygon) {
    const auto* polygon = g.toPolygon();
    for (const auto* ring : *polygon) add_ring(*ring, out);
    collect_polygons(g, out.polygons);
    return true;
  }
  if (type == wkbMultiLineString || type == wkbMultiPolygon || type == wkbGeometryCollection) {
    bool ok = true;
    for (const auto* part : *g.toGeometryCollection()) ok = add_geometry(*part, out) && ok;
    return ok;
  }
  return false;
}

}  // namespace

std::vector<Plot> read_polygon_units(const std::string& path, const std::optional<std::string>& layer_name,
                                     const std::optional<std::string>& id_field, const AnalysisCrs& crs) {
  GdalScope scope;
  DatasetPtr dataset = open_vector(path);
  OGRLayer& layer = pick_layer(*dataset, path, layer_name, LayerKind::polygons, "layer");
  const std::string label = layer_label(path, layer);
  int field = -1;
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  if (id_field) {
    field = defn->GetFieldIndex(id_field->c_str());
    if (field < 0) throw InputError(label + ": no field '" + *id_field + "' (fields: " + field_list(layer) + ")");
  } else {
    for (const char* name : {"name", "unit", "plot", "id"})
      if (field < 0) field = defn->GetFieldIndex(name);
  }
  const OGRSpatialReference source = layer_crs(layer, label, std::nullopt);
  OGRSpatialReference target;
  if (target.importFromWkt(crs.wkt.c_str()) != OGRERR_NONE)
    throw InputError("analysis CRS " + crs.code + ": cannot be read back from its WKT");
  target.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  const TransformPtr transform = make_transform(source, target, label);
  std::vector<Plot> units;
  std::set<std::string> seen;
  (void)scan_layer(layer, label, false, [&](OGRFeature& feature) {
    const std::string where = label + ", feature " + std::to_string(feature.GetFID());
    const std::string id = field >= 0 ? std::string(feature.GetFieldAsString(field)) : std::to_string(feature.GetFID());
    if (id.empty()) throw InputError(where + ": has no name");
    if (!seen.insert(id).second) throw InputError(where + ": the name '" + id + "' is used twice");
    const OGRGeometry* g = feature.GetGeometryRef();
    if (g == nullptr || g->IsEmpty()) throw InputError(where + ": has no geometry");
    std::unique_ptr<OGRGeometry> copy(g->clone());
    if (transform && copy->transform(transform.get()) != OGRERR_NONE)
      throw InputError(where + ": cannot be reprojected to " + crs.code);
    BgMultiPolygon shape;
    collect_polygons(*copy, shape);
    units.push_back(Plot{id, Window::from_polygons(std::move(shape), where + " ('" + id + "')")});
  });
  if (units.empty()) throw InputError(label + ": holds no polygon");
  return units;
}

CovariateFeatures read_covariate_features(const std::string& path, const std::optional<std::string>& layer_name,
                                          const AnalysisCrs& crs) {
  GdalScope scope;
  DatasetPtr dataset = open_vector(path);
  OGRLayer* picked = nullptr;
  if (layer_name) {
    picked = &pick_layer(*dataset, path, layer_name, LayerKind::lines, "layer");
  } else {
    try {
      picked = &pick_layer(*dataset, path, std::nullopt, LayerKind::lines, "layer");
    } catch (const InputError& lines_error) {
      try {
        picked = &pick_layer(*dataset, path, std::nullopt, LayerKind::polygons, "layer");
      } catch (const InputError&) {
        throw InputError(std::string(lines_error.what()) + "; no single polygon layer either");
      }
    }
  }
  OGRLayer& layer = *picked;
  CovariateFeatures out;
  out.label = layer_label(path, layer);
  const OGRSpatialReference source = layer_crs(layer, out.label, std::nullopt);
  OGRSpatialReference target;
  if (target.importFromWkt(crs.wkt.c_str()) != OGRERR_NONE)
    throw InputError("analysis CRS " + crs.code + ": cannot be read back from its WKT");
  target.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  const TransformPtr transform = make_transform(source, target, out.label);
  if (transform) out.notes.push_back(out.label + ": reprojected from " + crs_code(source) + " to " + crs.code);
  (void)scan_layer(layer, out.label, false, [&](OGRFeature& feature) {
    const OGRGeometry* g = feature.GetGeometryRef();
    const std::string where = out.label + ", feature " + std::to_string(feature.GetFID());
    if (g == nullptr || g->IsEmpty()) throw InputError(where + ": has no geometry");
    std::unique_ptr<OGRGeometry> copy(g->clone());
    if (transform && copy->transform(transform.get()) != OGRERR_NONE)
      throw InputError(where + ": cannot be reprojected to " + crs.code);
    if (copy->hasCurveGeometry()) copy.reset(copy->getLinearGeometry());
    if (!add_geometry(*copy, out.features))
      throw InputError(where + ": geometry is " + OGRGeometryTypeToName(copy->getGeometryType()) +
                       "; a distance covariate needs lines or polygons");
  });
  if (out.features.segments.empty()) throw InputError(out.label + ": holds no line or polygon");
  return out;
}

}  // namespace stipple
