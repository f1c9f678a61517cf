#pragma once
/// Detection functions for line and point transects, fitted by maximum likelihood to exact
/// or binned distances (Buckland, Anderson, Burnham, Laake, Borchers & Thomas 2001,
/// Introduction to Distance Sampling, OUP, ch. 3 and 6).

#include <cstddef>
#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stipple/stats/kolmogorov.hpp"  // kolmogorov_smirnov_p, used by goodness_of_fit

namespace stipple {

enum class KeyFunction { half_normal, hazard_rate, uniform };
enum class Adjustment { none, cosine, polynomial, hermite };
enum class TransectKind { line, point };

[[nodiscard]] std::string_view key_function_name(KeyFunction key);
[[nodiscard]] std::string_view adjustment_name(Adjustment adjustment);
/// Parses half-normal | hazard-rate | uniform; throws InputError otherwise.
[[nodiscard]] KeyFunction parse_key_function(std::string_view name);
/// Parses none | cosine | polynomial | hermite; throws InputError otherwise.
[[nodiscard]] Adjustment parse_adjustment(std::string_view name);

/// Distances of detected animals (metres): exact within the truncation distance, or
/// counts in distance bins whose last edge is the truncation distance.
struct DistanceData {
  TransectKind kind = TransectKind::line;
  double truncation_m = std::numeric_limits<double>::infinity();  ///< w; infinite = none
  std::vector<double> exact;                                      ///< perpendicular (lines) or radial (points)
  std::vector<double> bin_edges;                                  ///< binned data: edges c_0 < ... < c_m = w
  std::vector<std::uint64_t> bin_counts;                          ///< n_k in [c_{k-1}, c_k)
  [[nodiscard]] bool binned() const { return !bin_edges.empty(); }
  [[nodiscard]] std::size_t size() const;
};

/// A candidate model: key function with `terms` adjustment terms of one series.
struct DetectionModel {
  KeyFunction key = KeyFunction::half_normal;
  Adjustment adjustment = Adjustment::none;
  std::size_t terms = 0;
};

/// g(x) = key(x) (1 + sum_j a_j t_j(x)) / [key(0) (1 + sum_j a_j t_j(0))], so g(0) = 1.
/// Keys: half-normal exp(-x^2 / 2 sigma^2); hazard-rate 1 - exp(-(x / sigma)^-b)
/// (Hayes & Buckland 1983); uniform 1. Adjustments: cosine cos(j pi x / w), simple
/// polynomial (x / w)^(2j), Hermite H_2j(x / sigma); with the half-normal and hazard-rate
/// keys the series start at the second term (Buckland et al. 2001, §3.3.1, from memory).
class DetectionFunction {
 public:
  DetectionFunction(DetectionModel model, std::vector<double> parameters, double truncation_m);
  /// Probability of detecting an animal at distance x (metres).
  [[nodiscard]] double g(double x) const;
  [[nodiscard]] const DetectionModel& model() const { return model_; }
  /// Natural-scale parameters: sigma (m) [, b], then a_1..a_terms.
  [[nodiscard]] const std::vector<double>& parameters() const { return parameters_; }
  [[nodiscard]] double truncation_m() const { return truncation_m_; }
  /// Integral of g over [a, b] (lines) or of 2 pi r g(r) (points), by Gauss-Kronrod
  /// quadrature (Boost.Math); b may be infinite for key-only models.
  [[nodiscard]] double integral(double a, double b, TransectKind kind) const;
  /// mu = integral of g over [0, w]: the effective strip half-width (lines, m).
  [[nodiscard]] double effective_strip_width() const;
  /// nu = 2 pi integral of r g(r) over [0, w]: the effective area (points, m2).
  [[nodiscard]] double effective_area() const;

 private:
  [[nodiscard]] double key(double x) const;
  [[nodiscard]] double series(double x) const;
  DetectionModel model_;
  std::vector<double> parameters_;
  double truncation_m_;
  double normaliser_ = 1.0;
};

/// Names of a model's parameters: sigma, b, a1, a2, ...
[[nodiscard]] std::vector<std::string> parameter_names(const DetectionModel& model);

struct DetectionFit {
  explicit DetectionFit(DetectionFunction f) : function(std::move(f)) {}
  DetectionFunction function;
  std::size_t n = 0;                ///< detections used (within truncation)
  std::size_t parameter_count = 0;  ///< q
  double log_likelihood = 0.0;
  double aic = 0.0;
  double aicc = 0.0;
  bool converged = true;
  bool monotone = true;  ///< g non-increasing and >= 0 on [0, w]
  /// Of the working parameters (log sigma, log b, a_j); rows of parameters held at a bound are 0.
  std::vector<std::vector<double>> covariance;
  double detection_probability = 0.0;     ///< P_a = mu / w (lines), nu / (pi w^2) (points)
  double detection_probability_cv = 0.0;  ///< delta method from the observed information
  double effective_strip_width_m = 0.0;   ///< lines; 0 for points
  double effective_area_m2 = 0.0;         ///< points; 0 for lines
  double effective_cv = 0.0;              ///< CV of mu (lines) or nu (points)
};

/// Maximum-likelihood fit: NLopt subplex for key-only models; for adjusted models COBYLA
/// with g kept non-increasing and non-negative on a 50-point grid, from several starts (the
/// optimum with one term fewer, the new coefficient at 0, +-0.2 and, for the first term,
/// +-0.6), each restarted
/// with smaller steps until it gains nothing; the best feasible optimum wins. `warm_start`
/// (a fit of the same model to similar data, e.g. before a bootstrap resample) replaces the
/// starts by one search from its parameters. The covariance is the inverse of the observed
/// information (numerical Hessian of the log-likelihood).
/// Throws AnalysisError when there are fewer detections than parameters + 2, or the
/// model needs a finite truncation distance that the data lack.
[[nodiscard]] DetectionFit fit_detection_function(const DistanceData& data, const DetectionModel& model,
                                                  const DetectionFunction* warm_start = nullptr);

/// Every fit tried, sorted by AIC (best first). Each key is fitted alone and then, for
/// each adjustment series, with 1..max_terms terms, stepping forward while AIC improves
/// (Buckland et al. 2001, section 3.5, from memory); the fit that stopped the stepping is
/// listed too, so every candidate appears with its AIC. Only converged, monotone fits are
/// kept; the first is always one that forward selection accepted. Throws AnalysisError
/// when none fits.
[[nodiscard]] std::vector<DetectionFit> fit_candidates(const DistanceData& data, const std::vector<KeyFunction>& keys,
                                                       const std::vector<Adjustment>& adjustments,
                                                       std::size_t max_terms = 2);

/// Goodness of fit: Pearson chi-square over distance bins (df = bins - 1 - q; exact data
/// are binned on `bin_edges`, or on equal-width bins when empty), and for exact data the
/// Kolmogorov-Smirnov (Stephens 1970 approximation) and Cramer-von Mises (Anderson &
/// Darling 1952 asymptotic law) tests. The p-values ignore that parameters were estimated,
/// so they are conservative (common practice).
struct GoodnessOfFit {
  double chi_square = 0.0;
  double chi_square_df = 0.0;
  std::optional<double> chi_square_p;
  std::optional<double> ks_statistic;
  std::optional<double> ks_p;
  std::optional<double> cvm_statistic;
  std::optional<double> cvm_p;
  std::vector<double> bin_edges;
  std::vector<double> observed;
  std::vector<double> expected;
};
[[nodiscard]] GoodnessOfFit goodness_of_fit(const DetectionFit& fit, const DistanceData& data);

/// Upper-tail p-value of the Cramer-von Mises statistic W^2 from its asymptotic law
/// (Anderson & Darling 1952, from memory: series form).
[[nodiscard]] double cramer_von_mises_p(double w2);

/// The fitted cumulative distribution of detected distances, F(x) on [0, w].
[[nodiscard]] double fitted_cdf(const DetectionFit& fit, TransectKind kind, double x);

}  // namespace stipple
