#include "stipple/stats/chi_square.hpp"

#include <algorithm>
#include <numeric>

#include <boost/math/distributions/chi_squared.hpp>
#include <boost/random/binomial_distribution.hpp>

#include "stats/shuffle.hpp"
#include "stipple/error.hpp"
#include "stipple/stats/monte_carlo.hpp"

namespace stipple {

namespace {

double statistic_of(const std::vector<std::uint64_t>& observed, const std::vector<double>& expected) {
  double x2 = 0.0;
  for (std::size_t i = 0; i < observed.size(); ++i) {
    if (expected[i] <= 0.0) continue;
    const double d = static_cast<double>(observed[i]) - expected[i];
    x2 += d * d / expected[i];
  }
  return x2;
}

void fill_tails(ChiSquareTest& test) {
  const boost::math::chi_squared law(test.df);
  test.p_upper = boost::math::cdf(boost::math::complement(law, test.statistic));
  test.p_lower = boost::math::cdf(law, test.statistic);
  test.p_two_sided = std::min(1.0, 2.0 * std::min(test.p_upper, test.p_lower));
}

struct Compacted {
  std::vector<std::vector<std::uint64_t>> table;
  std::vector<std::uint64_t> rows;
  std::vector<std::uint64_t> cols;
  std::uint64_t total = 0;
};

Compacted compact(const std::vector<std::vector<std::uint64_t>>& table) {
  Compacted c;
  if (table.empty()) return c;
  const std::size_t ncol = table.front().size();
  std::vector<std::uint64_t> col_sums(ncol, 0);
  std::vector<std::size_t> keep_rows;
  for (std::size_t i = 0; i < table.size(); ++i) {
    if (table[i].size() != ncol) throw AnalysisError("contingency table rows differ in length");
    const auto sum = std::accumulate(table[i].begin(), table[i].end(), std::uint64_t{0});
    if (sum > 0) keep_rows.push_back(i);
    for (std::size_t j = 0; j < ncol; ++j) col_sums[j] += table[i][j];
  }
  std::vector<std::size_t> keep_cols;
  for (std::size_t j = 0; j < ncol; ++j)
    if (col_sums[j] > 0) keep_cols.push_back(j);
  for (const auto i : keep_rows) {
    std::vector<std::uint64_t> row;
    row.reserve(keep_cols.size());
    for (const auto j : keep_cols) row.push_back(table[i][j]);
    c.rows.push_back(std::accumulate(row.begin(), row.end(), std::uint64_t{0}));
    c.table.push_back(std::move(row));
  }
  for (const auto j : keep_cols) c.cols.push_back(col_sums[j]);
  c.total = std::accumulate(c.rows.begin(), c.rows.end(), std::uint64_t{0});
  return c;
}

double contingency_statistic(const std::vector<std::vector<std::uint64_t>>& table,
                             const std::vector<std::uint64_t>& rows, const std::vector<std::uint64_t>& cols,
                             std::uint64_t total) {
  double x2 = 0.0;
  const double n = static_cast<double>(total);
  for (std::size_t i = 0; i < rows.size(); ++i) {
    for (std::size_t j = 0; j < cols.size(); ++j) {
      const double e = static_cast<double>(rows[i]) * static_cast<double>(cols[j]) / n;
      const double d = static_cast<double>(table[i][j]) - e;
      x2 += d * d / e;
    }
  }
  return x2;
}

}  // namespace

double chi_square_upper_tail(double statistic, double df) {
  const boost::math::chi_squared law(df);
  return boost::math::cdf(boost::math::complement(law, std::max(0.0, statistic)));
}

ChiSquareTest pearson_goodness_of_fit(const std::vector<std::uint64_t>& observed, const std::vector<double>& expected) {
  if (observed.size() != expected.size()) throw AnalysisError("observed and expected counts differ in length");
  ChiSquareTest test;
  std::size_t cells = 0;
  double min_expected = 0.0;
  for (std::size_t i = 0; i < observed.size(); ++i) {
    if (expected[i] > 0.0) {
      min_expected = cells == 0 ? expected[i] : std::min(min_expected, expected[i]);
      ++cells;
    } else if (observed[i] > 0) {
      throw AnalysisError("a cell with zero expected count holds sightings");
    }
  }
  if (cells < 2) throw AnalysisError("a chi-square test needs at least two cells");
  test.statistic = statistic_of(observed, expected);
  test.df = static_cast<double>(cells - 1);
  test.min_expected = min_expected;
  fill_tails(test);
  return test;
}

MonteCarloTails multinomial_monte_carlo(const std::vector<std::uint64_t>& observed, const std::vector<double>& expected,
                                        std::size_t simulations, Engine& engine) {
  const auto total = std::accumulate(observed.begin(), observed.end(), std::uint64_t{0});
  const double expected_total = std::accumulate(expected.begin(), expected.end(), 0.0);
  // Expected counts under the null, rescaled to the observed total.
  std::vector<double> probabilities(expected.size());
  std::vector<double> null_expected(expected.size());
  for (std::size_t i = 0; i < expected.size(); ++i) {
    probabilities[i] = expected[i] / expected_total;
    null_expected[i] = probabilities[i] * static_cast<double>(total);
  }
  const double observed_x2 = statistic_of(observed, null_expected);

  std::vector<double> simulated;
  simulated.reserve(simulations);
  std::vector<std::uint64_t> draw(observed.size());
  for (std::size_t s = 0; s < simulations; ++s) {
    // Sequential conditional binomials give one multinomial draw.
    std::uint64_t remaining = total;
    double remaining_p = 1.0;
    for (std::size_t i = 0; i < probabilities.size(); ++i) {
      if (i + 1 == probabilities.size() || remaining == 0) {
        draw[i] = remaining;
        remaining = 0;
        continue;
      }
      const double p = remaining_p > 0.0 ? std::clamp(probabilities[i] / remaining_p, 0.0, 1.0) : 0.0;
      boost::random::binomial_distribution<std::int64_t, double> binomial(static_cast<std::int64_t>(remaining), p);
      draw[i] = static_cast<std::uint64_t>(binomial(engine));
      remaining -= draw[i];
      remaining_p -= probabilities[i];
    }
    simulated.push_back(statistic_of(draw, null_expected));
  }
  return monte_carlo_tails(observed_x2, simulated);
}

ChiSquareTest pearson_contingency(const std::vector<std::vector<std::uint64_t>>& table) {
  const Compacted c = compact(table);
  if (c.rows.size() < 2 || c.cols.size() < 2)
    throw AnalysisError("a contingency test needs at least two non-empty rows and columns");
  ChiSquareTest test;
  test.statistic = contingency_statistic(c.table, c.rows, c.cols, c.total);
  test.df = static_cast<double>((c.rows.size() - 1) * (c.cols.size() - 1));
  double min_expected = -1.0;
  for (const auto r : c.rows) {
    for (const auto col : c.cols) {
      const double e = static_cast<double>(r) * static_cast<double>(col) / static_cast<double>(c.total);
      min_expected = min_expected < 0.0 ? e : std::min(min_expected, e);
    }
  }
  test.min_expected = min_expected;
  fill_tails(test);
  return test;
}

double contingency_monte_carlo_p(const std::vector<std::vector<std::uint64_t>>& table, std::size_t simulations,
                                 Engine& engine) {
  const Compacted c = compact(table);
  if (c.rows.size() < 2 || c.cols.size() < 2)
    throw AnalysisError("a contingency test needs at least two non-empty rows and columns");
  const double observed_x2 = contingency_statistic(c.table, c.rows, c.cols, c.total);
  std::vector<std::size_t> labels;
  labels.reserve(c.total);
  for (std::size_t j = 0; j < c.cols.size(); ++j) labels.insert(labels.end(), c.cols[j], j);
  std::vector<std::vector<std::uint64_t>> draw(c.rows.size(), std::vector<std::uint64_t>(c.cols.size()));
  std::size_t extreme = 0;
  for (std::size_t s = 0; s < simulations; ++s) {
    shuffle(labels, engine);
    std::size_t k = 0;
    for (std::size_t i = 0; i < c.rows.size(); ++i) {
      std::fill(draw[i].begin(), draw[i].end(), 0);
      for (std::uint64_t m = 0; m < c.rows[i]; ++m) ++draw[i][labels[k++]];
    }
    if (at_least_as_large(contingency_statistic(draw, c.rows, c.cols, c.total), observed_x2)) ++extreme;
  }
  return monte_carlo_p_value(extreme, simulations);
}

}  // namespace stipple
