#pragma once
/// GIS outputs written through GDAL: plot polygons with their results (GeoPackage) and
/// intensity surfaces (GeoTIFF). Every file goes through a temporary name and a rename.

#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "stipple/geometry/raster_grid.hpp"
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
  double area_in_unit = 0.0;  ///< in `unit`
  std::string unit;           ///< m2, ha or km2: area and intensities (per unit)
  double intensity = 0.0;
  double ci_low = 0.0;
  double ci_high = 0.0;
  double detection_probability = 1.0;
  double corrected_intensity = 0.0;
  double corrected_ci_low = 0.0;
  double corrected_ci_high = 0.0;
  std::optional<double> quadrat_p;
  std::optional<double> clark_evans_ratio;
  std::optional<double> clark_evans_p;
  std::optional<double> dclf_p;
  std::optional<std::string> verdict;
};

/// The wide layer's column of a species: "d_" and the name, spaces, dots, dashes and
/// slashes as underscores ("wood ant" -> "d_wood_ant").
[[nodiscard]] std::string species_column_name(const std::string& species);

/// A GeoPackage written as batch files finish, through a temporary file renamed by commit().
/// Layer `plot_results`: one feature per plot x species (long). Layer `plot_species`: one
/// feature per plot with its corrected intensity per species in `d_<species>` columns and
/// `all_species` (wide; a species absent from a plot's file is null). Every feature is in
/// the CRS given to the constructor: features of other CRSs are reprojected. Timestamps are
/// fixed so a re-run gives an identical file.
class PlotResultsWriter {
 public:
  PlotResultsWriter(const std::string& path, const std::string& crs_wkt,
                    const std::vector<std::string>& protected_paths);
  ~PlotResultsWriter();
  PlotResultsWriter(const PlotResultsWriter&) = delete;
  PlotResultsWriter& operator=(const PlotResultsWriter&) = delete;
  /// The features of one file, whose shapes are in `source_crs_wkt`.
  void add(const std::vector<PlotResultFeature>& features, const std::string& source_crs_wkt);
  void commit();

 private:
  struct State;
  std::unique_ptr<State> state_;
};

/// Writes a GeoPackage with the layers of PlotResultsWriter in the CRS given as WKT.
void write_plot_results(const std::string& path, const std::string& crs_wkt,
                        const std::vector<PlotResultFeature>& features,
                        const std::vector<std::string>& protected_paths);

/// Reads the `plot_results` layers of several GeoPackages and writes them into one (both
/// layers), features ordered by file name (stable), in the first one's CRS.
void merge_plot_results(const std::vector<std::string>& inputs, const std::string& path,
                        const std::vector<std::string>& protected_paths);

/// One band of a GeoTIFF: its description and its values (row-major from the top, NaN = no
/// data).
struct GridBand {
  std::string description;
  std::vector<double> values;
};

/// Writes a Float64 GeoTIFF with one band per entry on the grid of `grid` (its values are
/// not written), in the CRS given as WKT, through a temporary file and a rename.
void write_geotiff(const std::string& path, const RasterGrid& grid, const std::vector<GridBand>& bands,
                   const std::string& crs_wkt, const std::vector<std::string>& protected_paths);

/// Writes a single-band Float64 GeoTIFF (NaN = no data) in the CRS given as WKT.
void write_geotiff(const std::string& path, const IntensityRaster& raster, const std::string& crs_wkt,
                   const std::string& description, const std::vector<std::string>& protected_paths);

}  // namespace stipple
