#include "stipple/intensity/detection.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include <boost/math/distributions/normal.hpp>

#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple {

namespace {

std::string number(double v) {
  return format_general(v);
}

double normal_quantile_two_sided(double confidence) {
  const boost::math::normal standard;
  return boost::math::quantile(standard, 0.5 + confidence / 2.0);
}

}  // namespace

Detection make_detection(double probability, double standard_error, std::string_view context) {
  const std::string where = context.empty() ? std::string() : std::string(context) + ": ";
  if (!std::isfinite(probability) || !(probability > 0.0 && probability <= 1.0))
    throw InputError(where + "detection probability " + number(probability) + " is outside (0, 1]");
  if (!std::isfinite(standard_error) || standard_error < 0.0)
    throw InputError(where + "detection standard error " + number(standard_error) + " must be a finite number >= 0");
  return Detection{probability, standard_error};
}

DetectionTable DetectionTable::uniform(Detection detection) {
  DetectionTable table;
  table.fallback_ = detection;
  return table;
}

DetectionTable DetectionTable::by_species(std::map<std::string, Detection> rows, std::optional<Detection> fallback,
                                          std::string source) {
  DetectionTable table;
  table.by_species_ = std::move(rows);
  table.fallback_ = fallback;
  table.source_ = std::move(source);
  return table;
}

Detection DetectionTable::for_species(const std::string& species) const {
  const auto found = by_species_.find(species);
  if (found != by_species_.end()) return found->second;
  if (fallback_) return *fallback_;
  throw InputError(source_ + ": no detection probability for species '" + species +
                       "' (add a row, or give a detection_probability for unlisted species)",
                   {"detection_probability"});
}

bool DetectionTable::is_certain() const {
  const auto certain = [](const Detection& d) { return d.probability == 1.0 && d.standard_error == 0.0; };
  if (fallback_ && !certain(*fallback_)) return false;
  return std::all_of(by_species_.begin(), by_species_.end(), [&](const auto& row) { return certain(row.second); });
}

std::vector<std::string> DetectionTable::listed_species() const {
  std::vector<std::string> names;
  for (const auto& row : by_species_) names.push_back(row.first);
  return names;
}

std::string_view correction_method_name(CorrectionMethod method) {
  switch (method) {
    case CorrectionMethod::none: return "none";
    case CorrectionMethod::exact_divided_by_p: return "exact-limits-divided-by-p";
    case CorrectionMethod::delta_log: return "delta-method-log-scale";
  }
  return "none";
}

CorrectedIntensity correct_for_detection(const std::vector<std::uint64_t>& counts,
                                         const std::vector<Detection>& detections, double area, double confidence) {
  if (counts.size() != detections.size() || counts.empty())
    throw AnalysisError("counts and detection probabilities differ in length");
  if (!(area > 0.0)) throw AnalysisError("detection correction needs a positive area");
  const std::uint64_t n = std::accumulate(counts.begin(), counts.end(), std::uint64_t{0});
  const Interval exact = garwood_interval(n, confidence);

  const bool shared = std::all_of(detections.begin(), detections.end(), [&](const Detection& d) {
    return d.probability == detections.front().probability && d.standard_error == detections.front().standard_error;
  });
  CorrectedIntensity out;
  if (shared && detections.front().standard_error == 0.0) {
    const double p = detections.front().probability;
    out.intensity = static_cast<double>(n) / (p * area);
    out.ci = {exact.lower / (p * area), exact.upper / (p * area)};
    out.detection_probability = p;
    out.method = p == 1.0 ? CorrectionMethod::none : CorrectionMethod::exact_divided_by_p;
    return out;
  }

  const double z = normal_quantile_two_sided(confidence);
  double total = 0.0;     // sum n_s / p_s
  double variance = 0.0;  // delta-method variance of the total
  double lowest_p = 1.0;  // lower log-normal limit of the smallest p
  for (std::size_t s = 0; s < counts.size(); ++s) {
    const double ns = static_cast<double>(counts[s]);
    const double p = detections[s].probability;
    const double se = detections[s].standard_error;
    total += ns / p;
    variance += ns / (p * p) + ns * ns * se * se / (p * p * p * p);
    lowest_p = std::min(lowest_p, p * std::exp(-z * se / p));
  }
  out.method = CorrectionMethod::delta_log;
  if (n == 0) {
    out.intensity = 0.0;
    out.ci = {0.0, exact.upper / (lowest_p * area)};
    out.detection_probability =
        std::min_element(detections.begin(), detections.end(), [](const auto& a, const auto& b) {
          return a.probability < b.probability;
        })->probability;
    return out;
  }
  const double cv = std::sqrt(variance) / total;
  out.intensity = total / area;
  out.ci = {out.intensity * std::exp(-z * cv), out.intensity * std::exp(z * cv)};
  out.detection_probability = static_cast<double>(n) / total;
  return out;
}

}  // namespace stipple
