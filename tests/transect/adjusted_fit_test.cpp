// Key + adjustment detection functions against an independent maximum-likelihood fit.
//
// Source: tests/data/transect/adjusted/reference.json, written by make_reference.py beside
// it: distances drawn from each key (half-normal, hazard-rate, uniform) with one term of
// each series (cosine, simple polynomial, Hermite), for line transects, one point-transect
// and one binned case, fitted with SciPy (Nelder-Mead from several starts; quad for the
// integrals) from the published definition of g (Buckland et al. 2001, section 3.3.1).

#include <cmath>
#include <fstream>
#include <string>

#include <gtest/gtest.h>
#include <boost/math/distributions/normal.hpp>
#include <nlohmann/json.hpp>

#include "stipple/transect/detection_function.hpp"
#include "support.hpp"

namespace stipple {
namespace {

const std::string reference_dir = std::string(STIPPLE_TEST_DATA_DIR) + "/transect/adjusted/";

nlohmann::json load_reference() {
  std::ifstream in(reference_dir + "reference.json");
  return nlohmann::json::parse(in);
}

DistanceData case_data(const nlohmann::json& c) {
  DistanceData d;
  d.kind = c["kind"] == "point" ? TransectKind::point : TransectKind::line;
  d.truncation_m = c["truncation_m"].get<double>();
  if (c["kind"] == "binned") {
    d.bin_edges = c["bin_edges"].get<std::vector<double>>();
    d.bin_counts = c["bin_counts"].get<std::vector<std::uint64_t>>();
    return d;
  }
  std::ifstream in(reference_dir + c["name"].get<std::string>() + ".csv");
  std::string line;
  std::getline(in, line);  // header
  while (std::getline(in, line))
    d.exact.push_back(test::number_of(line));  // not std::stod: the suite runs under a decimal comma
  return d;
}

double effective(const DetectionFit& fit, TransectKind kind) {
  return kind == TransectKind::line ? fit.effective_strip_width_m : fit.effective_area_m2;
}

TEST(AdjustedFit, EveryKeyAndSeriesReachesTheIndependentMaximum) {
  const nlohmann::json reference = load_reference();
  ASSERT_EQ(reference["cases"].size(), 11u);
  const double z = boost::math::quantile(boost::math::normal(), 0.975);
  for (const auto& c : reference["cases"]) {
    SCOPED_TRACE(c["name"].get<std::string>());
    const DistanceData data = case_data(c);
    const KeyFunction key = parse_key_function(c["key"].get<std::string>());
    const Adjustment series = parse_adjustment(c["adjustment"].get<std::string>());
    const DetectionFit bare = fit_detection_function(data, {key, Adjustment::none, 0});
    const DetectionFit adjusted = fit_detection_function(data, {key, series, 1});
    ASSERT_TRUE(adjusted.converged);
    ASSERT_TRUE(adjusted.monotone);
    // The maximised log-likelihoods agree with SciPy's to 1e-3 (two optimisers' stopping
    // rules); the coefficient is away from zero, where the faulty fits stopped.
    EXPECT_NEAR(bare.log_likelihood, c["key_only"]["log_likelihood"].get<double>(), 1e-3);
    EXPECT_NEAR(adjusted.log_likelihood, c["adjusted"]["log_likelihood"].get<double>(), 1e-3);
    const double coefficient = adjusted.function.parameters().back();
    EXPECT_NEAR(coefficient, c["adjusted"]["coefficient"].get<double>(),
                0.01 * std::abs(c["adjusted"]["coefficient"].get<double>()));
    // The AIC gain of the adjustment term over the key alone, as SciPy computes it (a
    // term stuck at zero would give exactly -2).
    EXPECT_NEAR(bare.aic - adjusted.aic, c["aic_gain"].get<double>(), 0.01);
    // Effective strip width (or area) at the optimum, and the generating value inside the
    // fit's 95% log-normal interval (Buckland et al. 2001, section 3.7.1).
    const double value = effective(adjusted, data.kind);
    EXPECT_NEAR(value, c["adjusted"]["effective"].get<double>(), 1e-3 * value);
    const double spread = std::exp(z * std::sqrt(std::log(1.0 + adjusted.effective_cv * adjusted.effective_cv)));
    const double truth = c["generating"]["effective"].get<double>();
    EXPECT_GE(truth, value / spread);
    EXPECT_LE(truth, value * spread);
  }
}

TEST(AdjustedFit, ForwardSelectionKeepsATermThatLowersAicAndListsEveryCandidate) {
  // Buckland et al. (2001), section 3.5 (from memory): forward selection adds a term while
  // AIC falls. Where SciPy's AIC gain is positive the adjusted model ranks first; either
  // way the one-term fit is listed with its AIC.
  const nlohmann::json reference = load_reference();
  for (const auto& c : reference["cases"]) {
    SCOPED_TRACE(c["name"].get<std::string>());
    const DistanceData data = case_data(c);
    const KeyFunction key = parse_key_function(c["key"].get<std::string>());
    const Adjustment series = parse_adjustment(c["adjustment"].get<std::string>());
    const auto fits = fit_candidates(data, {key}, {series}, 2);
    const bool gains = c["aic_gain"].get<double>() > 0.0;
    bool one_term_listed = false;
    for (const auto& f : fits) one_term_listed = one_term_listed || f.function.model().terms == 1;
    EXPECT_TRUE(one_term_listed);
    EXPECT_EQ(fits.front().function.model().terms >= 1, gains);
    for (std::size_t i = 1; i < fits.size(); ++i) EXPECT_LE(fits[i - 1].aic, fits[i].aic);
  }
}

DistanceData lines_within(std::vector<double> x, double w) {
  DistanceData d;
  d.kind = TransectKind::line;
  d.truncation_m = w;
  d.exact = std::move(x);
  return d;
}

TEST(AdjustedFit, UniformCosineInteriorAndBoundaryMaxima) {
  // g = (1 + a cos(pi x / w)) / (1 + a) is non-increasing and non-negative only for
  // 0 <= a <= 1 (closed form). Interior case: x_i = 50 ((i + 0.5) / 300)^2, whose maximum
  // a = 0.6176057 is from SciPy 1.10 (optimize.minimize_scalar, bounded, of
  // -sum log(1 + a cos(pi x_i / 50))). Boundary case: every x_i < w / 2, so each
  // cos(pi x_i / w) > 0 and the log-likelihood rises all the way to a = 1, where the
  // effective strip width is w / 2 (the cosine integrates to 0 over [0, w]).
  std::vector<double> interior;
  std::vector<double> near;
  for (int i = 0; i < 300; ++i) {
    interior.push_back(50.0 * std::pow((i + 0.5) / 300.0, 2.0));
    near.push_back(25.0 * (i + 0.5) / 300.0);
  }
  const DetectionModel model{KeyFunction::uniform, Adjustment::cosine, 1};
  const DetectionFit a = fit_detection_function(lines_within(interior, 50.0), model);
  ASSERT_TRUE(a.converged);
  EXPECT_NEAR(a.function.parameters().back(), 0.6176057, 1e-5);
  EXPECT_NEAR(a.effective_strip_width_m, 50.0 / 1.6176057, 1e-3);
  const DetectionFit b = fit_detection_function(lines_within(near, 50.0), model);
  ASSERT_TRUE(b.converged);
  EXPECT_TRUE(b.monotone);
  EXPECT_NEAR(b.function.parameters().back(), 1.0, 1e-5);
  EXPECT_NEAR(b.effective_strip_width_m, 25.0, 1e-3);
}

}  // namespace
}  // namespace stipple
