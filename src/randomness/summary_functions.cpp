#include "stipple/randomness/summary_functions.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

#include <boost/math/constants/constants.hpp>

#include "stipple/error.hpp"
#include "stipple/geometry/spatial_index.hpp"

namespace stipple {

namespace {

constexpr double pi = boost::math::double_constants::pi;
const double nan_value = std::numeric_limits<double>::quiet_NaN();

// Ripley's isotropic weight for the pair (centre, other) at distance d.
double isotropic_weight(const Window& window, const Point& centre, double boundary, double d) {
  if (d <= boundary) return 1.0;  // the whole circle lies inside the window
  const double share = window.circle_fraction_inside(centre, d);
  return 1.0 / std::max(share, 1e-6);
}

std::size_t k_bin(double d, double dr) {
  // r_k = k dr, k >= 1: a distance d counts for every k with k dr >= d.
  const double b = std::ceil(d / dr - 1e-12);
  return b < 1.0 ? 1 : static_cast<std::size_t>(b);
}

// Kaplan-Meier (Baddeley & Gill 1997) or reduced-sample distribution function of
// distances `d` censored by boundary distances `b`, on the grid r.
std::vector<double> distance_distribution(const std::vector<double>& d, const std::vector<double>& b,
                                          const std::vector<double>& r, DistanceCorrection c) {
  std::vector<double> out(r.size(), nan_value);
  const std::size_t n = d.size();
  if (n == 0) return out;
  if (c == DistanceCorrection::border) {
    for (std::size_t k = 0; k < r.size(); ++k) {
      std::size_t at_risk = 0;
      std::size_t hits = 0;
      for (std::size_t i = 0; i < n; ++i) {
        if (b[i] < r[k]) continue;
        ++at_risk;
        if (d[i] <= r[k]) ++hits;
      }
      if (at_risk > 0) out[k] = static_cast<double>(hits) / static_cast<double>(at_risk);
    }
    return out;
  }
  std::vector<std::pair<double, bool>> obs(n);
  for (std::size_t i = 0; i < n; ++i) obs[i] = {std::min(d[i], b[i]), d[i] <= b[i]};
  std::sort(obs.begin(), obs.end());
  double survival = 1.0;
  std::size_t idx = 0;
  std::size_t at_risk = n;
  for (std::size_t k = 0; k < r.size(); ++k) {
    while (idx < n && obs[idx].first <= r[k]) {
      const double t = obs[idx].first;
      std::size_t deaths = 0;
      std::size_t total = 0;
      while (idx < n && obs[idx].first == t) {
        deaths += obs[idx].second ? 1u : 0u;
        ++total;
        ++idx;
      }
      if (at_risk > 0) survival *= 1.0 - static_cast<double>(deaths) / static_cast<double>(at_risk);
      at_risk -= total;
    }
    out[k] = 1.0 - survival;
  }
  return out;
}

}  // namespace

std::string_view pair_correction_name(PairCorrection c) {
  return c == PairCorrection::isotropic ? "isotropic" : "border";
}

std::string_view distance_correction_name(DistanceCorrection c) {
  return c == DistanceCorrection::kaplan_meier ? "kaplan-meier" : "border";
}

double default_rmax(const Window& window, std::size_t n) {
  const Bounds& b = window.bounds();
  const double quarter = 0.25 * std::min(b.width(), b.height());
  if (n < 1) return quarter;
  const double lambda = static_cast<double>(n) / window.area_m2();
  return std::min(quarter, 4.0 / std::sqrt(lambda));
}

SummaryContext::SummaryContext(const Window& window, SummaryOptions options) : window_(window), options_(options) {
  if (!(options_.rmax_m > 0.0) || options_.steps < 2)
    throw AnalysisError("summary functions need rmax > 0 and at least 2 distance steps");
  const double dr = options_.rmax_m / static_cast<double>(options_.steps);
  for (std::size_t k = 1; k <= options_.steps; ++k) r_.push_back(dr * static_cast<double>(k));
  const Bounds& b = window.bounds();
  const std::size_t m = std::max<std::size_t>(options_.f_grid, 2);
  for (std::size_t iy = 0; iy < m; ++iy) {
    for (std::size_t ix = 0; ix < m; ++ix) {
      const Point p{b.xmin + (static_cast<double>(ix) + 0.5) * b.width() / static_cast<double>(m),
                    b.ymin + (static_cast<double>(iy) + 0.5) * b.height() / static_cast<double>(m)};
      if (!window.contains_almost_surely(p)) continue;
      test_locations_.push_back(p);
      test_boundary_.push_back(window.boundary_distance(p));
    }
  }
}

SummaryCurves csr_curves(const std::vector<double>& r, double intensity_per_m2) {
  SummaryCurves c;
  c.r = r;
  for (const double x : r) {
    c.k.push_back(pi * x * x);
    c.l.push_back(x);
    c.g.push_back(1.0);
    const double g = 1.0 - std::exp(-intensity_per_m2 * pi * x * x);
    c.nn.push_back(g);
    c.f.push_back(g);
    c.j.push_back(1.0);
  }
  return c;
}

SummaryCurves summary_functions(const std::vector<Point>& points, const SummaryContext& context) {
  const Window& window = context.window();
  const SummaryOptions& o = context.options();
  const std::size_t n = points.size();
  if (n < 2) throw AnalysisError("summary functions need at least 2 points");
  const std::vector<double>& r = context.r();
  const std::size_t steps = r.size();
  const double dr = o.rmax_m / static_cast<double>(steps);
  const double area = window.area_m2();
  const double lambda = static_cast<double>(n) / area;
  const double bandwidth = 0.15 / std::sqrt(lambda);
  const double nd = static_cast<double>(n);

  std::vector<double> boundary(n);
  for (std::size_t i = 0; i < n; ++i) boundary[i] = window.boundary_distance(points[i]);
  const PointGrid grid(points);

  // Weighted pair distances: K histogram, border-K difference arrays, and the exact
  // Epanechnikov kernel sums of g at every r (no binning of the distances).
  std::vector<double> k_hist(steps + 2, 0.0);
  std::vector<double> border_diff(steps + 2, 0.0);
  const double pcf_reach = o.rmax_m + bandwidth;
  const bool isotropic = o.pair_correction == PairCorrection::isotropic;
  std::vector<double> kernel_g(steps, 0.0);  // sum of weight x kernel(r_k - d)
  // Adds `weight` x kernel(r_k - d) at every r_k = k dr within the kernel's reach and not
  // beyond `limit` (the centre's boundary distance for the border correction).
  const auto add_kernel = [&](double d, double weight, double limit) {
    const double lo = std::max(dr, d - bandwidth);
    const double hi = std::min({o.rmax_m, d + bandwidth, limit});
    if (lo > hi) return;
    for (auto k = static_cast<std::size_t>(std::ceil(lo / dr - 1e-12));
         k <= steps && static_cast<double>(k) * dr <= hi + 1e-12; ++k) {
      if (k == 0) continue;
      const double u = (r[k - 1] - d) / bandwidth;
      if (std::abs(u) < 1.0) kernel_g[k - 1] += weight * 0.75 * (1.0 - u * u) / bandwidth;
    }
  };
  const auto add_border = [&](std::size_t centre, double d) {
    const std::size_t first = k_bin(d, dr);
    const double last_r = std::min(boundary[centre], o.rmax_m);
    const auto last = static_cast<std::size_t>(std::floor(last_r / dr + 1e-12));
    if (first <= last && first <= steps) {
      border_diff[first] += 1.0;
      border_diff[std::min(last, steps) + 1] -= 1.0;
    }
  };
  grid.for_each_pair_within(pcf_reach, [&](std::size_t i, std::size_t j, double d) {
    double w = 2.0;
    if (isotropic) {
      w = isotropic_weight(window, points[i], boundary[i], d) + isotropic_weight(window, points[j], boundary[j], d);
    }
    if (d <= o.rmax_m) {
      k_hist[k_bin(d, dr)] += w;
      if (!isotropic) {
        add_border(i, d);
        add_border(j, d);
      }
    }
    if (isotropic) {
      add_kernel(d, w, std::numeric_limits<double>::infinity());
    } else {
      add_kernel(d, 1.0, boundary[i]);
      add_kernel(d, 1.0, boundary[j]);
    }
  });

  SummaryCurves c;
  c.r = r;
  c.k.resize(steps);
  const auto centres_beyond = [&](std::size_t k) {
    std::size_t centres = 0;
    for (std::size_t i = 0; i < n; ++i) centres += boundary[i] >= r[k] ? 1u : 0u;
    return centres;
  };
  if (isotropic) {
    double cumulative = 0.0;
    for (std::size_t k = 1; k <= steps; ++k) {
      cumulative += k_hist[k];
      c.k[k - 1] = area / (nd * (nd - 1.0)) * cumulative;
    }
  } else {
    // Border: |W| / (n - 1) * (neighbour count of centres with b >= r) / #(centres with b >= r).
    double running = 0.0;
    for (std::size_t k = 1; k <= steps; ++k) {
      running += border_diff[k];
      const std::size_t centres = centres_beyond(k - 1);
      c.k[k - 1] = centres > 0 ? area / (nd - 1.0) * running / static_cast<double>(centres) : nan_value;
    }
  }
  for (const double kv : c.k) c.l.push_back(std::isnan(kv) ? nan_value : std::sqrt(std::max(0.0, kv) / pi));

  // Pair correlation: exact Epanechnikov kernel sums over the isotropically weighted pairs,
  // or, with border correction, over the pairs whose centre lies at least r from the boundary.
  c.g.resize(steps);
  for (std::size_t k = 0; k < steps; ++k) {
    if (isotropic) {
      c.g[k] = area / (nd * (nd - 1.0)) * kernel_g[k] / (2.0 * pi * r[k]);
      continue;
    }
    const std::size_t centres = centres_beyond(k);
    c.g[k] =
        centres > 0 ? area / (nd - 1.0) * kernel_g[k] / (2.0 * pi * r[k] * static_cast<double>(centres)) : nan_value;
  }

  // G from nearest-neighbour distances; F from the test locations.
  const std::vector<double> nn = grid.nearest_neighbour_distances();
  c.nn = distance_distribution(nn, boundary, r, o.distance_correction);
  std::vector<double> empty(context.test_locations().size());
  for (std::size_t t = 0; t < empty.size(); ++t) empty[t] = grid.nearest_distance(context.test_locations()[t]);
  c.f = distance_distribution(empty, context.test_boundary(), r, o.distance_correction);
  c.j.resize(steps);
  for (std::size_t k = 0; k < steps; ++k) c.j[k] = c.f[k] < 1.0 ? (1.0 - c.nn[k]) / (1.0 - c.f[k]) : nan_value;
  c.nearest = nn;
  c.boundary = std::move(boundary);
  return c;
}

}  // namespace stipple
