#include "stipple/transect/estimate.hpp"

#include <cmath>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

TEST(EncounterRate, FewsterR2WorkedExample) {
  // Source: Fewster et al. (2009) estimator R2 (formula from memory); REFERENCES.md §8:
  // l = [2, 3, 2.5, 4.5], n = [10, 18, 9, 27]: n/L = 5.333333, var = 0.2983539,
  // SE = 0.5462178, CV = 0.1024158.
  const EncounterRate e = encounter_rate({2, 3, 2.5, 4.5}, {10, 18, 9, 27});
  EXPECT_NEAR(e.rate, 5.333333, 1e-6);
  EXPECT_NEAR(e.variance, 0.2983539, 1e-7);
  EXPECT_NEAR(std::sqrt(e.variance), 0.5462178, 1e-7);
  EXPECT_NEAR(e.cv, 0.1024158, 1e-7);
}

TEST(DensityInterval, SatterthwaiteLogNormalWorkedExample) {
  // Source: Buckland et al. (2001) §3.7.1 (from memory); REFERENCES.md §8: D = 143.3,
  // CVs 0.14 (K = 10 transects) and 0.08 (n = 96, q = 1): CV = 0.1612452, df = 15.6788,
  // C = 1.405228, [101.976, 201.369].
  const double cv = std::sqrt(0.14 * 0.14 + 0.08 * 0.08);
  EXPECT_NEAR(cv, 0.1612452, 1e-7);
  const double df = satterthwaite_df({{0.14, 9.0}, {0.08, 95.0}});
  EXPECT_NEAR(df, 15.6788, 1e-4);
  const Interval ci = lognormal_interval(143.3, cv, df, 0.95);
  EXPECT_NEAR(ci.lower, 101.976, 1e-3);
  EXPECT_NEAR(ci.upper, 201.369, 1e-3);
  EXPECT_NEAR(143.3 / ci.lower, 1.405228, 1e-6);
  // With a cluster-size CV of 0.05 too: 0.1688194.
  EXPECT_NEAR(std::sqrt(cv * cv + 0.05 * 0.05), 0.1688194, 1e-7);
}

TEST(EffortPlanning, RuleOfThumb) {
  // Source: Buckland et al. (2001) ch. 7 (from memory); REFERENCES.md §8: CV_t = 0.1,
  // n0 = 40 on L0 = 10 km, b = 3 -> 75 km.
  EXPECT_NEAR(effort_for_target_cv(40, 10, 0.1), 75.0, 1e-12);
  EXPECT_THROW((void)effort_for_target_cv(0, 10, 0.1), InputError);
}

TransectSurvey line_survey(const std::vector<double>& lengths_km, const std::vector<std::vector<double>>& distances) {
  std::vector<TransectUnit> transects;
  std::vector<TransectObservation> observations;
  for (std::size_t t = 0; t < lengths_km.size(); ++t) {
    transects.push_back({"T" + std::to_string(t), std::nullopt, lengths_km[t]});
    for (const double d : distances[t]) observations.push_back({t, d, 1.0, "hare"});
  }
  return {TransectKind::line, std::move(transects), std::move(observations)};
}

TEST(AnalyseTransects, LineDensityFormula) {
  // Source: REFERENCES.md §8: D = n E(s) / (2 mu L): with the half-normal untruncated fit
  // the estimate equals n / (2 sigma-hat sqrt(pi/2) L) with sigma-hat^2 = sum x^2 / n.
  std::vector<std::vector<double>> d(4);
  for (int i = 0; i < 60; ++i) d[static_cast<std::size_t>(i % 4)].push_back(std::fmod(i * 3.7, 30.0));
  TransectOptions o;
  o.keys = {KeyFunction::half_normal};
  o.adjustments = {};
  o.truncation.distance_m = std::numeric_limits<double>::infinity();
  const TransectResult r = analyse_transects(line_survey({2, 2, 2, 2}, d), o);
  double ss = 0.0;
  for (const auto& t : d)
    for (const double x : t) ss += x * x;
  const double sigma = std::sqrt(ss / 60.0);
  const double mu = sigma * std::sqrt(3.14159265358979323846 / 2.0);
  ASSERT_FALSE(r.results.empty());
  const auto& hare = r.results.front();
  EXPECT_EQ(hare.n, 60u);
  EXPECT_NEAR(hare.effort, 8.0, 1e-12);
  EXPECT_NEAR(hare.fit.effective_strip_width_m, mu, 1e-4 * mu);
  EXPECT_NEAR(hare.density, 60.0 / (2.0 * mu * 8000.0) * 1e6, 1e-3 * hare.density);
  // REFERENCES.md §8: n = 60, L = 8 km, mu = 12.377488 -> 302.9694 per km2.
  EXPECT_NEAR(60.0 / (2.0 * 12.377488 * 8000.0) * 1e6, 302.9694, 1e-4);
}

TEST(AnalyseTransects, PointDensityFormula) {
  // Source: REFERENCES.md §8: D = n E(s) / (k nu); n = 45, k = 30, nu = 2402.8486 m2
  // -> 6.242591 per ha.
  EXPECT_NEAR(45.0 / (30.0 * 2402.8486) * 1e4, 6.242591, 1e-6);
  std::vector<TransectUnit> stations;
  std::vector<TransectObservation> observations;
  for (int t = 0; t < 30; ++t) stations.push_back({"S" + std::to_string(t), std::nullopt, 1.0});
  for (int i = 0; i < 45; ++i)
    observations.push_back({static_cast<std::size_t>(i % 30), 5.0 + std::fmod(i * 7.9, 40.0), 1.0, "wren"});
  const TransectSurvey s(TransectKind::point, std::move(stations), std::move(observations));
  TransectOptions o;
  o.keys = {KeyFunction::half_normal};
  o.adjustments = {};
  o.unit = AreaUnit::hectare;
  o.truncation.distance_m = 50.0;
  const TransectResult r = analyse_transects(s, o);
  const auto& e = r.results.front();
  EXPECT_NEAR(e.density, 45.0 / (30.0 * e.fit.effective_area_m2) * 1e4, 1e-9);
}

TEST(AnalyseTransects, PercentTruncationDropsLargestDistances) {
  std::vector<std::vector<double>> d(2);
  for (int i = 1; i <= 100; ++i) d[static_cast<std::size_t>(i % 2)].push_back(static_cast<double>(i));
  TransectOptions o;
  o.keys = {KeyFunction::half_normal};
  o.adjustments = {};
  o.truncation.largest_share = 0.1;
  const TransectResult r = analyse_transects(line_survey({1, 1}, d), o);
  EXPECT_NEAR(r.truncation_m, 90.0, 1e-12);
  EXPECT_EQ(r.truncated, 10u);
  EXPECT_EQ(r.results.front().n, 90u);
}

TEST(TransectSurvey, RefusesZeroEffort) {
  EXPECT_THROW(static_cast<void>(line_survey({1, 0}, {{1, 2, 3}, {4}})), InputError);
  EXPECT_THROW(static_cast<void>(line_survey({1, std::numeric_limits<double>::infinity()}, {{1}, {4}})), InputError);
}

TEST(TransectSurvey, CanOnlyBeBuiltWhole) {
  const std::vector<TransectUnit> one{{"T1", std::nullopt, 1.0}};
  EXPECT_NO_THROW((TransectSurvey{TransectKind::line, one, {{0, 5.0, 1.0, "hare"}}}));
  // No transect 3.
  EXPECT_THROW((TransectSurvey{TransectKind::line, one, {{0, 5.0, 1.0, "hare"}, {3, 5.0, 1.0, "hare"}}}), InputError);
  EXPECT_THROW((TransectSurvey{TransectKind::line, one, {{0, -1.0, 1.0, "hare"}}}), InputError);
  EXPECT_THROW((TransectSurvey{TransectKind::line, one, {{0, std::nan(""), 1.0, "hare"}}}), InputError);
  EXPECT_THROW((TransectSurvey{TransectKind::line, one, {{0, 1.0, 0.0, "hare"}}}), InputError);
  EXPECT_THROW(static_cast<void>(analyse_transects(TransectSurvey{}, TransectOptions{})), AnalysisError);
}

}  // namespace
}  // namespace stipple
