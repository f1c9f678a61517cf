// The season report from typed rows built by hand: sections present only when their
// analysis ran, unique ids, the methods paragraph from the run facts, references cited.

#include "stipple/report/season_report.hpp"

#include <gtest/gtest.h>

#include <regex>
#include <set>

namespace stipple {
namespace {

SeasonReport density_only() {
  SeasonReport r;
  r.run.version = "0.1.0";
  r.run.density = true;
  r.run.unit = "ha";
  r.run.confidence = 0.9;
  r.run.crs = "EPSG:32630";
  r.run.detection = "none (p = 1 for every species)";
  r.inputs.push_back({"north.gpkg", "", "plots", "EPSG:32630", "ok", "", "ab12", {}});
  r.inputs.push_back({"broken.gpkg", "", "unknown", "", "failed", "cannot be read", "cd34", {}});
  DensityEstimate e;
  e.plot = "north";
  e.species = "birch";
  e.count = 81;
  e.area_in_unit = 1.0;
  e.intensity = 81.0;
  e.ci = {66.3, 97.6};
  r.densities.push_back({"north.gpkg", e});
  return r;
}

TEST(SeasonReport, ShowsWhatRanAndOnlyThat) {
  const std::string html = season_report_html(density_only(), [](const std::string&) { return std::string(); });
  for (const char* part : {"north.gpkg", "broken.gpkg", "cannot be read", "birch", "81", "90%", "(per ha)", "Garwood",
                           "EPSG:32630", "Methods"})
    EXPECT_NE(html.find(part), std::string::npos) << part;
  // No randomness or transect analysis ran: neither their sections nor their references.
  EXPECT_EQ(html.find("Clark"), std::string::npos);
  EXPECT_EQ(html.find("Buckland"), std::string::npos);
  std::set<std::string> ids;
  static const std::regex id(R"re(\bid="([^"]+)")re");
  for (auto it = std::sregex_iterator(html.begin(), html.end(), id); it != std::sregex_iterator(); ++it)
    EXPECT_TRUE(ids.insert((*it)[1].str()).second) << "duplicate id " << (*it)[1].str();
  EXPECT_FALSE(ids.empty());
}

}  // namespace
}  // namespace stipple
