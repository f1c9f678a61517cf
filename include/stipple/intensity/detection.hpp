#pragma once
/// Correction of intensities for imperfect detection (independent p-thinning).
///
/// If each individual is detected independently with probability p, the detected
/// sightings form a p-thinned Poisson process of intensity p*lambda (Kingman 1993,
/// Poisson Processes, Colouring Theorem, from memory: section 5.1), so the true
/// intensity is estimated by lambda_obs / p.

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stipple/intensity/poisson.hpp"

namespace stipple {

/// A detection probability with its standard error (0 = known exactly).
struct Detection {
  double probability = 1.0;
  double standard_error = 0.0;
};

/// Validates p in (0, 1] and se >= 0, finite; throws InputError naming `context`.
[[nodiscard]] Detection make_detection(double probability, double standard_error, std::string_view context);

/// Detection probabilities by species, with an optional value for every other species.
class DetectionTable {
 public:
  /// Every species detected with certainty (p = 1).
  DetectionTable() = default;
  /// One detection probability for all species.
  static DetectionTable uniform(Detection detection);
  /// Per-species values read from `source`; `fallback` applies to species not listed.
  static DetectionTable by_species(std::map<std::string, Detection> rows, std::optional<Detection> fallback,
                                   std::string source);

  /// The detection probability of a species. Throws InputError when the species is
  /// neither listed nor covered by a fallback.
  [[nodiscard]] Detection for_species(const std::string& species) const;
  /// True when no correction is asked for.
  [[nodiscard]] bool is_certain() const;
  /// The probability for species not listed (none when every species must be listed).
  [[nodiscard]] std::optional<Detection> fallback() const { return fallback_; }
  /// Species listed in the table.
  [[nodiscard]] std::vector<std::string> listed_species() const;

 private:
  std::map<std::string, Detection> by_species_;
  std::optional<Detection> fallback_ = Detection{};
  std::string source_;
};

/// How the corrected interval was obtained.
enum class CorrectionMethod {
  none,                ///< p = 1: the observed exact interval
  exact_divided_by_p,  ///< se(p) = 0, one p: exact Poisson limits divided by p (exact)
  delta_log,           ///< log-normal interval, var(log D) by the delta method
};

/// Machine-readable name of a correction method.
[[nodiscard]] std::string_view correction_method_name(CorrectionMethod method);

/// An intensity corrected for detection, per unit area.
struct CorrectedIntensity {
  double intensity = 0.0;
  Interval ci;
  double detection_probability = 1.0;  ///< n / sum(n_s / p_s): the effective p
  CorrectionMethod method = CorrectionMethod::none;
};

/// Corrects the intensity of a superposition of species for detection: D = sum_s n_s/p_s / A.
/// With one species, or all species sharing one p and se(p) = 0, the interval is the exact
/// Garwood interval divided by p. Otherwise a log-normal interval D exp(+-z CV) with
/// CV^2 = var(D) / D^2, var = sum_s [n_s/p_s^2 + n_s^2 se_s^2 / p_s^4] (delta method;
/// for one species CV^2 = 1/n + (se/p)^2, common practice). With no sightings the upper
/// limit is the exact upper limit divided by the lower log-normal limit of p.
/// `area` is in the reporting unit; counts and detections are parallel.
[[nodiscard]] CorrectedIntensity correct_for_detection(const std::vector<std::uint64_t>& counts,
                                                       const std::vector<Detection>& detections, double area,
                                                       double confidence);

}  // namespace stipple
