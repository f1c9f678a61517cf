#pragma once
/// Reading covariate rasters (elevation, moisture, land cover, ...) through GDAL into the
/// analysis CRS, as stipple's own value type.

#include <string>
#include <vector>

#include <optional>

#include "stipple/geometry/distance_field.hpp"
#include "stipple/geometry/raster_grid.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/geometry/window.hpp"
#include "stipple/input_facts.hpp"

namespace stipple {

struct CovariateRaster {
  RasterGrid grid;
  std::string label;       ///< "path (band 1)"
  std::string source_crs;  ///< the raster's own CRS ("EPSG:4326")
  bool reprojected = false;
  std::vector<std::string> notes;  ///< reprojection, bands ignored
};

/// Reads band 1 of any GDAL raster: the cells covering `area` (with one cell to spare on
/// every side). When the raster is north-up in the analysis CRS its cells are read as they
/// are; otherwise it is warped into the analysis CRS by nearest-neighbour resampling (each
/// new cell takes the value of the source cell under its centre, so values are never
/// interpolated), which a note states. The raster's no-data value and cells GDAL masks
/// become NaN. Throws InputError naming the file: not a raster, no georeferencing or CRS,
/// or no overlap with `area`.
[[nodiscard]] CovariateRaster read_covariate_raster(const std::string& path, const AnalysisCrs& crs,
                                                    const Bounds& area);

struct CovariateFeatures {
  MappedFeatures features;
  std::string label;  ///< "path: layer 'name'"
  std::vector<std::string> notes;
};

/// Reads the lines or polygons of a vector layer (the named one, else the only line layer,
/// else the only polygon layer) into the analysis CRS, for a distance covariate. Polygon
/// boundaries become segments and their insides count as distance 0. Throws InputError
/// naming the file, layer or feature: no such layer, no CRS, or a geometry that is neither.
[[nodiscard]] CovariateFeatures read_covariate_features(const std::string& path,
                                                        const std::optional<std::string>& layer,
                                                        const AnalysisCrs& crs);

/// Reads the polygons of a layer (management units) into the analysis CRS, one unit per
/// feature, named by `id_field` (default: the first of name, unit, plot, id that exists, else the
/// feature id). Throws InputError naming the file, layer or feature for a missing field, a
/// repeated name, or a geometry that is not a valid polygon.
[[nodiscard]] std::vector<Plot> read_polygon_units(const std::string& path, const std::optional<std::string>& layer,
                                                   const std::optional<std::string>& id_field, const AnalysisCrs& crs);

}  // namespace stipple
