#pragma once
/// Monte Carlo envelopes and global tests of a summary function against simulations.

#include <cstddef>
#include <string>
#include <vector>

namespace stipple {

/// A distance range where the observed curve leaves the global envelope.
struct Departure {
  double from_m = 0.0;
  double to_m = 0.0;
  std::string direction;  ///< "above" (clustered for L, K, g, G) or "below" (regular)
};

struct EnvelopeResult {
  std::vector<double> r;
  std::vector<double> observed;
  std::vector<double> theoretical;
  std::vector<double> simulation_mean;
  std::vector<double> pointwise_low;   ///< alpha/2 quantile of the simulations at each r
  std::vector<double> pointwise_high;  ///< 1 - alpha/2 quantile
  /// Global extreme rank length envelope (Myllymaki et al. 2017): the range of every curve,
  /// observed included, that the ERL test does not reject; the observed curve leaves it
  /// exactly when erl_rejects.
  std::vector<double> global_low;
  std::vector<double> global_high;
  std::size_t simulations = 0;
  double mad_statistic = 0.0;  ///< max_r |obs - mean|
  double mad_p_value = 1.0;
  double dclf_statistic = 0.0;  ///< sum_r (obs - mean)^2 dr
  double dclf_p_value = 1.0;
  double erl_p_value = 1.0;     ///< extreme rank length p-value
  bool erl_rejects = false;     ///< erl_p_value < alpha
  double mean_deviation = 0.0;  ///< mean over r of (obs - mean): sign gives the direction
  std::vector<Departure> departures;
};

/// Global tests with p = (1 + #{T_i >= T_obs}) / (N + 1): maximum absolute deviation (MAD)
/// and the Diggle-Cressie-Loosmore-Ford integrated squared deviation (Diggle 1986; Cressie
/// 1991; Loosmore & Ford 2006, from memory: years), each curve (observed and simulated)
/// measured against the mean of the other N curves, so all N + 1 are exchangeable and the
/// test is exact at any N. `simulation_mean` is still the mean of the simulations alone. Global envelope and p-value by
/// extreme rank lengths, two-sided (Myllymaki, Mrkvicka, Grabarnik, Seijo & Hahn 2017, JRSS B 79:381-404). NaN values
/// (e.g. J where F = 1) are skipped. Throws AnalysisError without simulations.
[[nodiscard]] EnvelopeResult envelope_test(const std::vector<double>& r, const std::vector<double>& observed,
                                           const std::vector<double>& theoretical,
                                           const std::vector<std::vector<double>>& simulated, double alpha);

}  // namespace stipple
