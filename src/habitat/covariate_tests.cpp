#include "stipple/habitat/covariate_tests.hpp"

#include <algorithm>
#include <cmath>
#include <string>
#include <utility>

#include "pieces.hpp"
#include "stipple/error.hpp"
#include "stipple/stats/kolmogorov.hpp"

namespace stipple {

namespace {

// Checks the sample; returns the window's total area.
double check(const CovariateSample& s) {
  if (s.piece_area_m2.size() != s.piece_value.size())
    throw InputError("covariate test: " + std::to_string(s.piece_value.size()) + " piece values for " +
                     std::to_string(s.piece_area_m2.size()) + " pieces");
  const double total = habitat_detail::total_piece_area(s.piece_area_m2, "covariate test");
  for (std::size_t i = 0; i < s.piece_value.size(); ++i)
    if (!std::isfinite(s.piece_value[i]))
      throw InputError("covariate test: window piece " + std::to_string(i) + " has a non-finite value");
  for (std::size_t j = 0; j < s.point_value.size(); ++j)
    if (!std::isfinite(s.point_value[j]))
      throw InputError("covariate test: sighting " + std::to_string(j) + " has a non-finite value");
  if (s.point_value.empty()) throw AnalysisError("covariate test: no sightings");
  const auto [lo, hi] = std::minmax_element(s.piece_value.begin(), s.piece_value.end());
  if (*lo == *hi) throw AnalysisError("covariate test: the covariate is constant over the window");
  return total;
}

}  // namespace

BermanZ1Test berman_z1(const CovariateSample& sample) {
  const double total = check(sample);
  const auto [mean, variance] = habitat_detail::area_moments(sample.piece_area_m2, total, sample.piece_value);
  const auto n = static_cast<double>(sample.point_value.size());
  BermanZ1Test t;
  for (const double v : sample.point_value) t.observed_sum += v;
  t.expected_sum = n * mean;
  t.standard_deviation = std::sqrt(n * variance);
  t.statistic = (t.observed_sum - t.expected_sum) / t.standard_deviation;
  t.p_two_sided = std::erfc(std::abs(t.statistic) / std::sqrt(2.0));
  return t;
}

CovariateKsTest covariate_ks(const CovariateSample& sample) {
  const double total = check(sample);
  std::vector<std::pair<double, double>> window;  // (value, area)
  window.reserve(sample.piece_value.size());
  for (std::size_t i = 0; i < sample.piece_value.size(); ++i)
    window.emplace_back(sample.piece_value[i], sample.piece_area_m2[i]);
  std::sort(window.begin(), window.end());
  std::vector<double> points = sample.point_value;
  std::sort(points.begin(), points.end());
  CovariateKsTest t;
  t.sightings = points.size();
  const auto n = static_cast<double>(points.size());
  // Walk the union of the jump values; both functions are right-continuous steps, so the
  // supremum is reached at one of them.
  std::size_t wi = 0;
  std::size_t pi = 0;
  double window_area = 0.0;
  while (wi < window.size() || pi < points.size()) {
    double v = wi < window.size() ? window[wi].first : points[pi];
    if (pi < points.size()) v = std::min(v, points[pi]);
    while (wi < window.size() && window[wi].first == v) window_area += window[wi++].second;
    while (pi < points.size() && points[pi] == v) ++pi;
    const double fw = window_area / total;
    const double fp = static_cast<double>(pi) / n;
    t.values.push_back(v);
    t.window_cdf.push_back(fw);
    t.sighting_cdf.push_back(fp);
    t.d = std::max(t.d, std::abs(fp - fw));
  }
  t.p = kolmogorov_smirnov_p(t.d, t.sightings);
  return t;
}

}  // namespace stipple
