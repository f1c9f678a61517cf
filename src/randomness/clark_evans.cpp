#include "stipple/randomness/clark_evans.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <boost/math/distributions/normal.hpp>

#include "stipple/error.hpp"

namespace stipple {

namespace {

// The published constant 0.26136 (Clark & Evans 1954), sqrt((4 - pi) / (4 pi)) = 0.2613616
// rounded as printed; kept as printed so results match the paper and its users' tables.
constexpr double clark_evans_se_constant = 0.26136;

// Buffer width: 1/sqrt(lambda), beyond which a CSR nearest neighbour lies with probability
// exp(-pi) = 0.043, but never wider than the median boundary distance, so at least half
// of the points remain reference points in small or sparse plots.
double border_width(const Window& window, const std::vector<double>& boundary) {
  std::vector<double> sorted(boundary);
  std::nth_element(sorted.begin(), sorted.begin() + static_cast<std::ptrdiff_t>(sorted.size() / 2), sorted.end());
  const double median = sorted[sorted.size() / 2];
  return std::min(1.0 / std::sqrt(static_cast<double>(boundary.size()) / window.area_m2()), median);
}

}  // namespace

std::string_view edge_correction_name(NeighbourEdgeCorrection c) {
  switch (c) {
    case NeighbourEdgeCorrection::none: return "none";
    case NeighbourEdgeCorrection::donnelly: return "donnelly";
    case NeighbourEdgeCorrection::border: return "border";
  }
  return "none";
}

NeighbourEdgeCorrection parse_edge_correction(std::string_view name) {
  if (name == "none") return NeighbourEdgeCorrection::none;
  if (name == "donnelly") return NeighbourEdgeCorrection::donnelly;
  if (name == "border") return NeighbourEdgeCorrection::border;
  throw InputError("edge_correction must be none, donnelly or border (got '" + std::string(name) + "')",
                   {"edge_correction"});
}

NeighbourEdgeCorrection default_edge_correction(const Window& window) {
  return window.is_rectangle() ? NeighbourEdgeCorrection::donnelly : NeighbourEdgeCorrection::border;
}

bool clark_evans_normal_holds(NeighbourEdgeCorrection correction, std::size_t n) {
  switch (correction) {
    case NeighbourEdgeCorrection::donnelly: return n >= 10;
    case NeighbourEdgeCorrection::border: return n >= 1000;
    case NeighbourEdgeCorrection::none: return false;
  }
  return false;
}

double clark_evans_mean(const std::vector<double>& nearest, const std::vector<double>& boundary, const Window& window,
                        NeighbourEdgeCorrection correction) {
  const double w =
      correction == NeighbourEdgeCorrection::border && !boundary.empty() ? border_width(window, boundary) : -1.0;
  double sum = 0.0;
  std::size_t used = 0;
  for (std::size_t i = 0; i < nearest.size(); ++i) {
    if (correction == NeighbourEdgeCorrection::border && boundary[i] < w) continue;
    sum += nearest[i];
    ++used;
  }
  return used > 0 ? sum / static_cast<double>(used) : std::numeric_limits<double>::quiet_NaN();
}

ClarkEvansResult clark_evans(const std::vector<double>& nearest, const std::vector<double>& boundary,
                             const Window& window, std::optional<NeighbourEdgeCorrection> requested) {
  const std::size_t n = nearest.size();
  if (n < 2) throw AnalysisError("the Clark-Evans test needs at least 2 points");
  ClarkEvansResult r;
  r.n = n;
  r.edge_correction = requested.value_or(default_edge_correction(window));
  if (r.edge_correction == NeighbourEdgeCorrection::donnelly && !window.is_rectangle()) {
    r.edge_correction = NeighbourEdgeCorrection::border;
    r.note = "Donnelly's correction holds for rectangles only; the border method was used";
  }
  const double area = window.area_m2();
  const double nd = static_cast<double>(n);
  const double lambda = nd / area;
  r.mean_distance = clark_evans_mean(nearest, boundary, window, r.edge_correction);
  switch (r.edge_correction) {
    case NeighbourEdgeCorrection::none:
      r.reference_points = n;
      r.expected_distance = 0.5 / std::sqrt(lambda);
      r.standard_error = clark_evans_se_constant / std::sqrt(nd * lambda);
      break;
    case NeighbourEdgeCorrection::donnelly: {
      const double perimeter = window.perimeter_m();
      r.reference_points = n;
      r.expected_distance = 0.5 * std::sqrt(area / nd) + (0.0514 + 0.041 / std::sqrt(nd)) * perimeter / nd;
      r.standard_error = std::sqrt(0.0703 * area / (nd * nd) + 0.037 * perimeter * std::sqrt(area / std::pow(nd, 5)));
      break;
    }
    case NeighbourEdgeCorrection::border: {
      const double w = border_width(window, boundary);
      for (std::size_t i = 0; i < n; ++i) r.reference_points += boundary[i] >= w ? 1u : 0u;
      if (r.reference_points == 0)
        throw AnalysisError("no point lies far enough from the boundary for the border method");
      r.expected_distance = 0.5 / std::sqrt(lambda);
      r.standard_error = clark_evans_se_constant / std::sqrt(static_cast<double>(r.reference_points) * lambda);
      break;
    }
  }
  r.ratio = r.mean_distance / r.expected_distance;
  r.z = (r.mean_distance - r.expected_distance) / r.standard_error;
  const boost::math::normal standard;
  r.normal_p_value = 2.0 * boost::math::cdf(boost::math::complement(standard, std::abs(r.z)));
  r.p_value = r.normal_p_value;
  if (r.edge_correction == NeighbourEdgeCorrection::border) {
    if (!clark_evans_normal_holds(r.edge_correction, n)) {
      r.p_value = std::numeric_limits<double>::quiet_NaN();
      r.p_value_method = "none";
    }
  }
  return r;
}

}  // namespace stipple
