#include "stipple/geometry/window.hpp"

#include <cmath>
#include <sstream>

#include <boost/geometry.hpp>

#include "stipple/error.hpp"

namespace bg = boost::geometry;

namespace stipple {

namespace {

bool ring_is_axis_aligned_rectangle(const BgPolygon::ring_type& ring) {
  // A closed ring of 5 points whose edges alternate horizontal and vertical.
  if (ring.size() != 5) return false;
  for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
    const bool horizontal = ring[i].y() == ring[i + 1].y();
    const bool vertical = ring[i].x() == ring[i + 1].x();
    if (horizontal == vertical) return false;
  }
  return true;
}

}  // namespace

Window::Window(BgMultiPolygon shape) : shape_(std::move(shape)) {
  area_m2_ = bg::area(shape_);
  perimeter_m_ = static_cast<double>(bg::perimeter(shape_));
  BgBox box(BgPoint(0.0, 0.0), BgPoint(0.0, 0.0));
  bg::envelope(shape_, box);
  bounds_ = {box.min_corner().x(), box.min_corner().y(), box.max_corner().x(),
             box.max_corner().y()};
  is_rectangle_ = shape_.size() == 1 && shape_[0].inners().empty() &&
                  ring_is_axis_aligned_rectangle(shape_[0].outer());
}

Window Window::from_polygons(BgMultiPolygon shape, std::string_view context) {
  const std::string where = context.empty() ? std::string() : std::string(context) + ": ";
  if (shape.empty()) throw InputError(where + "plot polygon is empty");
  for (const auto& polygon : shape) {
    for (const auto& p : polygon.outer()) {
      if (!std::isfinite(p.x()) || !std::isfinite(p.y()))
        throw InputError(where + "plot polygon has a NaN or infinite coordinate");
    }
  }
  bg::correct(shape);
  std::string reason;
  if (!bg::is_valid(shape, reason)) {
    throw InputError(where + "plot polygon is not valid (" + reason +
                     "); fix it in a GIS or pass --repair-geometry");
  }
  const double area = bg::area(shape);
  if (!(area > 0.0)) throw InputError(where + "plot polygon has zero area");
  return Window(std::move(shape));
}

Window Window::rectangle(double xmin, double ymin, double xmax, double ymax) {
  BgPolygon polygon;
  bg::append(polygon.outer(), BgPoint(xmin, ymin));
  bg::append(polygon.outer(), BgPoint(xmin, ymax));
  bg::append(polygon.outer(), BgPoint(xmax, ymax));
  bg::append(polygon.outer(), BgPoint(xmax, ymin));
  bg::append(polygon.outer(), BgPoint(xmin, ymin));
  return from_polygons(BgMultiPolygon{polygon}, "rectangle");
}

bool Window::contains(const Point& p) const {
  if (p.x < bounds_.xmin || p.x > bounds_.xmax || p.y < bounds_.ymin || p.y > bounds_.ymax)
    return false;
  return bg::covered_by(BgPoint(p.x, p.y), shape_);
}

std::size_t Window::hole_count() const {
  std::size_t holes = 0;
  for (const auto& polygon : shape_) holes += polygon.inners().size();
  return holes;
}

Window ripley_rasson_hull(const std::vector<Point>& points, std::string_view context) {
  const std::string where = context.empty() ? std::string() : std::string(context) + ": ";
  bg::model::multi_point<BgPoint> cloud;
  for (const auto& p : points) cloud.emplace_back(p.x, p.y);
  BgPolygon hull;
  bg::convex_hull(cloud, hull);
  const double hull_area = bg::area(hull);
  // Closed ring: the last vertex repeats the first.
  const std::size_t vertices = hull.outer().empty() ? 0 : hull.outer().size() - 1;
  const std::size_t n = points.size();
  if (n < 3 || !(hull_area > 0.0)) {
    throw AnalysisError(where + "the convex-hull window needs at least 3 sightings that are not "
                        "on one line (" + std::to_string(n) + " given)");
  }
  if (vertices >= n) {
    throw AnalysisError(where + "every sighting is a vertex of its convex hull; the Ripley-Rasson "
                        "window is undefined (add --plots)");
  }
  BgPoint centroid(0.0, 0.0);
  bg::centroid(hull, centroid);
  const double factor = 1.0 / std::sqrt(1.0 - static_cast<double>(vertices) /
                                                  static_cast<double>(n));
  BgPolygon dilated;
  for (const auto& v : hull.outer()) {
    bg::append(dilated.outer(), BgPoint(centroid.x() + factor * (v.x() - centroid.x()),
                                        centroid.y() + factor * (v.y() - centroid.y())));
  }
  return Window::from_polygons(BgMultiPolygon{dilated}, context);
}

}  // namespace stipple
