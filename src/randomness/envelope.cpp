#include "stipple/randomness/envelope.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

#include "stats/quantile.hpp"
#include "stipple/error.hpp"
#include "stipple/stats/monte_carlo.hpp"

namespace stipple {

namespace {

double quantile(std::vector<double> values, double q) {
  std::sort(values.begin(), values.end());
  return quantile_of_sorted(values, q);
}

}  // namespace

EnvelopeResult envelope_test(const std::vector<double>& r, const std::vector<double>& observed,
                             const std::vector<double>& theoretical, const std::vector<std::vector<double>>& simulated,
                             double alpha) {
  if (simulated.empty()) throw AnalysisError("an envelope needs at least one simulation");
  const std::size_t m = r.size();
  const std::size_t s = simulated.size();
  EnvelopeResult e;
  e.r = r;
  e.observed = observed;
  e.theoretical = theoretical;
  e.simulations = s;
  e.simulation_mean.assign(m, 0.0);
  e.pointwise_low.assign(m, std::numeric_limits<double>::quiet_NaN());
  e.pointwise_high = e.pointwise_low;
  e.global_low = e.pointwise_low;
  e.global_high = e.pointwise_low;

  std::vector<bool> usable(m, true);
  for (std::size_t k = 0; k < m; ++k) {
    if (std::isnan(observed[k])) usable[k] = false;
    for (const auto& sim : simulated)
      if (std::isnan(sim[k])) usable[k] = false;
  }
  const double dr = m > 1 ? r[1] - r[0] : (m == 1 ? r[0] : 0.0);
  std::vector<double> column(s);
  for (std::size_t k = 0; k < m; ++k) {
    if (!usable[k]) continue;
    for (std::size_t i = 0; i < s; ++i) column[i] = simulated[i][k];
    e.simulation_mean[k] = std::accumulate(column.begin(), column.end(), 0.0) / static_cast<double>(s);
    e.pointwise_low[k] = quantile(column, alpha / 2.0);
    e.pointwise_high[k] = quantile(column, 1.0 - alpha / 2.0);
  }

  // MAD and DCLF statistics of every curve against the mean of the other s curves
  // (leave-one-out over all s + 1 curves, observed included). Every curve is then treated
  // alike, so under the null hypothesis the s + 1 statistics are exchangeable and the rank
  // p-value is exact at any s; a reference mean that holds the simulation being compared
  // but not the observed curve pulls simulated statistics down (Myllymaki et al. 2017,
  // section 3, and Baddeley et al. 2014, Ecol. Monogr. 84:477-489, from memory).
  std::vector<double> all_mean(m, 0.0);  // mean of all s + 1 curves
  for (std::size_t k = 0; k < m; ++k) {
    if (!usable[k]) continue;
    all_mean[k] = (e.simulation_mean[k] * static_cast<double>(s) + observed[k]) / static_cast<double>(s + 1);
  }
  const auto statistics = [&](const std::vector<double>& curve, double& mad, double& dclf, double& mean_dev) {
    mad = 0.0;
    dclf = 0.0;
    mean_dev = 0.0;
    std::size_t used = 0;
    for (std::size_t k = 0; k < m; ++k) {
      if (!usable[k]) continue;
      // mean of the other s curves = ((s + 1) all_mean - curve) / s, so
      // curve - that mean = (s + 1) / s (curve - all_mean).
      const double d = static_cast<double>(s + 1) / static_cast<double>(s) * (curve[k] - all_mean[k]);
      mad = std::max(mad, std::abs(d));
      dclf += d * d * dr;
      mean_dev += d;
      ++used;
    }
    if (used > 0) mean_dev /= static_cast<double>(used);
  };
  statistics(observed, e.mad_statistic, e.dclf_statistic, e.mean_deviation);
  std::size_t mad_extreme = 0;
  std::size_t dclf_extreme = 0;
  for (const auto& sim : simulated) {
    double mad = 0.0;
    double dclf = 0.0;
    double mean_dev = 0.0;
    statistics(sim, mad, dclf, mean_dev);
    mad_extreme += at_least_as_large(mad, e.mad_statistic) ? 1U : 0U;
    dclf_extreme += at_least_as_large(dclf, e.dclf_statistic) ? 1U : 0U;
  }
  e.mad_p_value = monte_carlo_p_value(mad_extreme, s);
  e.dclf_p_value = monte_carlo_p_value(dclf_extreme, s);

  // Extreme rank lengths over all s + 1 curves (observed first): pointwise two-sided
  // ranks R = min(rank from below, rank from above), each curve's ranks sorted ascending,
  // curves ordered lexicographically (smaller = more extreme).
  const std::size_t curves = s + 1;
  const auto curve = [&](std::size_t c) -> const std::vector<double>& { return c == 0 ? observed : simulated[c - 1]; };
  std::vector<std::vector<double>> ranks(curves);
  std::vector<std::pair<double, std::size_t>> order(curves);
  for (std::size_t k = 0; k < m; ++k) {
    if (!usable[k]) continue;
    for (std::size_t c = 0; c < curves; ++c) order[c] = {curve(c)[k], c};
    std::sort(order.begin(), order.end());
    // Mid-ranks for ties.
    for (std::size_t a = 0; a < curves;) {
      std::size_t b = a;
      while (b + 1 < curves && order[b + 1].first == order[a].first) ++b;
      const double low_rank = (static_cast<double>(a) + static_cast<double>(b)) / 2.0 + 1.0;
      const double high_rank = static_cast<double>(curves) + 1.0 - low_rank;
      for (std::size_t t = a; t <= b; ++t) ranks[order[t].second].push_back(std::min(low_rank, high_rank));
      a = b + 1;
    }
  }
  for (auto& v : ranks) std::sort(v.begin(), v.end());
  std::vector<std::size_t> by_extremeness(curves);
  std::iota(by_extremeness.begin(), by_extremeness.end(), 0);
  std::sort(by_extremeness.begin(), by_extremeness.end(),
            [&](std::size_t a, std::size_t b) { return ranks[a] < ranks[b]; });
  // p: simulated curves at least as extreme as the observed one (ties count), by the one
  // Monte Carlo rule.
  std::size_t as_extreme = 0;
  for (std::size_t c = 1; c < curves; ++c) as_extreme += ranks[c] <= ranks[0] ? 1U : 0U;
  e.erl_p_value = monte_carlo_p_value(as_extreme, s);

  // Global envelope (Myllymaki et al. 2017, section 4): the pointwise range of every curve,
  // the observed one included, whose own extreme-rank-length p-value,
  // #{j : R_j <= R_i} / (s + 1), does not reject at alpha (reject: p < alpha). A curve
  // outside it at some r is one the test rejects, and the other way round: every curve
  // more extreme than the observed one where its rank is smallest is excluded too, so a
  // rejected observed curve leaves the envelope there (exact ties apart).
  std::vector<std::vector<double>> sorted_ranks(curves);
  for (std::size_t t = 0; t < curves; ++t) sorted_ranks[t] = ranks[by_extremeness[t]];
  std::vector<bool> keep(curves, false);
  for (std::size_t c = 0; c < curves; ++c) {
    const auto at_most = static_cast<std::size_t>(std::upper_bound(sorted_ranks.begin(), sorted_ranks.end(), ranks[c]) -
                                                  sorted_ranks.begin());
    keep[c] = !(static_cast<double>(at_most) / static_cast<double>(curves) < alpha);
  }
  e.erl_rejects = !keep[0];
  for (std::size_t k = 0; k < m; ++k) {
    if (!usable[k]) continue;
    double lo = std::numeric_limits<double>::infinity();
    double hi = -lo;
    for (std::size_t c = 0; c < curves; ++c) {
      if (!keep[c]) continue;
      lo = std::min(lo, curve(c)[k]);
      hi = std::max(hi, curve(c)[k]);
    }
    if (lo <= hi) {
      e.global_low[k] = lo;
      e.global_high[k] = hi;
    }
  }
  // Departure ranges from the global envelope.
  for (std::size_t k = 0; k < m; ++k) {
    if (!usable[k] || std::isnan(e.global_low[k])) continue;
    std::string direction;
    if (observed[k] > e.global_high[k]) direction = "above";
    if (observed[k] < e.global_low[k]) direction = "below";
    if (direction.empty()) continue;
    if (!e.departures.empty() && e.departures.back().direction == direction && k > 0 &&
        e.departures.back().to_m == r[k - 1]) {
      e.departures.back().to_m = r[k];
    } else {
      e.departures.push_back({r[k], r[k], direction});
    }
  }
  return e;
}

}  // namespace stipple
