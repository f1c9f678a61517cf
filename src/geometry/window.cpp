#include "stipple/geometry/window.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <sstream>

#include <boost/geometry.hpp>
#include <boost/math/constants/constants.hpp>

#include "box_grid.hpp"
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
  build_edge_index();
}

namespace {

// A vector that keeps its first N elements on the stack: the circle and edge queries run
// millions of times per analysis, and almost always need only a few.
template <typename T, std::size_t N>
class SmallVector {
 public:
  void push_back(const T& value) {
    if (size_ < N) {
      inline_[size_] = value;
    } else {
      if (heap_.empty()) heap_.assign(inline_.begin(), inline_.end());
      heap_.push_back(value);
    }
    ++size_;
  }
  T* begin() { return size_ <= N ? inline_.data() : heap_.data(); }
  T* end() { return begin() + size_; }
  [[nodiscard]] std::size_t size() const { return size_; }
  [[nodiscard]] bool empty() const { return size_ == 0; }
  T& operator[](std::size_t i) { return begin()[i]; }
  void resize_down(std::size_t n) {
    size_ = n;
    if (size_ <= N && !heap_.empty()) {
      std::copy(heap_.begin(), heap_.begin() + static_cast<std::ptrdiff_t>(size_), inline_.begin());
      heap_.clear();
    }
  }

 private:
  std::array<T, N> inline_{};
  std::vector<T> heap_;
  std::size_t size_ = 0;
};

// Windows of this many edges or fewer are scanned edge by edge: an index would not pay.
constexpr std::size_t indexed_from_edges = 16;

double segment_distance2(const Point& p, const Window::Segment& e) {
  const double ex = e.b.x - e.a.x;
  const double ey = e.b.y - e.a.y;
  const double length2 = ex * ex + ey * ey;
  double t = length2 > 0.0 ? ((p.x - e.a.x) * ex + (p.y - e.a.y) * ey) / length2 : 0.0;
  t = std::clamp(t, 0.0, 1.0);
  const double dx = e.a.x + t * ex - p.x;
  const double dy = e.a.y + t * ey - p.y;
  return dx * dx + dy * dy;
}

}  // namespace

void Window::build_edge_index() {
  if (edges_.size() <= indexed_from_edges) return;
  std::vector<Bounds> boxes;
  boxes.reserve(edges_.size());
  for (const auto& e : edges_)
    boxes.push_back({std::min(e.a.x, e.b.x), std::min(e.a.y, e.b.y), std::max(e.a.x, e.b.x), std::max(e.a.y, e.b.y)});
  // About two cells per edge, shaped like the bounds; at most 1024 a side.
  edge_grid_ = std::make_shared<const geometry_detail::BoxGrid>(bounds_, boxes,
                                                                2.0 * static_cast<double>(edges_.size()), 1024.0, true);
}

template <typename Visit>
void Window::for_each_edge_near(double xmin, double ymin, double xmax, double ymax, Visit&& visit) const {
  if (!edge_grid_) {
    for (std::size_t i = 0; i < edges_.size(); ++i) visit(i);
    return;
  }
  if (xmax < bounds_.xmin || xmin > bounds_.xmax || ymax < bounds_.ymin || ymin > bounds_.ymax) return;
  const geometry_detail::BoxGrid& grid = *edge_grid_;
  const std::size_t x0 = grid.column(xmin);
  const std::size_t x1 = grid.column(xmax);
  const std::size_t y0 = grid.row(ymin);
  const std::size_t y1 = grid.row(ymax);
  SmallVector<std::uint32_t, 128> near;
  for (std::size_t y = y0; y <= y1; ++y)
    for (std::size_t x = x0; x <= x1; ++x)
      for (const auto i : grid.cell(x, y)) near.push_back(i);
  std::sort(near.begin(), near.end());
  near.resize_down(static_cast<std::size_t>(std::unique(near.begin(), near.end()) - near.begin()));
  for (const auto i : near) visit(static_cast<std::size_t>(i));
}

double Window::boundary_distance(const Point& p) const {
  double best2 = std::numeric_limits<double>::infinity();
  if (!edge_grid_) {
    for (const auto& e : edges_) best2 = std::min(best2, segment_distance2(p, e));
    return std::sqrt(best2);
  }
  // Rings of cells around the point's cell, until no unvisited cell can hold a nearer edge.
  const geometry_detail::BoxGrid& grid = *edge_grid_;
  const double cell_w = grid.cell_width();
  const double cell_h = grid.cell_height();
  const auto cx = static_cast<std::ptrdiff_t>(grid.column(p.x));
  const auto cy = static_cast<std::ptrdiff_t>(grid.row(p.y));
  const auto nx = static_cast<std::ptrdiff_t>(grid.columns());
  const auto ny = static_cast<std::ptrdiff_t>(grid.rows());
  const std::ptrdiff_t rings = std::max(nx, ny);
  for (std::ptrdiff_t k = 0; k <= rings; ++k) {
    for (std::ptrdiff_t y = cy - k; y <= cy + k; ++y) {
      if (y < 0 || y >= ny) continue;
      const bool edge_row = y == cy - k || y == cy + k;
      for (std::ptrdiff_t x = cx - k; x <= cx + k; x += edge_row ? 1 : 2 * k) {
        if (x >= 0 && x < nx)
          for (const auto i : grid.cell(static_cast<std::size_t>(x), static_cast<std::size_t>(y)))
            best2 = std::min(best2, segment_distance2(p, edges_[i]));
        if (k == 0) break;
      }
    }
    // Every edge not seen lies in cells outside the visited square (sides beyond the grid
    // hold none): its distance is at least the point's distance to that square's sides.
    double reach = std::numeric_limits<double>::infinity();
    if (cx - k > 0) reach = std::min(reach, p.x - (bounds_.xmin + static_cast<double>(cx - k) * cell_w));
    if (cx + k < nx - 1) reach = std::min(reach, bounds_.xmin + static_cast<double>(cx + k + 1) * cell_w - p.x);
    if (cy - k > 0) reach = std::min(reach, p.y - (bounds_.ymin + static_cast<double>(cy - k) * cell_h));
    if (cy + k < ny - 1) reach = std::min(reach, bounds_.ymin + static_cast<double>(cy + k + 1) * cell_h - p.y);
    if (reach == std::numeric_limits<double>::infinity() || (reach > 0.0 && best2 <= reach * reach)) break;
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
  SmallVector<Crossing, 16> crossings;
  // Edges whose boxes miss the circle's (with a margin for rounding) cannot cross it.
  const double margin = 1e-9 * (r + std::abs(c.x) + std::abs(c.y));
  for_each_edge_near(c.x - r - margin, c.y - r - margin, c.x + r + margin, c.y + r + margin, [&](std::size_t i) {
    const Segment& e = edges_[i];
    // |a + t (b - a) - c|^2 = r^2, t in [0, 1]
    const double dx = e.b.x - e.a.x;
    const double dy = e.b.y - e.a.y;
    const double fx = e.a.x - c.x;
    const double fy = e.a.y - c.y;
    const double qa = dx * dx + dy * dy;
    if (qa == 0.0) return;
    const double qb = 2.0 * (fx * dx + fy * dy);
    const double qc = fx * fx + fy * fy - r * r;
    const double disc = qb * qb - 4.0 * qa * qc;
    if (disc < 0.0) return;
    const double root = std::sqrt(disc);
    for (const double t : {(-qb - root) / (2.0 * qa), (-qb + root) / (2.0 * qa)}) {
      if (t < 0.0 || t > 1.0) continue;
      const double ux = (fx + t * dx) / r;
      const double uy = (fy + t * dy) / r;
      double angle = std::atan2(uy, ux);
      if (angle < 0.0) angle += two_pi;
      crossings.push_back({angle, ux, uy});
    }
  });
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
  if (!edge_grid_) return bg::covered_by(BgPoint(p.x, p.y), shape_);
  // The crossing rule is exact for a point clear of every edge it could cross (those of
  // its band); one within a micrometre of an edge is decided by covered_by.
  const double tolerance = 1e-6;
  bool inside = false;
  for (const auto i : edge_grid_->row_items(edge_grid_->row(p.y))) {
    const Segment& e = edges_[i];
    if (p.x >= std::min(e.a.x, e.b.x) - tolerance && p.x <= std::max(e.a.x, e.b.x) + tolerance &&
        p.y >= std::min(e.a.y, e.b.y) - tolerance && p.y <= std::max(e.a.y, e.b.y) + tolerance &&
        segment_distance2(p, e) <= tolerance * tolerance)
      return bg::covered_by(BgPoint(p.x, p.y), shape_);
    if ((e.a.y > p.y) != (e.b.y > p.y) && p.x < e.a.x + (p.y - e.a.y) * (e.b.x - e.a.x) / (e.b.y - e.a.y))
      inside = !inside;
  }
  return inside;
}

bool Window::contains_almost_surely(const Point& p) const {
  if (p.x < bounds_.xmin || p.x > bounds_.xmax || p.y < bounds_.ymin || p.y > bounds_.ymax) return false;
  bool inside = false;
  const auto cross = [&](const Segment& e) {
    if ((e.a.y > p.y) != (e.b.y > p.y) && p.x < e.a.x + (p.y - e.a.y) * (e.b.x - e.a.x) / (e.b.y - e.a.y))
      inside = !inside;
  };
  if (!edge_grid_) {
    for (const auto& e : edges_) cross(e);
    return inside;
  }
  for (const auto i : edge_grid_->row_items(edge_grid_->row(p.y))) cross(edges_[i]);
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
