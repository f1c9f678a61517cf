#include "stipple/io/gis_writer.hpp"

#include <algorithm>
#include <filesystem>
#include <iterator>
#include <map>
#include <memory>

#include <cpl_conv.h>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"
#include "stipple/io/output.hpp"

namespace fs = std::filesystem;

namespace stipple {

using namespace io_detail;

namespace {

OGRMultiPolygon to_ogr(const BgMultiPolygon& shape) {
  OGRMultiPolygon multi;
  for (const auto& polygon : shape) {
    OGRPolygon p;
    const auto ring_of = [](const BgPolygon::ring_type& ring) {
      OGRLinearRing r;
      for (const auto& v : ring) r.addPoint(v.x(), v.y());
      return r;
    };
    OGRLinearRing outer = ring_of(polygon.outer());
    p.addRing(&outer);
    for (const auto& inner : polygon.inners()) {
      OGRLinearRing hole = ring_of(inner);
      p.addRing(&hole);
    }
    multi.addGeometry(&p);
  }
  return multi;
}

struct Field {
  const char* name;
  OGRFieldType type;
};
const Field fields[] = {{"file", OFTString},
                        {"plot", OFTString},
                        {"species", OFTString},
                        {"count", OFTInteger64},
                        {"area", OFTReal},
                        {"unit", OFTString},
                        {"intensity", OFTReal},
                        {"ci_low", OFTReal},
                        {"ci_high", OFTReal},
                        {"detection_probability", OFTReal},
                        {"corrected_intensity", OFTReal},
                        {"corrected_ci_low", OFTReal},
                        {"corrected_ci_high", OFTReal},
                        {"quadrat_p", OFTReal},
                        {"clark_evans_ratio", OFTReal},
                        {"clark_evans_p", OFTReal},
                        {"dclf_p", OFTReal},
                        {"verdict", OFTString}};
const Field wide_fields[] = {
    {"file", OFTString}, {"plot", OFTString}, {"area", OFTReal}, {"unit", OFTString}, {"all_species", OFTReal}};

class FixedDate {
 public:
  // GDAL stamps GeoPackages with the current time unless told otherwise.
  FixedDate() { CPLSetThreadLocalConfigOption("OGR_CURRENT_DATE", "2000-01-01T00:00:00.000Z"); }
  ~FixedDate() { CPLSetThreadLocalConfigOption("OGR_CURRENT_DATE", nullptr); }
  FixedDate(const FixedDate&) = delete;
  FixedDate& operator=(const FixedDate&) = delete;
};

OGRLayer* create_layer(GDALDataset& ds, const char* name, OGRSpatialReference& srs, const Field* begin,
                       const Field* end, const std::string& path) {
  OGRLayer* layer = ds.CreateLayer(name, &srs, wkbMultiPolygon, nullptr);
  if (layer == nullptr) throw InputError(path + ": cannot create layer " + name + " (" + last_gdal_message() + ")");
  for (const Field* f = begin; f != end; ++f) {
    OGRFieldDefn defn(f->name, f->type);
    if (layer->CreateField(&defn) != OGRERR_NONE) throw InputError(path + ": cannot create field " + f->name);
  }
  return layer;
}

std::string wkt_of(const OGRSpatialReference& srs, const std::string& where) {
  char* text = nullptr;
  const OGRErr exported = srs.exportToWkt(&text);
  std::string wkt = text ? text : "";
  CPLFree(text);
  if (exported != OGRERR_NONE || wkt.empty()) throw InputError(where + ": a CRS that cannot be written as WKT");
  return wkt;
}

}  // namespace

std::string species_column_name(const std::string& species) {
  std::string name = "d_";
  for (const char c : species) name += (c == ' ' || c == '-' || c == '.' || c == '/') ? '_' : c;
  return name;
}

struct PlotResultsWriter::State {
  std::string path;
  TemporaryOutput output;
  DatasetPtr ds;
  OGRSpatialReference srs;
  OGRLayer* long_layer = nullptr;
  OGRLayer* wide_layer = nullptr;
  std::vector<std::string> species_columns;  // in the order they were created
  State(const std::string& p, const std::vector<std::string>& protect)
      : path(p), output(checked_output_path(p, protect), true) {}
};

PlotResultsWriter::PlotResultsWriter(const std::string& path, const std::string& crs_wkt,
                                     const std::vector<std::string>& protect)
    : state_(std::make_unique<State>(path, protect)) {
  const GdalScope gdal;
  const FixedDate fixed;
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GPKG");
  if (driver == nullptr) throw Error("GDAL has no GeoPackage driver");
  state_->ds.reset(driver->Create(state_->output.path().c_str(), 0, 0, 0, GDT_Unknown, nullptr));
  if (!state_->ds) throw InputError(path + ": cannot create GeoPackage (" + last_gdal_message() + ")");
  if (state_->srs.importFromWkt(crs_wkt.c_str()) != OGRERR_NONE) throw Error("invalid CRS for the GeoPackage");
  state_->srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  state_->long_layer =
      create_layer(*state_->ds, "plot_results", state_->srs, std::begin(fields), std::end(fields), path);
  state_->wide_layer =
      create_layer(*state_->ds, "plot_species", state_->srs, std::begin(wide_fields), std::end(wide_fields), path);
}

PlotResultsWriter::~PlotResultsWriter() {
  const GdalScope gdal;  // closing an uncommitted GeoPackage talks to GDAL too
  state_.reset();
}

void PlotResultsWriter::add(const std::vector<PlotResultFeature>& features, const std::string& source_crs_wkt) {
  const GdalScope gdal;
  State& st = *state_;
  if (!st.ds) throw InputError(st.path + ": written after it was committed");
  const FixedDate fixed;
  OGRSpatialReference source;
  if (source.importFromWkt(source_crs_wkt.c_str()) != OGRERR_NONE) throw Error("invalid CRS of GIS features");
  source.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  const TransformPtr transform = make_transform(source, st.srs, st.path);
  // New species get their column in the wide layer before any feature is written.
  for (const auto& f : features) {
    if (!f.species) continue;
    const std::string column = species_column_name(*f.species);
    if (std::find(st.species_columns.begin(), st.species_columns.end(), column) != st.species_columns.end()) continue;
    OGRFieldDefn defn(column.c_str(), OFTReal);
    if (st.wide_layer->CreateField(&defn) != OGRERR_NONE) throw InputError(st.path + ": cannot create field " + column);
    st.species_columns.push_back(column);
  }
  if (st.long_layer->StartTransaction() != OGRERR_NONE) throw InputError(st.path + ": cannot start writing");
  std::map<std::pair<std::string, std::string>, std::unique_ptr<OGRFeature>> wide;  // (file, plot)
  std::vector<std::pair<std::string, std::string>> wide_order;
  for (const auto& f : features) {
    OGRFeature out(st.long_layer->GetLayerDefn());
    out.SetField("file", f.file.c_str());
    out.SetField("plot", f.plot.c_str());
    if (f.species) out.SetField("species", f.species->c_str());
    out.SetField("count", static_cast<GIntBig>(f.count));
    out.SetField("area", f.area_in_unit);
    out.SetField("unit", f.unit.c_str());
    out.SetField("intensity", f.intensity);
    out.SetField("ci_low", f.ci_low);
    out.SetField("ci_high", f.ci_high);
    out.SetField("detection_probability", f.detection_probability);
    out.SetField("corrected_intensity", f.corrected_intensity);
    out.SetField("corrected_ci_low", f.corrected_ci_low);
    out.SetField("corrected_ci_high", f.corrected_ci_high);
    if (f.quadrat_p) out.SetField("quadrat_p", *f.quadrat_p);
    if (f.clark_evans_ratio) out.SetField("clark_evans_ratio", *f.clark_evans_ratio);
    if (f.clark_evans_p) out.SetField("clark_evans_p", *f.clark_evans_p);
    if (f.dclf_p) out.SetField("dclf_p", *f.dclf_p);
    if (f.verdict) out.SetField("verdict", f.verdict->c_str());
    OGRMultiPolygon geometry = to_ogr(f.shape);
    if (transform && geometry.transform(transform.get()) != OGRERR_NONE)
      throw InputError(st.path + ": cannot reproject plot '" + f.plot + "' of " + f.file + " to the batch CRS");
    out.SetGeometry(&geometry);
    if (st.long_layer->CreateFeature(&out) != OGRERR_NONE) throw InputError(st.path + ": cannot write a feature");
    const auto key = std::make_pair(f.file, f.plot);
    auto& w = wide[key];
    if (!w) {
      wide_order.push_back(key);
      w = std::make_unique<OGRFeature>(st.wide_layer->GetLayerDefn());
      w->SetField("file", f.file.c_str());
      w->SetField("plot", f.plot.c_str());
      w->SetField("area", f.area_in_unit);
      w->SetField("unit", f.unit.c_str());
      w->SetGeometry(&geometry);
    }
    w->SetField(f.species ? species_column_name(*f.species).c_str() : "all_species", f.corrected_intensity);
  }
  for (const auto& key : wide_order)
    if (st.wide_layer->CreateFeature(wide[key].get()) != OGRERR_NONE)
      throw InputError(st.path + ": cannot write a feature");
  if (st.long_layer->CommitTransaction() != OGRERR_NONE)
    throw InputError(st.path + ": cannot finish writing (" + last_gdal_message() + ")");
}

void PlotResultsWriter::commit() {
  const GdalScope gdal;
  State& st = *state_;
  if (!st.ds) throw InputError(st.path + ": committed twice");
  const FixedDate fixed;
  close_checked(std::move(st.ds), st.path);
  st.output.commit();
}

void write_plot_results(const std::string& path, const std::string& crs_wkt,
                        const std::vector<PlotResultFeature>& features, const std::vector<std::string>& protect) {
  const GdalScope gdal;
  PlotResultsWriter writer(path, crs_wkt, protect);
  writer.add(features, crs_wkt);
  writer.commit();
}

void merge_plot_results(const std::vector<std::string>& inputs, const std::string& path,
                        const std::vector<std::string>& protect) {
  const GdalScope gdal;
  // Every shard's features, ordered by file (stable), reprojected to the first shard's CRS.
  std::vector<std::pair<PlotResultFeature, std::string>> all;  // feature, its CRS as WKT
  std::string target;
  for (const auto& input : inputs) {
    DatasetPtr ds = open_vector(input);
    OGRLayer* layer = ds->GetLayerByName("plot_results");
    if (layer == nullptr) throw InputError(input + ": no layer 'plot_results'");
    if (layer->GetSpatialRef() == nullptr) throw InputError(input + ": layer 'plot_results' has no CRS");
    const std::string wkt = wkt_of(*layer->GetSpatialRef(), input + ": layer 'plot_results'");
    if (target.empty()) target = wkt;
    const auto text = [](OGRFeature& f, const char* name) {
      return f.IsFieldSetAndNotNull(f.GetFieldIndex(name)) ? std::optional<std::string>(f.GetFieldAsString(name))
                                                           : std::nullopt;
    };
    const auto real = [](OGRFeature& f, const char* name) {
      return f.IsFieldSetAndNotNull(f.GetFieldIndex(name)) ? std::optional<double>(f.GetFieldAsDouble(name))
                                                           : std::nullopt;
    };
    scan_layer(*layer, input + ": layer 'plot_results'", false, [&](OGRFeature& f) {
      PlotResultFeature r;
      r.file = text(f, "file").value_or("");
      r.plot = text(f, "plot").value_or("");
      r.species = text(f, "species");
      r.count = f.GetFieldAsInteger64("count");
      r.area_in_unit = f.GetFieldAsDouble("area");
      r.unit = text(f, "unit").value_or("");
      r.intensity = f.GetFieldAsDouble("intensity");
      r.ci_low = f.GetFieldAsDouble("ci_low");
      r.ci_high = f.GetFieldAsDouble("ci_high");
      r.detection_probability = f.GetFieldAsDouble("detection_probability");
      r.corrected_intensity = f.GetFieldAsDouble("corrected_intensity");
      r.corrected_ci_low = f.GetFieldAsDouble("corrected_ci_low");
      r.corrected_ci_high = f.GetFieldAsDouble("corrected_ci_high");
      r.quadrat_p = real(f, "quadrat_p");
      r.clark_evans_ratio = real(f, "clark_evans_ratio");
      r.clark_evans_p = real(f, "clark_evans_p");
      r.dclf_p = real(f, "dclf_p");
      r.verdict = text(f, "verdict");
      if (const OGRGeometry* g = f.GetGeometryRef()) collect_polygons(*g, r.shape);
      all.emplace_back(std::move(r), wkt);
    });
  }
  std::stable_sort(all.begin(), all.end(), [](const auto& a, const auto& b) { return a.first.file < b.first.file; });
  PlotResultsWriter writer(path, target, protect);
  // One add per input file keeps each file's wide features together.
  std::size_t begin = 0;
  while (begin < all.size()) {
    std::size_t end = begin;
    std::vector<PlotResultFeature> group;
    while (end < all.size() && all[end].first.file == all[begin].first.file && all[end].second == all[begin].second)
      group.push_back(all[end++].first);
    writer.add(group, all[begin].second);
    begin = end;
  }
  writer.commit();
}

void write_geotiff(const std::string& path, const RasterGrid& grid, const std::vector<GridBand>& bands,
                   const std::string& crs_wkt, const std::vector<std::string>& protect) {
  const GdalScope gdal;
  if (bands.empty()) throw InputError(path + ": no band to write");
  for (const auto& b : bands)
    if (b.values.size() != grid.columns * grid.rows)
      throw InputError(path + ": band '" + b.description + "' does not fill the grid");
  TemporaryOutput output(checked_output_path(path, protect), true);
  const std::string& temporary = output.path();
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GTiff");
  if (driver == nullptr) throw Error("GDAL has no GeoTIFF driver");
  CPLStringList options;
  options.SetNameValue("COMPRESS", "DEFLATE");
  options.SetNameValue("TILED", "YES");
  const int width = static_cast<int>(grid.columns);
  const int height = static_cast<int>(grid.rows);
  DatasetPtr ds(
      driver->Create(temporary.c_str(), width, height, static_cast<int>(bands.size()), GDT_Float64, options.List()));
  if (!ds) throw InputError(path + ": cannot create GeoTIFF (" + last_gdal_message() + ")");
  double transform[6] = {grid.x_min, grid.cell_width, 0.0, grid.y_max, 0.0, -grid.cell_height};
  if (ds->SetGeoTransform(transform) != CE_None || ds->SetProjection(crs_wkt.c_str()) != CE_None)
    throw InputError(path + ": cannot record the grid and CRS (" + last_gdal_message() + ")");
  for (std::size_t i = 0; i < bands.size(); ++i) {
    GDALRasterBand* band = ds->GetRasterBand(static_cast<int>(i) + 1);
    if (band == nullptr || band->SetNoDataValue(std::numeric_limits<double>::quiet_NaN()) != CE_None)
      throw InputError(path + ": cannot set the no-data value (" + last_gdal_message() + ")");
    band->SetDescription(bands[i].description.c_str());
    std::vector<double> values = bands[i].values;
    if (band->RasterIO(GF_Write, 0, 0, width, height, values.data(), width, height, GDT_Float64, 0, 0) != CE_None)
      throw InputError(path + ": write failed (" + last_gdal_message() + ")");
  }
  close_checked(std::move(ds), path);
  output.commit();
}

void write_geotiff(const std::string& path, const IntensityRaster& raster, const std::string& crs_wkt,
                   const std::string& description, const std::vector<std::string>& protect) {
  RasterGrid grid;
  grid.x_min = raster.x_min;
  grid.y_max = raster.y_max;
  grid.cell_width = grid.cell_height = raster.pixel_m;
  grid.columns = raster.width;
  grid.rows = raster.height;
  write_geotiff(path, grid, {GridBand{description, raster.values}}, crs_wkt, protect);
}

}  // namespace stipple
