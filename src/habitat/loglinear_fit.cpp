#include "stipple/habitat/loglinear_fit.hpp"

#include <cmath>
#include <string>

#include <Eigen/Cholesky>
#include <Eigen/Core>

#include "pieces.hpp"
#include "stipple/error.hpp"

namespace stipple {

namespace {

using Matrix = Eigen::MatrixXd;
using Vector = Eigen::VectorXd;

constexpr std::size_t max_iterations = 200;
constexpr int max_halvings = 60;
// A slope of more than this many units of log intensity per standard deviation of its
// covariate over the window (a rate ratio above e^10, about 22,000, per SD) is the
// likelihood climbing towards a boundary: the covariate separates the sightings from part
// of the window, and the maximum is not finite.
constexpr double separation_limit = 10.0;

// The design with an intercept column and each covariate centred and scaled by its
// area-weighted mean and standard deviation over the window (better conditioned Newton
// steps; the coefficients are mapped back exactly at the end).
struct Standardised {
  Matrix pieces;  // pieces x (1 + k)
  Vector area;
  Vector point_sum;  // sum over sightings of each standardised column
  Vector mean;
  Vector scale;
};

Standardised standardise(const LoglinearDesign& d) {
  const std::size_t k = d.names.size();
  const std::size_t m = d.piece_area_m2.size();
  if (d.piece_values.size() != m * k)
    throw InputError("habitat model: " + std::to_string(d.piece_values.size()) + " piece values for " +
                     std::to_string(m) + " pieces and " + std::to_string(k) + " covariates");
  if (d.point_values.size() != d.sightings * k)
    throw InputError("habitat model: " + std::to_string(d.point_values.size()) + " sighting values for " +
                     std::to_string(d.sightings) + " sightings and " + std::to_string(k) + " covariates");
  const double total = habitat_detail::total_piece_area(d.piece_area_m2, "habitat model");
  Standardised s;
  s.area = Eigen::Map<const Vector>(d.piece_area_m2.data(), static_cast<Eigen::Index>(m));
  for (std::size_t i = 0; i < m * k; ++i)
    if (!std::isfinite(d.piece_values[i]))
      throw InputError("habitat model: window piece " + std::to_string(i / k) + " has a non-finite value of '" +
                       d.names[i % k] + "'");
  for (std::size_t j = 0; j < d.sightings * k; ++j)
    if (!std::isfinite(d.point_values[j]))
      throw InputError("habitat model: sighting " + std::to_string(j / k) + " has a non-finite value of '" +
                       d.names[j % k] + "'");

  const auto cols = static_cast<Eigen::Index>(1 + k);
  s.mean = Vector::Zero(cols);
  s.scale = Vector::Ones(cols);
  for (std::size_t c = 0; c < k; ++c) {
    const auto [mean, var] = habitat_detail::area_moments(d.piece_area_m2, total, d.piece_values, k, c);
    const double sd = std::sqrt(var);
    if (!(sd > 1e-12 * (1.0 + std::abs(mean))))
      throw AnalysisError("habitat model: covariate '" + d.names[c] + "' is constant over the window");
    s.mean[static_cast<Eigen::Index>(c + 1)] = mean;
    s.scale[static_cast<Eigen::Index>(c + 1)] = sd;
  }
  s.pieces = Matrix(static_cast<Eigen::Index>(m), cols);
  for (std::size_t i = 0; i < m; ++i) {
    const auto row = static_cast<Eigen::Index>(i);
    s.pieces(row, 0) = 1.0;
    for (std::size_t c = 0; c < k; ++c) {
      const auto col = static_cast<Eigen::Index>(c + 1);
      s.pieces(row, col) = (d.piece_values[i * k + c] - s.mean[col]) / s.scale[col];
    }
  }
  const std::size_t n = d.sightings;
  s.point_sum = Vector::Zero(cols);
  s.point_sum[0] = static_cast<double>(n);
  for (std::size_t j = 0; j < n; ++j) {
    for (std::size_t c = 0; c < k; ++c) {
      const auto col = static_cast<Eigen::Index>(c + 1);
      s.point_sum[col] += (d.point_values[j * k + c] - s.mean[col]) / s.scale[col];
    }
  }
  return s;
}

// Log-likelihood (without the constant) at standardised coefficients c.
double log_likelihood(const Standardised& s, const Vector& c) {
  const Vector eta = s.pieces * c;
  return s.point_sum.dot(c) - s.area.dot(eta.array().exp().matrix());
}

}  // namespace

LoglinearFit fit_loglinear_intensity(const LoglinearDesign& design) {
  const Standardised s = standardise(design);
  const double n = s.point_sum[0];
  if (!(n > 0.0)) throw AnalysisError("habitat model: no sightings to fit");
  const Eigen::Index p = s.pieces.cols();

  Vector c = Vector::Zero(p);
  c[0] = std::log(n / s.area.sum());
  double ll = log_likelihood(s, c);
  Matrix info(p, p);
  std::size_t iterations = 0;
  for (;; ++iterations) {
    if (iterations == max_iterations)
      throw AnalysisError("habitat model: the likelihood did not converge in " + std::to_string(max_iterations) +
                          " Newton steps");
    const Vector mu = s.area.array() * (s.pieces * c).array().exp();
    const Vector score = s.point_sum - s.pieces.transpose() * mu;
    info = s.pieces.transpose() * mu.asDiagonal() * s.pieces;
    const Eigen::LLT<Matrix> llt(info);
    if (llt.info() != Eigen::Success || llt.rcond() < 1e-13)
      throw AnalysisError("habitat model: the covariates are collinear over the window");
    const Vector step = llt.solve(score);
    // The Newton decrement: half of it bounds the log-likelihood still to gain. Once it is
    // negligible the full step is taken without a line search: Newton converges
    // quadratically there, so the coefficients land at machine precision, not at the
    // square root of the likelihood's tolerance.
    if (0.5 * score.dot(step) < 1e-14 * (1.0 + std::abs(ll))) {
      c += step;
      ll = log_likelihood(s, c);
      break;
    }
    double t = 1.0;
    Vector next = c + step;
    double next_ll = log_likelihood(s, next);
    for (int h = 0; h < max_halvings && !(next_ll >= ll); ++h) {
      t *= 0.5;
      next = c + t * step;
      next_ll = log_likelihood(s, next);
    }
    if (!(next_ll >= ll)) break;  // no ascent left at machine precision
    c = next;
    ll = next_ll;
  }
  for (Eigen::Index j = 1; j < p; ++j) {
    if (std::abs(c[j]) > separation_limit)
      throw AnalysisError("habitat model: the likelihood has no finite maximum in covariate '" +
                          design.names[static_cast<std::size_t>(j - 1)] +
                          "' (it separates the sightings from part of the window)");
  }
  // Covariance at the optimum.
  const Vector mu = s.area.array() * (s.pieces * c).array().exp();
  info = s.pieces.transpose() * mu.asDiagonal() * s.pieces;
  const Matrix cov_std = info.llt().solve(Matrix::Identity(p, p));

  // Back to the covariates' own units: beta = T c.
  Matrix t = Matrix::Identity(p, p);
  for (Eigen::Index j = 1; j < p; ++j) {
    t(j, j) = 1.0 / s.scale[j];
    t(0, j) = -s.mean[j] / s.scale[j];
  }
  const Vector beta = t * c;
  const Matrix cov = t * cov_std * t.transpose();

  LoglinearFit fit;
  fit.iterations = iterations;
  fit.log_likelihood = ll;
  fit.aic = -2.0 * ll + 2.0 * static_cast<double>(p);
  for (Eigen::Index j = 0; j < p; ++j) {
    fit.coefficients.push_back(beta[j]);
    fit.standard_errors.push_back(std::sqrt(cov(j, j)));
    for (Eigen::Index i = 0; i < p; ++i) fit.covariance.push_back(cov(j, i));
  }
  return fit;
}

}  // namespace stipple
