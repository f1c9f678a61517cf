// `stipple randomness` as a user runs it on the demo, and the bad options it refuses.

#include <filesystem>
#include <fstream>
#include <sstream>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include "support.hpp"

namespace stipple {
namespace {

using test::expect_refused;
using test::run_cli;
using test::sample;
using test::TempDir;

std::string demo(const std::string& extra) {
  return "randomness " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --simulations 199 " + extra;
}

TEST(RandomnessCli, FindsTheDemosClusteringAndRegularity) {
  // The demo's hazel is a Thomas process and its wood-ant nests an inhibition process
  // (sample-plots/generating-values.json).
  const auto r = run_cli(demo("--json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  EXPECT_EQ(doc["simulations"], 199);
  EXPECT_EQ(doc["seed"], 42);
  EXPECT_EQ(doc["alpha"], 0.05);
  int hazel = 0;
  int regular_ants = 0;
  for (const auto& g : doc["results"]) {
    if (g["species"] == "hazel") {
      EXPECT_EQ(g["verdict"], "clustered") << g["plot"];
      ++hazel;
    }
    if (g["species"] == "wood-ant" && g["verdict"] == "regular") ++regular_ants;
  }
  EXPECT_EQ(hazel, 4);
  EXPECT_GE(regular_ants, 1);
}

TEST(RandomnessCli, JsonContractHolds) {
  const auto r = run_cli(demo("--json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  const auto& g = doc["results"][0];
  for (const char* key : {"plot", "species", "n", "quadrat", "clark_evans", "envelope", "verdict"})
    EXPECT_TRUE(g.contains(key)) << key;
  for (const char* key :
       {"nx", "ny", "statistic", "df", "p_upper", "p_lower", "p_value", "monte_carlo_p_value", "dispersion_index"})
    EXPECT_TRUE(g["quadrat"].contains(key)) << key;
  for (const char* key :
       {"mean_distance", "expected_distance", "ratio", "z", "p_value", "edge_correction", "monte_carlo_p_value"})
    EXPECT_TRUE(g["clark_evans"].contains(key)) << key;
  for (const char* key : {"function", "rmax", "simulations", "mad_p_value", "dclf_p_value"})
    EXPECT_TRUE(g["envelope"].contains(key)) << key;
  EXPECT_EQ(g["envelope"]["function"], "L");
  EXPECT_EQ(g["quadrat"]["nx"], 4);
  EXPECT_EQ(g["clark_evans"]["edge_correction"], "donnelly");  // 'north' is a rectangle
  ASSERT_FALSE(doc["interactions"].empty());
  const auto& i = doc["interactions"][0];
  for (const char* key : {"plot", "species_a", "species_b", "test", "p_value", "direction"})
    EXPECT_TRUE(i.contains(key)) << key;
  EXPECT_EQ(i["test"], "random-labelling");
  bool all_species = false;
  for (const auto& x : doc["results"]) all_species |= x["species"].is_null();
  EXPECT_TRUE(all_species);
}

TEST(RandomnessCli, ResultsDoNotDependOnThreads) {
  const auto one = run_cli(demo("--only envelope,clark-evans --threads 1 --json -"));
  const auto two = run_cli(demo("--only envelope,clark-evans --threads 2 --json -"));
  ASSERT_EQ(one.exit_code, 0) << one.err;
  EXPECT_EQ(one.out, two.out);
}

TEST(RandomnessCli, WritesCurvesAndFigures) {
  TempDir out;
  const auto r =
      run_cli(demo("--only envelope --curves " + out.file("curves.csv") + " --figures " + out.file("figures")));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::ifstream curves(out.file("curves.csv"));
  std::string header;
  std::getline(curves, header);
  EXPECT_EQ(header, "plot,species,species_b,function,r,observed,theoretical,low,high,global_low,global_high");
  const auto png = out.file("figures/L-glade-hazel.png");
  const auto svg = out.file("figures/L-glade-hazel.svg");
  ASSERT_TRUE(std::filesystem::exists(png));
  ASSERT_TRUE(std::filesystem::exists(svg));
  std::ifstream p(png, std::ios::binary);
  char magic[4] = {};
  p.read(magic, 4);
  EXPECT_EQ(std::string(magic + 1, 3), "PNG");
  std::ifstream s(svg);
  std::string svg_text((std::istreambuf_iterator<char>(s)), std::istreambuf_iterator<char>());
  EXPECT_NE(svg_text.find("<svg"), std::string::npos);
  EXPECT_GT(std::filesystem::file_size(png), 10000u);  // a drawn figure, not a blank page
}

// --csv: one row per plot x species with every p-value and the verdict (the curves are on --curves).
TEST(RandomnessCli, CsvHasOneRowPerGroupWithEveryPValue) {
  const auto r = run_cli(demo("--csv - --json " + TempDir().file("unused.json")));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::istringstream csv(r.out);
  std::string header;
  std::getline(csv, header);
  EXPECT_EQ(header,
            "plot,species,n,quadrat_statistic,quadrat_df,quadrat_p,quadrat_p_method,clark_evans_ratio,"
            "clark_evans_z,clark_evans_p,clark_evans_p_method,clark_evans_edge_correction,l_rmax,l_mad_p,"
            "l_dclf_p,l_erl_p,l_departures,simulations,verdict,verdict_basis");
  std::size_t rows = 0;
  bool hazel_north = false;
  for (std::string line; std::getline(csv, line);) {
    ++rows;
    if (line.rfind("north,hazel,", 0) == 0) hazel_north = line.find(",clustered,") != std::string::npos;
  }
  EXPECT_EQ(rows, 20u);      // 4 plots x (4 species + all together)
  EXPECT_TRUE(hazel_north);  // the demo's hazel is a Thomas process (generating-values.json)
}

TEST(RandomnessCli, BorderCorrectionsRun) {
  const auto r = run_cli(demo("--only envelope --pair-correction border --distance-correction border --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  EXPECT_EQ(doc["results"][0]["envelope"]["edge_correction"], "border");
  EXPECT_EQ(doc["results"][0]["envelope"]["distance_edge_correction"], "border");
}

TEST(RandomnessCli, TableShowsVerdictsAndCautions) {
  const auto r = run_cli(demo("--only quadrat,clark-evans"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("verdict"), std::string::npos);
  EXPECT_NE(r.out.find("Cautions"), std::string::npos);
}

TEST(RandomnessCliBadInput, BadOptions) {
  expect_refused(run_cli(demo("--quadrats 0x4")), "--quadrats needs between 2 and 10000 cells");
  expect_refused(run_cli(demo("--quadrats four")), "--quadrats must look like 4x4");
  expect_refused(run_cli(demo("--only quadrats")), "--only takes quadrat, clark-evans, envelope");
  expect_refused(run_cli(demo("--rmax -3")), "--rmax: must be a number greater than 0");
  EXPECT_EQ(run_cli(demo("--edge-correction toroidal")).exit_code, 2);
  EXPECT_EQ(run_cli(demo("--pair-correction translation")).exit_code, 2);
  EXPECT_EQ(run_cli(demo("--distance-correction hanisch")).exit_code, 2);
  expect_refused(
      run_cli("randomness " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --simulations 0"),
      "--simulations 0 leaves no envelope");
  expect_refused(run_cli("randomness " + sample("reserve.gpkg")), "needs the surveyed area");
}

}  // namespace
}  // namespace stipple
