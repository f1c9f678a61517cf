#include "stipple/stats/monte_carlo.hpp"

#include <algorithm>
#include <cmath>

namespace stipple {

bool at_least_as_large(double simulated, double observed) noexcept {
  return simulated >= observed - 1e-9 * std::max(1.0, std::abs(observed));
}

double monte_carlo_p_value(std::size_t extreme, std::size_t simulations) noexcept {
  return static_cast<double>(1 + extreme) / static_cast<double>(simulations + 1);
}

MonteCarloTails monte_carlo_tails(double observed, const std::vector<double>& simulated) {
  std::size_t upper = 0;
  std::size_t lower = 0;
  std::size_t used = 0;
  for (const double s : simulated) {
    if (std::isnan(s)) continue;
    ++used;
    upper += at_least_as_large(s, observed) ? 1U : 0U;
    lower += at_least_as_large(-s, -observed) ? 1U : 0U;
  }
  MonteCarloTails tails;
  tails.upper = monte_carlo_p_value(upper, used);
  tails.lower = monte_carlo_p_value(lower, used);
  tails.two_sided = std::min(1.0, 2.0 * std::min(tails.upper, tails.lower));
  return tails;
}

}  // namespace stipple
