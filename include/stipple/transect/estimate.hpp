#pragma once
/// Densities and abundances from line and point transects: encounter rates, detection
/// functions and their combination (Buckland et al. 2001, ch. 3).

#include <cstddef>
#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "stipple/cancel.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/simulate/engine.hpp"
#include "stipple/transect/detection_function.hpp"

namespace stipple {

/// One transect line (effort: length x visits, km) or point station (effort: visits).
struct TransectUnit {
  std::string id;
  std::optional<std::string> stratum;
  double effort = 0.0;
};

/// One detection (of a cluster of `size` animals) on a transect.
struct TransectObservation {
  std::size_t transect = 0;  ///< index into TransectSurvey::transects
  double distance_m = 0.0;   ///< perpendicular (lines) or radial (points)
  double size = 1.0;
  std::string species;
};

/// Transects and their detections. Built only whole: every transect has positive finite
/// effort, every observation names a transect of the survey and has a finite distance
/// >= 0 and a positive finite cluster size; the constructor throws InputError naming the
/// transect or observation otherwise, and the members cannot be changed afterwards.
class TransectSurvey {
 public:
  /// An empty survey of line transects (analyse_transects refuses it: no transects).
  TransectSurvey() = default;
  TransectSurvey(TransectKind kind, std::vector<TransectUnit> transects, std::vector<TransectObservation> observations);

  [[nodiscard]] TransectKind kind() const noexcept { return kind_; }
  [[nodiscard]] const std::vector<TransectUnit>& transects() const noexcept { return transects_; }
  [[nodiscard]] const std::vector<TransectObservation>& observations() const noexcept { return observations_; }

 private:
  TransectKind kind_ = TransectKind::line;
  std::vector<TransectUnit> transects_;
  std::vector<TransectObservation> observations_;
};

/// Encounter rate n / L with the between-transect variance estimator R2 of Fewster et al.
/// (2009, Biometrics 65:225-236): var = K / (L^2 (K - 1)) sum_k l_k^2 (n_k / l_k - n / L)^2.
struct EncounterRate {
  double n = 0.0;
  double effort = 0.0;
  std::size_t transects = 0;
  double rate = 0.0;
  double variance = 0.0;
  double cv = 0.0;  ///< NaN when n = 0
};
[[nodiscard]] EncounterRate encounter_rate(const std::vector<double>& effort, const std::vector<double>& counts);

/// Satterthwaite degrees of freedom of a product of independent estimates:
/// df = CV^4 / sum (CV_i^4 / df_i) (Buckland et al. 2001, §3.7.1, from memory).
[[nodiscard]] double satterthwaite_df(const std::vector<std::pair<double, double>>& cv_and_df);

/// Log-normal interval [D / C, D C], C = exp(t_df sqrt(ln(1 + CV^2)))
/// (Burnham, Anderson & Laake 1980, from memory).
[[nodiscard]] Interval lognormal_interval(double estimate, double cv, double df, double confidence);

/// Effort needed for a target CV: L = (b / CV_t^2) (L0 / n0) (Buckland et al. 2001, §7.2,
/// from memory); b = 3 is the common rule of thumb.
[[nodiscard]] double effort_for_target_cv(double pilot_detections, double pilot_effort, double target_cv,
                                          double dispersion = 3.0);

/// How the truncation distance is given: a distance in metres or a share of the largest
/// distances to drop (0.1 = drop the largest 10%).
struct Truncation {
  std::optional<double> distance_m;
  std::optional<double> largest_share;
};

/// Parses a truncation: a distance in metres, a percentage of the largest distances ("5%"),
/// or "none" (infinite). Throws InputError otherwise.
[[nodiscard]] Truncation parse_truncation(const std::string& text);

/// Parses distance bin edges in metres, "0,10,25,50": 2 to 1000 finite, non-negative,
/// strictly increasing numbers separated by commas. Empty text gives no bins. Throws
/// InputError quoting the text otherwise.
[[nodiscard]] std::vector<double> parse_bin_edges(const std::string& text);

struct TransectOptions {
  std::vector<KeyFunction> keys{KeyFunction::half_normal, KeyFunction::hazard_rate, KeyFunction::uniform};
  std::vector<Adjustment> adjustments{Adjustment::cosine};
  std::size_t max_terms = 2;
  Truncation truncation;
  std::vector<double> bin_edges;  ///< non-empty: binned analysis on these edges (m)
  AreaUnit unit = AreaUnit::square_kilometre;
  double confidence = 0.95;
  bool pool_detection = false;          ///< one detection function for every species and stratum
  std::optional<double> study_area_m2;  ///< for abundance N = D A
  std::map<std::string, double> stratum_area_m2;
  std::size_t bootstrap = 0;
  std::uint64_t seed = default_seed;
  unsigned threads = 0;
  std::optional<double> target_cv;  ///< also report the effort needed for this CV
  /// Called after each bootstrap replicate (from any thread, one call at a time): (done, total).
  std::function<void(std::size_t, std::size_t)> progress;
  CancelToken cancel;  ///< polled before every bootstrap replicate
};

struct ModelComparison {
  std::optional<std::string> species;
  DetectionModel model;
  double aic = 0.0;
  double aicc = 0.0;
  double delta_aic = 0.0;
};

struct TransectEstimate {
  TransectEstimate(std::optional<std::string> species_, std::optional<std::string> stratum_, DetectionFit fit_,
                   GoodnessOfFit gof_)
      : species(std::move(species_)), stratum(std::move(stratum_)), fit(std::move(fit_)), gof(std::move(gof_)) {}
  std::optional<std::string> species;  ///< empty = all species
  std::optional<std::string> stratum;  ///< empty = all strata
  DetectionFit fit;
  GoodnessOfFit gof;
  std::size_t n = 0;        ///< detections within truncation
  double effort = 0.0;      ///< km (lines) or visits (points)
  EncounterRate encounter;  ///< per km (lines) or per visit (points)
  double mean_size = 1.0;
  double mean_size_cv = 0.0;
  double density = 0.0;  ///< per unit area
  double density_cv = 0.0;
  double df = 0.0;
  Interval density_ci;
  std::optional<double> abundance;
  std::optional<Interval> abundance_ci;
  std::optional<Interval> bootstrap_ci;
  std::optional<double> bootstrap_cv;
  std::optional<double> effort_for_target;  ///< km or visits for options.target_cv
  double dispersion = 0.0;                  ///< b = n (CV(n/L)^2 + CV(P_a)^2) from this survey
};

struct TransectResult {
  TransectKind kind = TransectKind::line;
  AreaUnit unit = AreaUnit::square_kilometre;
  double confidence = 0.95;
  double truncation_m = 0.0;
  std::size_t truncated = 0;  ///< detections beyond the truncation distance
  std::vector<TransectEstimate> results;
  std::vector<ModelComparison> models_compared;
  std::vector<std::string> notes;
};

/// Fits detection functions (per species, or one pooled with `pool_detection`, and one for
/// all species together), selects by AIC, and estimates per species x stratum (and for all
/// of either): D = n E(s) / (2 mu L) (lines) or n E(s) / (k nu) (points), CV by the delta
/// method CV(D)^2 = CV(n/L)^2 + CV(P_a)^2 + CV(E(s))^2, log-normal interval with
/// Satterthwaite df, optional bootstrap over transects within strata (percentile interval,
/// seeded per replicate). Throws InputError for impossible options, AnalysisError when a
/// detection function cannot be fitted.
[[nodiscard]] TransectResult analyse_transects(const TransectSurvey& survey, const TransectOptions& options);

}  // namespace stipple
