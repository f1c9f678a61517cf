#pragma once
/// Sample quantiles shared by envelopes and bootstrap intervals.

#include <vector>

namespace stipple {

/// The q-quantile of `sorted` (ascending, non-empty) by linear interpolation between order
/// statistics (Hyndman & Fan 1996, type 7, from memory).
[[nodiscard]] double quantile_of_sorted(const std::vector<double>& sorted, double q);

}  // namespace stipple
