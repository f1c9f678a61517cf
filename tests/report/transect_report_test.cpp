// The transect report: a survey simulated in code (no file) with a half-normal detection
// function, analysed, and its table, JSON and CSV checked for the result's own values, the
// interval's level, the units and the explained abbreviations.

#include "stipple/report/transect_report.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <boost/random/normal_distribution.hpp>
#include <cmath>
#include <string>

#include "stipple/simulate/engine.hpp"

namespace stipple {
namespace {

struct Case {
  InputFacts input;
  TransectSurvey survey;
  TransectResult result;
};

Case simulated() {
  Case c;
  c.input.crs = AnalysisCrs{"EPSG:32630", "WGS 84 / UTM zone 30N", "given by the user", "", 0.0};
  c.input.sightings_label = "hares.gpkg: layer 'sightings'";
  c.input.transects_label = "hares.gpkg: layer 'lines'";
  std::vector<TransectUnit> lines;
  std::vector<TransectObservation> observations;
  for (int t = 0; t < 8; ++t) lines.push_back({"L" + std::to_string(t), std::nullopt, 2.0});
  Engine engine(derive_seed(3, seed_key({"transect-report-test"})));
  boost::random::normal_distribution<double> distance(0.0, 40.0);  // half-normal, sigma 40 m
  for (int i = 0; i < 160; ++i)
    observations.push_back({static_cast<std::size_t>(i % 8), std::abs(distance(engine)), 1.0, "hare"});
  c.survey = TransectSurvey(TransectKind::line, std::move(lines), std::move(observations));
  TransectOptions o;
  o.keys = {KeyFunction::half_normal};
  o.adjustments = {Adjustment::none};
  c.result = analyse_transects(c.survey, o);
  return c;
}

TEST(TransectReport, JsonTableAndCsvCarryTheResultWithUnitsAndLevel) {
  const Case c = simulated();
  ASSERT_FALSE(c.result.results.empty());
  const TransectEstimate& e = c.result.results.front();
  const auto doc = nlohmann::json::parse(transect_json(c.input, c.result));
  EXPECT_EQ(doc["crs"], "EPSG:32630");
  ASSERT_FALSE(doc["results"].empty());
  EXPECT_EQ(doc["results"][0]["n"], e.n);
  EXPECT_EQ(doc["results"][0]["density"], e.density);
  EXPECT_EQ(doc["results"][0]["density_ci"][0], e.density_ci.lower);
  EXPECT_EQ(doc["results"][0]["model"], "half-normal");
  const std::string table = transect_table(c.input, c.survey, c.result);
  for (const char* part : {"hares.gpkg: layer 'lines'", "km2", "95%", "P_a", "E(s)", "half-normal", "Cautions"})
    EXPECT_NE(table.find(part), std::string::npos) << part << "\n" << table;
  const std::string csv = transect_csv(c.result);
  EXPECT_NE(csv.substr(0, csv.find('\n')).find("density"), std::string::npos) << csv;
  // Effective strip width of a half-normal: sigma sqrt(pi / 2) = 50.1 m for sigma 40 m
  // (Buckland et al. 2001, from memory); the fit of 160 distances is within 15%.
  EXPECT_NEAR(e.fit.effective_strip_width_m, 40.0 * std::sqrt(std::acos(-1.0) / 2.0), 7.5);
}

TEST(TransectReport, FiguresHoldTheDetectionFunctionAndItsQQPlotWithTitles) {
  const Case c = simulated();
  const auto files = transect_figures(c.survey, c.result);
  bool detection = false;
  bool qq = false;
  for (const auto& f : files) {
    if (f.name == "figures.csv") continue;
    EXPECT_FALSE(f.title.empty()) << f.name;
    detection = detection || f.name.rfind("detection-", 0) == 0;
    qq = qq || f.name.rfind("qq-", 0) == 0;
    if (f.name.size() > 4 && f.name.substr(f.name.size() - 4) == ".svg") {
      EXPECT_NE(f.content.find("<svg"), std::string::npos) << f.name;
    }
  }
  EXPECT_TRUE(detection);
  EXPECT_TRUE(qq);
}

}  // namespace
}  // namespace stipple
