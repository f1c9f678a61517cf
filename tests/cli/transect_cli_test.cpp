// `stipple transect` and `stipple effort` as a user runs them, and the bad inputs refused.

#include <filesystem>
#include <fstream>
#include <map>

#include <charconv>

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
  return "transect " + sample("transects.gpkg") + " --lines " + sample("transects.gpkg") +
         " --distance-field distance --size-field size " + extra;
}

TEST(TransectCli, DemoRecoversGeneratingDensity) {
  // The truth is in sample-plots/generating-values.json: clusters per km2 times mean size.
  const auto r = run_cli(demo("--study-area " + sample("transects.gpkg") + " --study-area-layer study_area --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  std::ifstream truth_file(sample("generating-values.json"));
  const auto truth = nlohmann::json::parse(truth_file)["transects"]["species"];
  int checked = 0;
  for (const auto& e : doc["results"]) {
    if (e["species"].is_null()) continue;
    const auto& t = truth[e["species"].get<std::string>()];
    const double animals = t["density_km2"].get<double>() * t["mean_cluster_size"].get<double>();
    EXPECT_LE(e["density_ci"][0].get<double>(), animals) << e["species"];
    EXPECT_GE(e["density_ci"][1].get<double>(), animals) << e["species"];
    EXPECT_NEAR(e["abundance"].get<double>(), e["density"].get<double>() * 6.0, 1e-6);  // 6 km2 estate
    ++checked;
  }
  EXPECT_EQ(checked, 2);
}

TEST(TransectCli, JsonContractHolds) {
  const auto r = run_cli(demo("--json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  EXPECT_EQ(doc["unit"], "km2");
  const auto& e = doc["results"][0];
  for (const char* key : {"species",
                          "stratum",
                          "model",
                          "adjustments",
                          "parameters",
                          "aic",
                          "n",
                          "effort",
                          "truncation",
                          "esw",
                          "effective_area",
                          "detection_probability",
                          "encounter_rate",
                          "encounter_rate_cv",
                          "density",
                          "density_cv",
                          "density_ci",
                          "abundance",
                          "abundance_ci",
                          "gof"})
    EXPECT_TRUE(e.contains(key)) << key;
  for (const char* key : {"chi_square_p", "ks_p", "cvm_p"}) EXPECT_TRUE(e["gof"].contains(key)) << key;
  EXPECT_TRUE(e["adjustments"].is_array());
  EXPECT_TRUE(e["parameters"].contains("sigma"));
  EXPECT_NEAR(e["effort"].get<double>(), 18.0, 1e-9);  // 10 lines of 1.8 km, from the geometry
  EXPECT_TRUE(e["effective_area"].is_null());
  ASSERT_FALSE(doc["models_compared"].empty());
  for (const char* key : {"species", "model", "adjustments", "aic"})
    EXPECT_TRUE(doc["models_compared"][0].contains(key)) << key;
  EXPECT_FALSE(doc["cautions"].empty());
}

TEST(TransectCli, DistancesFromLocationsMatchRecordedOnes) {
  // Without --distance-field, distances come from the sightings' locations (Boost.Geometry).
  const auto recorded = nlohmann::json::parse(run_cli(demo("--models half-normal --adjustments none --json -")).out);
  const auto located =
      nlohmann::json::parse(run_cli("transect " + sample("transects.gpkg") + " --lines " + sample("transects.gpkg") +
                                    " --size-field size --models half-normal --adjustments none --json -")
                                .out);
  EXPECT_NEAR(located["results"][0]["esw"].get<double>(), recorded["results"][0]["esw"].get<double>(), 0.05);
  EXPECT_EQ(located["results"][0]["n"], recorded["results"][0]["n"]);
}

TEST(TransectCli, BinnedPooledBootstrapAndFigures) {
  TempDir out;
  const auto r =
      run_cli(demo("--bins 0,10,25,50,100,150,210 --pool-detection --bootstrap 49 --target-cv 0.15 "
                   "--figures " +
                   out.file("fig") + " --csv " + out.file("t.csv") + " --json -"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  EXPECT_EQ(doc["truncation"], 210.0);
  for (const auto& e : doc["results"]) {
    EXPECT_EQ(e["model"], doc["results"][0]["model"]);  // one shared detection function
    EXPECT_FALSE(e["bootstrap_ci"].is_null());
    EXPECT_FALSE(e["effort_for_target_cv"].is_null());
  }
  EXPECT_TRUE(std::filesystem::exists(out.file("fig/detection-all-species.png")));
  std::ifstream csv(out.file("t.csv"));
  std::string header;
  std::getline(csv, header);
  EXPECT_EQ(header.rfind("species,stratum,model", 0), 0u);
  // The bootstrap interval is in the CSV (and equals the JSON's) and in the table.
  const auto column = [&](const std::string& name) {
    std::size_t index = 0;
    for (std::size_t at = 0; at < header.find(name); ++at) index += header[at] == ',' ? 1u : 0u;
    return index;
  };
  ASSERT_NE(header.find("bootstrap_ci_low"), std::string::npos) << header;
  std::string row;
  std::getline(csv, row);
  std::vector<std::string> cells(1);
  for (const char c : row) {
    if (c == ',')
      cells.emplace_back();
    else
      cells.back() += c;
  }
  // std::stod follows the C locale (a decimal comma in this suite): read as C does.
  const auto number = [](const std::string& text) {
    double value = 0.0;
    std::from_chars(text.data(), text.data() + text.size(), value);
    return value;
  };
  EXPECT_DOUBLE_EQ(number(cells.at(column("bootstrap_ci_low"))), doc["results"][0]["bootstrap_ci"][0].get<double>());
  EXPECT_DOUBLE_EQ(number(cells.at(column("bootstrap_ci_high"))), doc["results"][0]["bootstrap_ci"][1].get<double>());
  const auto table = run_cli(demo("--bootstrap 49"));
  ASSERT_EQ(table.exit_code, 0) << table.err;
  EXPECT_NE(table.out.find("95% bootstrap"), std::string::npos) << table.out;
  EXPECT_NE(table.out.find("95% interval"), std::string::npos) << table.out;
  EXPECT_NE(table.out.find("P_a: probability of detecting"), std::string::npos) << table.out;
}

TEST(TransectCli, EffortPlanning) {
  // Source: REFERENCES.md section 8: CV 0.1, n0 = 40 on 10 km, b = 3 -> 75 km.
  const auto r = run_cli("effort --pilot-detections 40 --pilot-effort 10 --target-cv 0.1");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("75"), std::string::npos) << r.out;
  expect_refused(run_cli("effort --pilot-detections 0 --pilot-effort 10 --target-cv 0.1"),
                 "--pilot-detections: must be a number greater than 0");
  // The same as JSON, at full precision.
  const auto j = run_cli("effort --pilot-detections 40 --pilot-effort 10 --target-cv 0.1 --json -");
  ASSERT_EQ(j.exit_code, 0) << j.err;
  const auto doc = nlohmann::json::parse(j.out);
  EXPECT_EQ(doc["command"], "effort");
  EXPECT_NEAR(doc["effort_needed"].get<double>(), 75.0, 1e-9);
  EXPECT_NEAR(doc["detections_expected"].get<double>(), 300.0, 1e-9);
  EXPECT_EQ(doc["dispersion"].get<double>(), 3.0);
}

struct TransectFixture {
  TempDir dir;
  std::string lines;
  TransectFixture() {
    lines =
        dir.write("lines.geojson",
                  test::geojson_utm("{\"type\":\"Feature\",\"properties\":{\"transect\":\"A\"},\"geometry\":{\"type\":"
                                    "\"LineString\",\"coordinates\":[[512000,6290000],[512000,6291000]]}},"
                                    "{\"type\":\"Feature\",\"properties\":{\"transect\":\"B\"},\"geometry\":{\"type\":"
                                    "\"LineString\",\"coordinates\":[[512500,6290000],[512500,6291000]]}}"));
  }
  std::string sightings(const std::string& rows) const {
    (void)dir.write("s.prj", test::utm30_prj());
    return dir.write("s.csv", "x,y,species,transect,distance\n" + rows);
  }
  std::string many(const std::string& extra_row) const {
    std::string rows;
    for (int i = 0; i < 30; ++i)
      rows += std::to_string(512000 + (i % 7) * 3) + "," + std::to_string(6290100 + i * 20) + ",hare," +
              (i % 2 ? "A" : "B") + "," + std::to_string((i % 7) * 3) + "\n";
    return sightings(rows + extra_row);
  }
};

TEST(TransectCliBadInput, NegativeOrMissingDistance) {
  TransectFixture f;
  expect_refused(run_cli("transect " + f.many("512000,6290500,hare,A,-4\n") + " --lines " + f.lines +
                         " --distance-field distance"),
                 "s.csv: layer 's': feature 31: distance -4 is negative");
  expect_refused(
      run_cli("transect " + f.many("512000,6290500,hare,A,\n") + " --lines " + f.lines + " --distance-field distance"),
      "feature 31: distance field 'distance' is empty");
}

TEST(TransectCliBadInput, ImplausibleDistanceOrUnknownTransect) {
  // One recorded distance of 1e12 m once gave a density of 3e-8 per km2 with exit 0; a
  // sighting with neither a transect id nor a location was counted on the first transect;
  // a recorded distance with a far location skipped --max-offset.
  TransectFixture f;
  const std::string tail = " --lines " + f.lines + " --distance-field distance";
  expect_refused(run_cli("transect " + f.many("512000,6290500,hare,A,1e12\n") + tail),
                 "feature 31: distance 1e+12 m is more than --max-offset 1000 m");
  expect_refused(run_cli("transect " + f.many("512000,6290500,hare,A,nan\n") + tail), "feature 31: distance");
  expect_refused(run_cli("transect " + f.many(",,hare,,12\n") + tail),
                 "feature 31: has neither a transect id ('transect') nor a location");
  expect_refused(run_cli("transect " + f.many("530000,6290500,hare,,12\n") + tail),
                 "feature 31: lies 17500 m from the nearest transect, more than --max-offset 1000 m");
}

TEST(TransectCliBadInput, DistanceBeyondAllBins) {
  TransectFixture f;
  expect_refused(run_cli("transect " + f.many("512000,6290500,hare,A,140\n") + " --lines " + f.lines +
                         " --distance-field distance --bins 0,10,25,50,100"),
                 "feature 31: distance 140 m lies beyond all bins (0 to 100 m)");
}

TEST(TransectCliBadInput, SightingFarFromEveryTransect) {
  TransectFixture f;
  (void)f.dir.write("far.prj", test::utm30_prj());
  const auto far = f.dir.write("far.csv", "x,y,species\n512010,6290500,hare\n530000,6290500,hare\n");
  expect_refused(
      run_cli("transect " + far + " --lines " + f.lines),
      "far.csv: layer 'far': feature 2: lies 17500 m from the nearest transect, more than --max-offset 1000 m");
}

TEST(TransectCliBadInput, ZeroLengthLine) {
  TransectFixture f;
  const auto lines =
      f.dir.write("zero.geojson",
                  test::geojson_utm("{\"type\":\"Feature\",\"properties\":{\"transect\":\"A\"},\"geometry\":{\"type\":"
                                    "\"LineString\",\"coordinates\":[[512000,6290000],[512000,6290000]]}}"));
  expect_refused(run_cli("transect " + f.many("") + " --lines " + lines + " --distance-field distance"),
                 "zero.geojson: layer 'zero': transect 'A' has zero length");
}

TEST(TransectCliBadInput, TooFewSightings) {
  TransectFixture f;
  const auto few = f.sightings("512000,6290100,hare,A,3\n512000,6290200,hare,B,5\n");
  expect_refused(run_cli("transect " + few + " --lines " + f.lines + " --distance-field distance --models hazard-rate"),
                 "too few detections (2) to fit a hazard-rate model");
}

TEST(TransectCliBadInput, UnknownTransectAndBadOptions) {
  TransectFixture f;
  expect_refused(
      run_cli("transect " + f.many("512000,6290500,hare,Z,4\n") + " --lines " + f.lines + " --distance-field distance"),
      "feature 31: transect 'Z' is not in");
  expect_refused(run_cli("transect " + f.many("") + " --distance-field distance"),
                 "exactly one of --lines PATH or --stations PATH");
  expect_refused(
      run_cli("transect " + f.many("") + " --lines " + f.lines + " --distance-field distance --truncate 120%"),
      "--truncate 120%: a percentage must lie in [0, 100)");
  expect_refused(
      run_cli("transect " + f.many("") + " --lines " + f.lines + " --distance-field distance --models logistic"),
      "--models takes half-normal, hazard-rate, uniform");
  expect_refused(run_cli("transect " + f.many("") + " --lines " + f.lines + " --distance-field dist"),
                 "no field 'dist'");
}

}  // namespace
}  // namespace stipple

namespace stipple {
namespace {

TEST(TransectCli, PointStationsCountVisits) {
  // Point transects: effort is the number of visits; D = n E(s) / (k nu) (REFERENCES.md §8).
  test::TempDir dir;
  std::string stations;
  for (int i = 0; i < 10; ++i)
    stations += std::string(i ? "," : "") + "{\"type\":\"Feature\",\"properties\":{\"transect\":\"S" +
                std::to_string(i) + "\",\"visits\":2},\"geometry\":{\"type\":\"Point\",\"coordinates\":[" +
                std::to_string(512000 + 200 * i) + ",6290000]}}";
  const auto stations_path = dir.write("stations.geojson", test::geojson_utm(stations));
  std::string rows = "species,transect,distance\n";
  for (int i = 0; i < 80; ++i)
    rows += "wren,S" + std::to_string(i % 10) + "," + std::to_string(2 + (i * 37) % 45) + "\n";
  const auto birds = dir.write("birds.csv", rows);
  const auto r = test::run_cli("transect " + birds + " --stations " + stations_path +
                               " --distance-field distance --unit ha --models half-normal --adjustments none --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  const auto& e = doc["results"][0];
  EXPECT_EQ(doc["survey"], "point");
  EXPECT_NEAR(e["effort"].get<double>(), 20.0, 1e-12);  // 10 stations x 2 visits
  EXPECT_TRUE(e["esw"].is_null());
  EXPECT_NEAR(e["density"].get<double>(), 80.0 / (20.0 * e["effective_area"].get<double>()) * 1e4, 1e-6);
}

}  // namespace
}  // namespace stipple

namespace stipple {
namespace {

TEST(TransectCli, StrataGetTheirOwnEncounterRates) {
  test::TempDir dir;
  std::string lines;
  for (int i = 0; i < 6; ++i)
    lines += std::string(i ? "," : "") + "{\"type\":\"Feature\",\"properties\":{\"transect\":\"L" + std::to_string(i) +
             "\",\"habitat\":\"" + (i < 3 ? "heath" : "wood") +
             "\"},\"geometry\":{\"type\":\"LineString\",\"coordinates\":[[" + std::to_string(512000 + 500 * i) +
             ",6290000],[" + std::to_string(512000 + 500 * i) + ",6291000]]}}";
  const auto lines_path = dir.write("lines.geojson", test::geojson_utm(lines));
  std::string rows = "species,transect,distance\n";
  for (int i = 0; i < 90; ++i)
    rows += "hare,L" + std::to_string(i % 6 < 3 ? i % 3 : 3 + i % 3) + "," + std::to_string((i * 13) % 50) + "\n";
  for (int i = 0; i < 30; ++i) rows += "hare,L" + std::to_string(i % 3) + "," + std::to_string((i * 7) % 40) + "\n";
  const auto path = dir.write("s.csv", rows);
  const auto r = test::run_cli("transect " + path + " --lines " + lines_path +
                               " --distance-field distance --stratum-field habitat "
                               "--models half-normal --adjustments none --study-area 12 --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = nlohmann::json::parse(r.out);
  std::map<std::string, nlohmann::json> by;
  for (const auto& e : doc["results"])
    if (e["species"] == "hare") by[e["stratum"].is_null() ? "(all)" : e["stratum"].get<std::string>()] = e;
  ASSERT_EQ(by.size(), 3u);
  EXPECT_NEAR(by["heath"]["effort"].get<double>(), 3.0, 1e-9);
  EXPECT_EQ(by["heath"]["n"], 75);
  EXPECT_EQ(by["wood"]["n"], 45);
  EXPECT_GT(by["heath"]["density"].get<double>(), by["wood"]["density"].get<double>());
  EXPECT_EQ(by["heath"]["esw"], by["wood"]["esw"]);  // one detection function per species
  EXPECT_NEAR(by["(all)"]["abundance"].get<double>(), by["(all)"]["density"].get<double>() * 12.0, 1e-6);
}

}  // namespace
}  // namespace stipple
