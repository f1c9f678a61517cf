// Local equal-area analysis CRS and geodesic areas (PROJ's geodesic routines, Karney 2013).

#include <cmath>

#include <boost/math/constants/constants.hpp>
#include <cstdio>

#include <cpl_conv.h>
#include <geodesic.h>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"

namespace stipple::io_detail {

namespace {

constexpr double degree = boost::math::double_constants::degree;

OGRSpatialReference geographic_of(const OGRSpatialReference& srs) {
  OGRSpatialReference geographic;
  if (geographic.CopyGeogCSFrom(&srs) != OGRERR_NONE)
    throw InputError("the CRS '" + crs_name(srs) + "' has no geographic base (datum) to measure on");
  geographic.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  return geographic;
}

}  // namespace

OGRSpatialReference local_equal_area(const std::vector<CentreSample>& samples, const OGRSpatialReference& datum_from,
                                     const std::string& label, std::string& centre_text) {
  const OGRSpatialReference geographic = geographic_of(datum_from);
  // Mean of unit vectors: right across the antimeridian and around a pole.
  double sx = 0.0;
  double sy = 0.0;
  double sz = 0.0;
  std::size_t used = 0;
  for (const auto& sample : samples) {
    if (sample.crs == nullptr || sample.points.empty()) continue;
    const TransformPtr to_geographic = make_transform(*sample.crs, geographic, label);
    for (auto [x, y] : sample.points) {
      if (to_geographic && !to_geographic->Transform(1, &x, &y)) continue;
      if (!std::isfinite(x) || !std::isfinite(y) || std::abs(y) > 90.0) continue;
      sx += std::cos(y * degree) * std::cos(x * degree);
      sy += std::cos(y * degree) * std::sin(x * degree);
      sz += std::sin(y * degree);
      ++used;
    }
  }
  if (used == 0)
    throw InputError(label +
                         ": no location could be converted to longitude/latitude to centre "
                         "the analysis CRS; give one as target_crs",
                     {"target_crs"});
  const double lon = std::atan2(sy, sx) / degree;
  const double lat = std::atan2(sz, std::hypot(sx, sy)) / degree;
  // Rounded to 1e-4 degrees (about 10 m): any centre keeps areas exact; this one reads well.
  const double lat0 = std::round(lat * 1e4) / 1e4;
  const double lon0 = std::round(lon * 1e4) / 1e4;
  OGRSpatialReference srs;
  srs.CopyGeogCSFrom(&geographic);
  if (srs.SetLAEA(lat0, lon0, 0.0, 0.0) != OGRERR_NONE)
    throw InputError(label + ": cannot build a Lambert azimuthal equal-area CRS");
  char centre[64];
  std::snprintf(centre, sizeof centre, "%.4f%c %.4f%c", std::abs(lat0), lat0 < 0 ? 'S' : 'N', std::abs(lon0),
                lon0 < 0 ? 'W' : 'E');
  centre_text = centre;
  srs.SetProjCS(("Lambert azimuthal equal-area centred on " + centre_text).c_str());
  srs.SetLinearUnits(SRS_UL_METER, 1.0);
  srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  return srs;
}

double geodesic_area(const BgMultiPolygon& shape, const OGRSpatialReference& srs, const std::string& label) {
  const OGRSpatialReference geographic = geographic_of(srs);
  const TransformPtr to_geographic = make_transform(srs, geographic, label);
  OGRErr major_error = OGRERR_NONE;
  OGRErr flattening_error = OGRERR_NONE;
  const double a = srs.GetSemiMajor(&major_error);
  const double inverse_f = srs.GetInvFlattening(&flattening_error);
  if (major_error != OGRERR_NONE || flattening_error != OGRERR_NONE || !(a > 0.0))
    throw InputError(label + ": the ellipsoid of " + crs_name(srs) + " is unknown; areas cannot be checked");
  geod_geodesic g;
  geod_init(&g, a, inverse_f > 0.0 ? 1.0 / inverse_f : 0.0);
  const auto ring_area = [&](const auto& ring) {
    geod_polygon polygon;
    geod_polygon_init(&polygon, 0);
    // Boost rings are closed: the last vertex repeats the first.
    for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
      double x = ring[i].x();
      double y = ring[i].y();
      if (to_geographic && !to_geographic->Transform(1, &x, &y))
        throw InputError(label + ": a vertex cannot be converted to longitude/latitude");
      geod_polygon_addpoint(&g, &polygon, y, x);
    }
    double area = 0.0;
    geod_polygon_compute(&g, &polygon, 0, 1, &area, nullptr);
    return std::abs(area);
  };
  double total = 0.0;
  for (const auto& polygon : shape) {
    total += ring_area(polygon.outer());
    for (const auto& inner : polygon.inners()) total -= ring_area(inner);
  }
  return total;
}

}  // namespace stipple::io_detail
