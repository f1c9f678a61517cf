#pragma once
/// Confidence intervals shared by intensity, randomness and transect.

#include <vector>

namespace stipple {

/// Two-sided confidence limits.
struct Interval {
  double lower = 0.0;
  double upper = 0.0;
};

/// The percentile interval of a bootstrap or Monte Carlo sample at the two-sided
/// `confidence` level: its (1 - c)/2 and (1 + c)/2 sample quantiles, type 7 of Hyndman & Fan
/// (1996) (Efron & Tibshirani 1993, ch. 13). Throws AnalysisError on an empty sample and
/// InputError unless 0 < confidence < 1.
[[nodiscard]] Interval percentile_interval(std::vector<double> sample, double confidence);

}  // namespace stipple
