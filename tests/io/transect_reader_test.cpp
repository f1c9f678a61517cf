// load_transects on the demo transect survey, against GDAL/OGR's own reading of the file
// (feature counts, line lengths): the reference library for the format.

#include "stipple/io/transect_reader.hpp"

#include <gdal_priv.h>
#include <gtest/gtest.h>
#include <ogrsf_frmts.h>

#include <map>
#include <memory>

#include "stipple/error.hpp"
#include "support.hpp"

namespace stipple {
namespace {

using test::sample;

TransectReadOptions demo() {
  TransectReadOptions o;
  o.sightings = SourceSpec{sample("transects.gpkg"), std::string("sightings")};
  o.lines = SourceSpec{sample("transects.gpkg"), std::string("lines")};
  o.distance_field = "distance";
  o.size_field = "size";
  return o;
}

TEST(TransectReader, TransectsEffortAndSightingsMatchOgr) {
  const LoadedTransects t = load_transects(demo());
  std::unique_ptr<GDALDataset, void (*)(GDALDataset*)> ds(
      static_cast<GDALDataset*>(
          GDALOpenEx(sample("transects.gpkg").c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr)),
      [](GDALDataset* d) { GDALClose(d); });
  ASSERT_TRUE(ds);
  OGRLayer* lines = ds->GetLayerByName("lines");
  // Line length per transect id, in the file's own projected CRS (UTM, metres), by OGR.
  std::map<std::string, double> km;
  lines->ResetReading();
  for (auto& f : *lines)
    km[f->GetFieldAsString("transect")] += f->GetGeometryRef()->toLineString()->get_Length() / 1000.0;
  ASSERT_EQ(t.survey.transects().size(), km.size());
  for (const auto& unit : t.survey.transects()) {
    ASSERT_TRUE(km.count(unit.id)) << unit.id;
    EXPECT_NEAR(unit.effort, km[unit.id], 1e-9) << unit.id;  // one visit each
  }
  EXPECT_EQ(static_cast<std::int64_t>(t.survey.observations().size()),
            ds->GetLayerByName("sightings")->GetFeatureCount(TRUE));
  for (const auto& o : t.survey.observations()) {
    EXPECT_GE(o.distance_m, 0.0);
    EXPECT_GE(o.size, 1.0);
    EXPECT_LT(o.transect, t.survey.transects().size());
  }
  EXPECT_EQ(t.crs.code, "EPSG:32630");
  EXPECT_FALSE(t.transects_label.empty());
}

TEST(TransectReader, RefusesDistancesBeyondTheOffsetNamingTheParameter) {
  TransectReadOptions o = demo();
  o.max_offset_m = 1.0;  // every recorded distance of the demo is larger
  try {
    static_cast<void>(load_transects(o));
    FAIL() << "a 1 m offset was accepted";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("more than max_offset_m 1 m"), std::string::npos) << e.what();
    EXPECT_EQ(e.parameters(), std::vector<std::string>{"max_offset_m"});
  }
  TransectReadOptions both = demo();
  both.stations = both.lines;
  EXPECT_THROW(static_cast<void>(load_transects(both)), InputError);
}

}  // namespace
}  // namespace stipple
