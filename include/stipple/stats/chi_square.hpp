#pragma once
/// Pearson chi-square tests of counts: goodness of fit to expected counts, and
/// independence in a contingency table, with Monte Carlo p-values for small counts.

#include <cstdint>
#include <optional>
#include <vector>

#include "stipple/simulate/engine.hpp"
#include "stipple/stats/monte_carlo.hpp"

namespace stipple {

/// Result of a Pearson chi-square test.
struct ChiSquareTest {
  double statistic = 0.0;
  double df = 0.0;
  double p_upper = 1.0;                       ///< P(X2 >= observed): excess variation (clustering, heterogeneity)
  double p_lower = 1.0;                       ///< P(X2 <= observed): too little variation (regularity)
  double p_two_sided = 1.0;                   ///< 2 min(p_upper, p_lower), capped at 1
  double min_expected = 0.0;                  ///< smallest expected count; below 5 the chi-square law is poor
  std::optional<double> monte_carlo_p_value;  ///< upper-tail, conditional on the total
  std::size_t simulations = 0;                ///< Monte Carlo draws behind it (0 = none)
};

/// Smallest expected count for which the chi-square approximation is trusted.
/// Common practice (Cochran's rule), no single source.
inline constexpr double min_expected_for_chi_square = 5.0;

/// Upper-tail probability of the chi-square law with `df` degrees of freedom.
[[nodiscard]] double chi_square_upper_tail(double statistic, double df);

/// X2 = sum (O - E)^2 / E over cells with E > 0, df = cells - 1 (common practice;
/// e.g. Diggle 2003, ch. 2). Cells with E = 0 must have O = 0 and are left out.
/// Throws AnalysisError with fewer than two usable cells.
[[nodiscard]] ChiSquareTest pearson_goodness_of_fit(const std::vector<std::uint64_t>& observed,
                                                    const std::vector<double>& expected);

/// Multinomial draws of the observed total with cell probabilities proportional to
/// `expected` (for quadrats: the binomial process, same n in the same window); Monte Carlo
/// p-values as in Hope (1968, JRSS B 30:582-598, from memory: pages).
[[nodiscard]] MonteCarloTails multinomial_monte_carlo(const std::vector<std::uint64_t>& observed,
                                                      const std::vector<double>& expected, std::size_t simulations,
                                                      Engine& engine);

/// Pearson X2 of independence for an r x c table of counts (rows or columns summing to 0
/// are dropped), df = (r - 1)(c - 1). Throws AnalysisError when fewer than 2 rows or
/// columns remain.
[[nodiscard]] ChiSquareTest pearson_contingency(const std::vector<std::vector<std::uint64_t>>& table);

/// Monte Carlo p-value of the contingency X2 with both margins fixed: the column labels
/// of the individual counts are permuted at random (Hope 1968).
[[nodiscard]] double contingency_monte_carlo_p(const std::vector<std::vector<std::uint64_t>>& table,
                                               std::size_t simulations, Engine& engine);

}  // namespace stipple
