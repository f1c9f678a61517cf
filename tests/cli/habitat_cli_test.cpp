// `stipple habitat` as a user runs it on the demo, its JSON contract, and the refusals.

#include <fstream>
#include <map>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include "support.hpp"

namespace stipple {
namespace {

using test::expect_refused;
using test::run_cli;
using test::sample;
using test::TempDir;

std::string habitat(const std::string& layer, const std::string& plots_layer, const std::string& extra) {
  const std::string gpkg = sample("habitat/habitat.gpkg");
  return "habitat " + gpkg + " --layer " + layer + " --plots " + gpkg + " --plots-layer " + plots_layer + " " + extra;
}

std::string moisture() {
  return "--covariate moisture=" + sample("habitat/moisture.tif");
}

// Most tests need no simulations of the fitted model (they take most of a run's time).
const std::string no_sims = " --simulations 0";

nlohmann::json truth() {
  std::ifstream file(sample("habitat/generating-values.json"));
  return nlohmann::json::parse(file);
}

const nlohmann::json& model(const nlohmann::json& doc, const std::string& species) {
  for (const auto& m : doc["models"])
    if (m["species"] == species) return m;
  throw std::runtime_error("no model for " + species);
}

TEST(HabitatCli, DemoRecoversTheGeneratingCoefficientsOfTheSedge) {
  const auto r = run_cli(habitat("sightings", "plots", moisture() + no_sims + " --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  const auto generating = truth()["plot_species"]["sedge"]["log_intensity_per_ha"];
  const auto& sedge = model(doc, "sedge");
  ASSERT_EQ(sedge["coefficients"].size(), 2u);
  for (const auto& c : sedge["coefficients"]) {
    const double t = generating[c["term"].get<std::string>()].get<double>();
    EXPECT_LE(c["ci"][0].get<double>(), t) << c;
    EXPECT_GE(c["ci"][1].get<double>(), t) << c;
  }
  // The orchid does not follow moisture in the generator.
  const auto& orchid = model(doc, "orchid");
  EXPECT_LT(std::abs(orchid["coefficients"][1]["estimate"].get<double>()), 0.03);
}

TEST(HabitatCli, JsonContractHolds) {
  const auto r = run_cli(habitat("sightings", "plots", moisture() + no_sims + " --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  EXPECT_EQ(doc["crs"], "EPSG:32630");
  EXPECT_EQ(doc["unit"], "ha");
  EXPECT_EQ(doc["confidence"], 0.95);
  EXPECT_EQ(doc["slopes"], "separate");
  ASSERT_EQ(doc["models"].size(), 3u);  // orchid, sedge, all together
  EXPECT_TRUE(doc["models"][2]["species"].is_null());
  for (const auto& m : doc["models"]) {
    for (const char* key : {"species", "n", "log_likelihood", "aic", "coefficients", "term_tests"})
      EXPECT_TRUE(m.contains(key)) << key;
    EXPECT_EQ(m["coefficients"][0]["term"], "(intercept)");
    const auto& slope = m["coefficients"][1];
    for (const char* key : {"term", "estimate", "se", "ci", "z", "p_value", "rate_ratio", "bias"})
      EXPECT_TRUE(slope.contains(key)) << key;
    EXPECT_NEAR(slope["rate_ratio"].get<double>(), std::exp(slope["estimate"].get<double>()), 1e-12);
    EXPECT_EQ(slope["bias"], false);
    const auto& test = m["term_tests"][0];
    EXPECT_EQ(test["term"], "moisture");
    EXPECT_EQ(test["df"], 1);
    for (const char* key : {"statistic", "p_value"}) EXPECT_TRUE(test.contains(key)) << key;
    // AIC = -2 log L + 2 k, two coefficients.
    EXPECT_NEAR(m["aic"].get<double>(), -2.0 * m["log_likelihood"].get<double>() + 4.0, 1e-9);
  }
  ASSERT_EQ(doc["covariate_tests"].size(), 3u);
  for (const auto& t : doc["covariate_tests"])
    for (const char* key : {"species", "covariate", "z1", "z1_p_value", "ks_statistic", "ks_p_value"})
      EXPECT_TRUE(t.contains(key)) << key;
  EXPECT_TRUE(doc["slope_test"].is_object());
  EXPECT_FALSE(doc["cautions"].empty());
}

TEST(HabitatCli, TableCsvAndSharedSlopes) {
  const auto table = run_cli(habitat("sightings", "plots", moisture() + no_sims));
  ASSERT_EQ(table.exit_code, 0) << table.err;
  EXPECT_NE(table.out.find("Species sedge"), std::string::npos);
  EXPECT_NE(table.out.find("Cautions"), std::string::npos);
  const auto csv = run_cli(habitat("sightings", "plots", moisture() + no_sims + " --csv -"));
  ASSERT_EQ(csv.exit_code, 0) << csv.err;
  EXPECT_EQ(csv.out.rfind("kind,species,term,covariate,estimate,se,ci_low,ci_high,z,p_value", 0), 0u);
  const auto shared = run_cli(habitat("sightings", "plots", moisture() + no_sims + " --slopes shared --json -"));
  ASSERT_EQ(shared.exit_code, 0) << shared.err;
  const auto doc = nlohmann::json::parse(shared.out);
  EXPECT_EQ(doc["slopes"], "shared");
  ASSERT_EQ(doc["models"].size(), 1u);
  EXPECT_EQ(doc["models"][0]["coefficients"].size(), 3u);  // two intercepts, one slope
  EXPECT_EQ(doc["models"][0]["coefficients"][1]["species"], "sedge");
}

TEST(HabitatCli, FactorStatesItsReferenceClass) {
  const auto r = run_cli(habitat("opportunistic", "compartment",
                                 "--factor landcover=" + sample("habitat/landcover.tif") + no_sims + " --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  EXPECT_EQ(doc["covariates"][0]["kind"], "factor");
  EXPECT_EQ(doc["covariates"][0]["reference_class"], 2.0);
  EXPECT_EQ(doc["models"][0]["coefficients"][1]["term"], "landcover=1");
}

TEST(HabitatCli, ThinnedObserverPatternIsCorrectedByTheDistanceToPaths) {
  // The generator's adders: log intensity per ha log(10) + log(2.5) on heath (class 2),
  // reported with probability exp(-d / 40 m). With the distance to the paths as a bias term
  // the intercept (heath, at the path) and both slopes must cover the truth; without it the
  // intercept is the reported intensity, far below the true one.
  const std::string cover = "--factor landcover=" + sample("habitat/landcover.tif");
  const std::string gpkg = sample("habitat/habitat.gpkg");
  const auto r =
      run_cli(habitat("opportunistic", "compartment", cover + " --bias-distance path=" + gpkg + ",paths --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  const auto t = truth()["opportunistic"];
  const double heath = t["log_intensity_per_ha"]["(intercept)"].get<double>() +
                       t["log_intensity_per_ha"]["landcover=2 (heath)"].get<double>();
  const std::map<std::string, double> expected{
      {"(intercept)", heath},
      {"landcover=1", -t["log_intensity_per_ha"]["landcover=2 (heath)"].get<double>()},
      {"landcover=3", -t["log_intensity_per_ha"]["landcover=2 (heath)"].get<double>()},
      {"path", t["reporting"]["path_distance_slope_per_m"].get<double>()}};
  const auto& coefficients = doc["models"][0]["coefficients"];
  ASSERT_EQ(coefficients.size(), 4u);
  for (const auto& c : coefficients) {
    const double v = expected.at(c["term"].get<std::string>());
    EXPECT_LE(c["ci"][0].get<double>(), v) << c;
    EXPECT_GE(c["ci"][1].get<double>(), v) << c;
  }
  EXPECT_EQ(coefficients[3]["bias"], true);
  EXPECT_EQ(coefficients[3]["bias_reference"], 0.0);
  EXPECT_EQ(doc["quadrature"]["spacing_m"], 10.0);
  EXPECT_LT(doc["quadrature"]["largest_change_in_se"].get<double>(), 0.1);
  const auto naive = run_cli(habitat("opportunistic", "compartment", cover + no_sims + " --json -"));
  ASSERT_EQ(naive.exit_code, 0) << naive.err;
  EXPECT_LT(nlohmann::json::parse(naive.out)["models"][0]["coefficients"][0]["ci"][1].get<double>(), heath - 1.0);
}

TEST(HabitatCli, SurfacesAndAbundanceInManagementUnits) {
  // The adders corrected for reporting: the expected number in each plot must cover the
  // true mean, 25 per ha on heath and 10 per ha elsewhere (the generator's values), which for
  // the all-heath 'slope' plot is 25 x 6.25 = 156.25.
  TempDir dir;
  const std::string gpkg = sample("habitat/habitat.gpkg");
  const auto r = run_cli(habitat("opportunistic", "compartment",
                                 "--factor landcover=" + sample("habitat/landcover.tif") +
                                     " --bias-distance path=" + gpkg + ",paths --abundance " + gpkg +
                                     " --abundance-layer plots --surface " + dir.file("maps") + no_sims + " --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  ASSERT_EQ(doc["abundance"].size(), 3u);
  bool found = false;
  for (const auto& a : doc["abundance"]) {
    if (a["unit"] != "slope") continue;
    found = true;
    EXPECT_NEAR(a["area"].get<double>(), 6.25, 1e-9);
    EXPECT_LE(a["ci"][0].get<double>(), 156.25);
    EXPECT_GE(a["ci"][1].get<double>(), 156.25);
  }
  EXPECT_TRUE(found);
  ASSERT_EQ(doc["surfaces"].size(), 1u);
  const std::string tif = doc["surfaces"][0].get<std::string>();
  EXPECT_EQ(tif, dir.file("maps") + "/adder.tif");
  // GDAL reads the map back: two bands, the first the intensity with the path at 0.
  const std::string cmd = "gdalinfo " + tif + " > " + dir.file("info.txt");
  ASSERT_EQ(std::system(cmd.c_str()), 0);
  const std::string text = test::read_file(dir.file("info.txt"));
  EXPECT_NE(text.find("Band 2"), std::string::npos);
  EXPECT_NE(text.find("predicted intensity per ha; path at 0"), std::string::npos);
  EXPECT_NE(text.find("32630"), std::string::npos);
}

TEST(HabitatCli, TellsTheClusteredSpeciesFromTheHabitatFollowingOne) {
  // The generator: sedge is inhomogeneous Poisson in moisture, the orchid a Thomas process
  // (2.5 parents per ha, sigma 7 m) indifferent to habitat.
  const auto r = run_cli(habitat("sightings", "plots", moisture() + " --simulations 99 --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  EXPECT_EQ(doc["simulations"], 99);
  std::map<std::string, nlohmann::json> by_species;
  for (const auto& c : doc["clustering"])
    if (!c["species"].is_null()) by_species[c["species"].get<std::string>()] = c;
  ASSERT_EQ(by_species.size(), 2u);
  EXPECT_EQ(by_species["sedge"]["verdict"], "explained by habitat");
  EXPECT_EQ(by_species["orchid"]["verdict"], "clustered beyond habitat");
  const auto& thomas = by_species["orchid"]["thomas"];
  const auto truth_orchid = truth()["plot_species"]["orchid"];
  // Within 30% of the generating sigma and parent intensity (one pattern of about 470 plants).
  EXPECT_NEAR(thomas["sigma_m"].get<double>(), truth_orchid["sigma_m"].get<double>(), 0.3 * 7.0);
  EXPECT_NEAR(thomas["kappa"].get<double>(), truth_orchid["parents_ha"].get<double>(), 0.3 * 2.5);
  EXPECT_GT(thomas["fit_test"]["dclf_p_value"].get<double>(), 0.05);
  for (const char* key : {"dclf_p_value", "mad_p_value", "departures"})
    EXPECT_TRUE(by_species["sedge"]["inhomogeneous_l_test"].contains(key)) << key;
  // The same numbers on one thread as on two.
  const auto one = run_cli(habitat("sightings", "plots", moisture() + " --simulations 39 --threads 1 --json -"));
  const auto two = run_cli(habitat("sightings", "plots", moisture() + " --simulations 39 --threads 2 --json -"));
  ASSERT_EQ(one.exit_code, 0) << one.err;
  EXPECT_EQ(one.out, two.out);
}

TEST(HabitatCli, FiguresForEveryCovariateSpeciesAndTest) {
  TempDir dir;
  const auto r = run_cli(habitat("sightings", "plots",
                                 moisture() + " --factor landcover=" + sample("habitat/landcover.tif") +
                                     " --simulations 39 --figures " + dir.file("fig")));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  for (const char* name : {"ks-sedge-moisture.svg", "effect-sedge-moisture.svg", "effect-orchid-landcover.svg",
                           "residuals-orchid.svg", "L-orchid.svg", "figures.csv"}) {
    const std::string text = test::read_file(dir.file(std::string("fig/") + name));
    EXPECT_FALSE(text.empty()) << name;
    if (std::string(name).find(".svg") != std::string::npos) {
      EXPECT_NE(text.find("<svg"), std::string::npos) << name;
    }
  }
  const std::string manifest = test::read_file(dir.file("fig/figures.csv"));
  EXPECT_NE(manifest.find("residuals-sedge.svg,sedge,,residual map"), std::string::npos) << manifest;
}

TEST(HabitatCli, RefusesBadCovariatesNamingThem) {
  expect_refused(run_cli(habitat("sightings", "plots", "")), "needs at least one --covariate");
  expect_refused(run_cli(habitat("sightings", "plots", "--covariate moisture")), "--covariate 'moisture'");
  expect_refused(run_cli(habitat("sightings", "plots", "--covariate m=/nonexistent/m.tif")), "/nonexistent/m.tif");
  expect_refused(run_cli(habitat("sightings", "plots", moisture() + " " + moisture())),
                 "the name 'moisture' is already used");
  expect_refused(run_cli(habitat("sightings", "plots", moisture() + " --bias-reference moisture=0")),
                 "is not a --bias or --bias-distance term");
  // A raster that covers only part of the plots: the part without a value is named.
  TempDir dir;
  const std::string part = dir.file("part.tif");
  const std::string cmd = "gdal_translate -q -srcwin 0 0 30 60 " + sample("habitat/moisture.tif") + " " + part;
  ASSERT_EQ(std::system(cmd.c_str()), 0);
  const auto r = run_cli(habitat("sightings", "plots", "--covariate moisture=" + part));
  expect_refused(r, "has no value of covariate 'moisture'");
  EXPECT_NE(r.err.find("--drop-missing"), std::string::npos);
  const auto dropped =
      run_cli(habitat("sightings", "plots", "--covariate moisture=" + part + " --drop-missing" + no_sims));
  ASSERT_EQ(dropped.exit_code, 0) << dropped.err;
  EXPECT_NE(dropped.out.find("left out of the model"), std::string::npos) << dropped.out;
}

}  // namespace
}  // namespace stipple
