#include "stipple/intensity/density.hpp"

#include <algorithm>
#include <cmath>
#include <iterator>
#include <limits>
#include <numeric>

#include <boost/math/distributions/normal.hpp>
#include <boost/math/distributions/students_t.hpp>

#include "stipple/error.hpp"

namespace stipple {

namespace {

// Expected counts of exactly 5 computed from areas carry rounding noise: allow for it.
bool needs_monte_carlo(const ChiSquareTest& test) {
  return test.min_expected < min_expected_for_chi_square * (1.0 - 1e-9);
}

HomogeneityTest test_homogeneity(const std::vector<std::uint64_t>& counts, const std::vector<double>& areas,
                                 const DensityOptions& options, double alpha, const std::string& key) {
  const double total_area = std::accumulate(areas.begin(), areas.end(), 0.0);
  const auto total = std::accumulate(counts.begin(), counts.end(), std::uint64_t{0});
  std::vector<double> expected(areas.size());
  for (std::size_t i = 0; i < areas.size(); ++i) expected[i] = static_cast<double>(total) * areas[i] / total_area;

  HomogeneityTest test;
  test.chi_square = pearson_goodness_of_fit(counts, expected);
  test.p_value = test.chi_square.p_upper;
  test.dispersion_ratio = test.chi_square.statistic / test.chi_square.df;
  if (needs_monte_carlo(test.chi_square) && options.simulations > 0) {
    Engine engine(derive_seed(options.seed, key));
    test.chi_square.monte_carlo_p_value = multinomial_monte_carlo(counts, expected, options.simulations, engine).upper;
    test.chi_square.simulations = options.simulations;
    test.p_value = *test.chi_square.monte_carlo_p_value;
    test.monte_carlo = true;
  }
  test.significant = test.p_value < alpha;

  const double k = static_cast<double>(counts.size());
  const double ratio = static_cast<double>(total) / total_area;
  double sum_sq = 0.0;
  for (std::size_t i = 0; i < counts.size(); ++i) {
    const double residual = static_cast<double>(counts[i]) - ratio * areas[i];
    sum_sq += residual * residual;
  }
  test.between_plot_se = std::sqrt(k / (k - 1.0) * sum_sq) / total_area;
  const boost::math::students_t t_law(k - 1.0);
  const double t = boost::math::quantile(t_law, 1.0 - alpha / 2.0);
  test.between_plot_ci = {std::max(0.0, ratio - t * test.between_plot_se), ratio + t * test.between_plot_se};
  return test;
}

// Ratio estimator of the detection-corrected plot counts with the delta-method variance
// of the detection probabilities added; see HomogeneityTest.
void correct_between_plot(HomogeneityTest& test, const std::vector<std::vector<std::uint64_t>>& counts,
                          const std::vector<double>& areas, const std::vector<std::size_t>& species,
                          const std::vector<Detection>& detections, double alpha) {
  const std::size_t n_plots = areas.size();
  const double total_area = std::accumulate(areas.begin(), areas.end(), 0.0);
  std::vector<double> corrected(n_plots, 0.0);
  double p_variance = 0.0;  // sum_s (N_s se_s / p_s^2)^2, divided by A^2 below
  for (const std::size_t s : species) {
    const Detection& d = detections[s];
    double pooled = 0.0;
    for (std::size_t i = 0; i < n_plots; ++i) {
      corrected[i] += static_cast<double>(counts[i][s]) / d.probability;
      pooled += static_cast<double>(counts[i][s]);
    }
    const double term = pooled * d.standard_error / (d.probability * d.probability);
    p_variance += term * term;
  }
  const double k = static_cast<double>(n_plots);
  const double ratio = std::accumulate(corrected.begin(), corrected.end(), 0.0) / total_area;
  double sum_sq = 0.0;
  for (std::size_t i = 0; i < n_plots; ++i) {
    const double residual = corrected[i] - ratio * areas[i];
    sum_sq += residual * residual;
  }
  const double between_variance = k / (k - 1.0) * sum_sq / (total_area * total_area);
  const double variance = between_variance + p_variance / (total_area * total_area);
  test.corrected_between_plot_se = std::sqrt(variance);
  // Satterthwaite (1946): df = var^2 / (var_between^2 / (k - 1)); infinite when the plots agree.
  test.corrected_between_plot_df = between_variance > 0.0
                                       ? variance * variance / (between_variance * between_variance / (k - 1.0))
                                       : std::numeric_limits<double>::infinity();
  const double t =
      std::isfinite(test.corrected_between_plot_df)
          ? boost::math::quantile(boost::math::students_t(test.corrected_between_plot_df), 1.0 - alpha / 2.0)
          : boost::math::quantile(boost::math::normal(), 1.0 - alpha / 2.0);
  test.corrected_between_plot_ci = {std::max(0.0, ratio - t * test.corrected_between_plot_se),
                                    ratio + t * test.corrected_between_plot_se};
}

}  // namespace

PlotCounts PlotCounts::of(const Survey& survey) {
  PlotCounts out;
  out.species = survey.species();
  out.plots.reserve(survey.plots().size());
  for (std::size_t i = 0; i < survey.plots().size(); ++i) {
    out.plots.push_back(survey.plots()[i].id);
    out.areas_m2.push_back(survey.plots()[i].window.area_m2());
    std::vector<std::uint64_t> row(survey.species().size(), 0);
    for (const auto mark : survey.patterns()[i].marks) ++row[mark];
    out.counts.push_back(std::move(row));
  }
  return out;
}

void PlotCounts::append(const PlotCounts& other, const std::string& prefix) {
  std::vector<std::string> merged;
  std::set_union(species.begin(), species.end(), other.species.begin(), other.species.end(),
                 std::back_inserter(merged));
  const auto index_in = [&](const std::vector<std::string>& names) {
    std::vector<std::size_t> index;
    index.reserve(names.size());
    for (const auto& name : names)
      index.push_back(static_cast<std::size_t>(std::lower_bound(merged.begin(), merged.end(), name) - merged.begin()));
    return index;
  };
  if (merged.size() != species.size()) {
    const std::vector<std::size_t> mine = index_in(species);
    for (auto& row : counts) {
      std::vector<std::uint64_t> wide(merged.size(), 0);
      for (std::size_t s = 0; s < row.size(); ++s) wide[mine[s]] = row[s];
      row = std::move(wide);
    }
  }
  const std::vector<std::size_t> theirs = index_in(other.species);
  for (std::size_t i = 0; i < other.plots.size(); ++i) {
    const std::string id = prefix + other.plots[i];
    if (std::find(plots.begin(), plots.end(), id) != plots.end())
      throw InputError("plot '" + id + "' appears twice in the pooled plots");
    plots.push_back(id);
    areas_m2.push_back(other.areas_m2[i]);
    std::vector<std::uint64_t> row(merged.size(), 0);
    for (std::size_t s = 0; s < other.species.size(); ++s) row[theirs[s]] = other.counts[i][s];
    counts.push_back(std::move(row));
  }
  species = std::move(merged);
}

DensityResult estimate_density(const Survey& survey, const DensityOptions& options) {
  return estimate_density(PlotCounts::of(survey), options);
}

DensityResult estimate_density(const PlotCounts& table, const DensityOptions& options) {
  check_confidence(options.confidence);
  DensityResult result;
  result.unit = options.unit;
  result.confidence = options.confidence;
  result.alpha = alpha_from_confidence(options.confidence);
  result.seed = options.seed;
  result.simulations = options.simulations;

  const std::size_t n_species = table.species.size();
  const std::size_t n_plots = table.plots.size();
  const double per_unit = square_metres_per(options.unit);

  std::vector<Detection> detections;
  detections.reserve(n_species);
  for (const auto& name : table.species) detections.push_back(options.detection.for_species(name));

  const std::vector<std::vector<std::uint64_t>>& counts = table.counts;  // [plot][species]
  std::vector<double> areas(n_plots);
  for (std::size_t i = 0; i < n_plots; ++i) areas[i] = table.areas_m2[i] / per_unit;

  const auto make_estimate = [&](const std::vector<std::uint64_t>& by_species, const std::vector<Detection>& dets,
                                 double area) {
    DensityEstimate e;
    e.count = std::accumulate(by_species.begin(), by_species.end(), std::uint64_t{0});
    e.area_in_unit = area;
    e.intensity = static_cast<double>(e.count) / area;
    const Interval exact = garwood_interval(e.count, options.confidence);
    e.ci = {exact.lower / area, exact.upper / area};
    if (by_species.empty()) {
      // No species at all (no sightings): a count of 0 under the table's general p, if any.
      const Detection general = options.detection.fallback().value_or(Detection{});
      e.corrected = correct_for_detection({0}, {general}, area, options.confidence);
    } else {
      e.corrected = correct_for_detection(by_species, dets, area, options.confidence);
    }
    return e;
  };

  for (std::size_t i = 0; i < n_plots; ++i) {
    for (std::size_t s = 0; s < n_species; ++s) {
      DensityEstimate e = make_estimate({counts[i][s]}, {detections[s]}, areas[i]);
      e.area_m2 = table.areas_m2[i];
      e.plot = table.plots[i];
      e.species = table.species[s];
      result.estimates.push_back(std::move(e));
    }
    // All species together, also for a plot (or a survey) with no sightings at all.
    DensityEstimate e = make_estimate(counts[i], detections, areas[i]);
    e.area_m2 = table.areas_m2[i];
    e.plot = table.plots[i];
    result.estimates.push_back(std::move(e));
  }

  const double total_area = std::accumulate(areas.begin(), areas.end(), 0.0);
  const auto pool = [&](std::optional<std::size_t> species) {
    PooledEstimate pooled;
    std::vector<std::uint64_t> plot_counts(n_plots, 0);
    std::vector<std::uint64_t> species_counts(n_species, 0);
    for (std::size_t i = 0; i < n_plots; ++i) {
      for (std::size_t s = 0; s < n_species; ++s) {
        if (species && *species != s) continue;
        plot_counts[i] += counts[i][s];
        species_counts[s] += counts[i][s];
      }
    }
    std::vector<std::uint64_t> used_counts;
    std::vector<Detection> used_detections;
    for (std::size_t s = 0; s < n_species; ++s) {
      if (species && *species != s) continue;
      used_counts.push_back(species_counts[s]);
      used_detections.push_back(detections[s]);
    }
    const DensityEstimate e = make_estimate(used_counts, used_detections, total_area);
    if (species) pooled.species = table.species[*species];
    pooled.plots = n_plots;
    pooled.count = e.count;
    pooled.area_in_unit = e.area_in_unit;
    pooled.intensity = e.intensity;
    pooled.ci = e.ci;
    pooled.corrected = e.corrected;
    if (n_plots >= 2 && pooled.count > 0) {
      const std::string key =
          seed_key({"homogeneity", pooled.species ? "species" : "all species", pooled.species.value_or("")});
      pooled.homogeneity = test_homogeneity(plot_counts, areas, options, result.alpha, key);
      std::vector<std::size_t> used_species;
      for (std::size_t s = 0; s < n_species; ++s)
        if (!species || *species == s) used_species.push_back(s);
      correct_between_plot(*pooled.homogeneity, counts, areas, used_species, detections, result.alpha);
    }
    return pooled;
  };
  if (n_plots > 0) {
    for (std::size_t s = 0; s < n_species; ++s) result.pooled.push_back(pool(s));
    result.pooled.push_back(pool(std::nullopt));
  }

  // Species composition across plots: needs two plots and two species with sightings.
  std::size_t plots_with_sightings = 0;
  std::vector<bool> species_seen(n_species, false);
  for (std::size_t i = 0; i < n_plots; ++i) {
    bool any = false;
    for (std::size_t s = 0; s < n_species; ++s) {
      if (counts[i][s] > 0) any = true, species_seen[s] = true;
    }
    plots_with_sightings += any ? 1u : 0u;
  }
  const auto seen = static_cast<std::size_t>(std::count(species_seen.begin(), species_seen.end(), true));
  if (plots_with_sightings >= 2 && seen >= 2) {
    CompositionTest c;
    c.chi_square = pearson_contingency(counts);
    c.p_value = c.chi_square.p_upper;
    if (needs_monte_carlo(c.chi_square) && options.simulations > 0) {
      Engine engine(derive_seed(options.seed, seed_key({"composition"})));
      c.chi_square.monte_carlo_p_value = contingency_monte_carlo_p(counts, options.simulations, engine);
      c.chi_square.simulations = options.simulations;
      c.p_value = *c.chi_square.monte_carlo_p_value;
      c.monte_carlo = true;
    }
    c.significant = c.p_value < result.alpha;
    result.composition = c;
  }
  return result;
}

}  // namespace stipple
