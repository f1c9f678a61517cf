#pragma once
// Test helpers: temporary folders, small input files, and running the stipple binary.

#include <sys/wait.h>
#include <algorithm>
#include <charconv>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <string>

#include <gtest/gtest.h>

namespace stipple::test {

/// The bytes of a file ("" when it cannot be read).
inline std::string read_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

/// A number written with a decimal point, read whatever the locale (the suite runs under a
/// decimal-comma one, which std::stod would follow).
inline double number_of(const std::string& text) {
  double value = 0.0;
  const char* begin = text.data();
  while (begin != text.data() + text.size() && (*begin == ' ' || *begin == '+')) ++begin;
  std::from_chars(begin, text.data() + text.size(), value);
  return value;
}

/// A fresh folder under the system temp dir, removed at the end of the test.
class TempDir {
 public:
  TempDir() {
    std::random_device device;  // test scaffolding only: a unique folder name
    path_ = std::filesystem::temp_directory_path() /
            ("stipple-test-" + std::to_string(device()) + std::to_string(device()));
    std::filesystem::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  [[nodiscard]] std::string file(const std::string& name) const { return (path_ / name).string(); }
  [[nodiscard]] std::string write(const std::string& name, const std::string& text) const {
    std::ofstream(path_ / name) << text;
    return file(name);
  }
  [[nodiscard]] const std::filesystem::path& path() const { return path_; }

 private:
  std::filesystem::path path_;
};

/// WKT of WGS 84 / UTM zone 30N, for .prj sidecars of test CSVs.
inline const char* utm30_prj() {
  return "PROJCS[\"WGS 84 / UTM zone 30N\",GEOGCS[\"WGS 84\",DATUM[\"WGS_1984\",SPHEROID[\"WGS "
         "84\",6378137,298.257223563]],PRIMEM[\"Greenwich\",0],UNIT[\"degree\",0.0174532925199433]],"
         "PROJECTION[\"Transverse_Mercator\"],PARAMETER[\"latitude_of_origin\",0],PARAMETER["
         "\"central_meridian\",-3],PARAMETER[\"scale_factor\",0.9996],PARAMETER[\"false_easting\","
         "500000],PARAMETER[\"false_northing\",0],UNIT[\"metre\",1]]";
}

/// A GeoJSON FeatureCollection in EPSG:32630 from feature texts.
inline std::string geojson_utm(const std::string& features) {
  return "{\"type\":\"FeatureCollection\",\"crs\":{\"type\":\"name\",\"properties\":{\"name\":"
         "\"urn:ogc:def:crs:EPSG::32630\"}},\"features\":[" +
         features + "]}";
}

/// A polygon feature with a plot id, from a ring given as "[[x,y],...]".
inline std::string plot_feature(const std::string& id, const std::string& ring) {
  return "{\"type\":\"Feature\",\"properties\":{\"plot\":\"" + id +
         "\"},\"geometry\":{\"type\":\"Polygon\",\"coordinates\":[" + ring + "]}}";
}

struct RunResult {
  int exit_code = -1;
  std::string out;
  std::string err;
};

/// Runs the stipple binary with the given argument string (shell-quoted by the caller).
/// Arguments that start with a path run `stipple density`.
inline RunResult run_cli(const std::string& args) {
  TempDir dir;
  const std::string err_file = dir.file("stderr.txt");
  const bool subcommand = args.empty() || args[0] == '-' || args.rfind("inspect", 0) == 0 ||
                          args.rfind("randomness", 0) == 0 || args.rfind("transect", 0) == 0 ||
                          args.rfind("effort", 0) == 0 || args.rfind("batch", 0) == 0 || args.rfind("merge", 0) == 0 ||
                          args.rfind("report", 0) == 0 || args.rfind("surface", 0) == 0 ||
                          args.rfind("habitat", 0) == 0 || args.rfind("density", 0) == 0;
  const std::string command =
      std::string(STIPPLE_CLI) + (subcommand ? " " : " density ") + args + " 2>" + err_file + " </dev/null";
  RunResult result;
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return result;
  char buffer[4096];
  std::size_t n = 0;
  while ((n = fread(buffer, 1, sizeof buffer, pipe)) > 0) result.out.append(buffer, n);
  const int status = pclose(pipe);
  result.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  std::ifstream err(err_file);
  std::stringstream text;
  text << err.rdbuf();
  result.err = text.str();
  return result;
}

/// A refused input: exit code 2 and a one-line `error: ...` message containing `message`.
inline void expect_refused(const RunResult& r, const std::string& message) {
  EXPECT_EQ(r.exit_code, 2) << r.err;
  EXPECT_NE(r.err.find(message), std::string::npos) << "stderr: " << r.err;
  EXPECT_EQ(r.err.rfind("error: ", 0), 0u) << r.err;
  EXPECT_EQ(std::count(r.err.begin(), r.err.end(), '\n'), 1) << "one line: " << r.err;
}

inline std::string sample(const std::string& name) {
  return std::string(STIPPLE_SAMPLE_DIR) + "/" + name;
}

}  // namespace stipple::test
