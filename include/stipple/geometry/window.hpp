#pragma once
/// Survey windows: the polygons (with holes, possibly in several parts) inside which
/// every sighting of a plot was searched for.

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include <boost/geometry/geometries/box.hpp>
#include <boost/geometry/geometries/multi_polygon.hpp>
#include <boost/geometry/geometries/point_xy.hpp>
#include <boost/geometry/geometries/polygon.hpp>

#include "stipple/geometry/point.hpp"

namespace stipple {

namespace geometry_detail {
class BoxGrid;
}

using BgPoint = boost::geometry::model::d2::point_xy<double>;
using BgPolygon = boost::geometry::model::polygon<BgPoint>;  // clockwise outer, closed
using BgMultiPolygon = boost::geometry::model::multi_polygon<BgPolygon>;
using BgBox = boost::geometry::model::box<BgPoint>;

/// Axis-aligned bounding rectangle, metres.
struct Bounds {
  double xmin = 0.0;
  double ymin = 0.0;
  double xmax = 0.0;
  double ymax = 0.0;
  [[nodiscard]] double width() const { return xmax - xmin; }
  [[nodiscard]] double height() const { return ymax - ymin; }
};

/// An observation window of positive area in the planar analysis CRS.
/// A value that exists is valid: built only through the factories, which check it.
class Window {
 public:
  /// Builds a window from polygons; orientation and closure are corrected.
  /// Throws InputError (prefixed with `context`) when the shape is empty, not valid
  /// (self-intersecting, ...) or of zero area.
  static Window from_polygons(BgMultiPolygon shape, std::string_view context);
  /// An axis-aligned rectangle [xmin, xmax] x [ymin, ymax].
  static Window rectangle(double xmin, double ymin, double xmax, double ymax);

  /// Area in square metres (holes excluded).
  [[nodiscard]] double area_m2() const { return area_m2_; }
  /// Length of all ring boundaries, metres.
  [[nodiscard]] double perimeter_m() const { return perimeter_m_; }
  [[nodiscard]] const Bounds& bounds() const { return bounds_; }
  /// True when the point lies inside or on the boundary. Decided by the crossing rule over
  /// the edges of the point's band; a point within a micrometre of an edge is left to
  /// Boost.Geometry's covered_by, so the boundary counts as inside exactly.
  [[nodiscard]] bool contains(const Point& p) const;
  /// True when the point is inside by the even-odd crossing rule over all rings; a point
  /// exactly on the boundary may go either way. Several times faster than contains(): for
  /// sampling and for arc tests, where the boundary has measure zero.
  [[nodiscard]] bool contains_almost_surely(const Point& p) const;
  /// True when the window is a single axis-aligned rectangle without holes.
  [[nodiscard]] bool is_rectangle() const { return is_rectangle_; }
  [[nodiscard]] const BgMultiPolygon& shape() const { return shape_; }
  /// Number of separate parts (outer rings).
  [[nodiscard]] std::size_t part_count() const { return shape_.size(); }
  /// Number of holes over all parts.
  [[nodiscard]] std::size_t hole_count() const;

  /// Distance from a point to the nearest edge of any ring (outer or hole), metres.
  [[nodiscard]] double boundary_distance(const Point& p) const;
  /// Share of the circumference of the circle (centre, radius) that lies inside the
  /// window, computed exactly from the circle's crossings with every polygon edge.
  /// Used as Ripley's isotropic edge-correction weight 1/share (Ripley 1977).
  [[nodiscard]] double circle_fraction_inside(const Point& centre, double radius) const;

  /// An edge of a ring.
  struct Segment {
    Point a;
    Point b;
  };
  [[nodiscard]] const std::vector<Segment>& edges() const { return edges_; }

 private:
  explicit Window(BgMultiPolygon shape);
  void build_edge_index();
  // Calls visit(edge index) for the edges whose bounding boxes may meet the box, in
  // ascending edge order (so sums and crossings come out as over all edges).
  template <typename Visit>
  void for_each_edge_near(double xmin, double ymin, double xmax, double ymax, Visit&& visit) const;
  BgMultiPolygon shape_;
  double area_m2_ = 0.0;
  double perimeter_m_ = 0.0;
  Bounds bounds_;
  bool is_rectangle_ = false;
  std::vector<Segment> edges_;
  // Edge index, for windows of many edges (null otherwise): a grid of cells over the
  // bounds, each listing the edges whose bounding box overlaps it, and its rows (bands)
  // listing the edges whose y-range overlaps them. Immutable, so copies share it.
  std::shared_ptr<const geometry_detail::BoxGrid> edge_grid_;
};

/// The Ripley–Rasson estimate of an unknown convex window from the points inside it:
/// the convex hull dilated about its centroid by the factor 1 / sqrt(1 - m/n), with m
/// the number of hull vertices and n the number of points.
/// Source: Ripley B.D. & Rasson J.-P. (1977) Finding the edge of a Poisson forest,
/// J. Appl. Probab. 14:483-491 (from memory: pages).
/// Throws AnalysisError when there are too few points or they are collinear.
[[nodiscard]] Window ripley_rasson_hull(const std::vector<Point>& points, std::string_view context);

}  // namespace stipple
