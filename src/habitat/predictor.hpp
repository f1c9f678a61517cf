#pragma once
// A fitted habitat model as a linear predictor, shared by predictions and simulations
// (internal).

#include <algorithm>
#include <cmath>
#include <optional>
#include <vector>

#include "stipple/habitat/habitat_model.hpp"

namespace stipple::habitat_detail {

// One model as a linear predictor in its fitted parametrisation: log intensity per unit =
// beta . x, x = [1, species indicators (shared slopes), slope columns].
struct Predictor {
  std::optional<std::size_t> species;             // the species predicted
  std::vector<double> beta;                       // per unit in the intercept
  std::vector<double> covariance;                 // as fitted
  std::size_t indicator = 0;                      // 0: none; s: x[s] = 1 (shared slopes, species s > 0)
  std::size_t offset = 1;                         // index of the first slope
  std::vector<std::optional<double>> references;  // per slope column: bias reference
  std::vector<double> log_detection;              // per intercept: log p it was corrected by (0: none)

  // The model of the pattern as recorded: bias terms at their actual values and the
  // intercepts not divided by the detection probability, for simulations and residuals.
  [[nodiscard]] Predictor observed() const {
    Predictor o = *this;
    for (auto& r : o.references) r.reset();
    o.beta[0] += log_detection[0];
    for (std::size_t t = 1; t < log_detection.size(); ++t) o.beta[t] += log_detection[t] - log_detection[0];
    return o;
  }
};

inline std::vector<Predictor> predictors(const HabitatResult& result) {
  std::vector<Predictor> out;
  for (const HabitatModel& m : result.models) {
    std::vector<const HabitatCoefficient*> intercepts;
    std::vector<const HabitatCoefficient*> slopes;
    for (const auto& c : m.coefficients) (c.covariate.empty() ? intercepts : slopes).push_back(&c);
    const std::size_t s_count = intercepts.size();
    for (std::size_t s = 0; s < s_count; ++s) {
      Predictor p;
      p.species = s_count > 1 ? intercepts[s]->species : m.species;
      p.covariance = m.covariance;
      p.offset = s_count;
      p.indicator = s;
      p.beta.push_back(intercepts[0]->estimate);
      for (std::size_t t = 1; t < s_count; ++t) p.beta.push_back(intercepts[t]->estimate - intercepts[0]->estimate);
      for (const auto* c : intercepts) p.log_detection.push_back(std::log(c->detection_probability.value_or(1.0)));
      for (const auto* c : slopes) {
        p.beta.push_back(c->estimate);
        p.references.push_back(c->bias ? c->bias_reference : std::nullopt);
      }
      out.push_back(std::move(p));
    }
  }
  return out;
}

// x for the covariate values `v` (bias terms at their references); false when a value is missing.
inline bool design_row(const Predictor& p, const std::vector<DesignColumn>& columns, const std::vector<double>& v,
                       std::vector<double>& x) {
  x.assign(p.beta.size(), 0.0);
  x[0] = 1.0;
  if (p.indicator > 0) x[p.indicator] = 1.0;
  for (std::size_t j = 0; j < columns.size(); ++j) {
    double z = p.references[j] ? *p.references[j] : v[columns[j].covariate];
    if (std::isnan(z)) return false;
    if (columns[j].level) z = z == *columns[j].level ? 1.0 : 0.0;
    x[p.offset + j] = z;
  }
  return true;
}

inline double dot(const std::vector<double>& a, const std::vector<double>& b) {
  double s = 0.0;
  for (std::size_t i = 0; i < a.size(); ++i) s += a[i] * b[i];
  return s;
}

inline double quadratic_form(const std::vector<double>& covariance, const std::vector<double>& g) {
  const std::size_t p = g.size();
  double q = 0.0;
  for (std::size_t i = 0; i < p; ++i)
    for (std::size_t j = 0; j < p; ++j) q += g[i] * covariance[i * p + j] * g[j];
  return std::max(q, 0.0);
}

}  // namespace stipple::habitat_detail
