// Covariate rasters read through GDAL: cells as stored, no data as NaN, reprojection by
// nearest neighbour checked against PROJ's own transformation, and the refusals.

#include "stipple/io/covariate_reader.hpp"

#include <cmath>
#include <functional>

#include <gdal_priv.h>
#include <gtest/gtest.h>
#include <ogr_spatialref.h>

#include "stipple/error.hpp"
#include "support.hpp"

namespace stipple {
namespace {

using test::TempDir;

std::string wkt_of(int epsg) {
  OGRSpatialReference srs;
  srs.importFromEPSG(epsg);
  char* text = nullptr;
  srs.exportToWkt(&text);
  std::string out(text);
  CPLFree(text);
  return out;
}

AnalysisCrs utm30() {
  return AnalysisCrs{"EPSG:32630", "WGS 84 / UTM zone 30N", "test", wkt_of(32630), 0.0};
}

// Writes a Float32 GeoTIFF; `value(column, row)`; epsg 0: no CRS.
std::string write_tiff(const TempDir& dir, const std::string& name, int epsg, const double gt[6], int columns, int rows,
                       const std::function<double(int, int)>& value, std::optional<double> nodata = {}) {
  GDALAllRegister();
  const std::string path = dir.file(name);
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GTiff");
  GDALDataset* ds = driver->Create(path.c_str(), columns, rows, 1, GDT_Float32, nullptr);
  double copy[6];
  std::copy(gt, gt + 6, copy);
  ds->SetGeoTransform(copy);
  if (epsg != 0) {
    OGRSpatialReference srs;
    srs.importFromEPSG(epsg);
    ds->SetSpatialRef(&srs);
  }
  std::vector<float> data(static_cast<std::size_t>(columns) * static_cast<std::size_t>(rows));
  for (int r = 0; r < rows; ++r)
    for (int c = 0; c < columns; ++c) data[static_cast<std::size_t>(r * columns + c)] = static_cast<float>(value(c, r));
  GDALRasterBand* band = ds->GetRasterBand(1);
  if (nodata) band->SetNoDataValue(*nodata);
  EXPECT_EQ(band->RasterIO(GF_Write, 0, 0, columns, rows, data.data(), columns, rows, GDT_Float32, 0, 0), CE_None);
  GDALClose(ds);
  return path;
}

TEST(RasterReader, ReadsTheCellsAroundTheSurveyAsStored) {
  TempDir dir;
  // 10 m cells from (500000, 6300000) down; value = 1000 row + column; -9999 no data.
  const double gt[6] = {500000.0, 10.0, 0.0, 6300000.0, 0.0, -10.0};
  const std::string path = write_tiff(
      dir, "z.tif", 32630, gt, 200, 100, [](int c, int r) { return c == 55 && r == 40 ? -9999.0 : 1000.0 * r + c; },
      -9999.0);
  const Bounds area{500300.0, 6299400.0, 500700.0, 6299700.0};
  const CovariateRaster raster = read_covariate_raster(path, utm30(), area);
  EXPECT_FALSE(raster.reprojected);
  EXPECT_TRUE(raster.notes.empty());
  EXPECT_EQ(raster.source_crs, "EPSG:32630");
  // Only the cells over the area and one to spare are read.
  EXPECT_EQ(raster.grid.x_min, 500290.0);
  EXPECT_EQ(raster.grid.y_max, 6299710.0);
  EXPECT_EQ(raster.grid.columns, 42u);
  EXPECT_EQ(raster.grid.rows, 32u);
  // The cell holding (500345, 6299585): column 34, row 41 of the file.
  EXPECT_EQ(raster.grid.value_at({500345.0, 6299585.0}), 41034.0);
  EXPECT_EQ(raster.grid.value_at({500300.0, 6299600.0}), 40030.0);       // corner: GDAL's floor rule
  EXPECT_TRUE(std::isnan(raster.grid.value_at({500555.0, 6299595.0})));  // no data (column 55, row 40)
}

TEST(RasterReader, ReprojectsByNearestNeighbourAgreeingWithProj) {
  TempDir dir;
  // A lon/lat raster over the area, 0.0002 degree cells; values constant in blocks of
  // 10 x 10 cells, so a point near a block's centre must take that block's value.
  const double gt[6] = {-3.01, 0.0002, 0.0, 56.76, 0.0, -0.0002};
  const auto block = [](int c, int r) { return 100.0 * (r / 10) + (c / 10); };
  const std::string path = write_tiff(dir, "lonlat.tif", 4326, gt, 300, 300, block);
  const Bounds area{500300.0, 6289500.0, 501500.0, 6290500.0};
  const CovariateRaster raster = read_covariate_raster(path, utm30(), area);
  EXPECT_TRUE(raster.reprojected);
  EXPECT_EQ(raster.source_crs, "EPSG:4326");
  ASSERT_EQ(raster.notes.size(), 1u);
  EXPECT_NE(raster.notes[0].find("nearest-neighbour"), std::string::npos);
  // Reference: PROJ's transformation of block centres from lon/lat to UTM 30N.
  OGRSpatialReference ll;
  ll.importFromEPSG(4326);
  ll.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  OGRSpatialReference utm;
  utm.importFromEPSG(32630);
  utm.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  auto* ct = OGRCreateCoordinateTransformation(&ll, &utm);
  int checked = 0;
  for (int br = 0; br < 30; ++br) {
    for (int bc = 0; bc < 30; ++bc) {
      double x = gt[0] + (bc * 10 + 5) * gt[1];
      double y = gt[3] + (br * 10 + 5) * gt[5];
      ASSERT_TRUE(ct->Transform(1, &x, &y));
      if (x < area.xmin || x > area.xmax || y < area.ymin || y > area.ymax) continue;
      EXPECT_EQ(raster.grid.value_at({x, y}), block(bc * 10, br * 10)) << x << " " << y;
      ++checked;
    }
  }
  OGRCoordinateTransformation::DestroyCT(ct);
  EXPECT_GT(checked, 20);
}

TEST(RasterReader, RefusesWhatCannotBePlaced) {
  TempDir dir;
  const double gt[6] = {500000.0, 10.0, 0.0, 6300000.0, 0.0, -10.0};
  const std::string no_crs = write_tiff(dir, "nocrs.tif", 0, gt, 10, 10, [](int, int) { return 1.0; });
  const Bounds area{500010.0, 6299910.0, 500050.0, 6299950.0};
  const auto refused = [&](const std::string& path, const Bounds& b, const std::string& part) {
    try {
      (void)read_covariate_raster(path, utm30(), b);
      ADD_FAILURE() << path << " accepted";
    } catch (const InputError& e) {
      EXPECT_NE(std::string(e.what()).find(part), std::string::npos) << e.what();
      EXPECT_NE(std::string(e.what()).find(path), std::string::npos) << e.what();
    }
  };
  refused(no_crs, area, "has no CRS");
  refused(dir.write("notes.txt", "not a raster\n"), area, "not a raster GDAL can read");
  refused(dir.file("missing.tif"), area, "no such file");
  const std::string far = write_tiff(dir, "far.tif", 32630, gt, 10, 10, [](int, int) { return 1.0; });
  refused(far, Bounds{600000.0, 6100000.0, 600100.0, 6100100.0}, "does not overlap the survey");
}

}  // namespace
}  // namespace stipple
