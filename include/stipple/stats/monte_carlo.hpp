#pragma once
/// Monte Carlo p-values: one rule for every test of stipple.
///
/// With N simulations under the null hypothesis and k of them at least as extreme as the
/// observed statistic, p = (1 + k) / (N + 1): the observed value counts as one more draw
/// from the null (Barnard 1963; Hope 1968; Davison & Hinkley 1997, eq. 4.11). A simulated
/// value ties with the observed one when it is within 1e-9 of it, relative to
/// max(1, |observed|): discrete statistics (counts, ranks) computed in another order must
/// tie, not fall either side by rounding.

#include <cstddef>
#include <vector>

namespace stipple {

/// Whether `simulated` is at least as large as `observed`, ties included (rule above).
[[nodiscard]] bool at_least_as_large(double simulated, double observed) noexcept;

/// (1 + extreme) / (simulations + 1). Requires extreme <= simulations.
[[nodiscard]] double monte_carlo_p_value(std::size_t extreme, std::size_t simulations) noexcept;

/// Both one-sided Monte Carlo p-values of an observed statistic and the two-sided one.
struct MonteCarloTails {
  double upper = 1.0;      ///< (1 + #{sim >= obs}) / (N + 1): large values are extreme
  double lower = 1.0;      ///< (1 + #{sim <= obs}) / (N + 1): small values are extreme
  double two_sided = 1.0;  ///< 2 min(upper, lower), at most 1
};

/// The tails of `observed` among `simulated`. A NaN simulated value (the statistic is
/// undefined for that draw) is left out and N counts the others; with none, all are 1.
[[nodiscard]] MonteCarloTails monte_carlo_tails(double observed, const std::vector<double>& simulated);

}  // namespace stipple
