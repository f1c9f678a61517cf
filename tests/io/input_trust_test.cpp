// What stipple does with the inputs field teams bring: areas on the ellipsoid wherever the
// plots lie, rows never lost silently, text in any encoding, plot and transect attributes
// named separately, and file names that never collide.

#include <cmath>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include <locale>

#include <gtest/gtest.h>
#include <ogr_spatialref.h>
#include <nlohmann/json.hpp>

#include "stipple/format.hpp"
#include "support.hpp"

namespace stipple::test {
namespace {

using Json = nlohmann::json;

// Area (m2) on the WGS 84 ellipsoid of the cell between two parallels and two meridians:
// A = a^2/2 * dlambda * (q(phi2) - q(phi1)), q the authalic function (Snyder 1987, "Map
// Projections - A Working Manual", eq. 3-12). Independent of PROJ and GDAL.
double ellipsoid_cell_area(double lon1, double lat1, double lon2, double lat2) {
  const double pi = 3.14159265358979323846;
  const double a = 6378137.0;
  const double f = 1.0 / 298.257223563;
  const double e2 = f * (2.0 - f);
  const double e = std::sqrt(e2);
  const auto q = [&](double lat) {
    const double s = std::sin(lat * pi / 180.0);
    return (1.0 - e2) * (s / (1.0 - e2 * s * s) - 1.0 / (2.0 * e) * std::log((1.0 - e * s) / (1.0 + e * s)));
  };
  double dlon = lon2 - lon1;
  if (dlon < 0.0) dlon += 360.0;  // across the antimeridian
  return a * a / 2.0 * dlon * pi / 180.0 * std::abs(q(lat2) - q(lat1));
}

std::string lonlat_cell(const std::string& id, double lon1, double lat1, double lon2, double lat2) {
  std::ostringstream ring;
  ring.imbue(std::locale::classic());
  ring.precision(12);
  ring << "[[" << lon1 << "," << lat1 << "],[" << lon2 << "," << lat1 << "],[" << lon2 << "," << lat2 << "],[" << lon1
       << "," << lat2 << "],[" << lon1 << "," << lat1 << "]]";
  return plot_feature(id, ring.str());
}

struct Cell {
  const char* id;
  double lon1, lat1, lon2, lat2;
};

struct AreaCase {
  const char* name;
  std::vector<Cell> cells;
};

Json density_json_of(const TempDir& dir, const std::vector<Cell>& cells) {
  std::string features;
  std::string sightings = "lon,lat,species\n";
  for (const auto& c : cells) {
    features += (features.empty() ? "" : ",") + lonlat_cell(c.id, c.lon1, c.lat1, c.lon2, c.lat2);
    std::ostringstream row;
    row.imbue(std::locale::classic());
    row.precision(12);
    const double lon = c.lon1 + 0.5 * (c.lon2 - c.lon1 + (c.lon2 < c.lon1 ? 360.0 : 0.0));
    row << (lon > 180.0 ? lon - 360.0 : lon) << "," << 0.5 * (c.lat1 + c.lat2) << ",heather\n";
    sightings += row.str();
  }
  const std::string plots =
      dir.write("plots.geojson", "{\"type\":\"FeatureCollection\",\"features\":[" + features + "]}");
  const std::string csv = dir.write("sightings.csv", sightings);
  const auto r = run_cli(csv + " --plots " + plots + " --assume-crs EPSG:4326 --unit m2 --json -");
  EXPECT_EQ(r.exit_code, 0) << r.err;
  return r.exit_code == 0 ? Json::parse(r.out) : Json();
}

class GeodesicAreas : public testing::TestWithParam<AreaCase> {};

// Before the local equal-area CRS the analysis used the UTM zone of the mean longitude:
// +37.5% for plots either side of the antimeridian, about +0.3% across two zones, and no
// valid zone at all near the pole. The issue asks for 0.1%; we hold 1e-4.
TEST_P(GeodesicAreas, EveryPlotWithinOneTenThousandthOfTheEllipsoidalArea) {
  TempDir dir;
  const auto& cells = GetParam().cells;
  const Json doc = density_json_of(dir, cells);
  ASSERT_FALSE(doc.is_null());
  EXPECT_LT(doc["crs_max_area_error"].get<double>(), 1e-4);
  for (const auto& c : cells) {
    const double expected = ellipsoid_cell_area(c.lon1, c.lat1, c.lon2, c.lat2);
    bool found = false;
    for (const auto& e : doc["estimates"]) {
      if (e["plot"] != c.id || !e["species"].is_null()) continue;
      found = true;
      EXPECT_NEAR(e["area"].get<double>() / expected, 1.0, 1e-4) << c.id;
    }
    EXPECT_TRUE(found) << c.id;
  }
}

INSTANTIATE_TEST_SUITE_P(
    Surveys, GeodesicAreas,
    testing::Values(AreaCase{"antimeridian",
                             {{"east", 179.98, -17.0, 179.99, -16.99}, {"west", -179.99, -17.0, -179.98, -16.99}}},
                    AreaCase{"across", {{"straddle", 179.995, 64.0, -179.995, 64.01}}},
                    AreaCase{"two_utm_zones", {{"west", -4.02, 60.0, -4.0, 60.01}, {"east", 4.0, 60.0, 4.02, 60.01}}},
                    AreaCase{"near_pole", {{"a", 10.0, 88.5, 10.01, 88.51}, {"b", 100.0, 88.5, 100.01, 88.51}}},
                    AreaCase{"southern", {{"a", 146.0, -45.0, 146.01, -44.99}, {"b", 147.0, -45.02, 147.01, -45.01}}}),
    [](const testing::TestParamInfo<AreaCase>& param) { return std::string(param.param.name); });

// Plots given in a UTM zone far from their longitude (7 degrees from the central
// meridian, about +0.3% in area): the analysis moves to the local equal-area CRS and says why.
TEST(GeodesicAreas, ProjectedInputThatMisstatesAreasIsReplaced) {
  TempDir dir;
  OGRSpatialReference wgs84;
  wgs84.importFromEPSG(4326);
  wgs84.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  OGRSpatialReference utm31;
  utm31.importFromEPSG(32631);
  utm31.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  std::unique_ptr<OGRCoordinateTransformation> to_utm(OGRCreateCoordinateTransformation(&wgs84, &utm31));
  ASSERT_TRUE(to_utm);
  double xs[5] = {-4.02, -4.0, -4.0, -4.02, -4.02};
  double ys[5] = {60.0, 60.0, 60.01, 60.01, 60.0};
  ASSERT_TRUE(to_utm->Transform(5, xs, ys));
  std::ostringstream ring;
  ring.imbue(std::locale::classic());
  ring.precision(12);
  ring << "[";
  for (int i = 0; i < 5; ++i) ring << (i ? "," : "") << "[" << xs[i] << "," << ys[i] << "]";
  ring << "]";
  const std::string plots =
      dir.write("plots.geojson",
                "{\"type\":\"FeatureCollection\",\"crs\":{\"type\":\"name\",\"properties\":{\"name\":"
                "\"urn:ogc:def:crs:EPSG::32631\"}},\"features\":[" +
                    plot_feature("far", ring.str()) + "]}");
  std::ostringstream sighting;
  sighting.imbue(std::locale::classic());
  sighting.precision(12);
  sighting << "x,y,species\n" << 0.5 * (xs[0] + xs[1]) << "," << 0.5 * (ys[0] + ys[2]) << ",heather\n";
  const std::string csv = dir.write("sightings.csv", sighting.str());
  const auto r = run_cli(csv + " --plots " + plots + " --assume-crs EPSG:32631 --unit m2 --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const Json doc = Json::parse(r.out);
  EXPECT_EQ(doc["crs"].get<std::string>().rfind("+proj=laea", 0), 0u) << doc["crs"];
  EXPECT_NE(doc["crs_reason"].get<std::string>().find("would misstate plot areas"), std::string::npos);
  EXPECT_NEAR(doc["estimates"][0]["area"].get<double>() / ellipsoid_cell_area(-4.02, 60.0, -4.0, 60.01), 1.0, 1e-4);
}

// A header-only CSV: every plot stays, with count 0 and the exact upper limit
// chi2(0.975; 2)/2 = 3.6888794541139363 (scipy.stats.chi2.ppf(0.975, 2) / 2) over its area.
TEST(NoSilentLoss, PlotsWithoutSightingsKeepCountZeroAndTheExactInterval) {
  TempDir dir;
  const std::string plots = dir.write(
      "plots.geojson",
      geojson_utm(
          plot_feature("A", "[[440000,4470000],[440100,4470000],[440100,4470100],[440000,4470100],[440000,4470000]]") +
          "," +
          plot_feature("B", "[[440200,4470000],[440400,4470000],[440400,4470100],[440200,4470100],[440200,4470000]]")));
  const std::string csv = dir.write("empty.csv", "x,y,species\n");
  const auto r = run_cli(csv + " --plots " + plots + " --assume-crs EPSG:32630 --unit m2 --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const Json doc = Json::parse(r.out);
  ASSERT_EQ(doc["estimates"].size(), 2u);
  const double areas[2] = {1e4, 2e4};
  for (std::size_t i = 0; i < 2; ++i) {
    const auto& e = doc["estimates"][i];
    EXPECT_EQ(e["count"], 0);
    EXPECT_TRUE(e["species"].is_null());
    EXPECT_NEAR(e["ci"][1].get<double>(), 3.6888794541139363 / areas[i], 1e-12);
  }
  ASSERT_EQ(doc["pooled"].size(), 1u);
  EXPECT_NEAR(doc["pooled"][0]["ci"][1].get<double>(), 3.6888794541139363 / 3e4, 1e-12);
}

TEST(NoSilentLoss, BlankRowsDuplicatesAndNameVariantsAreReported) {
  TempDir dir;
  const std::string plots =
      dir.write("plots.geojson",
                geojson_utm(plot_feature(
                    "A", "[[440000,4470000],[440100,4470000],[440100,4470100],[440000,4470100],[440000,4470000]]")));
  const std::string csv = dir.write("s.csv",
                                    "x,y,species\n440010,4470010,Gorse\n,,\n440020,4470020,gorse \n"
                                    "440020,4470020,gorse\n440050,4470060,heather\n, ,\n");
  const auto r = run_cli(csv + " --plots " + plots + " --assume-crs EPSG:32630 --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const Json doc = Json::parse(r.out);
  std::string notes = doc["notes"].dump();
  EXPECT_NE(notes.find("2 blank row(s)"), std::string::npos) << notes;
  ASSERT_EQ(doc["duplicate_locations"].size(), 1u);
  EXPECT_EQ(doc["duplicate_locations"][0]["feature_ids"], Json({3, 4}));  // CSV rows 3 and 4
  const std::string warnings = doc["warnings"].dump();
  EXPECT_NE(warnings.find("'Gorse', 'gorse', 'gorse '"), std::string::npos) << warnings;
  EXPECT_NE(warnings.find("share 1 location"), std::string::npos) << warnings;
  // Case is kept apart (two species), surrounding spaces are not (gorse counts 2).
  std::set<std::string> species;
  for (const auto& e : doc["estimates"])
    if (!e["species"].is_null()) species.insert(e["species"].get<std::string>());
  EXPECT_EQ(species, (std::set<std::string>{"Gorse", "gorse", "heather"}));
  for (const auto& e : doc["estimates"]) {
    if (e["species"] == "gorse") {
      EXPECT_EQ(e["count"], 2);
    }
  }
  // The randomness JSON carries the same duplicates.
  const auto rr =
      run_cli("randomness " + csv + " --plots " + plots + " --assume-crs EPSG:32630 --simulations 19 --json -");
  ASSERT_EQ(rr.exit_code, 0) << rr.err;
  EXPECT_EQ(Json::parse(rr.out)["duplicate_locations"][0]["feature_ids"], Json({3, 4}));
}

// Latin-1 text in a Shapefile without .cpg (tests/data/bad/latin1.shp): without --encoding
// the JSON stays valid with U+FFFD and a warning; with it, the names are right.
TEST(Encoding, Latin1ShapefileIsDecodedOrVisiblyReplaced) {
  const std::string shp = std::string(STIPPLE_TEST_DATA_DIR) + "/bad/latin1.shp";
  const std::string plots = std::string(STIPPLE_TEST_DATA_DIR) + "/bad/plots.geojson";
  const auto raw = run_cli(shp + " --plots " + plots + " --json -");
  ASSERT_EQ(raw.exit_code, 0) << raw.err;
  const Json replaced = Json::parse(raw.out);
  EXPECT_NE(replaced.dump().find("bruy\xEF\xBF\xBDre"), std::string::npos);
  EXPECT_NE(raw.err.find("the encoding option: LATIN1"), std::string::npos);  // the library names no flag
  const auto decoded = run_cli(shp + " --plots " + plots + " --encoding LATIN1 --json -");
  ASSERT_EQ(decoded.exit_code, 0) << decoded.err;
  std::set<std::string> species;
  const Json doc = Json::parse(decoded.out);
  for (const auto& e : doc["estimates"])
    if (!e["species"].is_null()) species.insert(e["species"].get<std::string>());
  EXPECT_EQ(species, (std::set<std::string>{"aj\xC3\xB4nc", "bruy\xC3\xA8re"}));
  EXPECT_EQ(decoded.err.find("not valid UTF-8"), std::string::npos) << decoded.err;
}

// A web-map export: `Name` on the plots is the plot id, `Name` on the sightings is a
// waypoint label. Assignment by location, or by the sightings' own plot field, works.
TEST(Attributes, SightingsPlotFieldAndAssignmentByLocation) {
  const std::string bad = std::string(STIPPLE_TEST_DATA_DIR) + "/bad/";
  const std::string base =
      bad + "named-sightings.csv --plots " + bad + "named-plots.geojson --assume-crs EPSG:32630 --plot-field Name";
  const auto by_location = run_cli(base + " --assign location --json -");
  ASSERT_EQ(by_location.exit_code, 0) << by_location.err;
  const Json doc = Json::parse(by_location.out);
  EXPECT_EQ(doc["assignment"]["by"], "point-in-polygon");
  long long total = 0;
  for (const auto& e : doc["estimates"])
    if (e["species"].is_null()) total += e["count"].get<long long>();
  EXPECT_EQ(total, 20);

  TempDir dir;
  const std::string csv = dir.write("s.csv",
                                    "x,y,species,Name,plot_name\n440010,4470015,gorse,wp1,Plot A\n"
                                    "440215,4470012,gorse,wp2,Plot B\n440030,4470040,heather,wp3,Plot A\n");
  const auto by_field = run_cli(csv + " --plots " + bad +
                                "named-plots.geojson --assume-crs EPSG:32630 --plot-field Name "
                                "--sightings-plot-field plot_name --json -");
  ASSERT_EQ(by_field.exit_code, 0) << by_field.err;
  const Json f = Json::parse(by_field.out);
  EXPECT_EQ(f["assignment"]["by"], "attribute");
  for (const auto& e : f["estimates"]) {
    if (e["species"].is_null()) {
      EXPECT_EQ(e["count"], e["plot"] == "Plot A" ? 2 : 1);
    }
  }
}

TEST(Attributes, SightingsTransectFieldNamesTheirOwnIds) {
  const std::string bad = std::string(STIPPLE_TEST_DATA_DIR) + "/bad/";
  TempDir dir;
  std::string rows = "line_name,distance,species\n";
  for (int i = 0; i < 30; ++i) rows += "T" + std::to_string(i % 3) + "," + std::to_string(2 + (i * 7) % 40) + ",hare\n";
  const std::string csv = dir.write("d.csv", rows);
  const auto r = run_cli("transect " + csv + " --lines " + bad +
                         "lines.geojson --distance-field distance "
                         "--sightings-transect-field line_name --models half-normal --adjustments none --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_EQ(Json::parse(r.out)["results"][0]["n"], 30);
}

TEST(FileNames, DifferentNamesNeverShareAFile) {
  // The issue's own example: "a/b" and "a_b" wrote the same figure.
  EXPECT_NE(file_name_safe("a/b"), file_name_safe("a_b"));
  EXPECT_EQ(file_name_safe("a_b"), "a_b");
  EXPECT_LE(file_name_safe(std::string(5000, 'x')).size(), 71u);
  EXPECT_NE(file_name_safe(std::string(5000, 'x')), file_name_safe(std::string(4999, 'x')));
  EXPECT_NE(file_name_safe("."), ".");
  EXPECT_NE(file_name_safe(".."), "..");
  FileNamer namer;
  const std::string one = namer.stem("L", {"a-b", "c"});
  const std::string two = namer.stem("L", {"a", "b-c"});
  EXPECT_NE(one, two);
  EXPECT_EQ(namer.stem("L", {"a-b", "c"}), one);
  EXPECT_LE(namer.stem("L", {std::string(300, 'p'), std::string(300, 's')}).size(), 150u);
}

TEST(FileNames, FigureFolderHasDistinctFilesAndAManifest) {
  TempDir dir;
  const std::string plots =
      dir.write("plots.geojson",
                geojson_utm(plot_feature(
                    "A", "[[440000,4470000],[440100,4470000],[440100,4470100],[440000,4470100],[440000,4470000]]")));
  std::string rows = "x,y,species\n";
  for (int i = 0; i < 24; ++i)
    rows += std::to_string(440003 + (i * 37) % 95) + "," + std::to_string(4470004 + (i * 53) % 93) + "," +
            (i % 2 ? "a/b" : "a_b") + "\n";
  const std::string csv = dir.write("s.csv", rows);
  const auto r = run_cli("randomness " + csv + " --plots " + plots +
                         " --assume-crs EPSG:32630 --simulations 19 --figures " + dir.file("fig"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::set<std::string> svgs;
  for (const auto& entry : std::filesystem::directory_iterator(dir.file("fig")))
    if (entry.path().extension() == ".svg") svgs.insert(entry.path().filename().string());
  EXPECT_EQ(svgs.size(), 4u);  // a/b, a_b, all species, and the cross-L of the two
  std::ifstream manifest(dir.file("fig/figures.csv"));
  std::stringstream text;
  text << manifest.rdbuf();
  for (const auto& svg : svgs) EXPECT_NE(text.str().find(svg), std::string::npos) << svg;
  EXPECT_NE(text.str().find(",a/b,"), std::string::npos) << text.str();
}

// Fewer than 10 sightings that no test rejects are `too few to tell`, never `random`.
TEST(TooFewToTell, SmallGroupsAreNotCalledRandom) {
  TempDir dir;
  const std::string plots =
      dir.write("plots.geojson",
                geojson_utm(plot_feature(
                    "A", "[[440000,4470000],[440100,4470000],[440100,4470100],[440000,4470100],[440000,4470000]]")));
  const std::string csv = dir.write("s.csv",
                                    "x,y,species\n440012,4470021,gorse\n440063,4470048,gorse\n"
                                    "440031,4470077,gorse\n440085,4470015,gorse\n440047,4470052,gorse\n"
                                    "440020,4470090,heather\n440070,4470070,heather\n");
  const auto r =
      run_cli("randomness " + csv + " --plots " + plots + " --assume-crs EPSG:32630 --simulations 99 --json -");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const Json doc = Json::parse(r.out);
  ASSERT_EQ(doc["results"].size(), 3u);
  for (const auto& g : doc["results"]) EXPECT_EQ(g["verdict"], "too few to tell") << g.dump();
}

}  // namespace
}  // namespace stipple::test
