// The inspect report from a summary built by hand: every layer's facts and the warnings a
// damaged file must show.

#include "stipple/report/inspect_report.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

namespace stipple {
namespace {

SourceSummary by_hand() {
  SourceSummary s;
  s.path = "season/north.shp";
  s.driver = "ESRI Shapefile";
  LayerSummary l;
  l.name = "north";
  l.geometry_type = "Point";
  l.feature_count = 95;
  l.declared_count = 120;  // a truncated .dbf
  l.crs = "EPSG:32630";
  l.crs_name = "WGS 84 / UTM zone 30N";
  l.fields = {{"species", "String"}, {"plot", "String"}};
  l.species_counts = std::map<std::string, std::int64_t>{{"birch", 60}, {"hazel", 35}};
  l.undecodable_values = 3;
  s.layers.push_back(l);
  return s;
}

TEST(InspectReport, TableShowsEachLayersFactsAndWarnsOfDamage) {
  const std::string table = inspect_table(by_hand());
  for (const char* part :
       {"season/north.shp (ESRI Shapefile), 1 layer(s)", "layer 'north': Point", "95", "WGS 84 / UTM zone 30N",
        "species (String)", "birch", "60", "WARNING: the header declares 120 features but 95"})
    EXPECT_NE(table.find(part), std::string::npos) << part << "\n" << table;
  EXPECT_NE(table.find("3 text value(s) are not valid UTF-8"), std::string::npos) << table;
}

TEST(InspectReport, JsonHoldsTheSameFacts) {
  const auto doc = nlohmann::json::parse(inspect_json(by_hand()));
  EXPECT_EQ(doc["path"], "season/north.shp");
  ASSERT_EQ(doc["layers"].size(), 1u);
  const auto& l = doc["layers"][0];
  EXPECT_EQ(l["name"], "north");
  EXPECT_EQ(l["feature_count"], 95);
  EXPECT_EQ(l["declared_feature_count"], 120);
  EXPECT_EQ(l["undecodable_values"], 3);
  EXPECT_EQ(l["species_counts"]["hazel"], 35);
}

}  // namespace
}  // namespace stipple
