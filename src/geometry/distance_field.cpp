#include "stipple/geometry/distance_field.hpp"

#include <boost/geometry.hpp>
#include <boost/geometry/geometries/segment.hpp>
#include <boost/geometry/index/rtree.hpp>

#include "stipple/error.hpp"

namespace bg = boost::geometry;
namespace bgi = boost::geometry::index;

namespace stipple {

using BgSegment = bg::model::segment<BgPoint>;

struct DistanceField::Index {
  bgi::rtree<BgSegment, bgi::quadratic<16>> segments;
  std::vector<BgPolygon> polygons;
  std::vector<BgBox> polygon_boxes;
};

DistanceField::DistanceField(const MappedFeatures& features) {
  if (features.segments.empty()) throw InputError("distance covariate: the layer has no line or boundary");
  auto index = std::make_shared<Index>();
  std::vector<BgSegment> segments;
  segments.reserve(features.segments.size());
  for (const auto& s : features.segments) segments.emplace_back(BgPoint(s.a.x, s.a.y), BgPoint(s.b.x, s.b.y));
  index->segments = bgi::rtree<BgSegment, bgi::quadratic<16>>(segments.begin(), segments.end());
  for (const auto& p : features.polygons) {
    index->polygons.push_back(p);
    index->polygon_boxes.push_back(bg::return_envelope<BgBox>(p));
  }
  index_ = std::move(index);
}

double DistanceField::distance(const Point& p) const {
  const BgPoint q(p.x, p.y);
  for (std::size_t i = 0; i < index_->polygons.size(); ++i)
    if (bg::covered_by(q, index_->polygon_boxes[i]) && bg::covered_by(q, index_->polygons[i])) return 0.0;
  double best = std::numeric_limits<double>::infinity();
  for (auto it = index_->segments.qbegin(bgi::nearest(q, 1)); it != index_->segments.qend(); ++it)
    best = std::min(best, static_cast<double>(bg::distance(q, *it)));
  return best;
}

}  // namespace stipple
