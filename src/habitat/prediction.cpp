#include "stipple/habitat/prediction.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <random>

#include <boost/math/distributions/normal.hpp>

#include "habitat/pieces.hpp"
#include "habitat/predictor.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/simulate/engine.hpp"
#include "stipple/stats/interval.hpp"

namespace stipple {

namespace {

using habitat_detail::design_row;
using habitat_detail::dot;
using habitat_detail::Predictor;
using habitat_detail::predictors;
using habitat_detail::quadratic_form;

constexpr double nan = std::numeric_limits<double>::quiet_NaN();

// Lower Cholesky factor of a covariance matrix (for parametric bootstrap draws).
std::vector<double> cholesky(const std::vector<double>& a, std::size_t p) {
  std::vector<double> l(p * p, 0.0);
  for (std::size_t i = 0; i < p; ++i) {
    for (std::size_t j = 0; j <= i; ++j) {
      double s = a[i * p + j];
      for (std::size_t k = 0; k < j; ++k) s -= l[i * p + k] * l[j * p + k];
      if (i == j) {
        l[i * p + i] = std::sqrt(std::max(s, 0.0));
      } else {
        l[i * p + j] = l[j * p + j] > 0.0 ? s / l[j * p + j] : 0.0;
      }
    }
  }
  return l;
}

// The range of each covariate over the fitted windows.
std::vector<std::pair<double, double>> fitted_ranges(const Survey& survey,
                                                     const std::vector<HabitatCovariate>& covariates) {
  std::vector<std::pair<double, double>> range(
      covariates.size(), {std::numeric_limits<double>::infinity(), -std::numeric_limits<double>::infinity()});
  for (const Plot& plot : survey.plots())
    habitat_detail::cut_window(plot.window, covariates, [&](const Point&, double, const std::vector<double>& v) {
      for (std::size_t k = 0; k < v.size(); ++k) {
        if (std::isnan(v[k])) continue;
        range[k].first = std::min(range[k].first, v[k]);
        range[k].second = std::max(range[k].second, v[k]);
      }
    });
  return range;
}

}  // namespace

std::vector<HabitatSurface> predict_surfaces(const Survey& /*survey*/, const std::vector<HabitatCovariate>& covariates,
                                             const HabitatOptions& /*options*/, const HabitatResult& result,
                                             const Bounds& area, double cell_m) {
  if (!(cell_m > 0.0) || !std::isfinite(cell_m))
    throw InputError("habitat surface: cell size " + format_general(cell_m) + " m");
  const double columns = std::ceil(area.width() / cell_m);
  const double rows = std::ceil(area.height() / cell_m);
  if (columns * rows > 1e8)
    throw InputError("habitat surface: " + format_general(columns) + " x " + format_general(rows) + " cells of " +
                     format_general(cell_m) + " m; choose larger cells");
  RasterGrid grid;
  grid.x_min = area.xmin;
  grid.y_max = area.ymax;
  grid.cell_width = grid.cell_height = cell_m;
  grid.columns = static_cast<std::size_t>(std::max(1.0, columns));
  grid.rows = static_cast<std::size_t>(std::max(1.0, rows));
  std::vector<HabitatSurface> out;
  std::vector<double> v;
  std::vector<double> x;
  for (const Predictor& p : predictors(result)) {
    HabitatSurface s;
    s.species = p.species;
    s.intensity = grid;
    s.intensity.values.assign(grid.columns * grid.rows, nan);
    s.standard_error.assign(grid.columns * grid.rows, nan);
    for (std::size_t r = 0; r < grid.rows; ++r) {
      for (std::size_t c = 0; c < grid.columns; ++c) {
        const Point centre{grid.x_min + (static_cast<double>(c) + 0.5) * cell_m,
                           grid.y_max - (static_cast<double>(r) + 0.5) * cell_m};
        habitat_detail::values_at(covariates, centre, v);
        if (!design_row(p, result.columns, v, x)) continue;
        const double lambda = std::exp(dot(p.beta, x));
        s.intensity.values[r * grid.columns + c] = lambda;
        s.standard_error[r * grid.columns + c] = lambda * std::sqrt(quadratic_form(p.covariance, x));
      }
    }
    out.push_back(std::move(s));
  }
  return out;
}

std::vector<AbundanceEstimate> predict_abundance(const Survey& survey, const std::vector<HabitatCovariate>& covariates,
                                                 const HabitatOptions& options, const HabitatResult& result,
                                                 const std::vector<AbundanceUnit>& units,
                                                 const AbundanceOptions& abundance) {
  if (!(options.confidence > 0.0 && options.confidence < 1.0))
    throw InputError("abundance: confidence " + format_general(options.confidence) + " is not between 0 and 1");
  const double z = boost::math::quantile(boost::math::normal(), 0.5 + 0.5 * options.confidence);
  const auto ranges = fitted_ranges(survey, covariates);
  const std::vector<Predictor> models = predictors(result);
  std::vector<AbundanceEstimate> out;
  for (std::size_t u = 0; u < units.size(); ++u) {
    const AbundanceUnit& unit = units[u];
    // The unit as pieces: area (in reporting units), values.
    std::vector<double> area;
    std::vector<std::vector<double>> values;
    double outside = 0.0;
    habitat_detail::cut_window(
        unit.window, covariates, [&](const Point& centre, double a, const std::vector<double>& v) {
          for (std::size_t k = 0; k < v.size(); ++k) {
            if (std::isnan(v[k]))
              throw InputError("management unit '" + unit.id + "': the part at (" + format_general(centre.x) + ", " +
                               format_general(centre.y) + ") has no value of covariate '" + covariates[k].name + "' (" +
                               covariates[k].source + ")");
          }
          bool extrapolated = false;
          for (std::size_t k = 0; k < v.size(); ++k)
            extrapolated = extrapolated || (!covariates[k].bias && (v[k] < ranges[k].first || v[k] > ranges[k].second));
          if (extrapolated) outside += a;
          area.push_back(a / options.unit_m2);
          values.push_back(v);
        });
    double total_area = 0.0;
    for (double a : area) total_area += a;
    for (std::size_t m = 0; m < models.size(); ++m) {
      const Predictor& p = models[m];
      std::vector<std::vector<double>> rows(area.size());
      for (std::size_t i = 0; i < area.size(); ++i) (void)design_row(p, result.columns, values[i], rows[i]);
      const auto expected_of = [&](const std::vector<double>& beta, std::vector<double>* gradient) {
        double n = 0.0;
        if (gradient) gradient->assign(beta.size(), 0.0);
        for (std::size_t i = 0; i < area.size(); ++i) {
          const double mu = area[i] * std::exp(dot(beta, rows[i]));
          n += mu;
          if (gradient)
            for (std::size_t j = 0; j < beta.size(); ++j) (*gradient)[j] += mu * rows[i][j];
        }
        return n;
      };
      AbundanceEstimate e;
      e.unit = unit.id;
      e.species = p.species;
      e.area_m2 = total_area * options.unit_m2;
      e.extrapolated_share = total_area > 0.0 ? outside / (total_area * options.unit_m2) : 0.0;
      std::vector<double> g;
      e.expected = expected_of(p.beta, &g);
      e.se = std::sqrt(quadratic_form(p.covariance, g));
      if (abundance.bootstrap == 0) {
        const double log_se = e.expected > 0.0 ? e.se / e.expected : 0.0;
        e.ci_low = e.expected * std::exp(-z * log_se);
        e.ci_high = e.expected * std::exp(z * log_se);
        e.method = "delta method on the log scale";
      } else {
        // One engine per unit and model, seeded from the run's seed and their names: results
        // do not depend on the order or number of units computed before.
        Engine engine(derive_seed(
            abundance.seed,
            seed_key({"abundance", unit.id, p.species ? survey.species()[*p.species] : "(all)", std::to_string(m)})));
        std::normal_distribution<double> normal;
        const std::size_t k = p.beta.size();
        const std::vector<double> l = cholesky(p.covariance, k);
        std::vector<double> draws;
        draws.reserve(abundance.bootstrap);
        std::vector<double> e_draw(k);
        std::vector<double> beta(k);
        for (std::size_t b = 0; b < abundance.bootstrap; ++b) {
          for (auto& d : e_draw) d = normal(engine);
          for (std::size_t i = 0; i < k; ++i) {
            beta[i] = p.beta[i];
            for (std::size_t j = 0; j <= i; ++j) beta[i] += l[i * k + j] * e_draw[j];
          }
          draws.push_back(expected_of(beta, nullptr));
        }
        const Interval ci = percentile_interval(std::move(draws), options.confidence);
        e.ci_low = ci.lower;
        e.ci_high = ci.upper;
        e.method = "parametric bootstrap (" + std::to_string(abundance.bootstrap) + " draws of the coefficients)";
      }
      out.push_back(std::move(e));
    }
  }
  return out;
}

}  // namespace stipple
