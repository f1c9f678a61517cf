#include "stipple/intensity/density.hpp"

#include <cmath>

#include <gtest/gtest.h>

#include "stipple/error.hpp"
#include "stipple/simulate/point_process.hpp"

namespace stipple {
namespace {

// A survey of three square plots with the given areas (m2) and, per plot, counts of
// species "a" and "b" placed on a grid inside each plot.
Survey make_survey(const std::vector<double>& areas_m2, const std::vector<std::vector<std::uint64_t>>& counts) {
  std::vector<Sighting> sightings;
  std::vector<Plot> plots;
  double x0 = 0.0;
  std::int64_t fid = 1;
  for (std::size_t i = 0; i < areas_m2.size(); ++i) {
    const double side = std::sqrt(areas_m2[i]);
    plots.push_back(Plot{"P" + std::to_string(i + 1), Window::rectangle(x0, 0, x0 + side, side)});
    for (std::size_t s = 0; s < counts[i].size(); ++s) {
      for (std::uint64_t k = 0; k < counts[i][s]; ++k) {
        const double u = (static_cast<double>(k) + 0.5) / static_cast<double>(counts[i][s]);
        sightings.push_back(Sighting{
            {x0 + side * u, side * (0.25 + 0.5 * static_cast<double>(s))}, fid++, s == 0 ? "a" : "b", std::nullopt});
      }
    }
    x0 += side + 10.0;
  }
  return assign_to_plots(sightings, std::move(plots));
}

// Counts alone give the survey's result exactly, and appending surveys (a season of files)
// equals one survey of all their plots.
TEST(EstimateDensity, CountsAloneAndAppendedSurveysGiveTheSameResult) {
  const Survey all = make_survey({1e4, 2e4, 5e3}, {{12, 3}, {30, 9}, {4, 0}});
  const Survey first = make_survey({1e4, 2e4}, {{12, 3}, {30, 9}});
  const Survey second = make_survey({5e3}, {{4, 0}});
  DensityOptions options;
  const DensityResult direct = estimate_density(all, options);
  const DensityResult counted = estimate_density(PlotCounts::of(all), options);
  PlotCounts season = PlotCounts::of(first);
  PlotCounts later = PlotCounts::of(second);
  later.species = {"a"};  // the second file saw only species a
  later.counts = {{4}};
  season.append(later, "file2:");
  const DensityResult appended = estimate_density(season, options);
  ASSERT_EQ(direct.pooled.size(), 3u);
  for (const DensityResult* r : {&counted, &appended}) {
    ASSERT_EQ(r->pooled.size(), direct.pooled.size());
    for (std::size_t i = 0; i < direct.pooled.size(); ++i) {
      EXPECT_EQ(r->pooled[i].count, direct.pooled[i].count);
      // Relative 1e-12: a plot drawn at another x offset has its area rounded differently.
      const auto near = [](double a, double b) { return std::abs(a - b) <= 1e-12 * std::abs(b); };
      EXPECT_TRUE(near(r->pooled[i].area_in_unit, direct.pooled[i].area_in_unit));
      EXPECT_TRUE(near(r->pooled[i].ci.upper, direct.pooled[i].ci.upper));
      EXPECT_TRUE(
          near(r->pooled[i].homogeneity->chi_square.statistic, direct.pooled[i].homogeneity->chi_square.statistic));
      EXPECT_EQ(r->pooled[i].homogeneity->chi_square.df, direct.pooled[i].homogeneity->chi_square.df);
    }
  }
  EXPECT_EQ(appended.estimates[6].plot, "file2:P1");
  EXPECT_THROW(season.append(later, "file2:"), InputError);  // the same plot twice
}

TEST(EstimateDensity, HomogeneityWorkedExample) {
  // Source: REFERENCES.md section 5: areas [1, 0.5, 1.5] ha, counts [12, 7, 11]:
  // X2 = 2.266667, df 2, p = 0.3219583, X2/df = 1.13333.
  const Survey survey = make_survey({1e4, 0.5e4, 1.5e4}, {{12}, {7}, {11}});
  const DensityResult r = estimate_density(survey, DensityOptions{});
  ASSERT_EQ(r.pooled.size(), 2u);  // species a, then all together
  const auto& pooled = r.pooled.front();
  ASSERT_TRUE(pooled.homogeneity);
  EXPECT_NEAR(pooled.homogeneity->chi_square.statistic, 2.266667, 1e-6);
  EXPECT_EQ(pooled.homogeneity->chi_square.df, 2.0);
  EXPECT_NEAR(pooled.homogeneity->p_value, 0.3219583, 1e-7);
  EXPECT_NEAR(pooled.homogeneity->dispersion_ratio, 1.133333, 1e-6);
  EXPECT_FALSE(pooled.homogeneity->monte_carlo);
  EXPECT_FALSE(pooled.homogeneity->significant);
  EXPECT_NEAR(pooled.intensity, 10.0, 1e-9);  // 30 in 3 ha
}

TEST(EstimateDensity, PooledIntervalIsExactOnSummedCounts) {
  // Source: REFERENCES.md section 1: pooled 80 counts in 3 ha: 26.667 per ha,
  // 95% [21.145008, 33.188975]. Superposition: sum n / sum |W|.
  const Survey survey = make_survey({1e4, 1e4, 1e4}, {{31}, {25}, {24}});
  const DensityResult r = estimate_density(survey, DensityOptions{});
  const auto& pooled = r.pooled.front();
  EXPECT_EQ(pooled.count, 80u);
  EXPECT_NEAR(pooled.area_in_unit, 3.0, 1e-9);
  EXPECT_NEAR(pooled.intensity, 80.0 / 3.0, 1e-9);
  EXPECT_NEAR(pooled.ci.lower, 21.145008, 1e-6);
  EXPECT_NEAR(pooled.ci.upper, 33.188975, 1e-6);
  // Per plot: 31 in 1 ha, Garwood [21.062996, 44.002026] (REFERENCES.md section 1).
  EXPECT_EQ(r.estimates.front().count, 31u);
  EXPECT_NEAR(r.estimates.front().ci.lower, 21.062996, 1e-6);
  EXPECT_NEAR(r.estimates.front().ci.upper, 44.002026, 1e-6);
}

TEST(EstimateDensity, CompositionWorkedExample) {
  // Source: REFERENCES.md section 5: table [[12,7,11],[8,13,9]] has X2 = 2.8 with
  // species as rows; here plots are rows, so the table is its transpose (same X2).
  const Survey survey = make_survey({1e4, 1e4, 1e4}, {{12, 8}, {7, 13}, {11, 9}});
  const DensityResult r = estimate_density(survey, DensityOptions{});
  ASSERT_TRUE(r.composition);
  EXPECT_NEAR(r.composition->chi_square.statistic, 2.8, 1e-12);
  EXPECT_EQ(r.composition->chi_square.df, 2.0);
  EXPECT_NEAR(r.composition->p_value, 0.2465970, 1e-7);
}

TEST(EstimateDensity, SmallExpectedCountsUseMonteCarlo) {
  const Survey survey = make_survey({1e4, 1e4, 1e4}, {{1}, {0}, {5}});
  DensityOptions options;
  options.simulations = 1999;
  const DensityResult r = estimate_density(survey, options);
  const auto& h = *r.pooled.front().homogeneity;
  EXPECT_TRUE(h.monte_carlo);
  ASSERT_TRUE(h.chi_square.monte_carlo_p_value);
  EXPECT_EQ(h.p_value, *h.chi_square.monte_carlo_p_value);
  // Counts 1, 0, 5 in equal plots: X2 = 7; the exact conditional p-value, P(X2 >= 7) under
  // the multinomial(6; 1/3, 1/3, 1/3), is 0.053498 (enumerated over all 28 outcomes in an
  // independent Python script; the chi-square law would say 0.030). The Monte Carlo p of
  // 1999 draws lies within 4 binomial standard errors (0.020) of it.
  EXPECT_DOUBLE_EQ(h.chi_square.statistic, 7.0);
  EXPECT_NEAR(h.p_value, 0.053498, 4.0 * std::sqrt(0.053498 * (1 - 0.053498) / 2000.0));
  // Reproducible: same seed, same p.
  const DensityResult again = estimate_density(survey, options);
  EXPECT_EQ(again.pooled.front().homogeneity->p_value, h.p_value);
}

TEST(EstimateDensity, HeterogeneousPlotsReportBetweenPlotError) {
  // Ratio-estimator variance (Cochran 1977, from memory): k/(k-1) sum (n_i - R a_i)^2 / A^2.
  const Survey survey = make_survey({1e4, 1e4, 1e4}, {{10}, {50}, {90}});
  const DensityResult r = estimate_density(survey, DensityOptions{});
  const auto& h = *r.pooled.front().homogeneity;
  EXPECT_TRUE(h.significant);
  const double expected_se = std::sqrt(1.5 * (40.0 * 40.0 + 0.0 + 40.0 * 40.0)) / 3.0;
  EXPECT_NEAR(h.between_plot_se, expected_se, 1e-9);
  EXPECT_GT(h.between_plot_ci.upper - h.between_plot_ci.lower, r.pooled.front().ci.upper - r.pooled.front().ci.lower);
}

TEST(EstimateDensity, BetweenPlotIntervalIsOnTheCorrectedScale) {
  // Ratio estimator (Cochran 1977, ch. 6, from memory) of the corrected plot counts
  // y_i = sum_s n_is / p_s, plus the delta-method variance of p (Kingman 1993 thinning;
  // the same propagation as the Poisson rows), df by Satterthwaite (1946).
  // Source: numbers recomputed with NumPy 1.24 / SciPy 1.10 (stats.t.ppf) from those
  // formulas: areas [1, 0.5, 1.5] ha; species a counts [12, 2, 30], p = 0.8, se 0.05;
  // species b counts [3, 9, 4], p = 0.5, se 0.1.
  const Survey survey = make_survey({1e4, 0.5e4, 1.5e4}, {{12, 3}, {2, 9}, {30, 4}});
  DensityOptions options;
  options.detection = DetectionTable::by_species({{"a", {0.8, 0.05}}, {"b", {0.5, 0.1}}}, std::nullopt, "test");
  const DensityResult r = estimate_density(survey, options);
  ASSERT_EQ(r.pooled.size(), 3u);
  const auto& all = *r.pooled.back().homogeneity;
  EXPECT_NEAR(r.pooled.back().corrected.intensity, 29.0, 1e-9);
  EXPECT_NEAR(all.corrected_between_plot_se, 4.816365691, 1e-8);
  EXPECT_NEAR(all.corrected_between_plot_df, 3.582148899, 1e-8);
  EXPECT_NEAR(all.corrected_between_plot_ci.lower, 14.989399476, 1e-7);
  EXPECT_NEAR(all.corrected_between_plot_ci.upper, 43.010600524, 1e-7);
  // The interval is centred on the corrected estimate it is printed beside.
  EXPECT_NEAR(0.5 * (all.corrected_between_plot_ci.lower + all.corrected_between_plot_ci.upper),
              r.pooled.back().corrected.intensity, 1e-9);
  const auto& a = *r.pooled.front().homogeneity;
  EXPECT_NEAR(a.corrected_between_plot_se, 5.219086122, 1e-8);
  EXPECT_NEAR(a.corrected_between_plot_ci.upper, 38.881431164, 1e-7);

  // With p known exactly the corrected interval is the observed one divided by p.
  options.detection = DetectionTable::uniform({0.8, 0.0});
  const DensityResult exact = estimate_density(survey, options);
  const auto& e = *exact.pooled.front().homogeneity;
  EXPECT_NEAR(e.corrected_between_plot_df, 2.0, 1e-12);
  EXPECT_NEAR(e.corrected_between_plot_se, e.between_plot_se / 0.8, 1e-12);
  EXPECT_NEAR(e.corrected_between_plot_ci.upper, e.between_plot_ci.upper / 0.8, 1e-12);
  EXPECT_NEAR(e.corrected_between_plot_ci.upper, 40.241368693, 1e-7);
}

TEST(EstimateDensity, AllSpeciesRowIsTheSuperposition) {
  const Survey survey = make_survey({1e4}, {{12, 8}});
  DensityOptions options;
  options.detection = DetectionTable::by_species({{"a", {0.5, 0.0}}, {"b", {1.0, 0.0}}}, std::nullopt, "test");
  const DensityResult r = estimate_density(survey, options);
  ASSERT_EQ(r.estimates.size(), 3u);
  EXPECT_FALSE(r.estimates[2].species);
  EXPECT_EQ(r.estimates[2].count, 20u);
  EXPECT_NEAR(r.estimates[2].corrected.intensity, 24.0 + 8.0, 1e-9);
  EXPECT_NEAR(r.estimates[0].corrected.intensity, 24.0, 1e-9);
  EXPECT_FALSE(r.pooled.back().homogeneity);  // one plot: nothing to compare
}

TEST(EstimateDensity, UnitsScaleIntensities) {
  const Survey survey = make_survey({1e4}, {{31}});
  DensityOptions options;
  options.unit = AreaUnit::square_kilometre;
  const DensityResult r = estimate_density(survey, options);
  EXPECT_NEAR(r.estimates.front().area_in_unit, 0.01, 1e-12);
  EXPECT_NEAR(r.estimates.front().intensity, 3100.0, 1e-9);
}

}  // namespace
}  // namespace stipple
