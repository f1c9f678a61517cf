#include "stipple/habitat/habitat_model.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <set>
#include <string>
#include <vector>

#include <boost/geometry.hpp>
#include <boost/math/distributions/normal.hpp>

#include "habitat/pieces.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/habitat/loglinear_fit.hpp"
#include "stipple/stats/chi_square.hpp"

namespace bg = boost::geometry;

namespace stipple {

namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();

std::string at(const Point& p) {
  return "(" + format_general(p.x) + ", " + format_general(p.y) + ")";
}

// The windows cut along every covariate's cell edges: pieces of constant value.
struct Pieces {
  std::vector<double> area_m2;
  std::vector<double> values;  // piece-major, one per covariate
  std::size_t covariates = 0;
  double dropped_area_m2 = 0.0;
};

Pieces cut_windows(const Survey& survey, const std::vector<HabitatCovariate>& covariates, bool drop_missing) {
  Pieces out;
  out.covariates = covariates.size();
  for (const Plot& plot : survey.plots()) {
    habitat_detail::cut_window(plot.window, covariates,
                               [&](const Point& centre, double area, const std::vector<double>& v) {
                                 for (std::size_t k = 0; k < covariates.size(); ++k) {
                                   if (!std::isnan(v[k])) continue;
                                   if (!drop_missing)
                                     throw InputError("plot '" + plot.id + "': the window part at " + at(centre) +
                                                      " has no value of covariate '" + covariates[k].name + "' (" +
                                                      covariates[k].source + ": no data there, or outside the raster)");
                                   out.dropped_area_m2 += area;
                                   return;
                                 }
                                 out.area_m2.push_back(area);
                                 out.values.insert(out.values.end(), v.begin(), v.end());
                               });
  }
  return out;
}

// A sighting kept for the fit: its species and covariate values.
struct Kept {
  std::vector<std::size_t> species;
  std::vector<double> values;  // sighting-major, one per covariate
};

Kept sighting_values(const Survey& survey, const std::vector<HabitatCovariate>& covariates, bool drop_missing,
                     std::vector<HabitatExclusion>& dropped) {
  Kept out;
  std::vector<double> v(covariates.size());
  for (std::size_t j = 0; j < survey.plots().size(); ++j) {
    const MarkedPattern& pattern = survey.patterns()[j];
    for (std::size_t i = 0; i < pattern.points.size(); ++i) {
      const Point& p = pattern.points[i];
      std::string missing;
      habitat_detail::values_at(covariates, p, v);
      for (std::size_t k = 0; k < covariates.size(); ++k)
        if (std::isnan(v[k]) && missing.empty()) missing = covariates[k].name;
      if (!missing.empty()) {
        if (!drop_missing) {
          const auto& c = *std::find_if(covariates.begin(), covariates.end(),
                                        [&](const HabitatCovariate& x) { return x.name == missing; });
          throw InputError("sighting " + std::to_string(pattern.feature_ids[i]) + " (plot '" + survey.plots()[j].id +
                           "', at " + at(p) + "): no value of covariate '" + missing + "' (" + c.source +
                           ": no data there, or outside the raster)");
        }
        dropped.push_back({pattern.feature_ids[i], survey.plots()[j].id, missing});
        continue;
      }
      out.species.push_back(pattern.marks[i]);
      out.values.insert(out.values.end(), v.begin(), v.end());
    }
  }
  return out;
}

using Column = DesignColumn;

std::vector<double> column_values(const std::vector<double>& values, std::size_t stride,
                                  const std::vector<Column>& columns, std::size_t rows,
                                  const std::vector<bool>& keep_row) {
  std::vector<double> out;
  out.reserve(rows * columns.size());
  for (std::size_t i = 0; i < rows; ++i) {
    if (!keep_row.empty() && !keep_row[i]) continue;
    for (const Column& c : columns) {
      const double z = values[i * stride + c.covariate];
      out.push_back(c.level ? (z == *c.level ? 1.0 : 0.0) : z);
    }
  }
  return out;
}

struct Context {
  const Survey& survey;
  const std::vector<HabitatCovariate>& covariates;
  const HabitatOptions& options;
  const Pieces& pieces;
  const Kept& kept;
  std::vector<Column> columns;
  std::vector<std::string> column_names;
  double z_crit = 1.96;
};

// The design of one species (or all when empty) with the columns whose covariate is not
// `without`.
LoglinearDesign species_design(const Context& ctx, std::optional<std::size_t> species,
                               std::optional<std::size_t> without) {
  std::vector<Column> columns;
  LoglinearDesign d;
  for (std::size_t c = 0; c < ctx.columns.size(); ++c) {
    if (without && ctx.columns[c].covariate == *without) continue;
    columns.push_back(ctx.columns[c]);
    d.names.push_back(ctx.column_names[c]);
  }
  d.piece_area_m2 = ctx.pieces.area_m2;
  d.piece_values = column_values(ctx.pieces.values, ctx.covariates.size(), columns, ctx.pieces.area_m2.size(), {});
  std::vector<bool> keep(ctx.kept.species.size(), true);
  if (species)
    for (std::size_t i = 0; i < keep.size(); ++i) keep[i] = ctx.kept.species[i] == *species;
  d.point_values = column_values(ctx.kept.values, ctx.covariates.size(), columns, keep.size(), keep);
  d.sightings = static_cast<std::size_t>(std::count(keep.begin(), keep.end(), true));
  return d;
}

// Shared slopes: pieces repeated once per species, with species indicator columns
// (the first species is the reference) before the covariate columns.
LoglinearDesign shared_design(const Context& ctx, const std::vector<std::size_t>& species,
                              std::optional<std::size_t> without) {
  std::vector<LoglinearDesign> parts;
  parts.reserve(species.size());
  for (std::size_t s : species) parts.push_back(species_design(ctx, s, without));
  LoglinearDesign d;
  const std::size_t extra = species.size() - 1;
  for (std::size_t s = 1; s < species.size(); ++s) d.names.push_back("species=" + ctx.survey.species()[species[s]]);
  d.names.insert(d.names.end(), parts[0].names.begin(), parts[0].names.end());
  const std::size_t k = parts[0].names.size();
  for (std::size_t s = 0; s < species.size(); ++s) {
    const auto append = [&](std::vector<double>& to, const std::vector<double>& from, std::size_t rows) {
      for (std::size_t i = 0; i < rows; ++i) {
        for (std::size_t e = 0; e < extra; ++e) to.push_back(e + 1 == s ? 1.0 : 0.0);
        to.insert(to.end(), from.begin() + static_cast<std::ptrdiff_t>(i * k),
                  from.begin() + static_cast<std::ptrdiff_t>((i + 1) * k));
      }
    };
    d.piece_area_m2.insert(d.piece_area_m2.end(), parts[s].piece_area_m2.begin(), parts[s].piece_area_m2.end());
    append(d.piece_values, parts[s].piece_values, parts[s].piece_area_m2.size());
    append(d.point_values, parts[s].point_values, parts[s].sightings);
    d.sightings += parts[s].sightings;
  }
  return d;
}

double normal_two_sided_p(double z) {
  if (!std::isfinite(z)) return 0.0;
  return 2.0 * boost::math::cdf(boost::math::complement(boost::math::normal(), std::abs(z)));
}

HabitatCoefficient coefficient(const Context& ctx, const std::string& term, double estimate, double variance) {
  HabitatCoefficient c;
  c.term = term;
  c.estimate = estimate;
  c.se = std::sqrt(std::max(variance, 0.0));
  c.ci_low = estimate - ctx.z_crit * c.se;
  c.ci_high = estimate + ctx.z_crit * c.se;
  c.z = estimate / c.se;
  c.p_value = normal_two_sided_p(c.z);
  c.rate_ratio = nan;
  return c;
}

// The slope rows of a fit whose first `offset` + 1 coefficients are intercepts.
void add_slopes(const Context& ctx, const LoglinearFit& fit, std::size_t offset, HabitatModel& model) {
  const std::size_t p = fit.coefficients.size();
  for (std::size_t c = 0; c < ctx.columns.size(); ++c) {
    const std::size_t j = 1 + offset + c;
    HabitatCoefficient row = coefficient(ctx, ctx.column_names[c], fit.coefficients[j], fit.covariance[j * p + j]);
    const HabitatCovariate& cov = ctx.covariates[ctx.columns[c].covariate];
    row.covariate = cov.name;
    row.rate_ratio = std::exp(row.estimate);
    row.bias = cov.bias;
    if (cov.bias && !cov.factor) {
      if (cov.bias_reference) {
        row.bias_reference = cov.bias_reference;
      } else {
        // The value of best observation: where the fitted thinning is highest over the window.
        double lo = std::numeric_limits<double>::infinity();
        double hi = -lo;
        for (std::size_t i = 0; i < ctx.pieces.area_m2.size(); ++i) {
          const double z = ctx.pieces.values[i * ctx.covariates.size() + ctx.columns[c].covariate];
          lo = std::min(lo, z);
          hi = std::max(hi, z);
        }
        // A distance whose features pass through the windows is best observed at 0, on them.
        if (cov.distance_to && lo <= cov.spacing_m) lo = 0.0;
        row.bias_reference = row.estimate >= 0.0 ? hi : lo;
      }
    }
    model.coefficients.push_back(row);
  }
}

// Likelihood-ratio tests for dropping each covariate from a fit.
template <typename Refit>
void add_term_tests(const Context& ctx, double full_log_likelihood, Refit&& refit, HabitatModel& model) {
  for (std::size_t k = 0; k < ctx.covariates.size(); ++k) {
    std::size_t df = 0;
    for (const Column& c : ctx.columns) df += c.covariate == k ? 1 : 0;
    if (df == 0) continue;
    const LoglinearFit reduced = refit(k);
    HabitatTermTest t;
    t.term = ctx.covariates[k].name;
    t.statistic = std::max(0.0, 2.0 * (full_log_likelihood - reduced.log_likelihood));
    t.df = df;
    t.p_value = chi_square_upper_tail(t.statistic, static_cast<double>(df));
    model.term_tests.push_back(t);
  }
}

HabitatModel fit_one(const Context& ctx, std::optional<std::size_t> species) {
  const LoglinearDesign design = species_design(ctx, species, std::nullopt);
  const LoglinearFit fit = fit_loglinear_intensity(design);
  HabitatModel model;
  model.species = species;
  model.n = design.sightings;
  model.log_likelihood = fit.log_likelihood;
  model.aic = fit.aic;
  model.iterations = fit.iterations;
  model.covariance = fit.covariance;
  model.coefficients.push_back(
      coefficient(ctx, "(intercept)", fit.coefficients[0] + std::log(ctx.options.unit_m2), fit.covariance[0]));
  model.coefficients.back().species = species;
  add_slopes(ctx, fit, 0, model);
  add_term_tests(
      ctx, fit.log_likelihood, [&](std::size_t k) { return fit_loglinear_intensity(species_design(ctx, species, k)); },
      model);
  return model;
}

HabitatModel fit_shared(const Context& ctx, const std::vector<std::size_t>& species, LoglinearFit& fit) {
  fit = fit_loglinear_intensity(shared_design(ctx, species, std::nullopt));
  HabitatModel model;
  model.n = 0;
  for (std::size_t s : species)
    model.n += static_cast<std::size_t>(std::count(ctx.kept.species.begin(), ctx.kept.species.end(), s));
  model.log_likelihood = fit.log_likelihood;
  model.aic = fit.aic;
  model.iterations = fit.iterations;
  model.covariance = fit.covariance;
  const std::size_t p = fit.coefficients.size();
  const double shift = std::log(ctx.options.unit_m2);
  for (std::size_t s = 0; s < species.size(); ++s) {
    double estimate = fit.coefficients[0] + shift;
    double variance = fit.covariance[0];
    if (s > 0) {
      estimate += fit.coefficients[s];
      variance += fit.covariance[s * p + s] + 2.0 * fit.covariance[s];
    }
    HabitatCoefficient c = coefficient(ctx, "(intercept)", estimate, variance);
    c.species = species[s];
    model.coefficients.push_back(c);
  }
  add_slopes(ctx, fit, species.size() - 1, model);
  add_term_tests(
      ctx, fit.log_likelihood, [&](std::size_t k) { return fit_loglinear_intensity(shared_design(ctx, species, k)); },
      model);
  return model;
}

// Divides each species' intensity by its detection probability: intercept - log p, and the
// intercept's variance + (se_p / p)^2, added to the covariance in the fit's own
// parametrisation (for shared slopes, b0 and the species offsets b0 + d_s). The all-species
// model is corrected only when every species has the same p.
void correct_for_detection(const Survey& survey, const DetectionTable& detection, const Context& ctx,
                           HabitatResult& result) {
  for (HabitatModel& m : result.models) {
    std::vector<std::size_t> rows;  // intercept rows
    for (std::size_t i = 0; i < m.coefficients.size(); ++i)
      if (m.coefficients[i].covariate.empty()) rows.push_back(i);
    std::vector<Detection> d;
    if (rows.size() == 1 && !m.species) {
      // All species together: one p only if every species shares it.
      const Detection first = detection.for_species(survey.species().front());
      for (const auto& name : survey.species()) {
        const Detection other = detection.for_species(name);
        if (other.probability != first.probability || other.standard_error != first.standard_error) {
          result.warnings.push_back(
              "all species together: not corrected for detection (the species' detection "
              "probabilities differ); see each species' model");
          d.clear();
          break;
        }
        d = {first};
      }
      if (d.empty()) continue;
    } else {
      for (std::size_t r : rows) {
        const std::size_t s = m.coefficients[r].species ? *m.coefficients[r].species : *m.species;
        d.push_back(detection.for_species(survey.species()[s]));
      }
    }
    const auto p = static_cast<std::size_t>(std::lround(std::sqrt(static_cast<double>(m.covariance.size()))));
    std::vector<double> var(rows.size());
    for (std::size_t t = 0; t < rows.size(); ++t) {
      HabitatCoefficient& c = m.coefficients[rows[t]];
      var[t] = std::pow(d[t].standard_error / d[t].probability, 2);
      c.estimate -= std::log(d[t].probability);
      c.se = std::sqrt(c.se * c.se + var[t]);
      c.ci_low = c.estimate - ctx.z_crit * c.se;
      c.ci_high = c.estimate + ctx.z_crit * c.se;
      c.z = c.estimate / c.se;
      c.p_value = normal_two_sided_p(c.z);
      c.detection_probability = d[t].probability;
    }
    // Independent errors e_t on the intercepts I_t = b0 + d_t (d_0 = 0): b0 takes e_0, the
    // offset d_t takes e_t - e_0.
    const auto add = [&](std::size_t i, std::size_t j, double v) { m.covariance[i * p + j] += v; };
    add(0, 0, var[0]);
    for (std::size_t t = 1; t < rows.size(); ++t) {
      add(0, t, -var[0]);
      add(t, 0, -var[0]);
      for (std::size_t u = 1; u < rows.size(); ++u) add(t, u, var[0] + (t == u ? var[t] : 0.0));
    }
    m.detection_probability = rows.size() == 1 ? d[0].probability : 1.0;
  }
}

HabitatResult fit_core(const Survey& survey, const std::vector<HabitatCovariate>& covariates,
                       const HabitatOptions& options) {
  if (covariates.empty()) throw InputError("habitat model: no covariate given");
  if (!(options.confidence > 0.0 && options.confidence < 1.0))
    throw InputError("habitat model: confidence " + format_general(options.confidence) + " is not between 0 and 1");
  if (!(options.unit_m2 > 0.0) || !std::isfinite(options.unit_m2))
    throw InputError("habitat model: unit of " + format_general(options.unit_m2) + " m2");
  std::set<std::string> names;
  for (const auto& c : covariates) {
    if (c.name.empty()) throw InputError("habitat model: a covariate has no name (" + c.source + ")");
    if (!names.insert(c.name).second) throw InputError("habitat model: covariate '" + c.name + "' is given twice");
    if (c.grid.columns == 0 || c.grid.rows == 0 || c.grid.values.size() != c.grid.columns * c.grid.rows ||
        !(c.grid.cell_width > 0.0) || !(c.grid.cell_height > 0.0))
      throw InputError("covariate '" + c.name + "' (" + c.source + "): the raster grid is empty or inconsistent");
    if (c.bias_reference && !std::isfinite(*c.bias_reference))
      throw InputError("covariate '" + c.name + "': bias reference " + format_general(*c.bias_reference));
  }
  if (survey.sighting_count() == 0) throw AnalysisError("habitat model: the survey has no sightings");

  HabitatResult result;
  const Pieces pieces = cut_windows(survey, covariates, options.drop_missing);
  const Kept kept = sighting_values(survey, covariates, options.drop_missing, result.dropped_sightings);
  if (pieces.area_m2.empty())
    throw InputError("habitat model: no part of any plot window has a value of every covariate");
  result.pieces = pieces.area_m2.size();
  result.dropped_area_m2 = pieces.dropped_area_m2;
  for (double a : pieces.area_m2) result.window_area_m2 += a;
  if (result.dropped_area_m2 > 0.0)
    result.warnings.push_back(
        format_significant(result.dropped_area_m2, 4) + " m2 of the plot windows (" +
        format_significant(100.0 * result.dropped_area_m2 / (result.dropped_area_m2 + result.window_area_m2), 3) +
        "%) have no value of some covariate and are left out of the model");
  if (!result.dropped_sightings.empty()) {
    std::string ids;
    for (std::size_t i = 0; i < result.dropped_sightings.size() && i < 10; ++i)
      ids += (i ? ", " : "") + std::to_string(result.dropped_sightings[i].feature_id);
    if (result.dropped_sightings.size() > 10) ids += ", ...";
    result.warnings.push_back(std::to_string(result.dropped_sightings.size()) +
                              " sighting(s) with no value of some covariate are left out (feature ids " + ids + ")");
  }

  Context ctx{survey, covariates, options, pieces, kept, {}, {}, 1.96};
  ctx.z_crit = boost::math::quantile(boost::math::normal(), 0.5 + 0.5 * options.confidence);
  for (std::size_t k = 0; k < covariates.size(); ++k) {
    if (!covariates[k].factor) {
      ctx.columns.push_back({k, std::nullopt});
      ctx.column_names.push_back(covariates[k].name);
      continue;
    }
    std::map<double, double> area_of;
    for (std::size_t i = 0; i < pieces.area_m2.size(); ++i) {
      const double z = pieces.values[i * covariates.size() + k];
      if (z != std::round(z))
        throw InputError("covariate '" + covariates[k].name + "' (" + covariates[k].source +
                         "): a class raster holds whole numbers, not " + format_general(z));
      area_of[z] += pieces.area_m2[i];
    }
    if (area_of.size() < 2)
      throw AnalysisError("covariate '" + covariates[k].name + "': only one class over the plot windows (" +
                          format_general(area_of.begin()->first) + "), so it explains nothing");
    FactorCoding coding;
    coding.covariate = covariates[k].name;
    coding.reference = std::max_element(area_of.begin(), area_of.end(), [](const auto& a, const auto& b) {
                         return a.second < b.second;
                       })->first;
    for (const auto& [level, area] : area_of) {
      if (level == coding.reference) continue;
      coding.classes.push_back(level);
      ctx.columns.push_back({k, level});
      ctx.column_names.push_back(covariates[k].name + "=" + format_general(level));
    }
    for (std::size_t i = 0; i < kept.species.size(); ++i) {
      const double z = kept.values[i * covariates.size() + k];
      if (area_of.count(z) == 0)
        throw AnalysisError("covariate '" + covariates[k].name + "': a sighting lies in class " + format_general(z) +
                            ", which covers no part of the plot windows");
    }
    result.notes.push_back("covariate '" + coding.covariate + "': reference class " + format_general(coding.reference) +
                           " (the class of largest area); each other class has "
                           "a slope relative to it");
    result.factors.push_back(coding);
  }

  // Which species have sightings.
  std::vector<std::size_t> count(survey.species().size(), 0);
  for (std::size_t s : kept.species) ++count[s];
  std::vector<std::size_t> present;
  for (std::size_t s = 0; s < count.size(); ++s)
    if (count[s] > 0) present.push_back(s);
  if (present.empty()) throw AnalysisError("habitat model: no sighting has a value of every covariate");

  std::vector<HabitatModel> separate;
  double separate_ll = 0.0;
  bool all_separate = true;
  for (std::size_t s : present) {
    try {
      separate.push_back(fit_one(ctx, s));
      separate_ll += separate.back().log_likelihood;
    } catch (const AnalysisError& e) {
      all_separate = false;
      result.warnings.push_back("species '" + survey.species()[s] + "' (" + std::to_string(count[s]) +
                                " sightings): not fitted: " + e.what());
    }
  }
  std::optional<HabitatModel> shared;
  if (present.size() > 1) {
    try {
      LoglinearFit fit;
      shared = fit_shared(ctx, present, fit);
    } catch (const AnalysisError& e) {
      result.warnings.push_back("shared slopes: not fitted: " + std::string(e.what()));
    }
  }
  if (shared && all_separate) {
    SlopeTest t;
    t.shared_log_likelihood = shared->log_likelihood;
    t.separate_log_likelihood = separate_ll;
    t.statistic = std::max(0.0, 2.0 * (separate_ll - shared->log_likelihood));
    t.df = (present.size() - 1) * ctx.columns.size();
    t.p_value = chi_square_upper_tail(t.statistic, static_cast<double>(t.df));
    result.slope_test = t;
  }
  if (options.slopes == SlopeMode::separate) {
    result.models = std::move(separate);
    if (present.size() > 1) {
      try {
        result.models.push_back(fit_one(ctx, std::nullopt));
      } catch (const AnalysisError& e) {
        result.warnings.push_back("all species together: not fitted: " + std::string(e.what()));
      }
    }
  } else if (shared) {
    result.models.push_back(std::move(*shared));
  } else if (present.size() == 1) {
    result.models = std::move(separate);  // one species: shared and separate are the same model
  }
  if (result.models.empty()) throw AnalysisError("habitat model: no species could be fitted");
  if (options.detection) correct_for_detection(survey, *options.detection, ctx, result);
  result.columns = ctx.columns;

  // Covariate tests, each numeric covariate against each species and all together.
  std::vector<std::optional<std::size_t>> groups(present.begin(), present.end());
  if (present.size() > 1) groups.push_back(std::nullopt);
  for (std::size_t k = 0; k < covariates.size(); ++k) {
    if (covariates[k].factor) continue;
    CovariateSample sample;
    sample.piece_area_m2 = pieces.area_m2;
    for (std::size_t i = 0; i < pieces.area_m2.size(); ++i)
      sample.piece_value.push_back(pieces.values[i * covariates.size() + k]);
    for (const auto& g : groups) {
      sample.point_value.clear();
      for (std::size_t i = 0; i < kept.species.size(); ++i)
        if (!g || kept.species[i] == *g) sample.point_value.push_back(kept.values[i * covariates.size() + k]);
      try {
        result.covariate_tests.push_back({g, covariates[k].name, berman_z1(sample), covariate_ks(sample)});
      } catch (const AnalysisError& e) {
        result.warnings.push_back("covariate '" + covariates[k].name + "': not tested: " + e.what());
      }
    }
  }
  return result;
}

// Square cells of `spacing` over `b`, aligned to `align` (a raster's corner) when given.
RasterGrid quadrature_grid(const Bounds& b, double spacing, const RasterGrid* align) {
  RasterGrid g;
  g.cell_width = g.cell_height = spacing;
  g.x_min = align ? align->x_min + std::floor((b.xmin - align->x_min) / spacing) * spacing : b.xmin;
  g.y_max = align ? align->y_max - std::floor((align->y_max - b.ymax) / spacing) * spacing : b.ymax;
  g.columns = static_cast<std::size_t>(std::max(1.0, std::ceil((b.xmax - g.x_min) / spacing)));
  g.rows = static_cast<std::size_t>(std::max(1.0, std::ceil((g.y_max - b.ymin) / spacing)));
  g.values.assign(g.columns * g.rows, 0.0);
  return g;
}

}  // namespace

HabitatResult fit_habitat(const Survey& survey, const std::vector<HabitatCovariate>& covariates,
                          const HabitatOptions& options) {
  if (survey.plots().empty()) throw AnalysisError("habitat model: the survey has no plots");
  const RasterGrid* finest = nullptr;
  std::vector<std::string> distance_names;
  for (const auto& c : covariates) {
    if (c.distance_to) {
      distance_names.push_back(c.name);
      if (c.factor) throw InputError("covariate '" + c.name + "': a distance cannot be a factor");
      if (c.spacing_m < 0.0 || !std::isfinite(c.spacing_m))
        throw InputError("covariate '" + c.name + "': quadrature spacing " + format_general(c.spacing_m) + " m");
    } else if (!finest || c.grid.cell_width * c.grid.cell_height < finest->cell_width * finest->cell_height) {
      finest = &c.grid;
    }
  }
  if (distance_names.empty()) return fit_core(survey, covariates, options);

  const Bounds b = plots_bounds(survey);
  const auto with_spacing = [&](double factor) {
    std::vector<HabitatCovariate> out = covariates;
    for (auto& c : out) {
      if (!c.distance_to) continue;
      double spacing = c.spacing_m;
      if (spacing == 0.0)
        spacing = finest ? std::min(finest->cell_width, finest->cell_height) : std::max(b.width(), b.height()) / 200.0;
      c.spacing_m = spacing;
      c.grid = quadrature_grid(b, spacing * factor, finest);
    }
    return out;
  };
  const std::vector<HabitatCovariate> used = with_spacing(1.0);
  HabitatResult result = fit_core(survey, used, options);
  const HabitatResult halved = fit_core(survey, with_spacing(0.5), options);
  QuadratureCheck check;
  check.covariates = distance_names;
  for (const auto& c : used)
    if (c.distance_to) check.spacing_m = c.spacing_m;
  for (const HabitatModel& m : result.models) {
    const auto h = std::find_if(halved.models.begin(), halved.models.end(),
                                [&](const HabitatModel& x) { return x.species == m.species; });
    if (h == halved.models.end() || h->coefficients.size() != m.coefficients.size()) continue;
    for (std::size_t j = 0; j < m.coefficients.size(); ++j) {
      const HabitatCoefficient& c = m.coefficients[j];
      QuadratureChange change{m.species, c.term, c.estimate, h->coefficients[j].estimate, c.se};
      if (c.species && !m.species) change.term += " " + survey.species()[*c.species];
      check.largest_change_in_se =
          std::max(check.largest_change_in_se, std::abs(change.halved_estimate - change.estimate) / c.se);
      check.changes.push_back(change);
    }
  }
  std::string names;
  for (const auto& n : distance_names) names += (names.empty() ? "'" : ", '") + n + "'";
  result.notes.push_back("distance covariate " + names + ": the window is cut into " + format_general(check.spacing_m) +
                         " m cells, each at the distance of its centre (midpoint quadrature); sightings at their "
                         "exact distance. Halving the cells changes no coefficient by more than " +
                         format_significant(check.largest_change_in_se, 2) + " standard errors");
  if (check.largest_change_in_se > 0.1)
    result.warnings.push_back("distance covariate " + names + ": halving the quadrature cells moves a coefficient by " +
                              format_significant(check.largest_change_in_se, 2) + " standard errors; use finer cells");
  result.quadrature = std::move(check);
  return result;
}

}  // namespace stipple
