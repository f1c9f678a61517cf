#include "stipple/stats/kolmogorov.hpp"

#include <algorithm>
#include <cmath>

namespace stipple {

double kolmogorov_smirnov_p(double d, std::size_t n) {
  const double m = static_cast<double>(n);
  const double lambda = (std::sqrt(m) + 0.12 + 0.11 / std::sqrt(m)) * d;
  if (lambda < 0.2) return 1.0;  // the series converges slowly there, and Q is 1 to 1e-10
  double q = 0.0;
  for (int k = 1; k <= 100; ++k) q += 2.0 * ((k % 2) ? 1.0 : -1.0) * std::exp(-2.0 * k * k * lambda * lambda);
  return std::clamp(q, 0.0, 1.0);
}

}  // namespace stipple
