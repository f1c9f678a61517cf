#include "stipple/io/gis_writer.hpp"

#include <algorithm>
#include <filesystem>
#include <map>

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
const Field fields[] = {{"file", OFTString},          {"plot", OFTString},         {"species", OFTString},
                        {"count", OFTInteger64},      {"area", OFTReal},           {"intensity", OFTReal},
                        {"ci_low", OFTReal},          {"ci_high", OFTReal},        {"corrected_intensity", OFTReal},
                        {"quadrat_p", OFTReal},       {"clark_evans_ratio", OFTReal}, {"clark_evans_p", OFTReal},
                        {"dclf_p", OFTReal},          {"verdict", OFTString}};

class FixedDate {
 public:
  // GDAL stamps GeoPackages with the current time unless told otherwise.
  FixedDate() { CPLSetThreadLocalConfigOption("OGR_CURRENT_DATE", "2000-01-01T00:00:00.000Z"); }
  ~FixedDate() { CPLSetThreadLocalConfigOption("OGR_CURRENT_DATE", nullptr); }
  FixedDate(const FixedDate&) = delete;
  FixedDate& operator=(const FixedDate&) = delete;
};

void write_features(const std::string& path, const std::string& crs_wkt,
                    const std::vector<std::unique_ptr<OGRFeature>>* copies,
                    const std::vector<PlotResultFeature>* features, const std::vector<std::string>& protect) {
  TemporaryOutput output(checked_output_path(path, protect), true);
  const std::string& temporary = output.path();
  const FixedDate fixed;
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GPKG");
  if (driver == nullptr) throw Error("GDAL has no GeoPackage driver");
  DatasetPtr ds(driver->Create(temporary.c_str(), 0, 0, 0, GDT_Unknown, nullptr));
  if (!ds) throw InputError(path + ": cannot create GeoPackage (" + last_gdal_message() + ")");
  OGRSpatialReference srs;
  if (srs.importFromWkt(crs_wkt.c_str()) != OGRERR_NONE) throw Error("invalid CRS for the GeoPackage");
  OGRLayer* layer = ds->CreateLayer("plot_results", &srs, wkbMultiPolygon, nullptr);
  if (layer == nullptr) throw InputError(path + ": cannot create layer plot_results (" + last_gdal_message() + ")");
  for (const auto& f : fields) {
    OGRFieldDefn defn(f.name, f.type);
    if (layer->CreateField(&defn) != OGRERR_NONE) throw InputError(path + ": cannot create field " + f.name);
  }
  if (layer->StartTransaction() != OGRERR_NONE) throw InputError(path + ": cannot start writing");
  if (copies) {
    for (const auto& c : *copies) {
      OGRFeature out(layer->GetLayerDefn());
      out.SetFrom(c.get());
      out.SetFID(OGRNullFID);
      if (layer->CreateFeature(&out) != OGRERR_NONE) throw InputError(path + ": cannot write a feature");
    }
  }
  if (features) {
    for (const auto& f : *features) {
      OGRFeature out(layer->GetLayerDefn());
      out.SetField("file", f.file.c_str());
      out.SetField("plot", f.plot.c_str());
      if (f.species) out.SetField("species", f.species->c_str());
      out.SetField("count", static_cast<GIntBig>(f.count));
      out.SetField("area", f.area);
      out.SetField("intensity", f.intensity);
      out.SetField("ci_low", f.ci_low);
      out.SetField("ci_high", f.ci_high);
      out.SetField("corrected_intensity", f.corrected_intensity);
      if (f.quadrat_p) out.SetField("quadrat_p", *f.quadrat_p);
      if (f.clark_evans_ratio) out.SetField("clark_evans_ratio", *f.clark_evans_ratio);
      if (f.clark_evans_p) out.SetField("clark_evans_p", *f.clark_evans_p);
      if (f.dclf_p) out.SetField("dclf_p", *f.dclf_p);
      if (f.verdict) out.SetField("verdict", f.verdict->c_str());
      OGRMultiPolygon geometry = to_ogr(f.shape);
      out.SetGeometry(&geometry);
      if (layer->CreateFeature(&out) != OGRERR_NONE) throw InputError(path + ": cannot write a feature");
    }
  }
  if (layer->CommitTransaction() != OGRERR_NONE) throw InputError(path + ": cannot finish writing (" + last_gdal_message() + ")");
  close_checked(std::move(ds), path);
  output.commit();
}

}  // namespace

void write_plot_results(const std::string& path, const std::string& crs_wkt,
                        const std::vector<PlotResultFeature>& features, const std::vector<std::string>& protect) {
  write_features(path, crs_wkt, nullptr, &features, protect);
}

void merge_plot_results(const std::vector<std::string>& inputs, const std::string& path,
                        const std::vector<std::string>& protect) {
  std::vector<std::unique_ptr<OGRFeature>> copies;
  std::string wkt;
  std::vector<DatasetPtr> keep;
  for (const auto& input : inputs) {
    DatasetPtr ds = open_vector(input);
    OGRLayer* layer = ds->GetLayerByName("plot_results");
    if (layer == nullptr) throw InputError(input + ": no layer 'plot_results'");
    if (wkt.empty() && layer->GetSpatialRef()) {
      char* text = nullptr;
      const OGRErr exported = layer->GetSpatialRef()->exportToWkt(&text);
      wkt = text ? text : "";
      CPLFree(text);
      if (exported != OGRERR_NONE || wkt.empty()) throw InputError(input + ": layer 'plot_results' has a CRS that cannot be written as WKT");
    }
    scan_layer(*layer, input + ": layer 'plot_results'", false,
               [&](OGRFeature& f) { copies.emplace_back(f.Clone()); });
  }
  std::stable_sort(copies.begin(), copies.end(), [](const auto& a, const auto& b) {
    return std::string(a->GetFieldAsString("file")) < std::string(b->GetFieldAsString("file"));
  });
  write_features(path, wkt, &copies, nullptr, protect);
}

void write_geotiff(const std::string& path, const IntensityRaster& raster, const std::string& crs_wkt,
                   const std::string& description, const std::vector<std::string>& protect) {
  TemporaryOutput output(checked_output_path(path, protect), true);
  const std::string& temporary = output.path();
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GTiff");
  if (driver == nullptr) throw Error("GDAL has no GeoTIFF driver");
  CPLStringList options;
  options.SetNameValue("COMPRESS", "DEFLATE");
  options.SetNameValue("TILED", "YES");
  DatasetPtr ds(driver->Create(temporary.c_str(), static_cast<int>(raster.width), static_cast<int>(raster.height), 1,
                               GDT_Float64, options.List()));
  if (!ds) throw InputError(path + ": cannot create GeoTIFF (" + last_gdal_message() + ")");
  double transform[6] = {raster.x_min, raster.pixel_m, 0.0, raster.y_max, 0.0, -raster.pixel_m};
  if (ds->SetGeoTransform(transform) != CE_None || ds->SetProjection(crs_wkt.c_str()) != CE_None)
    throw InputError(path + ": cannot record the grid and CRS (" + last_gdal_message() + ")");
  GDALRasterBand* band = ds->GetRasterBand(1);
  if (band == nullptr || band->SetNoDataValue(std::numeric_limits<double>::quiet_NaN()) != CE_None)
    throw InputError(path + ": cannot set the no-data value (" + last_gdal_message() + ")");
  band->SetDescription(description.c_str());
  std::vector<double> values = raster.values;
  if (band->RasterIO(GF_Write, 0, 0, static_cast<int>(raster.width), static_cast<int>(raster.height), values.data(),
                     static_cast<int>(raster.width), static_cast<int>(raster.height), GDT_Float64, 0, 0) != CE_None)
    throw InputError(path + ": write failed (" + last_gdal_message() + ")");
  close_checked(std::move(ds), path);
  output.commit();
}

}  // namespace stipple
