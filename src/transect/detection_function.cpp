#include "stipple/transect/detection_function.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include <boost/math/constants/constants.hpp>
#include <boost/math/distributions/chi_squared.hpp>
#include <boost/math/quadrature/exp_sinh.hpp>
#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <boost/math/special_functions/bessel.hpp>
#include <boost/math/special_functions/gamma.hpp>
#include <boost/numeric/ublas/lu.hpp>
#include <boost/numeric/ublas/matrix.hpp>
#include <nlopt.hpp>

#include "stipple/error.hpp"

namespace stipple {

namespace {

constexpr double pi = boost::math::double_constants::pi;
const double nan_value = std::numeric_limits<double>::quiet_NaN();

std::size_t key_parameter_count(KeyFunction key) {
  switch (key) {
    case KeyFunction::half_normal: return 1;
    case KeyFunction::hazard_rate: return 2;
    case KeyFunction::uniform: return 0;
  }
  return 0;
}

// Probabilists' Hermite polynomial He_n(x).
double hermite(std::size_t n, double x) {
  double previous = 1.0;
  double current = x;
  if (n == 0) return previous;
  for (std::size_t k = 1; k < n; ++k) {
    const double next = x * current - static_cast<double>(k) * previous;
    previous = current;
    current = next;
  }
  return current;
}

std::vector<double> natural_from_working(const DetectionModel& model, const std::vector<double>& theta) {
  std::vector<double> p(theta);
  const std::size_t k = key_parameter_count(model.key);
  for (std::size_t i = 0; i < k; ++i) p[i] = std::exp(theta[i]);
  return p;
}

struct Objective {
  const DistanceData* data;
  DetectionModel model;
  double truncation;
};

double log_likelihood(const DistanceData& data, const DetectionModel& model, double w,
                      const std::vector<double>& theta) {
  const DetectionFunction f(model, natural_from_working(model, theta), w);
  if (data.binned()) {
    const double lo = data.bin_edges.front();
    const double total = f.integral(lo, data.bin_edges.back(), data.kind);
    if (!(total > 0.0) || !std::isfinite(total)) return -std::numeric_limits<double>::infinity();
    double ll = 0.0;
    for (std::size_t k = 0; k < data.bin_counts.size(); ++k) {
      if (data.bin_counts[k] == 0) continue;
      const double part = f.integral(data.bin_edges[k], data.bin_edges[k + 1], data.kind);
      if (!(part > 0.0)) return -std::numeric_limits<double>::infinity();
      ll += static_cast<double>(data.bin_counts[k]) * std::log(part / total);
    }
    return ll;
  }
  const double total = f.integral(0.0, w, data.kind);
  if (!(total > 0.0) || !std::isfinite(total)) return -std::numeric_limits<double>::infinity();
  double ll = -static_cast<double>(data.exact.size()) * std::log(total);
  for (const double x : data.exact) {
    const double gx = f.g(x);
    if (!(gx > 0.0)) return -std::numeric_limits<double>::infinity();
    ll += std::log(gx);
  }
  return ll;
}

double objective(unsigned n, const double* x, double* gradient, void* context) {
  (void)gradient;  // derivative-free algorithms only
  const auto* o = static_cast<const Objective*>(context);
  const std::vector<double> theta(x, x + n);
  const double ll = log_likelihood(*o->data, o->model, o->truncation, theta);
  return std::isfinite(ll) ? -ll : 1e300;
}

constexpr std::size_t monotone_grid = 50;

void monotone_constraints(unsigned m, double* result, unsigned n, const double* x, double* gradient, void* context) {
  (void)gradient;
  const auto* o = static_cast<const Objective*>(context);
  const DetectionFunction f(o->model, natural_from_working(o->model, std::vector<double>(x, x + n)), o->truncation);
  const double step = o->truncation / static_cast<double>(monotone_grid - 1);
  double previous = f.g(0.0);
  for (std::size_t k = 1; k < monotone_grid; ++k) {
    const double current = f.g(step * static_cast<double>(k));
    result[2 * (k - 1)] = current - previous;  // <= 0: non-increasing
    result[2 * (k - 1) + 1] = -current;        // <= 0: non-negative
    previous = current;
  }
  (void)m;
}

bool is_monotone(const DetectionFunction& f) {
  if (!std::isfinite(f.truncation_m())) return true;  // key-only: monotone by construction
  const double step = f.truncation_m() / static_cast<double>(monotone_grid - 1);
  double previous = f.g(0.0);
  for (std::size_t k = 1; k < monotone_grid; ++k) {
    const double current = f.g(step * static_cast<double>(k));
    if (current > previous + 1e-6 || current < -1e-9) return false;
    previous = current;
  }
  return true;
}

// Inverse of a small symmetric matrix by LU decomposition (Boost uBLAS); empty if singular.
std::vector<std::vector<double>> inverse(const std::vector<std::vector<double>>& a) {
  namespace ublas = boost::numeric::ublas;
  const std::size_t n = a.size();
  ublas::matrix<double> m(n, n);
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t j = 0; j < n; ++j) m(i, j) = a[i][j];
  ublas::permutation_matrix<std::size_t> perm(n);
  if (ublas::lu_factorize(m, perm) != 0) return {};
  ublas::matrix<double> inv = ublas::identity_matrix<double>(n);
  ublas::lu_substitute(m, perm, inv);
  std::vector<std::vector<double>> out(n, std::vector<double>(n));
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) {
      out[i][j] = inv(i, j);
      if (!std::isfinite(out[i][j])) return {};
    }
    if (!(out[i][i] > 0.0)) return {};
  }
  return out;
}

double scale_start(const DistanceData& data) {
  double sum = 0.0;
  double n = 0.0;
  if (data.binned()) {
    for (std::size_t k = 0; k < data.bin_counts.size(); ++k) {
      const double mid = 0.5 * (data.bin_edges[k] + data.bin_edges[k + 1]);
      sum += static_cast<double>(data.bin_counts[k]) * mid * mid;
      n += static_cast<double>(data.bin_counts[k]);
    }
  } else {
    for (const double x : data.exact) sum += x * x;
    n = static_cast<double>(data.exact.size());
  }
  const double ms = sum / std::max(1.0, n);
  const double s = std::sqrt(data.kind == TransectKind::line ? ms : ms / 2.0);
  return s > 0.0 ? s : 1.0;
}

}  // namespace

std::size_t DistanceData::size() const {
  if (!binned()) return exact.size();
  return static_cast<std::size_t>(std::accumulate(bin_counts.begin(), bin_counts.end(), std::uint64_t{0}));
}

std::string_view key_function_name(KeyFunction key) {
  switch (key) {
    case KeyFunction::half_normal: return "half-normal";
    case KeyFunction::hazard_rate: return "hazard-rate";
    case KeyFunction::uniform: return "uniform";
  }
  return "";
}

std::string_view adjustment_name(Adjustment adjustment) {
  switch (adjustment) {
    case Adjustment::none: return "none";
    case Adjustment::cosine: return "cosine";
    case Adjustment::polynomial: return "polynomial";
    case Adjustment::hermite: return "hermite";
  }
  return "";
}

KeyFunction parse_key_function(std::string_view name) {
  if (name == "half-normal") return KeyFunction::half_normal;
  if (name == "hazard-rate") return KeyFunction::hazard_rate;
  if (name == "uniform") return KeyFunction::uniform;
  throw InputError("keys takes half-normal, hazard-rate, uniform (got '" + std::string(name) + "')", {"keys"});
}

Adjustment parse_adjustment(std::string_view name) {
  if (name == "none") return Adjustment::none;
  if (name == "cosine") return Adjustment::cosine;
  if (name == "polynomial") return Adjustment::polynomial;
  if (name == "hermite") return Adjustment::hermite;
  throw InputError("adjustments takes none, cosine, polynomial, hermite (got '" + std::string(name) + "')",
                   {"adjustments"});
}

std::vector<std::string> parameter_names(const DetectionModel& model) {
  std::vector<std::string> names;
  if (model.key != KeyFunction::uniform) names.push_back("sigma");
  if (model.key == KeyFunction::hazard_rate) names.push_back("b");
  for (std::size_t j = 1; j <= model.terms; ++j) names.push_back("a" + std::to_string(j));
  return names;
}

DetectionFunction::DetectionFunction(DetectionModel model, std::vector<double> parameters, double truncation_m)
    : model_(model), parameters_(std::move(parameters)), truncation_m_(truncation_m) {
  // The invariants every evaluation relies on: one value per named parameter, and a
  // truncation distance that is positive (infinite for an untruncated key-only model).
  const std::size_t expected = parameter_names(model_).size();
  if (parameters_.size() != expected)
    throw InputError("a " + std::string(key_function_name(model_.key)) + " detection function with " +
                         std::to_string(model_.terms) + " adjustment term(s) takes " + std::to_string(expected) +
                         " parameters (got " + std::to_string(parameters_.size()) + ")",
                     {"parameters"});
  if (!(truncation_m_ > 0.0))
    throw InputError("truncation_m must be positive (got " + std::to_string(truncation_m_) + ")", {"truncation_m"});
  if (!std::isfinite(truncation_m_) && (model_.key == KeyFunction::uniform || model_.terms > 0))
    throw InputError("a uniform key or adjustment terms need a finite truncation_m", {"truncation_m"});
  normaliser_ = key(0.0) * series(0.0);
}

double DetectionFunction::key(double x) const {
  switch (model_.key) {
    case KeyFunction::half_normal: {
      const double s = parameters_[0];
      return std::exp(-x * x / (2.0 * s * s));
    }
    case KeyFunction::hazard_rate: {
      if (x <= 0.0) return 1.0;
      return 1.0 - std::exp(-std::pow(x / parameters_[0], -parameters_[1]));
    }
    case KeyFunction::uniform: return 1.0;
  }
  return 1.0;
}

double DetectionFunction::series(double x) const {
  if (model_.terms == 0 || model_.adjustment == Adjustment::none) return 1.0;
  const std::size_t first = key_parameter_count(model_.key);
  const std::size_t offset = model_.key == KeyFunction::uniform ? 0 : 1;
  double sum = 1.0;
  for (std::size_t j = 1; j <= model_.terms; ++j) {
    const double a = parameters_[first + j - 1];
    const double order = static_cast<double>(j + offset);
    double t = 0.0;
    switch (model_.adjustment) {
      case Adjustment::cosine: t = std::cos(order * pi * x / truncation_m_); break;
      case Adjustment::polynomial: t = std::pow(x / truncation_m_, 2.0 * order); break;
      case Adjustment::hermite: {
        const double scale = model_.key == KeyFunction::uniform ? truncation_m_ : parameters_[0];
        t = hermite(2 * (j + offset), x / scale);
        break;
      }
      case Adjustment::none: break;
    }
    sum += a * t;
  }
  return sum;
}

double DetectionFunction::g(double x) const {
  return key(x) * series(x) / normaliser_;
}

double DetectionFunction::integral(double a, double b, TransectKind kind) const {
  const auto f = [&](double x) { return kind == TransectKind::line ? g(x) : 2.0 * pi * x * g(x); };
  if (!(b > a)) return 0.0;
  if (std::isinf(b)) {
    boost::math::quadrature::exp_sinh<double> integrator;
    return integrator.integrate([&](double x) { return x >= a ? f(x) : 0.0; }, a,
                                std::numeric_limits<double>::infinity());
  }
  return boost::math::quadrature::gauss_kronrod<double, 31>::integrate(f, a, b, 12, 1e-11);
}

double DetectionFunction::effective_strip_width() const {
  return integral(0.0, truncation_m_, TransectKind::line);
}

double DetectionFunction::effective_area() const {
  return integral(0.0, truncation_m_, TransectKind::point);
}

namespace {

struct Bounds {
  std::vector<double> lower;
  std::vector<double> upper;
};

struct Optimum {
  std::vector<double> theta;
  double value = std::numeric_limits<double>::infinity();  ///< -log L; 1e300 when infeasible
  bool converged = false;
};

// Working-scale box for the model's parameters around the data's scale s0.
Bounds parameter_bounds(const DetectionModel& m, double s0) {
  Bounds b;
  if (m.key != KeyFunction::uniform) {
    b.lower.push_back(std::log(s0) - 8.0);
    b.upper.push_back(std::log(s0) + 8.0);
  }
  if (m.key == KeyFunction::hazard_rate) {
    // Shape b >= 1: below it g falls in a spike at x = 0 and the untruncated strip width
    // is infinite; small samples otherwise wander there (common practice, no source).
    b.lower.push_back(0.0);
    b.upper.push_back(std::log(60.0));
  }
  for (std::size_t j = 0; j < m.terms; ++j) {
    b.lower.push_back(-10.0);
    b.upper.push_back(10.0);
  }
  return b;
}

// One run of an NLopt algorithm from `theta`; a round-off stop keeps the point reached.
Optimum run_optimiser(nlopt::opt& opt, Objective& context, std::vector<double> theta) {
  Optimum o;
  double value = 0.0;
  try {
    const nlopt::result r = opt.optimize(theta, value);
    o.converged = r > 0 && value < 1e299;
  } catch (const nlopt::roundoff_limited&) {
    value = objective(static_cast<unsigned>(theta.size()), theta.data(), nullptr, &context);
    o.converged = std::isfinite(value) && value < 1e299;
  } catch (const std::exception&) {
    value = objective(static_cast<unsigned>(theta.size()), theta.data(), nullptr, &context);
    o.converged = false;
  }
  o.theta = std::move(theta);
  o.value = value;
  return o;
}

// Key-only models: subplex from the moment start, then a second subplex from its optimum.
Optimum maximise_key(Objective& context, std::vector<double> start, const Bounds& b) {
  const auto dim = static_cast<unsigned>(start.size());
  nlopt::opt opt(nlopt::LN_SBPLX, dim);
  opt.set_min_objective(objective, &context);
  opt.set_lower_bounds(b.lower);
  opt.set_upper_bounds(b.upper);
  opt.set_xtol_rel(1e-10);
  opt.set_ftol_abs(1e-12);
  opt.set_maxeval(5000);
  Optimum o = run_optimiser(opt, context, std::move(start));
  if (!o.converged) return o;
  nlopt::opt polish(nlopt::LN_SBPLX, dim);
  polish.set_min_objective(objective, &context);
  polish.set_lower_bounds(b.lower);
  polish.set_upper_bounds(b.upper);
  polish.set_xtol_rel(1e-12);
  polish.set_maxeval(5000);
  Optimum p = run_optimiser(polish, context, o.theta);
  if (p.value <= o.value) o.theta = std::move(p.theta), o.value = p.value;
  return o;
}

// Adjusted models: one COBYLA run under the monotonicity constraints. The initial step is
// explicit: NLopt's default, a quarter of the box, leaps from a zero coefficient far
// outside the feasible set and stops there. An infeasible end point counts as not converged.
Optimum constrained_search(Objective& context, std::vector<double> start, const Bounds& b, double step_scale,
                           int max_evaluations) {
  const auto dim = static_cast<unsigned>(start.size());
  const std::size_t key_count = key_parameter_count(context.model.key);
  std::vector<double> step(dim);
  for (std::size_t i = 0; i < dim; ++i) step[i] = step_scale * (i < key_count ? 0.25 : 0.1);
  for (std::size_t i = 0; i < dim; ++i) start[i] = std::clamp(start[i], b.lower[i], b.upper[i]);
  nlopt::opt opt(nlopt::LN_COBYLA, dim);
  opt.set_min_objective(objective, &context);
  opt.set_lower_bounds(b.lower);
  opt.set_upper_bounds(b.upper);
  opt.set_initial_step(step);
  opt.set_xtol_rel(1e-8);
  opt.set_ftol_abs(1e-9);
  opt.set_maxeval(max_evaluations);
  const std::vector<double> tolerances(2 * (monotone_grid - 1), 1e-9);
  opt.add_inequality_mconstraint(monotone_constraints, &context, tolerances);
  Optimum o = run_optimiser(opt, context, std::move(start));
  const DetectionFunction f(context.model, natural_from_working(context.model, o.theta), context.truncation);
  if (!is_monotone(f)) o.converged = false;
  return o;
}

bool better(const Optimum& candidate, const Optimum& incumbent) {
  if (incumbent.theta.empty()) return true;
  if (candidate.converged != incumbent.converged) return candidate.converged;
  return candidate.value < incumbent.value;
}

// One COBYLA search, restarted from its end point with smaller steps until a pass gains
// nothing: the trust region shrinks early along the curved ridges of these likelihoods.
Optimum search_and_refine(Objective& context, std::vector<double> start, const Bounds& bounds) {
  Optimum o = constrained_search(context, std::move(start), bounds, 1.0, 20000);
  for (const double scale : {0.1, 0.01}) {
    if (!o.converged) break;
    Optimum refined = constrained_search(context, o.theta, bounds, scale, 20000);
    if (!refined.converged || !(refined.value < o.value - 1e-9)) break;
    o = std::move(refined);
  }
  return o;
}

// Maximum-likelihood working parameters of `m`. Adjusted models are multi-start: COBYLA
// from the optimum with one term fewer (ultimately the key's own optimum) with the new
// coefficient at zero and at small values of either sign; the best feasible optimum wins.
// With `warm_start` (working parameters of a nearby fit, e.g. the original data when
// refitting a bootstrap resample) a single search starts there.
Optimum maximise_likelihood(const DistanceData& data, const DetectionModel& m, double w,
                            const std::vector<double>* warm_start = nullptr) {
  const double s0 = scale_start(data);
  const Bounds bounds = parameter_bounds(m, s0);
  Objective context{&data, m, w};
  if (warm_start && warm_start->size() == bounds.lower.size() && !warm_start->empty()) {
    std::vector<double> start = *warm_start;
    for (std::size_t i = 0; i < start.size(); ++i) start[i] = std::clamp(start[i], bounds.lower[i], bounds.upper[i]);
    if (m.terms == 0) return maximise_key(context, std::move(start), bounds);
    Optimum o = search_and_refine(context, std::move(start), bounds);
    if (o.converged) return o;  // otherwise fall back to the full multi-start search
  }
  if (m.terms == 0) {
    std::vector<double> start;
    if (m.key != KeyFunction::uniform) start.push_back(std::log(s0));
    if (m.key == KeyFunction::hazard_rate) start.push_back(std::log(3.0));
    if (start.empty()) return {start, objective(0, nullptr, nullptr, &context), true};
    return maximise_key(context, std::move(start), bounds);
  }
  DetectionModel shorter = m;
  shorter.terms = m.terms - 1;
  const Optimum previous = maximise_likelihood(data, shorter, w);
  std::vector<std::vector<double>> starts;
  for (const double a : {0.0, 0.2, -0.2, 0.6, -0.6}) {
    if (m.terms > 1 && std::abs(a) > 0.5) continue;  // later terms: small corrections
    starts.push_back(previous.theta);
    starts.back().push_back(a);
  }
  Optimum best;
  for (auto& start : starts) {
    Optimum o = search_and_refine(context, std::move(start), bounds);
    if (better(o, best)) best = std::move(o);
  }
  return best;
}

}  // namespace

DetectionFit fit_detection_function(const DistanceData& data, const DetectionModel& model,
                                    const DetectionFunction* warm_start) {
  const double w = data.binned() ? data.bin_edges.back() : data.truncation_m;
  const std::size_t q = key_parameter_count(model.key) + (model.adjustment == Adjustment::none ? 0 : model.terms);
  const std::size_t n = data.size();
  DetectionModel m = model;
  if (m.adjustment == Adjustment::none) m.terms = 0;
  if (!std::isfinite(w) && (m.key == KeyFunction::uniform || m.terms > 0))
    throw AnalysisError("the " + std::string(key_function_name(m.key)) +
                            " model with adjustments needs a truncation distance (truncation)",
                        {"truncation"});
  if (n < q + 2)
    throw AnalysisError("too few detections (" + std::to_string(n) + ") to fit a " +
                        std::string(key_function_name(m.key)) + " model with " + std::to_string(q) + " parameters");

  std::vector<double> warm;
  if (warm_start && warm_start->model().key == m.key && warm_start->model().adjustment == m.adjustment &&
      warm_start->model().terms == m.terms) {
    warm = warm_start->parameters();
    for (std::size_t i = 0; i < key_parameter_count(m.key) && i < warm.size(); ++i) warm[i] = std::log(warm[i]);
  }
  const Optimum optimum = maximise_likelihood(data, m, w, warm.empty() ? nullptr : &warm);
  const std::vector<double>& theta = optimum.theta;
  const bool converged = optimum.converged;
  const Bounds bounds = parameter_bounds(m, scale_start(data));
  const std::vector<double>& lower = bounds.lower;
  const std::vector<double>& upper = bounds.upper;
  DetectionFit fit(DetectionFunction(m, natural_from_working(m, theta), w));
  fit.n = n;
  fit.parameter_count = q;
  fit.log_likelihood = log_likelihood(data, m, w, theta);
  fit.converged = converged && std::isfinite(fit.log_likelihood);
  fit.monotone = is_monotone(fit.function);
  fit.aic = -2.0 * fit.log_likelihood + 2.0 * static_cast<double>(q);
  const double nd = static_cast<double>(n);
  const double qd = static_cast<double>(q);
  fit.aicc =
      nd - qd - 1.0 > 0.0 ? fit.aic + 2.0 * qd * (qd + 1.0) / (nd - qd - 1.0) : std::numeric_limits<double>::infinity();

  // Observed information: numerical Hessian of -log L at the optimum, over the parameters
  // not held at a bound (a parameter on its bound is treated as fixed; common practice).
  const auto nll = [&](const std::vector<double>& t) { return -log_likelihood(data, m, w, t); };
  std::vector<std::size_t> free;
  for (std::size_t i = 0; i < theta.size(); ++i)
    if (theta[i] > lower[i] + 1e-6 && theta[i] < upper[i] - 1e-6) free.push_back(i);
  const std::size_t nf = free.size();
  std::vector<double> h(theta.size());
  for (std::size_t i = 0; i < theta.size(); ++i) h[i] = 1e-4 * std::max(1.0, std::abs(theta[i]));
  std::vector<std::vector<double>> hessian(nf, std::vector<double>(nf, 0.0));
  const double f0 = nll(theta);
  for (std::size_t a = 0; a < nf; ++a) {
    for (std::size_t b = a; b < nf; ++b) {
      const std::size_t i = free[a];
      const std::size_t j = free[b];
      double value = 0.0;
      if (i == j) {
        std::vector<double> p1 = theta, m1 = theta;
        p1[i] += h[i];
        m1[i] -= h[i];
        value = (nll(p1) - 2.0 * f0 + nll(m1)) / (h[i] * h[i]);
      } else {
        std::vector<double> pp = theta, pm = theta, mp = theta, mm = theta;
        pp[i] += h[i];
        pp[j] += h[j];
        pm[i] += h[i];
        pm[j] -= h[j];
        mp[i] -= h[i];
        mp[j] += h[j];
        mm[i] -= h[i];
        mm[j] -= h[j];
        value = (nll(pp) - nll(pm) - nll(mp) + nll(mm)) / (4.0 * h[i] * h[j]);
      }
      hessian[a][b] = hessian[b][a] = value;
    }
  }
  const std::vector<std::vector<double>> free_covariance =
      nf > 0 ? inverse(hessian) : std::vector<std::vector<double>>{};
  fit.covariance.assign(theta.size(), std::vector<double>(theta.size(), 0.0));
  for (std::size_t a = 0; a < free_covariance.size(); ++a)
    for (std::size_t b = 0; b < free_covariance.size(); ++b) fit.covariance[free[a]][free[b]] = free_covariance[a][b];

  const auto effective = [&](const std::vector<double>& t) {
    const DetectionFunction f(m, natural_from_working(m, t), w);
    return data.kind == TransectKind::line ? f.effective_strip_width() : f.effective_area();
  };
  const double value = effective(theta);
  if (data.kind == TransectKind::line)
    fit.effective_strip_width_m = value;
  else
    fit.effective_area_m2 = value;
  fit.detection_probability =
      std::isfinite(w) ? (data.kind == TransectKind::line ? value / w : value / (pi * w * w)) : nan_value;
  if (nf == 0) {
    fit.effective_cv = 0.0;
  } else if (free_covariance.empty()) {
    fit.effective_cv = nan_value;  // information matrix singular: the fit is not identifiable
    fit.converged = false;
  } else {
    std::vector<double> gradient(q, 0.0);
    for (const std::size_t i : free) {
      std::vector<double> up = theta, down = theta;
      up[i] += h[i];
      down[i] -= h[i];
      gradient[i] = (effective(up) - effective(down)) / (2.0 * h[i]);
    }
    double variance = 0.0;
    for (std::size_t i = 0; i < q; ++i)
      for (std::size_t j = 0; j < q; ++j) variance += gradient[i] * fit.covariance[i][j] * gradient[j];
    fit.effective_cv = std::sqrt(std::max(0.0, variance)) / value;
  }
  fit.detection_probability_cv = fit.effective_cv;
  return fit;
}

std::vector<DetectionFit> fit_candidates(const DistanceData& data, const std::vector<KeyFunction>& keys,
                                         const std::vector<Adjustment>& adjustments, std::size_t max_terms) {
  std::vector<DetectionFit> fits;
  std::string last_error;
  const double w = data.binned() ? data.bin_edges.back() : data.truncation_m;
  const auto attempt = [&](const DetectionModel& model) -> std::optional<DetectionFit> {
    try {
      DetectionFit fit = fit_detection_function(data, model);
      if (fit.converged && fit.monotone) return fit;
      last_error = std::string(key_function_name(model.key)) + " did not converge";
    } catch (const AnalysisError& e) {
      last_error = e.what();
    }
    return std::nullopt;
  };
  for (const KeyFunction key : keys) {
    std::optional<DetectionFit> base;
    if (key != KeyFunction::uniform || !std::isinf(w)) base = attempt({key, Adjustment::none, 0});
    if (base) fits.push_back(*base);
    if (!std::isfinite(w)) continue;
    for (const Adjustment adjustment : adjustments) {
      if (adjustment == Adjustment::none) continue;
      double best_aic = base ? base->aic : std::numeric_limits<double>::infinity();
      for (std::size_t t = 1; t <= max_terms; ++t) {
        auto fit = attempt({key, adjustment, t});
        if (!fit) break;
        const bool improves = fit->aic < best_aic;
        best_aic = std::min(best_aic, fit->aic);
        fits.push_back(std::move(*fit));
        if (!improves) break;
      }
    }
  }
  if (fits.empty()) throw AnalysisError("no detection function could be fitted: " + last_error);
  std::stable_sort(fits.begin(), fits.end(),
                   [](const DetectionFit& a, const DetectionFit& b) { return a.aic < b.aic; });
  return fits;
}

double cramer_von_mises_p(double w2) {
  if (!(w2 > 0.0)) return 1.0;
  // P(W2 <= x) = 1/(pi sqrt x) sum_j Gamma(j + 1/2) / (Gamma(1/2) j!) sqrt(4j + 1)
  //              exp(-(4j+1)^2 / 16x) K_{1/4}((4j+1)^2 / 16x).
  double cdf = 0.0;
  for (int j = 0; j < 200; ++j) {
    const double u = (4.0 * j + 1.0) * (4.0 * j + 1.0) / (16.0 * w2);
    if (u > 700.0) break;
    const double coefficient =
        std::exp(boost::math::lgamma(j + 0.5) - boost::math::lgamma(0.5) - boost::math::lgamma(j + 1.0));
    cdf += coefficient * std::sqrt(4.0 * j + 1.0) * std::exp(-u) * boost::math::cyl_bessel_k(0.25, u);
  }
  cdf /= pi * std::sqrt(w2);
  return std::clamp(1.0 - cdf, 0.0, 1.0);
}

double fitted_cdf(const DetectionFit& fit, TransectKind kind, double x) {
  const double w = fit.function.truncation_m();
  const double total = fit.function.integral(0.0, w, kind);
  return std::clamp(fit.function.integral(0.0, std::min(x, w), kind) / total, 0.0, 1.0);
}

GoodnessOfFit goodness_of_fit(const DetectionFit& fit, const DistanceData& data) {
  GoodnessOfFit gof;
  const TransectKind kind = data.kind;
  const double q = static_cast<double>(fit.parameter_count);
  if (data.binned()) {
    gof.bin_edges = data.bin_edges;
    for (const auto c : data.bin_counts) gof.observed.push_back(static_cast<double>(c));
  } else {
    double top = fit.function.truncation_m();
    if (!std::isfinite(top)) top = *std::max_element(data.exact.begin(), data.exact.end());
    const auto bins =
        static_cast<std::size_t>(std::clamp(std::round(std::sqrt(static_cast<double>(data.exact.size()))), 3.0, 10.0));
    for (std::size_t k = 0; k <= bins; ++k)
      gof.bin_edges.push_back(top * static_cast<double>(k) / static_cast<double>(bins));
    gof.observed.assign(bins, 0.0);
    for (const double x : data.exact) {
      const auto k = std::min(bins - 1, static_cast<std::size_t>(x / top * static_cast<double>(bins)));
      gof.observed[k] += 1.0;
    }
  }
  const double n = std::accumulate(gof.observed.begin(), gof.observed.end(), 0.0);
  const double lo = gof.bin_edges.front();
  const double hi = gof.bin_edges.back();
  const double total = fit.function.integral(lo, hi, kind);
  for (std::size_t k = 0; k + 1 < gof.bin_edges.size(); ++k) {
    const double e = n * fit.function.integral(gof.bin_edges[k], gof.bin_edges[k + 1], kind) / total;
    gof.expected.push_back(e);
    if (e > 0.0) gof.chi_square += (gof.observed[k] - e) * (gof.observed[k] - e) / e;
  }
  gof.chi_square_df = static_cast<double>(gof.expected.size()) - 1.0 - q;
  if (gof.chi_square_df > 0.0) {
    const boost::math::chi_squared law(gof.chi_square_df);
    gof.chi_square_p = boost::math::cdf(boost::math::complement(law, gof.chi_square));
  }
  if (!data.binned() && !data.exact.empty()) {
    std::vector<double> x = data.exact;
    std::sort(x.begin(), x.end());
    const double m = static_cast<double>(x.size());
    double d = 0.0;
    double w2 = 1.0 / (12.0 * m);
    for (std::size_t i = 0; i < x.size(); ++i) {
      const double f = fitted_cdf(fit, kind, x[i]);
      const double id = static_cast<double>(i);
      d = std::max({d, (id + 1.0) / m - f, f - id / m});
      const double c = f - (2.0 * id + 1.0) / (2.0 * m);
      w2 += c * c;
    }
    gof.ks_statistic = d;
    gof.ks_p = kolmogorov_smirnov_p(d, x.size());
    gof.cvm_statistic = w2;
    gof.cvm_p = cramer_von_mises_p(w2);
  }
  return gof;
}

}  // namespace stipple
