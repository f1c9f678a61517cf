#include "stipple/io/reader.hpp"

#include <cmath>
#include <fstream>

#include <gdal_priv.h>
#include <gdal_utils.h>
#include <gtest/gtest.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>
#include <nlohmann/json.hpp>

#include "stipple/error.hpp"
#include "support.hpp"

namespace stipple {
namespace {

using test::sample;
using test::TempDir;

struct Site {
  double lon, lat;
  const char* species;
};
// Points inside the demo's 'north' plot (UTM 30N 512000-512100 E, 6290400-6290500 N).
// From gdaltransform EPSG:32630 -> EPSG:4326 of (512020, 6290420), (512050, 6290450),
// (512080, 6290480).
const Site kSites[] = {
    {-2.80340927, 56.75759229, "oak"}, {-2.80291720, 56.75786103, "ash"}, {-2.80242513, 56.75812977, "oak"}};

// Writes the sites with GDAL's own driver (GeoJSON, GPX, KML, ...) in EPSG:4326.
std::string write_points(const TempDir& dir, const std::string& driver_name, const std::string& file,
                         const std::string& species_field) {
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName(driver_name.c_str());
  EXPECT_NE(driver, nullptr) << driver_name;
  const std::string path = dir.file(file);
  GDALDataset* ds = driver->Create(path.c_str(), 0, 0, 0, GDT_Unknown, nullptr);
  OGRSpatialReference wgs84;
  wgs84.importFromEPSG(4326);
  wgs84.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  OGRLayer* layer = ds->CreateLayer(driver_name == "GPX" ? "waypoints" : "sites", &wgs84, wkbPoint, nullptr);
  if (driver_name != "GPX") {
    OGRFieldDefn field(species_field.c_str(), OFTString);
    EXPECT_EQ(layer->CreateField(&field), OGRERR_NONE);
  }
  for (const auto& site : kSites) {
    OGRFeature feature(layer->GetLayerDefn());
    feature.SetField(species_field.c_str(), site.species);
    OGRPoint point(site.lon, site.lat);
    feature.SetGeometry(&point);
    EXPECT_EQ(layer->CreateFeature(&feature), OGRERR_NONE);
  }
  GDALClose(ds);
  return path;
}

SurveyReadOptions demo_options(const std::string& sightings) {
  SurveyReadOptions o;
  o.sightings = SourceSpec{sightings, std::nullopt};
  o.plots = SourceSpec{sample("reserve.gpkg"), std::nullopt};
  return o;
}

TEST(LoadSurvey, ReadsTheDemoGeoPackage) {
  const LoadedSurvey s = load_survey(demo_options(sample("reserve.gpkg")));
  std::ifstream truth_file(sample("generating-values.json"));
  const auto truth = nlohmann::json::parse(truth_file);
  EXPECT_EQ(s.crs.code, "EPSG:32630");
  EXPECT_EQ(s.survey.plots().size(), 4u);
  EXPECT_EQ(s.survey.sighting_count(), truth["recorded_sightings"].get<std::size_t>());
  EXPECT_TRUE(s.survey.exclusions().assigned_by_attribute);
  EXPECT_EQ(s.survey.species(), (std::vector<std::string>{"birch", "hazel", "juniper", "wood-ant"}));
  // Plot areas from the generator's stated geometry (sample-plots/generating-values.json).
  for (const auto& plot : s.survey.plots())
    EXPECT_NEAR(plot.window.area_m2() / 1e4, truth["plot_areas_ha"][plot.id].get<double>(), 1e-9) << plot.id;
}

TEST(LoadSurvey, ReprojectionMatchesProjThroughGdal) {
  // Source: PROJ via GDAL's OGRCoordinateTransformation (reference library): the lon/lat
  // GPS sightings land where PROJ puts them in the plots' CRS, EPSG:32630.
  SurveyReadOptions o = demo_options(sample("gps-sightings.csv"));
  o.assume_crs = "EPSG:4326";
  const LoadedSurvey s = load_survey(o);
  EXPECT_EQ(s.crs.code, "EPSG:32630");
  OGRSpatialReference from;
  from.importFromEPSG(4326);
  from.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  OGRSpatialReference to;
  to.importFromEPSG(32630);
  to.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  std::unique_ptr<OGRCoordinateTransformation> ct(OGRCreateCoordinateTransformation(&from, &to));
  std::ifstream csv(sample("gps-sightings.csv"));
  std::string line;
  std::getline(csv, line);  // header
  std::getline(csv, line);  // feature 1
  double x = test::number_of(line.substr(0, line.find(',')));
  double y = test::number_of(line.substr(line.find(',') + 1));
  ASSERT_TRUE(ct->Transform(1, &x, &y));
  bool found = false;
  for (const auto& pattern : s.survey.patterns()) {
    for (std::size_t i = 0; i < pattern.points.size(); ++i) {
      if (pattern.feature_ids[i] != 1) continue;
      EXPECT_NEAR(pattern.points[i].x, x, 1e-6);
      EXPECT_NEAR(pattern.points[i].y, y, 1e-6);
      found = true;
    }
  }
  EXPECT_TRUE(found);
  EXPECT_EQ(s.survey.exclusions().outside_feature_ids.size(), 3u);
}

TEST(LoadSurvey, ReadsGeoJsonGpxAndKml) {
  TempDir dir;
  const std::pair<std::string, std::string> formats[] = {
      {"GeoJSON", "sites.geojson"}, {"GPX", "sites.gpx"}, {"KML", "sites.kml"}};
  for (const auto& [driver, file] : formats) {
    const std::string field = driver == "GeoJSON" ? "species" : (driver == "KML" ? "Name" : "name");
    SurveyReadOptions o = demo_options(write_points(dir, driver, file, field));
    o.species_field = field;
    const LoadedSurvey s = load_survey(o);
    EXPECT_EQ(s.survey.sighting_count(), 3u) << driver;
    EXPECT_EQ(s.survey.patterns()[0].points.size(), 3u) << driver << ": all in plot 'north'";
    EXPECT_EQ(s.survey.species(), (std::vector<std::string>{"ash", "oak"})) << driver;
  }
}

TEST(LoadSurvey, ReconcilesPlotsInAnotherCrs) {
  // Plots reprojected to Web Mercator by GDAL, sightings in UTM: areas and counts must
  // come back in the sightings' CRS.
  TempDir dir;
  const std::string mercator = dir.file("plots-3857.gpkg");
  GDALDriver* gpkg = GetGDALDriverManager()->GetDriverByName("GPKG");
  GDALDatasetUniquePtr src(GDALDataset::Open(sample("reserve.gpkg").c_str(), GDAL_OF_VECTOR));
  GDALDataset* out = gpkg->Create(mercator.c_str(), 0, 0, 0, GDT_Unknown, nullptr);
  OGRSpatialReference web;
  web.importFromEPSG(3857);
  web.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  OGRLayer* in_layer = src->GetLayerByName("plots");
  OGRLayer* layer = out->CreateLayer("plots", &web, wkbMultiPolygon, nullptr);
  OGRFieldDefn field("plot", OFTString);
  ASSERT_EQ(layer->CreateField(&field), OGRERR_NONE);
  std::unique_ptr<OGRCoordinateTransformation> ct(OGRCreateCoordinateTransformation(in_layer->GetSpatialRef(), &web));
  for (auto& f : *in_layer) {
    OGRFeature g(layer->GetLayerDefn());
    g.SetField("plot", f->GetFieldAsString("plot"));
    std::unique_ptr<OGRGeometry> geom(f->GetGeometryRef()->clone());
    // Densify so the reprojected outline stays within millimetres of the original.
    geom->segmentize(1.0);
    geom->transform(ct.get());
    g.SetGeometry(geom.get());
    ASSERT_EQ(layer->CreateFeature(&g), OGRERR_NONE);
  }
  GDALClose(out);
  SurveyReadOptions o = demo_options(sample("reserve.gpkg"));
  o.plots = SourceSpec{mercator, std::nullopt};
  const LoadedSurvey s = load_survey(o);
  EXPECT_EQ(s.crs.code, "EPSG:32630");
  const LoadedSurvey original = load_survey(demo_options(sample("reserve.gpkg")));
  for (std::size_t i = 0; i < s.survey.plots().size(); ++i) {
    EXPECT_NEAR(s.survey.plots()[i].window.area_m2(), original.survey.plots()[i].window.area_m2(), 0.5);
    EXPECT_EQ(s.survey.patterns()[i].points.size(), original.survey.patterns()[i].points.size());
  }
}

TEST(LoadSurvey, NanCoordinateInGeoPackageIsNamed) {
  TempDir dir;
  const std::string path = dir.file("nan.gpkg");
  GDALDriver* gpkg = GetGDALDriverManager()->GetDriverByName("GPKG");
  GDALDataset* ds = gpkg->Create(path.c_str(), 0, 0, 0, GDT_Unknown, nullptr);
  OGRSpatialReference utm;
  utm.importFromEPSG(32630);
  OGRLayer* layer = ds->CreateLayer("stems", &utm, wkbPoint, nullptr);
  OGRFieldDefn field("species", OFTString);
  ASSERT_EQ(layer->CreateField(&field), OGRERR_NONE);
  OGRFeature feature(layer->GetLayerDefn());
  feature.SetField("species", "oak");
  OGRPoint point(std::nan(""), 6290450.0);
  feature.SetGeometry(&point);
  ASSERT_EQ(layer->CreateFeature(&feature), OGRERR_NONE);
  GDALClose(ds);
  try {
    (void)load_survey(demo_options(path));
    FAIL();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("nan.gpkg: layer 'stems': feature 1:"), std::string::npos) << e.what();
  }
}

// A GeoPackage of stems in the demo's 'north' plot with the given geometries (WKT, UTM 30N)
// and species (empty: null), plus a field the reader must skip.
std::string write_stems(const TempDir& dir, const std::string& file,
                        const std::vector<std::pair<std::string, std::string>>& rows) {
  const std::string path = dir.file(file);
  GDALDriver* gpkg = GetGDALDriverManager()->GetDriverByName("GPKG");
  GDALDataset* ds = gpkg->Create(path.c_str(), 0, 0, 0, GDT_Unknown, nullptr);
  OGRSpatialReference utm;
  utm.importFromEPSG(32630);
  OGRLayer* layer = ds->CreateLayer("stems", &utm, wkbUnknown, nullptr);
  OGRFieldDefn note("note", OFTString);
  OGRFieldDefn species("species", OFTString);
  EXPECT_EQ(layer->CreateField(&note), OGRERR_NONE);
  EXPECT_EQ(layer->CreateField(&species), OGRERR_NONE);
  for (const auto& [wkt, name] : rows) {
    OGRFeature feature(layer->GetLayerDefn());
    feature.SetField("note", "recorded by hand");
    if (!name.empty()) feature.SetField("species", name.c_str());
    OGRGeometry* geometry = nullptr;
    EXPECT_EQ(OGRGeometryFactory::createFromWkt(wkt.c_str(), nullptr, &geometry), OGRERR_NONE) << wkt;
    feature.SetGeometryDirectly(geometry);
    EXPECT_EQ(layer->CreateFeature(&feature), OGRERR_NONE);
  }
  GDALClose(ds);
  return path;
}

TEST(LoadSurvey, ColumnarGeoPackageReadingEqualsFeatureByFeature) {
  // A GeoPackage is read through GDAL's Arrow stream (OLCFastGetArrowStream), a GeoJSON
  // copy (made by GDAL's VectorTranslate) feature by feature: the same points, species and
  // order, with 2D, 3D and single-point MultiPoint geometries.
  TempDir dir;
  const std::string gpkg = write_stems(dir, "stems.gpkg",
                                       {{"POINT (512020.5 6290420.25)", "oak"},
                                        {"POINT Z (512050 6290450 312.5)", "ash"},
                                        {"MULTIPOINT ((512080 6290480))", "oak"},
                                        {"POINT (512010 6290490)", " Ash "}});
  GDALDatasetUniquePtr source(GDALDataset::Open(gpkg.c_str(), GDAL_OF_VECTOR));
  ASSERT_TRUE(source->GetLayer(0)->TestCapability(OLCFastGetArrowStream));
  const std::string geojson = dir.file("stems.geojson");
  const char* args[] = {"-f", "GeoJSON", nullptr};
  GDALVectorTranslateOptions* translate = GDALVectorTranslateOptionsNew(const_cast<char**>(args), nullptr);
  GDALDatasetH h = source.get();
  GDALClose(GDALVectorTranslate(geojson.c_str(), nullptr, 1, &h, translate, nullptr));
  GDALVectorTranslateOptionsFree(translate);
  const LoadedSurvey a = load_survey(demo_options(gpkg));
  const LoadedSurvey b = load_survey(demo_options(geojson));
  EXPECT_EQ(a.survey.species(), (std::vector<std::string>{"Ash", "ash", "oak"}));
  EXPECT_EQ(a.survey.species(), b.survey.species());
  ASSERT_EQ(a.survey.plots().size(), b.survey.plots().size());
  for (std::size_t p = 0; p < a.survey.plots().size(); ++p) {
    const auto& pa = a.survey.patterns()[p];
    const auto& pb = b.survey.patterns()[p];
    EXPECT_EQ(pa.marks, pb.marks);
    ASSERT_EQ(pa.points.size(), pb.points.size());
    for (std::size_t i = 0; i < pa.points.size(); ++i) {
      EXPECT_EQ(pa.points[i].x, pb.points[i].x);
      EXPECT_EQ(pa.points[i].y, pb.points[i].y);
    }
  }
  EXPECT_EQ(a.survey.sighting_count(), 4U);
  EXPECT_EQ(a.survey.patterns()[0].feature_ids, (std::vector<std::int64_t>{1, 2, 3, 4}));  // 'north' is first
  EXPECT_EQ(a.survey.patterns()[0].points[0].x, 512020.5);
  EXPECT_EQ(a.survey.patterns()[0].points[0].y, 6290420.25);
}

TEST(LoadSurvey, ColumnarReadingRefusesWhatFeatureReadingRefuses) {
  TempDir dir;
  const auto refused = [&](const std::string& file, const std::vector<std::pair<std::string, std::string>>& rows,
                           const std::string& message) {
    try {
      (void)load_survey(demo_options(write_stems(dir, file, rows)));
      ADD_FAILURE() << file;
    } catch (const InputError& e) {
      EXPECT_NE(std::string(e.what()).find(message), std::string::npos) << e.what();
    }
  };
  refused("two.gpkg", {{"POINT (512020 6290420)", "oak"}, {"MULTIPOINT ((512080 6290480), (512081 6290481))", "oak"}},
          "layer 'stems': feature 2: geometry is MultiPoint of several points; sightings must be single points");
  refused("line.gpkg", {{"LINESTRING (512020 6290420, 512030 6290430)", "oak"}},
          "feature 1: geometry is Line String; sightings must be single points");
  refused("empty.gpkg", {{"POINT (512020 6290420)", "oak"}, {"POINT EMPTY", "oak"}},
          "feature 2: has no point geometry");
  refused("unnamed.gpkg", {{"POINT (512020 6290420)", ""}}, "feature 1: species field 'species' is empty");
}

TEST(ReadDetectionTable, ReadsSpeciesProbabilitiesAndErrors) {
  const DetectionTable table = read_detection_table(sample("detection.csv"), std::nullopt);
  EXPECT_EQ(table.for_species("hazel").probability, 0.9);
  EXPECT_EQ(table.for_species("hazel").standard_error, 0.03);
  TempDir dir;
  const auto twice = dir.write("twice.csv", "species,p\noak,0.5\noak,0.6\n");
  EXPECT_THROW((void)read_detection_table(twice, std::nullopt), InputError);
  const auto text = dir.write("text.csv", "species,p\noak,high\n");
  try {
    (void)read_detection_table(text, std::nullopt);
    FAIL();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("text.csv: line 2: p 'high' is not a number"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace stipple
