// The command-line tool as a user runs it: the demo, output formats, and every bad input
// it refuses (message naming the file, layer, field or feature; exit code 2).

#include <charconv>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include "support.hpp"

namespace stipple {
namespace {

using test::expect_refused;
using test::run_cli;
using test::sample;
using test::TempDir;

const std::string kSquare = "[[512000,6290000],[512000,6290100],[512100,6290100],[512100,6290000],[512000,6290000]]";
const std::string kSquareB = "[[512200,6290000],[512200,6290100],[512300,6290100],[512300,6290000],[512200,6290000]]";

// A valid little survey: two 1-ha plots in EPSG:32630, sightings CSV with a .prj.
struct Fixture {
  TempDir dir;
  std::string plots;
  std::string sightings;
  Fixture() {
    plots = dir.write("plots.geojson",
                      test::geojson_utm(test::plot_feature("A", kSquare) + "," + test::plot_feature("B", kSquareB)));
    sightings = write_csv("sightings",
                          "x,y,species\n512010,6290010,oak\n512050,6290050,ash\n"
                          "512250,6290050,oak\n512150,6290050,oak\n");
  }
  std::string write_csv(const std::string& stem, const std::string& text, bool prj = true) const {
    if (prj) (void)dir.write(stem + ".prj", test::utm30_prj());
    return dir.write(stem + ".csv", text);
  }
};

nlohmann::json parse(const std::string& text) {
  return nlohmann::json::parse(text);
}

TEST(Cli, HelpAndVersion) {
  EXPECT_EQ(run_cli("--help").exit_code, 0);
  const auto help = run_cli("density --help");
  EXPECT_EQ(help.exit_code, 0);
  EXPECT_NE(help.out.find("--detection-prob"), std::string::npos);
  EXPECT_NE(run_cli("--version").out.find("stipple"), std::string::npos);
  EXPECT_EQ(run_cli("").exit_code, 2);
  EXPECT_EQ(run_cli("density").exit_code, 2);
}

TEST(Cli, DemoRecoversGeneratingIntensities) {
  // The demo's stated truth (sample-plots/generating-values.json) must lie inside the
  // corrected 95% interval of every species pooled over the four plots.
  const auto r = run_cli(sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --detection " +
                         sample("detection.csv") + " --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = parse(r.out);
  std::ifstream truth_file(sample("generating-values.json"));
  const auto truth = nlohmann::json::parse(truth_file);
  int checked = 0;
  for (const auto& p : doc["pooled"]) {
    if (p["species"].is_null()) continue;
    const double true_intensity = truth["species"][p["species"].get<std::string>()]["intensity_ha"];
    EXPECT_LE(p["corrected_ci"][0].get<double>(), true_intensity) << p["species"];
    EXPECT_GE(p["corrected_ci"][1].get<double>(), true_intensity) << p["species"];
    ++checked;
  }
  EXPECT_EQ(checked, 4);
  std::size_t total = 0;
  for (const auto& e : doc["estimates"])
    if (e["species"].is_null()) total += e["count"].get<std::size_t>();
  EXPECT_EQ(total, truth["recorded_sightings"].get<std::size_t>());
}

TEST(Cli, JsonContractHolds) {
  const auto r = run_cli(sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --detection " +
                         sample("detection.csv") + " --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = parse(r.out);
  EXPECT_EQ(doc["crs"], "EPSG:32630");
  EXPECT_EQ(doc["unit"], "ha");
  EXPECT_EQ(doc["confidence"], 0.95);
  for (const char* key : {"plot", "species", "count", "area", "intensity", "ci", "detection_probability",
                          "corrected_intensity", "corrected_ci"})
    EXPECT_TRUE(doc["estimates"][0].contains(key)) << key;
  for (const char* key :
       {"species", "plots", "count", "area", "intensity", "ci", "corrected_intensity", "corrected_ci", "homogeneity"})
    EXPECT_TRUE(doc["pooled"][0].contains(key)) << key;
  for (const char* key : {"statistic", "df", "p_value"})
    EXPECT_TRUE(doc["pooled"][0]["homogeneity"].contains(key)) << key;
  EXPECT_EQ(doc["excluded"]["outside_plots"], 0);
  EXPECT_EQ(doc["estimates"][0]["ci"].size(), 2u);
  bool has_all_species_row = false;
  for (const auto& e : doc["estimates"]) has_all_species_row |= e["species"].is_null();
  EXPECT_TRUE(has_all_species_row);
  EXPECT_FALSE(doc["cautions"].empty());
}

TEST(Cli, TableAndCsvOutputs) {
  TempDir out;
  const auto r = run_cli(sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --csv " + out.file("d.csv") +
                         " --unit km2");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("Per plot"), std::string::npos);
  EXPECT_NE(r.out.find("Pooled across plots"), std::string::npos);
  EXPECT_NE(r.out.find("Cautions"), std::string::npos);
  std::ifstream csv(out.file("d.csv"));
  std::string header;
  std::getline(csv, header);
  EXPECT_EQ(header.rfind("scope,plot,species,count,area,unit,intensity,ci_low,ci_high", 0), 0u);
}

TEST(Cli, GpsLonLatCsvIsReprojectedAndStraysAreReported) {
  const auto r =
      run_cli(sample("gps-sightings.csv") + " --assume-crs EPSG:4326 --plots " + sample("reserve.gpkg") + " --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = parse(r.out);
  EXPECT_EQ(doc["crs"], "EPSG:32630");  // the plots' projected CRS
  EXPECT_EQ(doc["excluded"]["outside_plots"], 3);
  EXPECT_EQ(doc["excluded"]["outside_plots_feature_ids"].size(), 3u);
  EXPECT_EQ(doc["assignment"]["by"], "point-in-polygon");
  // Same sightings as the GeoPackage (which assigns by attribute): same counts.
  const auto gpkg = parse(run_cli(sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --json -").out);
  ASSERT_EQ(doc["estimates"].size(), gpkg["estimates"].size());
  for (std::size_t i = 0; i < doc["estimates"].size(); ++i)
    EXPECT_EQ(doc["estimates"][i]["count"], gpkg["estimates"][i]["count"]) << i;
  EXPECT_NE(r.err.find("outside every plot"), std::string::npos);
}

TEST(Cli, GeographicInputWithoutPlotsGetsLocalEqualAreaAndModelBasedWarning) {
  const auto r = run_cli(sample("gps-sightings.csv") + " --assume-crs EPSG:4326 --window convex-hull --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = parse(r.out);
  // A Lambert azimuthal equal-area CRS centred on the sightings; its PROJ string is the code.
  EXPECT_EQ(doc["crs"].get<std::string>().rfind("+proj=laea +lat_0=", 0), 0u) << doc["crs"];
  EXPECT_NE(doc["crs_reason"].get<std::string>().find("equal-area"), std::string::npos);
  EXPECT_LT(doc["crs_max_area_error"].get<double>(), 1e-6);
  EXPECT_EQ(doc["window"], "convex-hull");
  EXPECT_NE(r.err.find("model-based"), std::string::npos);
}

TEST(Cli, PerPlotShapefilesGiveThePlotsCounts) {
  const auto r = run_cli(sample("shapefiles/north-sightings.shp") + " --plots " + sample("shapefiles/north-plot.shp") +
                         " --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto one = parse(r.out);
  const auto all = parse(run_cli(sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --json -").out);
  for (const auto& e : one["estimates"]) {
    for (const auto& f : all["estimates"])
      if (f["plot"] == "north" && f["species"] == e["species"]) {
        EXPECT_EQ(f["count"], e["count"]);
      }
  }
}

TEST(Cli, InspectDescribesASource) {
  const auto r = run_cli("inspect " + sample("reserve.gpkg"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("layer 'plots'"), std::string::npos);
  EXPECT_NE(r.out.find("layer 'sightings'"), std::string::npos);
  EXPECT_NE(r.out.find("EPSG:32630"), std::string::npos);
  EXPECT_NE(r.out.find("hazel"), std::string::npos);
  EXPECT_NE(r.out.find("glade"), std::string::npos);
  const auto j = parse(run_cli("inspect --json " + sample("reserve.gpkg")).out);
  double glade_m2 = 0;
  for (const auto& layer : j["layers"])
    for (const auto& p : layer["plots"])
      if (p["plot"] == "glade") glade_m2 = p["area_m2"];
  EXPECT_NEAR(glade_m2, 19100.0, 1e-3);  // 200 x 100 m less a 30 x 30 m pond
  expect_refused(run_cli("inspect /no/such.gpkg"), "/no/such.gpkg: no such file");
}

// ---- bad input: one line naming the culprit, exit code 2 ----

TEST(CliBadInput, MissingFile) {
  Fixture f;
  expect_refused(run_cli(f.dir.file("nope.gpkg") + " --plots " + f.plots), f.dir.file("nope.gpkg") + ": no such file");
  expect_refused(run_cli(f.sightings + " --plots " + f.dir.file("nope.shp")),
                 f.dir.file("nope.shp") + ": no such file");
}

TEST(CliBadInput, UnreadableFile) {
  Fixture f;
  const auto junk = f.dir.write("junk.gpkg", "this is not a GeoPackage");
  expect_refused(run_cli(junk + " --plots " + f.plots), junk + ": cannot be read as a vector");
}

TEST(CliBadInput, UnknownLayer) {
  expect_refused(run_cli(sample("reserve.gpkg") + " --layer stems --plots " + sample("reserve.gpkg")),
                 "reserve.gpkg: layer 'stems' not found (layers: ");
  expect_refused(run_cli(sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --plots-layer zones"),
                 "layer 'zones' not found");
}

TEST(CliBadInput, MissingSpeciesField) {
  Fixture f;
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --species-field taxon"),
                 "sightings.csv: layer 'sightings': no species field 'taxon' (fields: ");
}

TEST(CliBadInput, EmptySpeciesValue) {
  Fixture f;
  const auto s = f.write_csv("s", "x,y,species\n512010,6290010,oak\n512020,6290020,\n");
  expect_refused(run_cli(s + " --plots " + f.plots), "s.csv: layer 's': feature 2: species field");
}

TEST(CliBadInput, MissingPlotField) {
  Fixture f;
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --plot-field site"),
                 "plots.geojson: layer 'plots': no plot field 'site' (fields: plot)");
}

TEST(CliBadInput, NonPointSightings) {
  Fixture f;
  const auto lines =
      f.dir.write("tracks.geojson",
                  test::geojson_utm("{\"type\":\"Feature\",\"properties\":{\"species\":\"oak\"},\"geometry\":"
                                    "{\"type\":\"LineString\",\"coordinates\":[[512010,6290010],[512020,6290020]]}}"));
  expect_refused(run_cli(lines + " --plots " + f.plots),
                 "tracks.geojson: layer 'tracks': feature 0: geometry is Line String; sightings "
                 "must be single points");
}

TEST(CliBadInput, EmptyPlot) {
  Fixture f;
  const auto plots = f.dir.write(
      "empty.geojson", test::geojson_utm(test::plot_feature("A", kSquare) +
                                         ",{\"type\":\"Feature\",\"properties\":{\"plot\":\"B\"},\"geometry\":null}"));
  expect_refused(run_cli(f.sightings + " --plots " + plots),
                 "empty.geojson: layer 'empty': feature 1: plot polygon is empty");
}

TEST(CliBadInput, ZeroAreaPlot) {
  Fixture f;
  const auto plots =
      f.dir.write("flat.geojson", test::geojson_utm(test::plot_feature(
                                      "A", "[[512000,6290000],[512050,6290000],[512100,6290000],[512000,6290000]]")));
  expect_refused(run_cli(f.sightings + " --plots " + plots),
                 "flat.geojson: layer 'flat': feature 0: plot polygon has zero area");
}

TEST(CliBadInput, SelfIntersectingPlotIsRefusedUnlessRepaired) {
  Fixture f;
  const auto plots =
      f.dir.write("bowtie.geojson",
                  test::geojson_utm(test::plot_feature(
                      "A", "[[512000,6290000],[512100,6290100],[512100,6290000],[512000,6290100],[512000,6290000]]")));
  expect_refused(run_cli(f.sightings + " --plots " + plots),
                 "bowtie.geojson: layer 'bowtie': feature 0: plot polygon is not valid");
  EXPECT_NE(run_cli(f.sightings + " --plots " + plots).err.find("--repair-geometry"), std::string::npos);
  const auto repaired = run_cli(f.sightings + " --plots " + plots + " --repair-geometry --json -");
  ASSERT_EQ(repaired.exit_code, 0) << repaired.err;
  const auto doc = parse(repaired.out);
  EXPECT_NEAR(doc["estimates"][0]["area"].get<double>(), 0.5, 1e-9);  // two triangles, 0.5 ha
}

TEST(CliBadInput, NanOrInfiniteCoordinates) {
  Fixture f;
  const auto nan = f.write_csv("nan", "x,y,species\n512010,6290010,oak\nnan,6290020,oak\n");
  expect_refused(run_cli(nan + " --plots " + f.plots),
                 "nan.csv: layer 'nan': feature 2: has no point geometry: coordinates must be "
                 "finite numbers (x: empty or not a number, y = 6290020)");
  const auto inf = f.write_csv("inf", "x,y,species\n512010,inf,oak\n");
  expect_refused(run_cli(inf + " --plots " + f.plots),
                 "feature 1: has no point geometry: "
                 "coordinates must be finite numbers");
}

TEST(CliBadInput, DetectionProbabilityOutsideUnitInterval) {
  Fixture f;
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --detection-prob 1.5"),
                 "--detection-prob: must be a probability in (0, 1] (got '1.5')");
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --detection-prob 0"),
                 "--detection-prob: must be a probability in (0, 1] (got '0')");
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --detection-prob 0.8 --detection-se -0.1"),
                 "--detection-se: must be a number >= 0 (got '-0.1')");
  const auto table = f.dir.write("p.csv", "species,p,se\noak,0.9,0.02\nash,0,0\n");
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --detection " + table),
                 "p.csv: line 3 (species 'ash'): detection probability 0 is outside (0, 1]");
  const auto partial = f.dir.write("q.csv", "species,p\noak,0.9\n");
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --detection " + partial),
                 "q.csv: no detection probability for species 'ash'");
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --detection-se 0.1"),
                 "--detection-se needs --detection-prob");
}

TEST(CliBadInput, MissingCrs) {
  Fixture f;
  const auto bare = f.write_csv("bare", "x,y,species\n512010,6290010,oak\n", false);
  expect_refused(run_cli(bare + " --plots " + f.plots),
                 "bare.csv: layer 'bare': has no CRS; give it with --assume-crs EPSG:N");
  const auto ok = run_cli(bare + " --plots " + f.plots + " --assume-crs EPSG:32630 --json -");
  EXPECT_EQ(ok.exit_code, 0) << ok.err;
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --crs EPSG:4326"),
                 "--crs EPSG:4326: not a projected CRS in metres");
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --crs EPSG:99999999"),
                 "--crs EPSG:99999999: not a coordinate reference system");
}

TEST(CliBadInput, NoPlotsGiven) {
  Fixture f;
  expect_refused(run_cli(f.sightings), "the analysis needs the surveyed area: give the plot polygons");
}

TEST(CliBadInput, OutsideSightingsAreCountedNotHidden) {
  Fixture f;
  const auto r = run_cli(f.sightings + " --plots " + f.plots + " --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto doc = parse(r.out);
  EXPECT_EQ(doc["excluded"]["outside_plots"], 1);
  EXPECT_EQ(doc["excluded"]["outside_plots_feature_ids"][0], 4);
}

TEST(CliBadInput, NeverWritesOverAnInput) {
  Fixture f;
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --json " + f.plots),
                 "plots.geojson: refusing to write over an input file");
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --csv " + f.sightings),
                 "refusing to write over an input file");
}

TEST(CliBadInput, BadOptionValues) {
  Fixture f;
  EXPECT_EQ(run_cli(f.sightings + " --plots " + f.plots + " --unit acre").exit_code, 2);
  expect_refused(run_cli(f.sightings + " --plots " + f.plots + " --confidence 1.2"),
                 "--confidence: must lie strictly between 0 and 1");
}

}  // namespace
}  // namespace stipple

namespace stipple {
namespace {

using test::run_cli;
using test::sample;

// Locale-independent parse of a whole field (std::from_chars; strtod follows the C locale
// and refuses subnormals).
double read_double(const std::string& text) {
  double value = 0.0;
  const auto result = std::from_chars(text.data(), text.data() + text.size(), value);
  EXPECT_EQ(result.ptr, text.data() + text.size()) << text;
  return value;
}

std::vector<std::vector<std::string>> csv_rows(const std::string& text) {
  std::vector<std::vector<std::string>> rows;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) {
    std::vector<std::string> fields;
    std::string field;
    std::istringstream cells(line);
    while (std::getline(cells, field, ',')) fields.push_back(field);
    if (!line.empty() && line.back() == ',') fields.emplace_back();
    rows.push_back(std::move(fields));
  }
  return rows;
}

TEST(MachineReadableOutputs, CsvNumbersRoundTripTheJsonDoubles) {
  // JSON numbers are written by nlohmann::json with round-trip precision; every CSV number
  // must read back as the very same double (C++17 std::to_chars shortest form).
  const std::string density = "density " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") +
                              " --detection " + sample("detection.csv");
  const auto json = nlohmann::json::parse(run_cli(density + " --json -").out);
  const auto rows = csv_rows(run_cli(density + " --csv -").out);
  ASSERT_GT(rows.size(), json["estimates"].size());
  for (std::size_t i = 0; i < json["estimates"].size(); ++i) {
    const auto& e = json["estimates"][i];
    const auto& row = rows[i + 1];  // header first
    EXPECT_EQ(read_double(row[6]), e["intensity"].get<double>());
    EXPECT_EQ(read_double(row[7]), e["ci"][0].get<double>());
    EXPECT_EQ(read_double(row[8]), e["ci"][1].get<double>());
    EXPECT_EQ(read_double(row[11]), e["corrected_ci"][0].get<double>());
  }
  const std::string transect = "transect " + sample("transects.gpkg") + " --lines " + sample("transects.gpkg") +
                               " --distance-field distance --size-field size";
  const auto tj = nlohmann::json::parse(run_cli(transect + " --json -").out);
  const auto tr = csv_rows(run_cli(transect + " --csv -").out);
  ASSERT_EQ(tr.size(), tj["results"].size() + 1);
  for (std::size_t i = 0; i < tj["results"].size(); ++i) {
    EXPECT_EQ(read_double(tr[i + 1][13]), tj["results"][i]["density"].get<double>());
    EXPECT_EQ(read_double(tr[i + 1][15]), tj["results"][i]["density_ci"][0].get<double>());
  }
}

TEST(OutputSafety, RefusesSpecialFilesAndSharedOutputs) {
  const std::string density = "density " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg");
  test::TempDir dir;
  // As root a rename over /dev/null would replace the device node with a regular file.
  test::expect_refused(run_cli(density + " --json /dev/null"), "/dev/null: is a device");
  EXPECT_TRUE(std::filesystem::is_character_file("/dev/null"));
  test::expect_refused(run_cli(density + " --csv " + dir.path().string()), "is a folder");
  const std::string same = dir.file("out.txt");
  test::expect_refused(run_cli(density + " --json " + same + " --csv " + same), "--csv and --json both write to");
  EXPECT_FALSE(std::filesystem::exists(same));
  test::expect_refused(run_cli(density + " --json - --csv -"), "both write to standard output");
  test::expect_refused(run_cli(density + " --json " + sample("reserve.gpkg")), "refusing to write over an input");
}

TEST(OutputSafety, AFailedWriteToStandardOutputIsAnError) {
  // /dev/full accepts the open and fails every write with ENOSPC (Linux), like a full disk.
  const auto r = run_cli("density " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " >/dev/full");
  EXPECT_NE(r.exit_code, 0);
  EXPECT_NE(r.err.find("standard output: write failed"), std::string::npos) << r.err;
}

TEST(OptionRanges, CountsSeedsAndSizesAreRefusedOutsideTheirRange) {
  // Negative counts once wrapped to 18446744073709551615 (an endless run) or reached an
  // internal error; a grid of -1 x -2 multiplied to 2 cells. Each is now refused by name.
  const std::string plots = sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg");
  const std::string lines = sample("transects.gpkg") + " --lines " + sample("transects.gpkg");
  const std::pair<std::string, std::string> cases[] = {
      {"randomness " + plots + " --simulations -1", "--simulations: must be a whole number from 0-1000000 (got '-1')"},
      {"randomness " + plots + " --simulations 2.5", "--simulations: must be a whole number"},
      {"randomness " + plots + " --seed -5", "--seed: must be a whole number"},
      {"randomness " + plots + " --threads 99999", "--threads: must be a whole number from 0-1024"},
      {"randomness " + plots + " --rmax 0", "--rmax: must be a number greater than 0 (got '0')"},
      {"randomness " + plots + " --rmax nan", "--rmax: must be a number greater than 0"},
      {"randomness " + plots + " --quadrats -1x-2", "--quadrats must look like 4x4"},
      {"randomness " + plots + " --quadrats 99999x1", "each side 1 to 10000"},
      {"density " + plots + " --simulations -1", "--simulations: must be a whole number"},
      {"density " + plots + " --confidence 1.5", "--confidence: must lie strictly between 0 and 1 (got '1.5')"},
      {"transect " + lines + " --bootstrap -3", "--bootstrap: must be a whole number from 0-100000 (got '-3')"},
      {"transect " + lines + " --max-terms 9", "--max-terms: must be a whole number from 0-5"},
      {"effort --pilot-detections 40 --pilot-effort 10 --target-cv 15", "a CV is a fraction"},
      {"effort --pilot-detections -4 --pilot-effort 10 --target-cv 0.1",
       "--pilot-detections: must be a number greater than 0"},
      {"surface " + plots + " --out /tmp/never-written --pixel 0", "--pixel: must be a number greater than 0"},
      {"surface " + plots + " --out /tmp/never-written --bandwidth 0", "--bandwidth: must be a number greater than 0"},
      {"batch " + sample("season") + " --out /tmp/never-written --simulations -1",
       "--simulations: must be a whole number"},
  };
  for (const auto& [args, message] : cases) {
    SCOPED_TRACE(args);
    test::expect_refused(run_cli(args), message);
  }
  // A pixel coarser than a kernel would lose the surface's mass.
  test::expect_refused(run_cli("surface " + plots + " --out /tmp/never-written --pixel 50"),
                       "is larger than the kernel bandwidth");
  EXPECT_FALSE(std::filesystem::exists("/tmp/never-written"));
}

}  // namespace
}  // namespace stipple
