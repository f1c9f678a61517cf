// `stipple batch`, `merge`, `report` and `surface` as a user runs them on sample-plots/.

#include <cairo.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <set>
#include <sstream>

#include <gdal_priv.h>
#include <gtest/gtest.h>
#include <ogrsf_frmts.h>
#include <nlohmann/json.hpp>

#include "support.hpp"

namespace fs = std::filesystem;

namespace stipple {
namespace {

// Headless Chromium now and then stalls on a loaded machine: each attempt is limited to 90 s
// by coreutils' timeout, and a stalled or failed one is tried once more.
int screenshot_with_retry(const std::string& command) {
  int status = std::system(command.c_str());
  if (status != 0) status = std::system(command.c_str());
  return status;
}

using test::run_cli;
using test::sample;
using test::TempDir;

std::string read(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

std::string batch(const std::string& input, const std::string& out, const std::string& extra = "") {
  return "batch " + input + " --out " + out + " --simulations 49 --quiet " + extra;
}

TEST(BatchCli, EqualsThePerFileCommands) {
  TempDir out;
  const auto r = run_cli(batch(sample("season"), out.file("all")));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto density = nlohmann::json::parse(read(out.file("all/density.json")));
  const auto randomness = nlohmann::json::parse(read(out.file("all/randomness.json")));
  std::size_t density_seen = 0;
  std::size_t randomness_seen = 0;
  for (const char* name : {"burn.gpkg", "glade.gpkg", "north.gpkg", "ridge.gpkg"}) {
    const std::string file = sample(std::string("season/") + name);
    const auto d = nlohmann::json::parse(run_cli(file + " --plots " + file + " --json -").out);
    const auto g =
        nlohmann::json::parse(run_cli("randomness " + file + " --plots " + file + " --simulations 49 --json -").out);
    std::vector<nlohmann::json> batch_d, batch_g;
    for (auto rec : density)
      if (rec["file"] == name) rec.erase("file"), batch_d.push_back(rec);
    for (auto rec : randomness)
      if (rec["file"] == name) rec.erase("file"), batch_g.push_back(rec);
    ASSERT_EQ(batch_d.size(), d["estimates"].size()) << name;
    for (std::size_t i = 0; i < batch_d.size(); ++i) EXPECT_EQ(batch_d[i], d["estimates"][i]) << name << " " << i;
    ASSERT_EQ(batch_g.size(), g["results"].size()) << name;
    for (std::size_t i = 0; i < batch_g.size(); ++i) EXPECT_EQ(batch_g[i], g["results"][i]) << name << " " << i;
    density_seen += batch_d.size();
    randomness_seen += batch_g.size();
  }
  EXPECT_EQ(density_seen, density.size());
  EXPECT_EQ(randomness_seen, randomness.size());
  // The equal-columns rule: batch tables are the single commands' --csv tables with `file` in front.
  const auto first_line = [](const std::string& text) { return text.substr(0, text.find('\n')); };
  const std::string file = sample("season/north.gpkg");
  const std::string density_csv = run_cli(file + " --plots " + file + " --csv -").out;
  const std::string randomness_csv =
      run_cli("randomness " + file + " --plots " + file + " --simulations 49 --csv -").out;
  EXPECT_EQ(first_line(read(out.file("all/density.csv"))), "file," + first_line(density_csv));
  EXPECT_EQ(first_line(read(out.file("all/randomness.csv"))), "file," + first_line(randomness_csv));
  // And the rows: north's rows are the single command's rows with the file name in front.
  std::istringstream rows(density_csv);
  std::string line;
  std::getline(rows, line);
  while (std::getline(rows, line))
    EXPECT_NE(read(out.file("all/density.csv")).find("north.gpkg," + line + "\n"), std::string::npos) << line;
}

// Season pooling: the batch over the four plot files equals `stipple density` over the four
// plots at once (reserve.gpkg holds the same plots and sightings as season/).
TEST(BatchCli, SeasonPoolingEqualsDensityOverAllPlots) {
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("o"), "--analyses density --detection " + sample("detection.csv")))
                .exit_code,
            0);
  const auto all = nlohmann::json::parse(run_cli(sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") +
                                                 " --detection " + sample("detection.csv") + " --json -")
                                             .out);
  const auto pooled = nlohmann::json::parse(read(out.file("o/pooled.json")));
  ASSERT_EQ(pooled["pooled"].size(), all["pooled"].size());
  // Relative 1e-12: the same sums, in another order of plots (floating-point rounding only).
  const auto near = [](double a, double b) { return std::abs(a - b) <= 1e-12 * std::max(1.0, std::abs(b)); };
  for (std::size_t i = 0; i < all["pooled"].size(); ++i) {
    const auto& a = pooled["pooled"][i];
    const auto& b = all["pooled"][i];
    EXPECT_EQ(a["species"], b["species"]);
    EXPECT_EQ(a["count"], b["count"]);
    EXPECT_EQ(a["plots"], b["plots"]);
    for (const char* key : {"area", "intensity", "corrected_intensity"})
      EXPECT_TRUE(near(a[key].get<double>(), b[key].get<double>())) << key << " " << a[key] << " " << b[key];
    for (std::size_t k = 0; k < 2; ++k) {
      EXPECT_TRUE(near(a["ci"][k].get<double>(), b["ci"][k].get<double>()));
      EXPECT_TRUE(near(a["corrected_ci"][k].get<double>(), b["corrected_ci"][k].get<double>()));
    }
    for (const char* key : {"statistic", "df", "p_value", "dispersion_ratio"})
      EXPECT_TRUE(near(a["homogeneity"][key].get<double>(), b["homogeneity"][key].get<double>())) << key;
    for (std::size_t k = 0; k < 2; ++k)
      EXPECT_TRUE(near(a["homogeneity"]["corrected_between_plot_ci"][k].get<double>(),
                       b["homogeneity"]["corrected_between_plot_ci"][k].get<double>()));
  }
  EXPECT_TRUE(near(pooled["composition"]["statistic"].get<double>(), all["composition"]["statistic"].get<double>()));
  EXPECT_EQ(pooled["composition"]["df"], all["composition"]["df"]);
  EXPECT_FALSE(pooled["cautions"].empty());
  // The hazel plots differ (homogeneity p = 0.002): the season warning says so.
  EXPECT_NE(pooled["warnings"].dump().find("hazel"), std::string::npos);
  const std::string csv = read(out.file("o/pooled.csv"));
  EXPECT_EQ(csv.rfind("species,plots,count,area,unit,intensity,ci_low,ci_high,", 0), 0u) << csv;
  for (const char* column : {"homogeneity_statistic", "homogeneity_df", "homogeneity_p", "dispersion_ratio"})
    EXPECT_NE(csv.substr(0, csv.find('\n')).find(column), std::string::npos) << column;
  EXPECT_NE(csv.find("\n,4,952,"), std::string::npos) << csv;  // all species together: empty species
}

// A transect file in the season folder is not a plot file: it once became a plot of hares.
TEST(BatchCli, InputsOfTheWrongKindAreSkippedWithAReason) {
  TempDir in;
  fs::copy_file(sample("season/north.gpkg"), in.path() / "north.gpkg");
  fs::copy_file(sample("transects.gpkg"), in.path() / "transects.gpkg");
  TempDir out;
  const auto r = run_cli(batch(in.path().string(), out.file("o")));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.err.find("skipped: transects.gpkg: holds transect lines"), std::string::npos) << r.err;
  const std::string failures = read(out.file("o/failures.csv"));
  EXPECT_NE(failures.find("transects.gpkg,skipped,holds transect lines (layer 'lines'); not a plot file (the transect "
                          "analysis fits it)"),
            std::string::npos)
      << failures;
  EXPECT_EQ(read(out.file("o/density.csv")).find("transects.gpkg"), std::string::npos);
  const auto run = nlohmann::json::parse(read(out.file("o/run.json")));
  EXPECT_EQ(run["inputs"][1]["kind"], "transects");
  EXPECT_EQ(run["inputs"][1]["status"], "skipped");
  // And the other way round: plot files are skipped by a transect-only batch.
  const auto t = run_cli(
      batch(in.path().string(), out.file("t"), "--analyses transect --distance-field distance --size-field size"));
  ASSERT_EQ(t.exit_code, 0) << t.err;
  EXPECT_NE(read(out.file("t/failures.csv")).find("north.gpkg,skipped,holds plots and sightings; not a transect file"),
            std::string::npos);
  EXPECT_NE(read(out.file("t/transect.csv")).find("transects.gpkg,"), std::string::npos);
}

// A folder of per-plot sighting Shapefiles over one plots layer.
TEST(BatchCli, OneSharedPlotsLayerForAFolderOfSightingFiles) {
  TempDir out;
  const auto r = run_cli(batch(
      sample("shapefiles"), out.file("o"),
      "--pattern '*-sightings.shp' --plots " + sample("reserve.gpkg") + " --plots-layer plots --analyses density"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const std::string density = read(out.file("o/density.csv"));
  EXPECT_NE(density.find("north-sightings.shp,plot,north,birch,81,"), std::string::npos) << density;
  // Each file covers only its own plot: north-sightings.shp has no row for burn.
  EXPECT_EQ(density.find("north-sightings.shp,plot,burn,"), std::string::npos) << density;
  const auto pooled = nlohmann::json::parse(read(out.file("o/pooled.json")));
  EXPECT_EQ(pooled["plots"], 4);
  EXPECT_EQ(pooled["pooled"].back()["count"], 952);  // every sighting of the reserve, once
  const auto run = nlohmann::json::parse(read(out.file("o/run.json")));
  EXPECT_NE(run["inputs"][0]["plots_path"].get<std::string>().find("reserve.gpkg"), std::string::npos);
}

TEST(BatchCli, ShardsMergeToTheSingleRun) {
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("one"), "--gis")).exit_code, 0);
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("s1"), "--gis --shard 1/3")).exit_code, 0);
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("s2"), "--gis --shard 2/3")).exit_code, 0);
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("s3"), "--gis --shard 3/3")).exit_code, 0);
  const auto m =
      run_cli("merge " + out.file("s3") + " " + out.file("s1") + " " + out.file("s2") + " --out " + out.file("merged"));
  ASSERT_EQ(m.exit_code, 0) << m.err;
  for (const char* f : {"density.csv", "density.json", "randomness.csv", "randomness.json", "interactions.csv",
                        "interactions.json", "pooled.csv", "pooled.json", "failures.csv", "figures.csv", "run.json"})
    EXPECT_EQ(read(out.file(std::string("one/") + f)), read(out.file(std::string("merged/") + f))) << f;
  // The GeoPackage: same features in the same order.
  GDALDatasetUniquePtr a(GDALDataset::Open(out.file("one/plot-results.gpkg").c_str(), GDAL_OF_VECTOR));
  GDALDatasetUniquePtr b(GDALDataset::Open(out.file("merged/plot-results.gpkg").c_str(), GDAL_OF_VECTOR));
  ASSERT_TRUE(a && b);
  OGRLayer* la = a->GetLayerByName("plot_results");
  OGRLayer* lb = b->GetLayerByName("plot_results");
  ASSERT_EQ(la->GetFeatureCount(), lb->GetFeatureCount());
  for (GIntBig i = 1; i <= la->GetFeatureCount(); ++i) {
    std::unique_ptr<OGRFeature> fa(la->GetFeature(i)), fb(lb->GetFeature(i));
    EXPECT_STREQ(fa->GetFieldAsString("plot"), fb->GetFieldAsString("plot"));
    EXPECT_EQ(fa->GetFieldAsDouble("intensity"), fb->GetFieldAsDouble("intensity"));
  }
}

TEST(BatchCli, ACorruptFileIsReportedWhileOthersFinish) {
  TempDir in;
  for (const char* name : {"north.gpkg", "glade.gpkg"})
    fs::copy_file(sample(std::string("season/") + name), in.path() / name);
  (void)in.write("broken.gpkg", "not a GeoPackage at all");
  TempDir out;
  const auto r = run_cli(batch(in.path().string(), out.file("o")));
  EXPECT_EQ(r.exit_code, 1) << r.err;
  EXPECT_NE(r.err.find("failed: broken.gpkg"), std::string::npos) << r.err;
  const std::string failures = read(out.file("o/failures.csv"));
  EXPECT_EQ(failures.rfind("file,status,reason\nbroken.gpkg,failed,", 0), 0u) << failures;
  const std::string density = read(out.file("o/density.csv"));
  EXPECT_NE(density.find("north.gpkg,plot,north,birch"), std::string::npos);
  EXPECT_NE(density.find("glade.gpkg,plot,glade,birch"), std::string::npos);
}

// One option, one default: --simulations is 999 in density, randomness and batch alike.
TEST(BatchCli, SimulationsHaveOneDefaultInEveryCommand) {
  TempDir out;
  const std::string file = sample("season/north.gpkg");
  EXPECT_EQ(nlohmann::json::parse(run_cli(file + " --plots " + file + " --json -").out)["simulations"], 999);
  EXPECT_EQ(nlohmann::json::parse(
                run_cli("randomness " + file + " --plots " + file + " --only quadrat --json -").out)["simulations"],
            999);
  ASSERT_EQ(run_cli("batch " + file + " --out " + out.file("o") + " --analyses density --quiet").exit_code, 0);
  EXPECT_EQ(nlohmann::json::parse(read(out.file("o/run.json")))["simulations"], 999);
}

TEST(BatchCli, ShardCountsAreWholeNumbers) {
  // "1/-2" once parsed to 1 of 18446744073709551614 shards: an empty run with exit 0.
  TempDir out;
  test::expect_refused(run_cli(batch(sample("season"), out.file("o"), "--shard 1/-2")), "--shard must be K/N");
  test::expect_refused(run_cli(batch(sample("season"), out.file("o"), "--shard -1/2")), "--shard must be K/N");
}

TEST(BatchCli, GisOutputsReadBackThroughGdal) {
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("o"), "--gis --surface --unit ha")).exit_code, 0);
  GDALDatasetUniquePtr gpkg(GDALDataset::Open(out.file("o/plot-results.gpkg").c_str(), GDAL_OF_VECTOR));
  ASSERT_TRUE(gpkg);
  OGRLayer* layer = gpkg->GetLayerByName("plot_results");
  ASSERT_NE(layer, nullptr);
  EXPECT_STREQ(layer->GetSpatialRef()->GetAuthorityCode(nullptr), "32630");
  EXPECT_EQ(layer->GetFeatureCount(), 20);  // 4 plots x (4 species + all)
  for (const char* field : {"plot", "species", "count", "intensity", "ci_low", "ci_high", "dclf_p", "verdict"})
    EXPECT_GE(layer->GetLayerDefn()->GetFieldIndex(field), 0) << field;
  bool found = false;
  for (auto& f : *layer) {
    if (std::string(f->GetFieldAsString("plot")) == "north" && std::string(f->GetFieldAsString("species")) == "birch") {
      EXPECT_EQ(f->GetFieldAsInteger64("count"), 81);
      EXPECT_NEAR(f->GetFieldAsDouble("intensity"), 81.0, 1e-9);  // 81 in 1 ha
      EXPECT_NEAR(f->GetGeometryRef()->toMultiPolygon()->get_Area(), 1e4, 1e-6);
      found = true;
    }
  }
  EXPECT_TRUE(found);
  for (const char* field : {"unit", "detection_probability", "corrected_ci_low", "corrected_ci_high"})
    EXPECT_GE(layer->GetLayerDefn()->GetFieldIndex(field), 0) << field;
  // The wide layer: one feature per plot, one column per species.
  OGRLayer* wide = gpkg->GetLayerByName("plot_species");
  ASSERT_NE(wide, nullptr);
  EXPECT_EQ(wide->GetFeatureCount(), 4);
  for (const char* field : {"file", "plot", "unit", "all_species", "d_birch", "d_hazel", "d_juniper", "d_wood_ant"})
    EXPECT_GE(wide->GetLayerDefn()->GetFieldIndex(field), 0) << field;
  for (auto& f : *wide)
    if (std::string(f->GetFieldAsString("plot")) == "north") {
      EXPECT_NEAR(f->GetFieldAsDouble("d_birch"), 81.0, 1e-9);  // p = 1 for birch: corrected = observed
      EXPECT_STREQ(f->GetFieldAsString("unit"), "ha");
    }
  // The surface integrates over the window to about the observed count (Diggle's edge
  // correction keeps the mass inside the window; tolerance 3%, common practice).
  GDALDatasetUniquePtr tif(GDALDataset::Open(out.file("o/surfaces/north/birch.tif").c_str(), GDAL_OF_RASTER));
  ASSERT_TRUE(tif);
  EXPECT_STREQ(tif->GetSpatialRef()->GetAuthorityCode(nullptr), "32630");
  double transform[6];
  ASSERT_EQ(tif->GetGeoTransform(transform), CE_None);
  const int w = tif->GetRasterXSize();
  const int h = tif->GetRasterYSize();
  std::vector<double> values(static_cast<std::size_t>(w) * static_cast<std::size_t>(h));
  ASSERT_EQ(tif->GetRasterBand(1)->RasterIO(GF_Read, 0, 0, w, h, values.data(), w, h, GDT_Float64, 0, 0), CE_None);
  double total = 0.0;
  for (const double v : values)
    if (std::isfinite(v)) total += v * transform[1] * -transform[5] / 1e4;  // per ha -> count
  EXPECT_NEAR(total, 81.0, 0.03 * 81.0);
}

// A file whose automatic CRS differs (lon/lat input gets its own equal-area CRS) is reprojected
// into the batch CRS, the first input's: every feature of the GeoPackage is in one CRS.
TEST(BatchCli, GisFeaturesOfEveryFileAreInTheBatchCrs) {
  if (std::system("command -v ogr2ogr > /dev/null 2>&1") != 0) GTEST_SKIP() << "ogr2ogr (gdal-bin) not installed";
  TempDir in;
  fs::copy_file(sample("season/burn.gpkg"), in.path() / "burn.gpkg");
  const std::string command = "ogr2ogr -t_srs EPSG:4326 " + (in.path() / "north.gpkg").string() + " " +
                              sample("season/north.gpkg") + " > /dev/null 2>&1";
  ASSERT_EQ(std::system(command.c_str()), 0);
  TempDir out;
  const auto r = run_cli(batch(in.path().string(), out.file("o"), "--gis --analyses density"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto run = nlohmann::json::parse(read(out.file("o/run.json")));
  EXPECT_EQ(run["crs"], "EPSG:32630");
  EXPECT_NE(run["inputs"][1]["crs"], "EPSG:32630");  // north in lon/lat: its own local CRS
  EXPECT_NE(run["warnings"].dump().find("reprojected to the batch CRS EPSG:32630"), std::string::npos)
      << run["warnings"];
  GDALDatasetUniquePtr gpkg(GDALDataset::Open(out.file("o/plot-results.gpkg").c_str(), GDAL_OF_VECTOR));
  ASSERT_TRUE(gpkg);
  OGRLayer* layer = gpkg->GetLayerByName("plot_results");
  EXPECT_STREQ(layer->GetSpatialRef()->GetAuthorityCode(nullptr), "32630");
  for (auto& f : *layer) {
    // In UTM 30N every plot's area is within 0.1% of the area analysed in its own CRS (the
    // CRS rule's tolerance), and north sits where burn's CRS puts it (metres, not degrees).
    const double area = f->GetFieldAsDouble("area") * 1e4;  // ha -> m2
    EXPECT_NEAR(f->GetGeometryRef()->toMultiPolygon()->get_Area(), area, 1e-3 * area) << f->GetFieldAsString("plot");
    OGREnvelope e;
    f->GetGeometryRef()->getEnvelope(&e);
    EXPECT_GT(e.MinX, 1e5) << f->GetFieldAsString("plot");
  }
}

TEST(BatchCli, ReRunGivesIdenticalFiles) {
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("a"), "--gis --surface --report")).exit_code, 0);
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("b"), "--gis --surface --report")).exit_code, 0);
  std::size_t compared = 0;
  for (auto it = fs::recursive_directory_iterator(out.file("a")); it != fs::recursive_directory_iterator(); ++it) {
    if (!it->is_regular_file()) continue;
    const fs::path rel = fs::relative(it->path(), out.file("a"));
    EXPECT_EQ(read(it->path()), read(fs::path(out.file("b")) / rel)) << rel;
    ++compared;
  }
  EXPECT_GT(compared, 30u);
}

TEST(BatchCli, ReportRendersInHeadlessChromium) {
  if (!fs::exists("/usr/bin/chromium")) GTEST_SKIP() << "chromium not installed (scripts/install-deps.sh installs it)";
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("o"), "--report")).exit_code, 0);
  const std::string html = read(out.file("o/report.html"));
  for (const char* part :
       {"SHA-256", "EPSG:32630", "Methods", "Garwood", "Plot maps", "L-function envelopes", "cautions",
        "The season pooled", "Between species", "leaves the global envelope", "(per ha)"})
    EXPECT_NE(html.find(part), std::string::npos) << part;
  EXPECT_EQ(html.find("src=\"http"), std::string::npos);  // self-contained
  const std::string png = out.file("shot.png");
  const std::string command =
      "timeout -k 5 90 /usr/bin/chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run "
      "--disable-background-networking --disable-component-update --disable-sync "
      "--user-data-dir=" +
      out.file("profile") + " --window-size=1200,1600 --screenshot=" + png + " file://" + out.file("o/report.html") +
      " > /dev/null 2>&1";
  ASSERT_EQ(screenshot_with_retry(command), 0);
  cairo_surface_t* image = cairo_image_surface_create_from_png(png.c_str());
  ASSERT_EQ(cairo_surface_status(image), CAIRO_STATUS_SUCCESS);
  const int width = cairo_image_surface_get_width(image);
  const int height = cairo_image_surface_get_height(image);
  const int stride = cairo_image_surface_get_stride(image);
  const unsigned char* data = cairo_image_surface_get_data(image);
  std::size_t ink = 0;
  for (int y = 0; y < height; ++y)
    for (int x = 0; x < width; ++x) {
      const unsigned char* px = data + y * stride + 4 * x;
      if (px[0] < 200 || px[1] < 200 || px[2] < 200) ++ink;
    }
  cairo_surface_destroy(image);
  // A blank page has no dark pixels; the report's text and tables cover several percent.
  EXPECT_GT(static_cast<double>(ink) / (static_cast<double>(width) * height), 0.02);
}

namespace {

// A PNG screenshot of `page` by headless Chromium, `width` x `height` pixels.
struct Screenshot {
  cairo_surface_t* image = nullptr;
  Screenshot(const TempDir& dir, const std::string& page, const std::string& name, int width, int height) {
    const std::string png = dir.file(name + ".png");
    const std::string command =
        "timeout -k 5 90 /usr/bin/chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run "
        "--disable-background-networking --disable-component-update --disable-sync --hide-scrollbars "
        "--force-device-scale-factor=1 --user-data-dir=" +
        dir.file("profile-" + name) + " --window-size=" + std::to_string(width) + "," + std::to_string(height) +
        " --screenshot=" + png + " file://" + page + " > /dev/null 2>&1";
    if (screenshot_with_retry(command) == 0) image = cairo_image_surface_create_from_png(png.c_str());
  }
  ~Screenshot() {
    if (image != nullptr) cairo_surface_destroy(image);
  }
  Screenshot(const Screenshot&) = delete;
  Screenshot& operator=(const Screenshot&) = delete;
  [[nodiscard]] bool ok() const { return image != nullptr && cairo_surface_status(image) == CAIRO_STATUS_SUCCESS; }
  // Darkest channel of the pixel at (x, y).
  [[nodiscard]] int dark(int x, int y) const {
    const unsigned char* px = cairo_image_surface_get_data(image) + y * cairo_image_surface_get_stride(image) + 4 * x;
    return std::min({px[0], px[1], px[2]});
  }
};

std::string unescape(std::string text) {
  for (const auto& [entity, c] : {std::pair{"&lt;", "<"}, std::pair{"&gt;", ">"}, std::pair{"&quot;", "\""},
                                  std::pair{"&#39;", "'"}, std::pair{"&amp;", "&"}})
    for (auto at = text.find(entity); at != std::string::npos; at = text.find(entity, at + 1))
      text.replace(at, std::string(entity).size(), c);
  return text;
}

}  // namespace

// Each figure as the report shows it must look as its own SVG file drawn alone. Both
// pages lay the figures out on the same grid: the report with each inlined figure moved
// onto its cell (the rest of the page under it), the reference with each figure's file as
// an image (an image is its own document, so its ids cannot clash). Were the figures' glyph
// ids to clash, the titles and labels in the report would take another figure's letter
// shapes and the cells would differ where the text is.
TEST(BatchCli, ReportFigureTitlesRenderAsTheirOwnFiles) {
  if (!fs::exists("/usr/bin/chromium")) GTEST_SKIP() << "chromium not installed (scripts/install-deps.sh installs it)";
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("o"), "--report")).exit_code, 0);
  std::string html = read(out.file("o/report.html"));
  // figures.csv: title -> file.
  std::map<std::string, std::string> file_of;
  {
    std::ifstream in(out.file("o/figures.csv"));
    std::string line;
    std::getline(in, line);
    while (std::getline(in, line)) {
      const auto a = line.find(','), b = line.find(',', a + 1), c = line.find(',', b + 1);
      file_of[line.substr(c + 1)] = line.substr(b + 1, c - b - 1);
    }
  }
  // Cells 450 px wide; each figure at its own aspect (maps are shorter than charts) from
  // the top of its cell.
  constexpr int cell_w = 450, cell_h = 400, columns = 4;
  std::vector<int> heights;      // each figure's height in its cell
  std::vector<int> title_bands;  // its top 50 figure pixels (where the title is), in cell pixels
  const auto attribute = [](const std::string& svg, const std::string& name) {
    const auto at = svg.find(name + "=\"");
    return at == std::string::npos ? 0.0 : test::number_of(svg.substr(at + name.size() + 2, 20));
  };
  std::string reference = "<!doctype html><html><body style=\"margin:0;background:#fff\">";
  std::string placed;
  std::size_t k = 0;
  // Each inlined figure (std::regex recurses per character: found by hand).
  std::string without_figures;
  std::size_t from = 0;
  for (auto open = html.find("<figure>"); open != std::string::npos; open = html.find("<figure>", from), ++k) {
    const auto caption = html.find("<figcaption>", open);
    const auto caption_end = html.find("</figcaption></figure>", caption);
    ASSERT_NE(caption_end, std::string::npos);
    const std::string svg = html.substr(open + 8, caption - open - 8);
    const std::string title = unescape(html.substr(caption + 12, caption_end - caption - 12));
    without_figures += html.substr(from, open - from);
    from = caption_end + 22;
    ASSERT_TRUE(file_of.count(title)) << "figure '" << title << "' is not in figures.csv";
    const std::string at = "left:" + std::to_string(static_cast<int>(k % columns) * cell_w) +
                           "px;top:" + std::to_string(static_cast<int>(k / columns) * cell_h) + "px;";
    const double w = attribute(svg, "width");
    const double h = attribute(svg, "height");
    ASSERT_GT(w, 0.0) << title;
    heights.push_back(static_cast<int>(std::lround(cell_w * h / w)));
    title_bands.push_back(static_cast<int>(std::lround(50.0 * cell_w / w)));
    ASSERT_LE(heights.back(), cell_h) << title;
    const std::string box = "position:absolute;" + at + "width:" + std::to_string(cell_w) +
                            "px;height:" + std::to_string(heights.back()) + "px;margin:0;display:block;";
    reference += "<img style=\"" + box + "\" src=\"" + out.file("o/" + file_of[title]) + "\">";
    placed += "<div style=\"" + box + "background:#fff;z-index:" + std::to_string(100 + k) + "\">" + svg + "</div>";
  }
  without_figures += html.substr(from);
  html = without_figures;
  ASSERT_GE(k, 20u);  // the demo season: 4 plot maps and the L figures
  reference += "</body></html>";
  // The report itself, with every inlined figure moved onto its cell above the page.
  const std::string style =
      "<style>html,body{margin:0!important;padding:0!important;background:#fff}"
      ".cell svg{width:100%!important;height:100%!important;border:0!important;display:block}</style>";
  html.insert(html.find("</head>"), style);
  html.insert(html.find("</body>"), "<div class=cell>" + placed + "</div>");
  const std::string report_page = out.write("report-test.html", html);
  const std::string reference_page = out.write("reference.html", reference);
  const int rows = static_cast<int>((k + columns - 1) / columns);
  const Screenshot shown(out, report_page, "report", columns * cell_w, rows * cell_h);
  const Screenshot expected(out, reference_page, "reference", columns * cell_w, rows * cell_h);
  ASSERT_TRUE(shown.ok() && expected.ok());
  for (std::size_t f = 0; f < k; ++f) {
    const int x0 = static_cast<int>(f % columns) * cell_w;
    const int y0 = static_cast<int>(f / columns) * cell_h;
    // Pixels that are ink in either image and differ between them, as a share of the ink:
    // none in a faithful rendering; most of the text when letters take other shapes. First
    // in the title band (the top 50 pixels of the figure, where charts and maps put it),
    // then over the whole figure (axis labels, legend, caption).
    const auto compare = [&](int height) {
      std::size_t ink = 0, differ = 0;
      for (int y = y0; y < y0 + height; ++y)
        for (int x = x0; x < x0 + cell_w; ++x) {
          if (std::min(shown.dark(x, y), expected.dark(x, y)) >= 160) continue;
          ++ink;
          differ += std::abs(shown.dark(x, y) - expected.dark(x, y)) > 64;
        }
      return std::pair{ink, static_cast<double>(differ) / static_cast<double>(std::max<std::size_t>(ink, 1))};
    };
    const auto [title_ink, title_differ] = compare(title_bands[f]);
    const auto [ink, differ] = compare(heights[f]);
    EXPECT_GT(title_ink, 50u) << "figure " << f << ": no title drawn";
    EXPECT_LT(title_differ, 0.05) << "figure " << f << ": title differs";
    EXPECT_LT(differ, 0.02) << "figure " << f << " differs";
  }
}

// Inlined SVGs share cairo's glyph and clip names; ids are global in an HTML page, so
// without per-figure prefixes every figure drew its text with the first figure's glyphs.
TEST(BatchCli, ReportIdsAreUniqueAndEveryReferenceResolves) {
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("o"), "--report")).exit_code, 0);
  const std::string html = read(out.file("o/report.html"));
  std::set<std::string> ids;
  std::size_t count = 0;
  static const std::regex id_attribute(R"re(\bid="([^"]+)")re");
  for (auto it = std::sregex_iterator(html.begin(), html.end(), id_attribute); it != std::sregex_iterator(); ++it) {
    ++count;
    EXPECT_TRUE(ids.insert((*it)[1].str()).second) << "duplicate id " << (*it)[1].str();
  }
  EXPECT_GT(count, 100u);  // the figures' glyphs
  static const std::regex reference(R"re((?:href="#|url\(#)([^")]+))re");
  std::size_t references = 0;
  for (auto it = std::sregex_iterator(html.begin(), html.end(), reference); it != std::sregex_iterator();
       ++it, ++references)
    EXPECT_TRUE(ids.count((*it)[1].str())) << "unresolved reference #" << (*it)[1].str();
  EXPECT_GT(references, 100u);
}

// The report is written from the run: methods from the options used, units in every header,
// references for what it cites, cautions of the analyses that ran.
TEST(BatchCli, ReportTellsTheRunItWasMadeFrom) {
  TempDir out;
  ASSERT_EQ(
      run_cli(batch(sample("season"), out.file("o"), "--report --edge-correction border --rmax 12 --quadrats 3x3"))
          .exit_code,
      0);
  const std::string html = read(out.file("o/report.html"));
  for (const char* part : {"edge correction: border", "up to 12 m", "3x3 grid", "49 binomial-process simulations",
                           "Clark P.J. &amp; Evans F.C. (1954)", "Garwood F. (1936)"})
    EXPECT_NE(html.find(part), std::string::npos) << part;
  EXPECT_EQ(html.find("Donnelly K.P."), std::string::npos);  // not used with --edge-correction border: not cited
  EXPECT_EQ(html.find("Buckland"), std::string::npos);       // no transect analysis: no transect reference or caution
  // Density only: no randomness cautions, no randomness references.
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("d"), "--report --analyses density")).exit_code, 0);
  const std::string density_only = read(out.file("d/report.html"));
  EXPECT_EQ(density_only.find("CSR tests assume"), std::string::npos);
  EXPECT_EQ(density_only.find("Ripley B.D."), std::string::npos);
  EXPECT_NE(density_only.find("Intervals assume the sightings"), std::string::npos);
  // `stipple report` rebuilds the same page from the folder through the loader.
  ASSERT_EQ(run_cli("report " + out.file("o") + " --out " + out.file("again.html")).exit_code, 0);
  EXPECT_EQ(read(out.file("again.html")), html);
}

TEST(BatchCli, RunFileSetsAnalysesAndOptions) {
  TempDir dir;
  const auto run = dir.write("run.toml", "analyses = [\"density\"]\nunit = \"km2\"\n[randomness]\nsimulations = 19\n");
  const auto r = run_cli(batch(sample("season"), dir.file("o"), "--run-file " + run));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_TRUE(fs::exists(dir.file("o/density.csv")));
  EXPECT_FALSE(fs::exists(dir.file("o/randomness.csv")));
  EXPECT_NE(read(dir.file("o/density.csv")).find(",km2,"), std::string::npos);
  const auto bad = dir.write("bad.toml", "analyses = [\"density\"\nunit = 3\n");
  const auto b = run_cli(batch(sample("season"), dir.file("p"), "--run-file " + bad));
  EXPECT_EQ(b.exit_code, 2);
  EXPECT_NE(b.err.find("bad.toml: line"), std::string::npos) << b.err;
  // Run-file values pass the same range checks as the options.
  const auto zero = dir.write("zero.toml", "confidence = 1.5\n");
  test::expect_refused(run_cli(batch(sample("season"), dir.file("q"), "--run-file " + zero)),
                       "zero.toml: 'confidence' must lie strictly between 0 and 1");
  const auto rmax = dir.write("rmax.toml", "[randomness]\nrmax = 0\n");
  test::expect_refused(run_cli(batch(sample("season"), dir.file("q"), "--run-file " + rmax)),
                       "rmax.toml: 'rmax' must be a number greater than 0");
  // A misspelt key is refused, not silently ignored.
  const auto typo = dir.write("typo.toml", "unti = \"km2\"\n");
  test::expect_refused(run_cli(batch(sample("season"), dir.file("q"), "--run-file " + typo)),
                       "typo.toml: unknown key 'unti' (did you mean 'unit'?)");
}

TEST(BatchCli, RunFilePathsAreRelativeToTheRunFile) {
  TempDir dir;
  fs::create_directories(dir.file("config"));
  (void)dir.write("config/p.csv", "species,p\nbirch,0.5\nhazel,0.5\njuniper,0.5\nwood-ant,0.5\n");
  const auto run = dir.write("config/run.toml", "analyses = [\"density\"]\n[density]\ndetection = \"p.csv\"\n");
  const auto r = run_cli(batch(sample("season"), dir.file("o"), "--run-file " + run));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto density = nlohmann::json::parse(read(dir.file("o/density.json")));
  ASSERT_FALSE(density.empty());
  for (const auto& e : density)
    if (!e["species"].is_null()) {
      EXPECT_EQ(e["detection_probability"], 0.5) << e.dump();
    }
}

TEST(BatchCli, ShapefilePairsAndBadInputs) {
  TempDir out;
  const auto r = run_cli(batch(sample("shapefiles"), out.file("o"),
                               "--pattern '*-sightings.shp' --plots-name '{*}-plot.shp' --analyses density"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(read(out.file("o/density.csv")).find("north-sightings.shp,plot,north,birch,81,"), std::string::npos);
  EXPECT_EQ(run_cli(batch(sample("season"), out.file("x"), "--shard 4/3")).exit_code, 2);
  EXPECT_EQ(run_cli(batch(sample("season"), out.file("x"), "--pattern '*.nothing'")).exit_code, 2);
  EXPECT_EQ(run_cli(batch("/no/such/folder", out.file("x"))).exit_code, 2);
  test::expect_refused(run_cli(batch(sample("season"), out.file("x"), "--analyses transect --truncate abc")),
                       "--truncate abc: give a distance in metres");
  test::expect_refused(run_cli(batch(sample("season"), out.file("x"), "--quadrats 0x4")),
                       "--quadrats needs between 2 and 10000 cells");
  test::expect_refused(run_cli(batch(sample("season"), out.file("x"), "--analyses counts")),
                       "--analyses takes density, randomness, transect");
  const auto over = run_cli(batch(sample("season"), sample("season")));
  EXPECT_EQ(over.exit_code, 2);
  EXPECT_NE(over.err.find("the output folder holds inputs"), std::string::npos) << over.err;
}

TEST(SurfaceCli, WritesOneGeoTiffPerSpecies) {
  TempDir out;
  const auto r =
      run_cli("surface " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --out " + out.file("s"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  for (const char* name : {"birch.tif", "hazel.tif", "juniper.tif", "wood-ant.tif", "all-species.tif"})
    EXPECT_TRUE(fs::exists(out.file(std::string("s/") + name))) << name;
}

}  // namespace
}  // namespace stipple

namespace stipple {
namespace {

TEST(BatchCli, SlurmArrayScriptShardsMergeToTheSingleRun) {
  // Runs scripts/cluster/slurm-batch.sh as Slurm would: one process per array task.
  test::TempDir out;
  const std::string script = std::string(STIPPLE_SAMPLE_DIR) + "/../scripts/cluster/slurm-batch.sh";
  for (int task = 1; task <= 2; ++task) {
    const std::string command = "SLURM_ARRAY_TASK_ID=" + std::to_string(task) +
                                " SLURM_ARRAY_TASK_COUNT=2 SLURM_CPUS_PER_TASK=1 STIPPLE=" + std::string(STIPPLE_CLI) +
                                " bash " + script + " " + test::sample("season") + " " + out.file("r") +
                                " --simulations 49 --quiet > /dev/null 2>&1";
    ASSERT_EQ(std::system(command.c_str()), 0) << command;
  }
  ASSERT_EQ(test::run_cli("merge " + out.file("r/shard-1") + " " + out.file("r/shard-2") + " --out " + out.file("m"))
                .exit_code,
            0);
  ASSERT_EQ(
      test::run_cli("batch " + test::sample("season") + " --out " + out.file("one") + " --gis --quiet --simulations 49")
          .exit_code,
      0);
  for (const char* f : {"density.csv", "randomness.csv", "density.json", "randomness.json"})
    EXPECT_EQ(read(out.file(std::string("one/") + f)), read(out.file(std::string("m/") + f))) << f;
}

}  // namespace
}  // namespace stipple

namespace stipple {
namespace {

TEST(BatchCli, ListFileInputs) {
  test::TempDir dir;
  const auto list = dir.write("inputs.txt", "# this season's plots\n" + test::sample("season/north.gpkg") + "\n\n" +
                                                test::sample("season/burn.gpkg") + "\n");
  const auto r = test::run_cli("batch " + list + " --out " + dir.file("o") + " --analyses density --quiet");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const std::string density = read(dir.file("o/density.csv"));
  EXPECT_NE(density.find(",north,birch,81,"), std::string::npos) << density;
  EXPECT_NE(density.find(",burn,birch,89,"), std::string::npos) << density;
  EXPECT_EQ(density.find(",glade,"), std::string::npos);
}

}  // namespace
}  // namespace stipple

namespace stipple {
namespace {

TEST(BatchCli, TransectAnalysisEqualsTheSingleCommand) {
  test::TempDir dir;
  const auto r = test::run_cli("batch " + std::string(STIPPLE_SAMPLE_DIR) +
                               " --pattern transects.gpkg --analyses transect "
                               "--distance-field distance --size-field size --report --quiet --out " +
                               dir.file("o"));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto single = nlohmann::json::parse(test::run_cli("transect " + test::sample("transects.gpkg") + " --lines " +
                                                          test::sample("transects.gpkg") +
                                                          " --distance-field distance --size-field size --json -")
                                                .out);
  const auto records = nlohmann::json::parse(read(dir.file("o/transect.json")));
  ASSERT_EQ(records.size(), single["results"].size());
  for (std::size_t i = 0; i < records.size(); ++i) {
    auto rec = records[i];
    EXPECT_EQ(rec["file"], "transects.gpkg");
    rec.erase("file");
    EXPECT_EQ(rec, single["results"][i]) << i;
  }
  const std::string html = read(dir.file("o/report.html"));
  EXPECT_NE(html.find("Transect densities"), std::string::npos);
  EXPECT_NE(html.find("Detection functions"), std::string::npos);
}

TEST(BatchCli, ReportNeverReplacesTheBatchFilesOrItsInputs) {
  TempDir out;
  ASSERT_EQ(run_cli(batch(sample("season"), out.file("o"), "--analyses density")).exit_code, 0);
  const std::string before = read(out.file("o/density.csv"));
  test::expect_refused(run_cli("report " + out.file("o") + " --out " + out.file("o/density.csv")),
                       "refusing to write over an input");
  EXPECT_EQ(read(out.file("o/density.csv")), before);
  // An input listed in run.json.
  const auto run = nlohmann::json::parse(read(out.file("o/run.json")));
  const std::string input = run["inputs"][0]["path"].get<std::string>();
  const std::string input_bytes = read(input);
  test::expect_refused(run_cli("report " + out.file("o") + " --out " + input), "refusing to write over an input");
  EXPECT_EQ(read(input), input_bytes);
  EXPECT_EQ(run_cli("report " + out.file("o")).exit_code, 0);  // its own report.html is fine
}

}  // namespace
}  // namespace stipple
