#pragma once
/// GIS outputs written through GDAL: plot polygons with their results (GeoPackage) and
/// intensity surfaces (GeoTIFF). Every file goes through a temporary name and a rename.

#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/window.hpp"
#include "stipple/intensity/kernel.hpp"

namespace stipple {

/// One plot x species (species empty = all together) with its density and test results.
struct PlotResultFeature {
  BgMultiPolygon shape;
  std::string file;
  std::string plot;
  std::optional<std::string> species;
  long long count = 0;
  double area = 0.0;
  double intensity = 0.0;
  double ci_low = 0.0;
  double ci_high = 0.0;
  double corrected_intensity = 0.0;
  std::optional<double> quadrat_p;
  std::optional<double> clark_evans_ratio;
  std::optional<double> clark_evans_p;
  std::optional<double> dclf_p;
  std::optional<std::string> verdict;
};

/// Writes a GeoPackage with layer `plot_results` in the CRS given as WKT. The file's
/// timestamps are fixed so a re-run gives an identical file.
void write_plot_results(const std::string& path, const std::string& crs_wkt,
                        const std::vector<PlotResultFeature>& features,
                        const std::vector<std::string>& protected_paths);

/// Reads the `plot_results` layers of several GeoPackages and writes them into one,
/// features ordered by file name (stable).
void merge_plot_results(const std::vector<std::string>& inputs, const std::string& path,
                        const std::vector<std::string>& protected_paths);

/// Writes a single-band Float64 GeoTIFF (NaN = no data) in the CRS given as WKT.
void write_geotiff(const std::string& path, const IntensityRaster& raster, const std::string& crs_wkt,
                   const std::string& description, const std::vector<std::string>& protected_paths);

}  // namespace stipple
