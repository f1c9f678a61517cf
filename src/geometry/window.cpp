#include "stipple/geometry/window.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include <boost/geometry.hpp>
#include <boost/math/constants/constants.hpp>

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
  bounds_ = {box.min_corner().x(), box.min_corner().y(), box.max_corner().x(), box.max_corner().y()};
  is_rectangle_ = shape_.size() == 1 && shape_[0].inners().empty() && ring_is_axis_aligned_rectangle(shape_[0].outer());
  const auto add_ring = [this](const BgPolygon::ring_type& ring) {
    for (std::size_t i = 0; i + 1 < ring.size(); ++i)
      edges_.push_back({{ring[i].x(), ring[i].y()}, {ring[i + 1].x(), ring[i + 1].y()}});
  };
  for (const auto& polygon : shape_) {
    add_ring(polygon.outer());
    for (const auto& inner : polygon.inners()) add_ring(inner);
  }
}

double Window::boundary_distance(const Point& p) const {
  double best2 = std::numeric_limits<double>::infinity();
  for (const auto& e : edges_) {
    const double ex = e.b.x - e.a.x;
    const double ey = e.b.y - e.a.y;
    const double length2 = ex * ex + ey * ey;
    double t = length2 > 0.0 ? ((p.x - e.a.x) * ex + (p.y - e.a.y) * ey) / length2 : 0.0;
    t = std::clamp(t, 0.0, 1.0);
    const double dx = e.a.x + t * ex - p.x;
    const double dy = e.a.y + t * ey - p.y;
    best2 = std::min(best2, dx * dx + dy * dy);
  }
  return std::sqrt(best2);
}

double Window::circle_fraction_inside(const Point& c, double r) const {
  constexpr double two_pi = 6.283185307179586;
  constexpr double pi = boost::math::double_constants::pi;
  if (!(r > 0.0)) return contains_almost_surely(c) ? 1.0 : 0.0;
  // Crossings of the circle with every edge: angle and unit direction from the centre.
  struct Crossing {
    double angle;
    double ux;
    double uy;
  };
  std::vector<Crossing> crossings;
  crossings.reserve(8);
  for (const auto& e : edges_) {
    // |a + t (b - a) - c|^2 = r^2, t in [0, 1]
    const double dx = e.b.x - e.a.x;
    const double dy = e.b.y - e.a.y;
    const double fx = e.a.x - c.x;
    const double fy = e.a.y - c.y;
    const double qa = dx * dx + dy * dy;
    if (qa == 0.0) continue;
    const double qb = 2.0 * (fx * dx + fy * dy);
    const double qc = fx * fx + fy * fy - r * r;
    const double disc = qb * qb - 4.0 * qa * qc;
    if (disc < 0.0) continue;
    const double root = std::sqrt(disc);
    for (const double t : {(-qb - root) / (2.0 * qa), (-qb + root) / (2.0 * qa)}) {
      if (t < 0.0 || t > 1.0) continue;
      const double ux = (fx + t * dx) / r;
      const double uy = (fy + t * dy) / r;
      double angle = std::atan2(uy, ux);
      if (angle < 0.0) angle += two_pi;
      crossings.push_back({angle, ux, uy});
    }
  }
  if (crossings.empty()) return contains_almost_surely({c.x + r, c.y}) ? 1.0 : 0.0;
  std::sort(crossings.begin(), crossings.end(), [](const Crossing& a, const Crossing& b) { return a.angle < b.angle; });
  double inside = 0.0;
  const std::size_t m = crossings.size();
  for (std::size_t k = 0; k < m; ++k) {
    const Crossing& from = crossings[k];
    const Crossing& to = crossings[(k + 1) % m];
    const double arc = k + 1 < m ? to.angle - from.angle : to.angle + two_pi - from.angle;
    if (arc <= 1e-12) continue;
    // The arc's midpoint without trigonometry: the bisector of its end directions
    // (reversed for arcs over a half turn; a quarter turn on from `from` at exactly pi).
    double mx = from.ux + to.ux;
    double my = from.uy + to.uy;
    double norm = std::sqrt(mx * mx + my * my);
    if (norm < 1e-9 || std::abs(arc - pi) < 1e-9) {
      mx = -from.uy;
      my = from.ux;
      norm = 1.0;
    } else if (arc > pi) {
      mx = -mx;
      my = -my;
    }
    if (contains_almost_surely({c.x + r * mx / norm, c.y + r * my / norm})) inside += arc;
  }
  return inside / two_pi;
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
    throw InputError(where + "plot polygon is not valid (" + reason + "); fix it in a GIS or set repair_geometry",
                     {"repair_geometry"});
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
  if (p.x < bounds_.xmin || p.x > bounds_.xmax || p.y < bounds_.ymin || p.y > bounds_.ymax) return false;
  return bg::covered_by(BgPoint(p.x, p.y), shape_);
}

bool Window::contains_almost_surely(const Point& p) const {
  if (p.x < bounds_.xmin || p.x > bounds_.xmax || p.y < bounds_.ymin || p.y > bounds_.ymax) return false;
  bool inside = false;
  for (const auto& e : edges_) {
    if ((e.a.y > p.y) != (e.b.y > p.y) && p.x < e.a.x + (p.y - e.a.y) * (e.b.x - e.a.x) / (e.b.y - e.a.y))
      inside = !inside;
  }
  return inside;
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
    throw AnalysisError(where +
                        "the convex-hull window needs at least 3 sightings that are not "
                        "on one line (" +
                        std::to_string(n) + " given)");
  }
  if (vertices >= n) {
    throw AnalysisError(where +
                            "every sighting is a vertex of its convex hull; the Ripley-Rasson "
                            "window is undefined (give the plot polygons as plots)",
                        {"plots"});
  }
  BgPoint centroid(0.0, 0.0);
  bg::centroid(hull, centroid);
  const double factor = 1.0 / std::sqrt(1.0 - static_cast<double>(vertices) / static_cast<double>(n));
  BgPolygon dilated;
  for (const auto& v : hull.outer()) {
    bg::append(dilated.outer(),
               BgPoint(centroid.x() + factor * (v.x() - centroid.x()), centroid.y() + factor * (v.y() - centroid.y())));
  }
  return Window::from_polygons(BgMultiPolygon{dilated}, context);
}

}  // namespace stipple
