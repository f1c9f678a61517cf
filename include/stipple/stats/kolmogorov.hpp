#pragma once
/// The Kolmogorov-Smirnov upper-tail probability, shared by the detection-function
/// goodness of fit and the habitat covariate tests.

#include <cstddef>

namespace stipple {

/// Upper-tail p-value of the Kolmogorov-Smirnov statistic D for n observations:
/// Q((sqrt(n) + 0.12 + 0.11 / sqrt(n)) D), Q(l) = 2 sum (-1)^(k-1) exp(-2 k^2 l^2)
/// (Stephens 1970, from memory).
[[nodiscard]] double kolmogorov_smirnov_p(double d, std::size_t n);

}  // namespace stipple
