#include "stipple/report/density_report.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

namespace stipple {
namespace {

// A report from results that did not come from a file: the facts and the survey by hand.
struct Tiny {
  InputFacts input;
  Survey survey;
};

Tiny tiny_survey() {
  Tiny s;
  s.input.crs = AnalysisCrs{"EPSG:32630", "WGS 84 / UTM zone 30N", "given by the user", "", 0.0};
  s.input.sightings_label = "s.gpkg: layer 'stems'";
  s.input.plots_label = "p.gpkg: layer 'plots'";
  std::vector<Sighting> sightings;
  for (int i = 0; i < 31; ++i) sightings.push_back(Sighting{{1.0 + i, 50.0}, i + 1, "oak", std::nullopt});
  s.survey = assign_to_plots(sightings, {Plot{"P1", Window::rectangle(0, 0, 100, 100)}});
  return s;
}

TEST(DensityJson, CarriesTheContractKeysAndValues) {
  const Tiny s = tiny_survey();
  DensityOptions options;
  options.detection = DetectionTable::uniform(Detection{0.8, 0.0});
  const auto doc = nlohmann::json::parse(density_json(s.input, s.survey, estimate_density(s.survey, options)));
  EXPECT_EQ(doc["crs"], "EPSG:32630");
  EXPECT_EQ(doc["unit"], "ha");
  const auto& e = doc["estimates"][0];
  EXPECT_EQ(e["plot"], "P1");
  EXPECT_EQ(e["species"], "oak");
  EXPECT_EQ(e["count"], 31);
  EXPECT_NEAR(e["area"].get<double>(), 1.0, 1e-12);
  // Source: REFERENCES.md sections 1 and 9.
  EXPECT_NEAR(e["ci"][0].get<double>(), 21.062996, 1e-6);
  EXPECT_NEAR(e["corrected_ci"][1].get<double>(), 55.002532, 1e-6);
  EXPECT_EQ(e["detection_probability"], 0.8);
  EXPECT_TRUE(doc["estimates"][1]["species"].is_null());
  EXPECT_TRUE(doc["pooled"][0]["homogeneity"].is_null());
  EXPECT_EQ(doc["excluded"]["outside_plots"], 0);
}

TEST(DensityTable, ShowsCautions) {
  const Tiny s = tiny_survey();
  const std::string table = density_table(s.input, s.survey, estimate_density(s.survey, DensityOptions{}));
  EXPECT_NE(table.find("P1"), std::string::npos);
  EXPECT_NE(table.find("s.gpkg: layer 'stems'"), std::string::npos);
  EXPECT_NE(table.find("EPSG:32630 (WGS 84 / UTM zone 30N), given by the user"), std::string::npos);
  EXPECT_NE(table.find("local agency"), std::string::npos);
}

}  // namespace
}  // namespace stipple
