#include "stipple/stats/interval.hpp"

#include <algorithm>

#include "stats/quantile.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple {

Interval percentile_interval(std::vector<double> sample, double confidence) {
  if (!(confidence > 0.0 && confidence < 1.0))
    throw InputError("confidence must lie strictly between 0 and 1 (got " + format_general(confidence) + ")");
  if (sample.empty()) throw AnalysisError("a percentile interval needs at least one value");
  std::sort(sample.begin(), sample.end());
  const double a = (1.0 - confidence) / 2.0;
  return Interval{quantile_of_sorted(sample, a), quantile_of_sorted(sample, 1.0 - a)};
}

}  // namespace stipple
