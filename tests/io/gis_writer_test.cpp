// The GIS writer, read back through GDAL/OGR itself (the reference library for these
// formats): layers, fields, values, CRS, and raster georeferencing.

#include "stipple/io/gis_writer.hpp"

#include <gdal_priv.h>
#include <gtest/gtest.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include <cmath>
#include <memory>
#include <string>

#include "stipple/error.hpp"
#include "support.hpp"

namespace stipple {
namespace {

using test::TempDir;

struct Closer {
  void operator()(GDALDataset* d) const { GDALClose(d); }
};
using Dataset = std::unique_ptr<GDALDataset, Closer>;

Dataset open(const std::string& path, unsigned flags) {
  return Dataset(static_cast<GDALDataset*>(GDALOpenEx(path.c_str(), flags, nullptr, nullptr, nullptr)));
}

std::string utm30n_wkt() {
  OGRSpatialReference srs;
  srs.importFromEPSG(32630);
  char* wkt = nullptr;
  srs.exportToWkt(&wkt);
  std::string text(wkt);
  CPLFree(wkt);
  return text;
}

PlotResultFeature feature(const std::string& plot, std::optional<std::string> species, long long count) {
  PlotResultFeature f;
  f.shape = BgMultiPolygon{Window::rectangle(500000, 6290000, 500100, 6290100).shape()};
  f.file = "north.gpkg";
  f.plot = plot;
  f.species = std::move(species);
  f.count = count;
  f.area_in_unit = 1.0;
  f.unit = "ha";
  f.intensity = static_cast<double>(count);
  f.ci_low = 0.5 * static_cast<double>(count);
  f.ci_high = 2.0 * static_cast<double>(count);
  f.detection_probability = 0.8;
  f.corrected_intensity = static_cast<double>(count) / 0.8;
  f.verdict = "random";
  return f;
}

TEST(GisWriter, PlotResultsReadBackThroughOgrWithFieldsCrsAndTheWideLayer) {
  TempDir dir;
  const std::string path = dir.file("results.gpkg");
  write_plot_results(path, utm30n_wkt(),
                     {feature("north", std::string("wood ant"), 12), feature("north", std::nullopt, 20)}, {});
  const Dataset ds = open(path, GDAL_OF_VECTOR | GDAL_OF_READONLY);
  ASSERT_TRUE(ds) << path;
  OGRLayer* longer = ds->GetLayerByName("plot_results");
  ASSERT_NE(longer, nullptr);
  EXPECT_EQ(longer->GetFeatureCount(), 2);
  ASSERT_NE(longer->GetSpatialRef(), nullptr);
  EXPECT_STREQ(longer->GetSpatialRef()->GetAuthorityCode(nullptr), "32630");
  longer->ResetReading();
  std::unique_ptr<OGRFeature> first(longer->GetNextFeature());
  ASSERT_TRUE(first);
  EXPECT_STREQ(first->GetFieldAsString("plot"), "north");
  EXPECT_STREQ(first->GetFieldAsString("species"), "wood ant");
  EXPECT_EQ(first->GetFieldAsInteger64("count"), 12);
  EXPECT_STREQ(first->GetFieldAsString("unit"), "ha");
  EXPECT_DOUBLE_EQ(first->GetFieldAsDouble("detection_probability"), 0.8);
  EXPECT_DOUBLE_EQ(first->GetFieldAsDouble("corrected_intensity"), 15.0);
  // The polygon as written: a 100 m square, 1 ha (area by OGR).
  const OGRGeometry* g = first->GetGeometryRef();
  ASSERT_NE(g, nullptr);
  EXPECT_NEAR(dynamic_cast<const OGRMultiPolygon*>(g)->get_Area(), 1e4, 1e-6);
  OGRLayer* wide = ds->GetLayerByName("plot_species");
  ASSERT_NE(wide, nullptr);
  EXPECT_EQ(wide->GetFeatureCount(), 1);  // one feature per plot
  wide->ResetReading();
  std::unique_ptr<OGRFeature> plot(wide->GetNextFeature());
  ASSERT_TRUE(plot);
  EXPECT_DOUBLE_EQ(plot->GetFieldAsDouble(species_column_name("wood ant").c_str()), 15.0);
  EXPECT_EQ(species_column_name("wood ant"), "d_wood_ant");
}

TEST(GisWriter, GeotiffCarriesGeotransformCrsNoDataAndValues) {
  TempDir dir;
  IntensityRaster r;
  r.x_min = 500000;
  r.y_max = 6290100;
  r.pixel_m = 10;
  r.width = 3;
  r.height = 2;
  r.values = {1.5, 2.5, std::nan(""), 4.0, 5.0, 6.25};
  const std::string path = dir.file("surface.tif");
  write_geotiff(path, r, utm30n_wkt(), "intensity per ha", {});
  const Dataset ds = open(path, GDAL_OF_RASTER | GDAL_OF_READONLY);
  ASSERT_TRUE(ds);
  EXPECT_EQ(ds->GetRasterXSize(), 3);
  EXPECT_EQ(ds->GetRasterYSize(), 2);
  double gt[6];
  ASSERT_EQ(ds->GetGeoTransform(gt), CE_None);
  EXPECT_EQ(gt[0], 500000.0);  // north-up: origin at the top-left corner
  EXPECT_EQ(gt[1], 10.0);
  EXPECT_EQ(gt[3], 6290100.0);
  EXPECT_EQ(gt[5], -10.0);
  EXPECT_STREQ(ds->GetSpatialRef()->GetAuthorityCode(nullptr), "32630");
  GDALRasterBand* band = ds->GetRasterBand(1);
  EXPECT_EQ(band->GetRasterDataType(), GDT_Float64);
  double values[6];
  ASSERT_EQ(band->RasterIO(GF_Read, 0, 0, 3, 2, values, 3, 2, GDT_Float64, 0, 0), CE_None);
  EXPECT_EQ(values[0], 1.5);
  EXPECT_TRUE(std::isnan(values[2]));
  EXPECT_EQ(values[5], 6.25);
  EXPECT_STREQ(band->GetDescription(), "intensity per ha");
}

TEST(GisWriter, RefusesToWriteOverAnInputOrAFolder) {
  TempDir dir;
  const std::string input = dir.write("in.gpkg", "not really");
  EXPECT_THROW(write_plot_results(input, utm30n_wkt(), {feature("a", std::nullopt, 1)}, {input}), InputError);
  EXPECT_THROW(write_plot_results(dir.path().string(), utm30n_wkt(), {feature("a", std::nullopt, 1)}, {}), InputError);
  EXPECT_EQ(test::read_file(input), "not really");
}

}  // namespace
}  // namespace stipple
