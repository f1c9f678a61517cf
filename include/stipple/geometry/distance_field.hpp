#pragma once
/// Distance to the nearest of a set of mapped features (footpaths, rivers, woodland edges):
/// line segments, and polygons inside which the distance is 0.

#include <memory>
#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/window.hpp"

namespace stipple {

/// Features in the analysis CRS: segments of lines (and of polygon boundaries) and the
/// polygons whose inside is at distance 0.
struct MappedFeatures {
  std::vector<Window::Segment> segments;
  BgMultiPolygon polygons;
};

/// Euclidean distance to the nearest feature, through an R-tree of the segments
/// (Boost.Geometry). Immutable; copies share the index.
class DistanceField {
 public:
  /// Throws InputError when there are no segments.
  explicit DistanceField(const MappedFeatures& features);
  /// Metres from `p` to the nearest segment, 0 inside (or on) a polygon.
  [[nodiscard]] double distance(const Point& p) const;

 private:
  struct Index;
  std::shared_ptr<const Index> index_;
};

}  // namespace stipple
