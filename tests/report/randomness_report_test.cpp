// The randomness report transcribes a result faithfully: a result built by hand (no file,
// no simulation) comes out in the table, the JSON contract (README "JSON output") and the
// CSV with its own values and labels.

#include "stipple/report/randomness_report.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <string>

namespace stipple {
namespace {

struct Case {
  InputFacts input;
  RandomnessResult result;
};

Case by_hand() {
  Case c;
  c.input.crs = AnalysisCrs{"EPSG:32630", "WGS 84 / UTM zone 30N", "given by the user", "", 2e-5};
  c.input.sightings_label = "mounds.gpkg: layer 'mounds'";
  c.input.plots_label = "pasture.gpkg: layer 'paddocks'";
  c.input.notes = {"a note of the reading"};
  c.result.simulations = 199;
  c.result.seed = 7;
  c.result.alpha = 0.05;
  GroupResult g;
  g.plot = "east paddock";
  g.species = "meadow ant";
  g.n = 48;
  g.simulations_run = 199;
  QuadratResult q;
  q.nx = q.ny = 4;
  q.cells_used = 16;
  q.chi_square.statistic = 11.5;
  q.chi_square.df = 15;
  q.p_value = 0.4321;
  g.quadrat = q;
  ClarkEvansResult ce;
  ce.n = 48;
  ce.ratio = 1.3127;
  ce.mean_distance = 4.2;
  ce.z = 3.9;
  ce.p_value = 0.0001;
  ce.normal_p_value = 0.0001;
  ce.edge_correction = NeighbourEdgeCorrection::donnelly;
  g.clark_evans = ce;
  g.verdict = "regular";
  g.verdict_basis = "Clark-Evans";
  c.result.results.push_back(g);
  return c;
}

TEST(RandomnessReport, JsonCarriesTheResultsOwnValuesUnderTheContractKeys) {
  const Case c = by_hand();
  const auto doc = nlohmann::json::parse(randomness_json(c.input, c.result));
  EXPECT_EQ(doc["command"], "randomness");
  EXPECT_EQ(doc["crs"], "EPSG:32630");
  EXPECT_EQ(doc["simulations"], 199);
  EXPECT_EQ(doc["seed"], 7);
  EXPECT_EQ(doc["sightings"], "mounds.gpkg: layer 'mounds'");
  EXPECT_EQ(doc["plots"], "pasture.gpkg: layer 'paddocks'");
  ASSERT_EQ(doc["results"].size(), 1u);
  const auto& r = doc["results"][0];
  EXPECT_EQ(r["plot"], "east paddock");
  EXPECT_EQ(r["species"], "meadow ant");
  EXPECT_EQ(r["n"], 48);
  EXPECT_EQ(r["clark_evans"]["ratio"], 1.3127);
  EXPECT_EQ(r["quadrat"]["statistic"], 11.5);
  EXPECT_TRUE(r["envelope"].is_null());  // it did not run
  EXPECT_EQ(r["verdict"], "regular");
  EXPECT_EQ(doc["notes"][0], "a note of the reading");
  EXPECT_FALSE(doc["cautions"].empty());
}

TEST(RandomnessReport, TableAndCsvShowTheValuesAndExplainTheirAbbreviations) {
  const Case c = by_hand();
  const std::string table = randomness_table(c.input, c.result);
  for (const char* part :
       {"east paddock", "meadow ant", "1.313", "regular", "donnelly", "199 CSR simulations", "CE = Clark-Evans",
        "MAD = maximum absolute deviation", "DCLF = Diggle-Cressie-Loosmore-Ford", "a note of the reading", "Cautions"})
    EXPECT_NE(table.find(part), std::string::npos) << part << "\n" << table;
  const std::string csv = randomness_csv(c.result);
  const std::string header = csv.substr(0, csv.find('\n'));
  EXPECT_EQ(header.rfind("plot,species,n,", 0), 0u) << header;
  EXPECT_NE(csv.find("east paddock,meadow ant,48,"), std::string::npos) << csv;
  EXPECT_NE(csv.find("1.3127"), std::string::npos) << csv;
}

TEST(RandomnessReport, TheHeaderSaysWhenNoTestNeededSimulations) {
  Case c = by_hand();
  c.result.results[0].simulations_run = 0;
  const std::string table = randomness_table(c.input, c.result);
  EXPECT_EQ(table.find("199 CSR simulations"), std::string::npos) << table;
  EXPECT_NE(table.find("no CSR simulations were needed"), std::string::npos) << table;
  EXPECT_EQ(nlohmann::json::parse(randomness_json(c.input, c.result))["results"][0]["simulations_run"], 0);
}

}  // namespace
}  // namespace stipple
