// inspect_source on the demo survey, against what GDAL/OGR itself reports for the same
// file (the reference library for the format).

#include "stipple/io/inspect.hpp"

#include <gdal_priv.h>
#include <gtest/gtest.h>
#include <ogrsf_frmts.h>

#include <map>
#include <memory>
#include <numeric>

#include "stipple/error.hpp"
#include "support.hpp"

namespace stipple {
namespace {

using test::sample;

TEST(Inspect, LayersCountsFieldsAndCrsMatchOgr) {
  const std::string path = sample("reserve.gpkg");
  const SourceSummary s = inspect_source(path, InspectOptions{});
  EXPECT_EQ(s.driver, "GPKG");
  std::unique_ptr<GDALDataset, void (*)(GDALDataset*)> ds(
      static_cast<GDALDataset*>(GDALOpenEx(path.c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr)),
      [](GDALDataset* d) { GDALClose(d); });
  ASSERT_TRUE(ds);
  ASSERT_EQ(static_cast<int>(s.layers.size()), ds->GetLayerCount());
  for (const auto& layer : s.layers) {
    OGRLayer* ogr = ds->GetLayerByName(layer.name.c_str());
    ASSERT_NE(ogr, nullptr) << layer.name;
    EXPECT_EQ(layer.feature_count, ogr->GetFeatureCount(TRUE)) << layer.name;
    EXPECT_EQ(static_cast<int>(layer.fields.size()), ogr->GetLayerDefn()->GetFieldCount()) << layer.name;
    EXPECT_EQ(layer.crs, "EPSG:32630") << layer.name;
    EXPECT_TRUE(layer.read_error.empty()) << layer.read_error;
  }
}

TEST(Inspect, SpeciesCountsAddUpAndPlotAreasAreMeasured) {
  const SourceSummary s = inspect_source(sample("reserve.gpkg"), InspectOptions{});
  for (const auto& layer : s.layers) {
    if (layer.name == "sightings") {
      ASSERT_TRUE(layer.species_counts);
      const auto total = std::accumulate(layer.species_counts->begin(), layer.species_counts->end(), std::int64_t{0},
                                         [](std::int64_t a, const auto& kv) { return a + kv.second; });
      EXPECT_EQ(total, layer.feature_count);  // every sighting has a species
      EXPECT_EQ(layer.species_counts->size(), 4u);
    } else if (layer.name == "plots") {
      ASSERT_EQ(layer.plots.size(), 4u);
      for (const auto& p : layer.plots) {
        EXPECT_TRUE(p.valid) << p.id;
        EXPECT_GT(p.area_m2, 5000.0) << p.id;  // the demo plots are 0.96 to 2 ha
        EXPECT_LT(p.area_m2, 25000.0) << p.id;
      }
      EXPECT_LT(layer.max_area_error, 1e-3);  // UTM areas within 0.1% of geodesic: kept
      EXPECT_EQ(layer.area_crs, "EPSG:32630");
    }
  }
}

TEST(Inspect, RefusesWhatCannotBeOpened) {
  EXPECT_THROW(static_cast<void>(inspect_source("/nonexistent/none.gpkg", InspectOptions{})), InputError);
  const auto shapes = layer_shapes(sample("transects.gpkg"));
  ASSERT_EQ(shapes.size(), 3u);
  std::map<std::string, GeometryFamily> family;
  for (const auto& l : shapes) family[l.name] = l.family;
  EXPECT_EQ(family["lines"], GeometryFamily::line);
  EXPECT_EQ(family["sightings"], GeometryFamily::point);
  EXPECT_EQ(family["study_area"], GeometryFamily::polygon);
}

}  // namespace
}  // namespace stipple
