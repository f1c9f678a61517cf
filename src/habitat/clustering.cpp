#include "stipple/habitat/clustering.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>

#include <boost/math/constants/constants.hpp>
#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <boost/random/uniform_real_distribution.hpp>
#include <nlopt.hpp>

#include "detail/parallel.hpp"
#include "habitat/pieces.hpp"
#include "habitat/predictor.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/habitat/loglinear_fit.hpp"
#include "stipple/randomness/inhomogeneous.hpp"
#include "stipple/randomness/summary_functions.hpp"
#include "stipple/simulate/engine.hpp"
#include "stipple/simulate/point_process.hpp"

namespace stipple {

namespace {

constexpr double pi = boost::math::double_constants::pi;

// P(D <= r) for two offspring of one parent.
double offspring_distance_cdf(ClusterModel model, double scale, double r) {
  if (model == ClusterModel::thomas) return -std::expm1(-r * r / (4.0 * scale * scale));
  const double R = scale;
  if (r >= 2.0 * R) return 1.0;
  const auto integrand = [R](double s) {
    const double covariance = 2.0 * R * R * std::acos(s / (2.0 * R)) - 0.5 * s * std::sqrt(4.0 * R * R - s * s);
    return 2.0 * pi * s * covariance;
  };
  const double area = pi * R * R;
  return boost::math::quadrature::gauss_kronrod<double, 31>::integrate(integrand, 0.0, r, 8, 1e-12) / (area * area);
}

struct Contrast {
  ClusterModel model;
  const std::vector<double>* r;
  const std::vector<double>* k;
};

double contrast_of(const Contrast& c, double kappa, double scale) {
  double sum = 0.0;
  for (std::size_t i = 0; i < c.r->size(); ++i) {
    const double observed = std::max((*c.k)[i], 0.0);
    const double fitted = cluster_k(c.model, kappa, scale, (*c.r)[i]);
    const double d = std::pow(observed, 0.25) - std::pow(fitted, 0.25);
    sum += d * d;
  }
  return sum;
}

double nlopt_contrast(unsigned /*n*/, const double* x, double* /*grad*/, void* data) {
  return contrast_of(*static_cast<const Contrast*>(data), std::exp(x[0]), std::exp(x[1]));
}

}  // namespace

std::string_view cluster_model_name(ClusterModel model) {
  return model == ClusterModel::thomas ? "Thomas" : "Matern cluster";
}

double cluster_k(ClusterModel model, double kappa_per_m2, double scale_m, double r) {
  return pi * r * r + offspring_distance_cdf(model, scale_m, r) / kappa_per_m2;
}

ClusterFit fit_cluster_min_contrast(ClusterModel model, const std::vector<double>& r, const std::vector<double>& k_hat,
                                    double mean_intensity_per_m2) {
  if (r.size() != k_hat.size() || r.size() < 3)
    throw InputError("cluster fit: needs at least 3 distances, with one K value each");
  for (double x : r)
    if (!(x > 0.0) || !std::isfinite(x)) throw InputError("cluster fit: distances must be positive");
  if (!(mean_intensity_per_m2 > 0.0)) throw AnalysisError("cluster fit: no positive mean intensity");
  const double rmax = r.back();
  // Bounds: kappa from one parent in a disc of radius 1000 rmax to 1e6 parents in one of
  // radius rmax (effectively Poisson); the scale from rmax / 1000 to 10 rmax.
  const double area = pi * rmax * rmax;
  const std::vector<double> lower{std::log(1.0 / (1e6 * area)), std::log(rmax / 1000.0)};
  const std::vector<double> upper{std::log(1e6 / area), std::log(10.0 * rmax)};
  Contrast c{model, &r, &k_hat};
  // Start: 1 / kappa from the excess of K over pi r^2 at rmax.
  const double excess = k_hat.back() - area;
  const double kappa0 = excess > 0.0 ? 1.0 / excess : 1.0 / (1e-3 * area);
  ClusterFit best;
  best.model = model;
  best.contrast = std::numeric_limits<double>::infinity();
  for (double start_scale : {rmax / 10.0, rmax / 4.0, rmax / 2.0}) {
    std::vector<double> x{std::clamp(std::log(kappa0), lower[0], upper[0]), std::log(start_scale)};
    nlopt::opt opt(nlopt::LN_SBPLX, 2);
    opt.set_min_objective(nlopt_contrast, &c);
    opt.set_lower_bounds(lower);
    opt.set_upper_bounds(upper);
    opt.set_xtol_rel(1e-8);
    opt.set_maxeval(4000);
    double value = 0.0;
    bool converged = true;
    try {
      converged = opt.optimize(x, value) > 0;
    } catch (const std::exception&) {
      value = nlopt_contrast(2, x.data(), nullptr, &c);
      converged = false;
    }
    if (value < best.contrast) {
      best.contrast = value;
      best.kappa_per_m2 = std::exp(x[0]);
      best.scale_m = std::exp(x[1]);
      best.converged = converged;
      best.poisson_limit = x[0] > upper[0] - 1e-3 || x[1] > upper[1] - 1e-3;
    }
  }
  best.mean_offspring = mean_intensity_per_m2 / best.kappa_per_m2;
  return best;
}

namespace {

struct PlotData {
  const Window* window = nullptr;
  std::vector<Point> points;
  std::vector<double> intensity;  // per m2 at each point
  double max_intensity = 0.0;     // a bound over the window, per m2
};

// Pooled inhomogeneous L over plots (area weights: the sums are pooled).
std::vector<double> pooled_l(const std::vector<PlotData>& plots, const std::vector<std::vector<Point>>& patterns,
                             const std::vector<std::vector<double>>& intensities, const std::vector<double>& r) {
  std::vector<double> k(r.size(), 0.0);
  double area = 0.0;
  for (std::size_t j = 0; j < plots.size(); ++j) {
    const InhomogeneousK kj = inhomogeneous_k(patterns[j], intensities[j], *plots[j].window, r);
    const double a = plots[j].window->area_m2();
    for (std::size_t i = 0; i < r.size(); ++i) k[i] += kj.k[i] * a;
    area += a;
  }
  for (double& v : k) v = std::sqrt(v / area / pi);
  return k;
}

std::vector<double> pooled_l(const std::vector<PlotData>& plots, const std::vector<double>& r) {
  std::vector<std::vector<Point>> patterns;
  std::vector<std::vector<double>> intensities;
  for (const auto& p : plots) {
    patterns.push_back(p.points);
    intensities.push_back(p.intensity);
  }
  return pooled_l(plots, patterns, intensities, r);
}

}  // namespace

std::vector<SpeciesClustering> analyse_clustering(const Survey& survey, const std::vector<HabitatCovariate>& covariates,
                                                  const HabitatResult& result, const ClusteringOptions& options) {
  using habitat_detail::design_row;
  using habitat_detail::dot;
  std::vector<SpeciesClustering> out;
  if (options.simulations == 0) return out;
  if (!(options.alpha > 0.0 && options.alpha < 1.0))
    throw InputError("clustering: alpha " + format_general(options.alpha) + " is not between 0 and 1");
  // The largest possible excess of the log intensity within a piece over its centre: each
  // distance term can move by |slope| x half a cell diagonal (a distance is 1-Lipschitz).
  const std::vector<habitat_detail::Predictor> predictors = habitat_detail::predictors(result);
  for (const habitat_detail::Predictor& p : predictors) {
    // Without shared intercept rows every separate model predicts its own species; the
    // all-species model (species empty) only in a separate-slopes fit.
    std::vector<PlotData> plots;
    std::size_t n = 0;
    double slack = 0.0;
    for (std::size_t j = 0; j < result.columns.size(); ++j) {
      const HabitatCovariate& c = covariates[result.columns[j].covariate];
      if (c.distance_to) slack += std::abs(p.beta[p.offset + j]) * c.spacing_m / std::sqrt(2.0);
    }
    std::vector<double> v;
    std::vector<double> x;
    // The species' own design over every plot, to refit the model to each simulated pattern.
    LoglinearDesign refit;
    for (const DesignColumn& c : result.columns)
      refit.names.push_back(covariates[c.covariate].name + (c.level ? "=" + format_general(*c.level) : ""));
    // A model fitted with bias terms describes the observed (thinned) pattern: simulate and
    // weight with the bias terms at their actual values.
    const habitat_detail::Predictor observed = p.observed();
    for (std::size_t j = 0; j < survey.plots().size(); ++j) {
      PlotData d;
      d.window = &survey.plots()[j].window;
      const MarkedPattern& pattern = survey.patterns()[j];
      for (std::size_t i = 0; i < pattern.points.size(); ++i) {
        if (p.species && pattern.marks[i] != *p.species) continue;
        habitat_detail::values_at(covariates, pattern.points[i], v);
        if (!design_row(observed, result.columns, v, x)) continue;  // left out of the fit
        d.points.push_back(pattern.points[i]);
        d.intensity.push_back(std::exp(dot(observed.beta, x)) / options.unit_m2);
      }
      habitat_detail::cut_window(*d.window, covariates, [&](const Point&, double a, const std::vector<double>& values) {
        std::vector<double> row;
        if (!design_row(observed, result.columns, values, row)) return;
        d.max_intensity = std::max(d.max_intensity, std::exp(dot(observed.beta, row) + slack) / options.unit_m2);
        refit.piece_area_m2.push_back(a);
        refit.piece_values.insert(refit.piece_values.end(), row.begin() + static_cast<std::ptrdiff_t>(observed.offset),
                                  row.end());
      });
      n += d.points.size();
      plots.push_back(std::move(d));
    }
    if (n < 10) continue;
    SpeciesClustering s;
    s.species = p.species;
    s.n = n;
    // One r grid for every plot: the smallest plot's default.
    double rmax = options.rmax_m;
    if (rmax <= 0.0) {
      double total_area = 0.0;
      for (const auto& d : plots) total_area += d.window->area_m2();
      rmax = std::numeric_limits<double>::infinity();
      for (const auto& d : plots)
        rmax = std::min(
            rmax, default_rmax(*d.window, std::max<std::size_t>(
                                              2, static_cast<std::size_t>(std::ceil(
                                                     static_cast<double>(n) * d.window->area_m2() / total_area)))));
    }
    s.rmax_m = rmax;
    std::vector<double> r(options.steps);
    for (std::size_t k = 0; k < options.steps; ++k)
      r[k] = rmax * static_cast<double>(k + 1) / static_cast<double>(options.steps);
    const std::vector<double> observed_l = pooled_l(plots, r);

    const std::string species_name = p.species ? survey.species()[*p.species] : std::string("(all)");
    // The slope columns at a location (empty when a covariate has no value there).
    const auto slope_row = [&](const Point& u) {
      std::vector<double> values;
      std::vector<double> row;
      habitat_detail::values_at(covariates, u, values);
      if (!design_row(observed, result.columns, values, row)) return std::vector<double>{};
      return row;
    };
    // Each simulated pattern's intensity at its points is that of the model refitted to it,
    // as the observed pattern's is that of the model fitted to the data, so the two K are
    // exchangeable (a curve with the true intensity would make the test conservative).
    // When a refit fails (too few points), the simulation's true intensity is used.
    const auto refitted = [&](const std::vector<std::vector<Point>>& patterns,
                              const std::vector<std::vector<std::vector<double>>>& rows) {
      LoglinearDesign d = refit;
      d.sightings = 0;
      for (std::size_t j = 0; j < patterns.size(); ++j)
        for (const auto& row : rows[j]) {
          d.point_values.insert(d.point_values.end(), row.begin() + static_cast<std::ptrdiff_t>(observed.offset),
                                row.end());
          ++d.sightings;
        }
      std::vector<std::vector<double>> lambda(patterns.size());
      std::optional<LoglinearFit> fit;
      try {
        if (d.sightings > 0) fit = fit_loglinear_intensity(d);
      } catch (const AnalysisError&) {
        fit.reset();
      }
      for (std::size_t j = 0; j < patterns.size(); ++j)
        for (const auto& row : rows[j]) {
          double eta = 0.0;
          if (fit) {
            eta = fit->coefficients[0];
            for (std::size_t c = 0; c + observed.offset < row.size(); ++c)
              eta += fit->coefficients[c + 1] * row[observed.offset + c];
            lambda[j].push_back(std::exp(eta));
          } else {
            lambda[j].push_back(std::exp(dot(observed.beta, row)) / options.unit_m2);
          }
        }
      return lambda;
    };
    // Simulations: `make(plot, engine)` gives one plot's stationary pattern of intensity
    // max_intensity, each point then kept with probability lambda(u) / max (Lewis & Shedler 1979).
    const auto simulate_curves = [&](const std::string& what, const auto& make) {
      std::vector<std::vector<double>> curves(options.simulations);
      parallel_for(options.simulations, options.threads, [&](std::size_t i) {
        options.cancel.check();
        Engine engine(derive_seed(options.seed, seed_key({"habitat", species_name, what, std::to_string(i)})));
        boost::random::uniform_real_distribution<double> unit(0.0, 1.0);
        std::vector<std::vector<Point>> patterns(plots.size());
        std::vector<std::vector<std::vector<double>>> rows(plots.size());
        for (std::size_t j = 0; j < plots.size(); ++j) {
          if (plots[j].max_intensity <= 0.0) continue;
          for (const Point& u : make(plots[j], engine)) {
            std::vector<double> row = slope_row(u);
            if (row.empty()) continue;
            const double lambda = std::exp(dot(observed.beta, row)) / options.unit_m2;
            if (unit(engine) * plots[j].max_intensity < lambda) {
              patterns[j].push_back(u);
              rows[j].push_back(std::move(row));
            }
          }
        }
        curves[i] = pooled_l(plots, patterns, refitted(patterns, rows), r);
      });
      return curves;
    };
    const auto poisson = simulate_curves("poisson", [](const PlotData& d, Engine& engine) {
      return simulate_poisson(*d.window, d.max_intensity, engine);
    });
    s.l_envelope = envelope_test(r, observed_l, r, poisson, options.alpha);
    const bool rejects = s.l_envelope.dclf_p_value < options.alpha;
    s.verdict = !rejects ? "explained by habitat"
                         : (s.l_envelope.mean_deviation > 0.0 ? "clustered beyond habitat" : "regular beyond habitat");

    // Cluster fits on the pooled inhomogeneous K.
    std::vector<double> k_hat(r.size());
    for (std::size_t i = 0; i < r.size(); ++i) k_hat[i] = pi * observed_l[i] * observed_l[i];
    double area = 0.0;
    for (const auto& d : plots) area += d.window->area_m2();
    const double mean_intensity = static_cast<double>(n) / area;
    for (ClusterModel model : {ClusterModel::thomas, ClusterModel::matern}) {
      const ClusterFit fit = fit_cluster_min_contrast(model, r, k_hat, mean_intensity);
      std::optional<EnvelopeResult> test;
      if (!fit.poisson_limit) {
        std::vector<double> theory(r.size());
        for (std::size_t i = 0; i < r.size(); ++i)
          theory[i] = std::sqrt(cluster_k(model, fit.kappa_per_m2, fit.scale_m, r[i]) / pi);
        const auto curves =
            simulate_curves(std::string(cluster_model_name(model)), [&](const PlotData& d, Engine& engine) {
              const double mu = d.max_intensity / fit.kappa_per_m2;
              return model == ClusterModel::thomas
                         ? simulate_thomas(*d.window, fit.kappa_per_m2, mu, fit.scale_m, engine)
                         : simulate_matern_cluster(*d.window, fit.kappa_per_m2, mu, fit.scale_m, engine);
            });
        test = envelope_test(r, observed_l, theory, curves, options.alpha);
      }
      if (model == ClusterModel::thomas) {
        s.thomas = fit;
        s.thomas_test = std::move(test);
      } else {
        s.matern = fit;
        s.matern_test = std::move(test);
      }
    }
    out.push_back(std::move(s));
  }
  return out;
}

}  // namespace stipple
