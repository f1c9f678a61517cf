#include "stipple/transect/estimate.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <mutex>
#include <numeric>
#include <set>

#include <boost/math/distributions/students_t.hpp>
#include <boost/random/uniform_int_distribution.hpp>

#include "detail/parallel.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/stats/interval.hpp"

namespace stipple {

namespace {

const double nan_value = std::numeric_limits<double>::quiet_NaN();

using Key = std::optional<std::string>;

// Distances (within truncation) for one species, or all when `species` is empty.
DistanceData distances_of(const TransectSurvey& survey, const Key& species, double w, const std::vector<double>& bins) {
  DistanceData d;
  d.kind = survey.kind();
  d.truncation_m = w;
  if (!bins.empty()) {
    d.bin_edges = bins;
    d.bin_counts.assign(bins.size() - 1, 0);
  }
  for (const auto& o : survey.observations()) {
    if (species && o.species != *species) continue;
    if (o.distance_m > w) continue;
    if (bins.empty()) {
      d.exact.push_back(o.distance_m);
      continue;
    }
    if (o.distance_m < bins.front()) continue;
    const auto it = std::upper_bound(bins.begin(), bins.end(), o.distance_m);
    const auto k = std::min<std::size_t>(static_cast<std::size_t>(it - bins.begin()) - 1, bins.size() - 2);
    ++d.bin_counts[k];
  }
  return d;
}

struct Row {
  Key species;
  Key stratum;
};

struct RowNumbers {
  std::size_t n = 0;
  double effort = 0.0;
  EncounterRate encounter;
  double mean_size = 1.0;
  double mean_size_cv = 0.0;
  double density = 0.0;  // per m2
};

RowNumbers row_numbers(const TransectSurvey& survey, const Row& row, const DetectionFit& fit, double w) {
  std::vector<std::size_t> index(survey.transects().size(), survey.transects().size());
  std::vector<double> effort;
  for (std::size_t t = 0; t < survey.transects().size(); ++t) {
    if (row.stratum && survey.transects()[t].stratum != row.stratum) continue;
    index[t] = effort.size();
    effort.push_back(survey.transects()[t].effort);
  }
  std::vector<double> counts(effort.size(), 0.0);
  std::vector<double> sizes;
  for (const auto& o : survey.observations()) {
    if (index[o.transect] == survey.transects().size()) continue;
    if (row.species && o.species != *row.species) continue;
    if (o.distance_m > w) continue;
    counts[index[o.transect]] += 1.0;
    sizes.push_back(o.size);
  }
  RowNumbers r;
  r.n = sizes.size();
  r.encounter = encounter_rate(effort, counts);
  r.effort = r.encounter.effort;
  if (r.n > 0) {
    const double n = static_cast<double>(r.n);
    r.mean_size = std::accumulate(sizes.begin(), sizes.end(), 0.0) / n;
    if (r.n > 1) {
      double ss = 0.0;
      for (const double s : sizes) ss += (s - r.mean_size) * (s - r.mean_size);
      r.mean_size_cv = std::sqrt(ss / (n - 1.0) / n) / r.mean_size;
    }
  }
  const double n_for_density = static_cast<double>(r.n);
  if (survey.kind() == TransectKind::line) {
    r.density = n_for_density * r.mean_size / (2.0 * fit.effective_strip_width_m * r.effort * 1000.0);
  } else {
    r.density = n_for_density * r.mean_size / (r.effort * fit.effective_area_m2);
  }
  return r;
}

double choose_truncation(const TransectSurvey& survey, const TransectOptions& options) {
  if (!options.bin_edges.empty()) return options.bin_edges.back();
  if (options.truncation.distance_m) return *options.truncation.distance_m;
  std::vector<double> all;
  for (const auto& o : survey.observations()) all.push_back(o.distance_m);
  if (all.empty()) throw AnalysisError("no detections to fit a detection function to");
  std::sort(all.begin(), all.end());
  if (options.truncation.largest_share) {
    const double share = *options.truncation.largest_share;
    const auto keep = static_cast<std::size_t>(std::ceil((1.0 - share) * static_cast<double>(all.size())));
    return all[std::clamp<std::size_t>(keep, 1, all.size()) - 1];
  }
  return all.back();  // no truncation asked for: w = the largest distance
}

}  // namespace

namespace {

std::optional<double> parse_double(const std::string& text) {
  double value = 0.0;
  const auto r = std::from_chars(text.data(), text.data() + text.size(), value);
  if (r.ec != std::errc() || r.ptr != text.data() + text.size()) return std::nullopt;
  return value;
}

}  // namespace

Truncation parse_truncation(const std::string& text) {
  Truncation t;
  if (text.empty()) return t;
  if (text.back() == '%') {
    const auto share = parse_double(text.substr(0, text.size() - 1));
    if (!share || !(*share >= 0.0 && *share < 100.0))
      throw InputError("truncation " + text + ": a percentage must lie in [0, 100)", {"truncation"});
    t.largest_share = *share / 100.0;
    return t;
  }
  if (text == "none") {
    t.distance_m = std::numeric_limits<double>::infinity();
    return t;
  }
  const auto w = parse_double(text);
  if (!w || !(*w > 0.0))
    throw InputError("truncation " + text + ": give a distance in metres, a percentage like 5%, or none",
                     {"truncation"});
  t.distance_m = *w;
  return t;
}

std::vector<double> parse_bin_edges(const std::string& text) {
  std::vector<double> edges;
  if (text.empty()) return edges;
  const std::string quoted = "bin edges '" + (text.size() > 60 ? text.substr(0, 60) + "..." : text) + "'";
  std::size_t start = 0;
  while (true) {
    const std::size_t comma = text.find(',', start);
    const std::string item = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    const auto value = parse_finite_number(item);
    if (!value) throw InputError(quoted + ": '" + item + "' is not a number (give metres, e.g. 0,10,25,50)");
    if (*value < 0.0) throw InputError(quoted + ": " + item + " is negative");
    if (!edges.empty() && !(*value > edges.back())) throw InputError(quoted + ": edges must be strictly increasing");
    edges.push_back(*value);
    if (edges.size() > 1000) throw InputError(quoted + ": more than 1000 edges");
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  if (edges.size() < 2) throw InputError(quoted + ": needs at least two edges, e.g. 0,10,25,50");
  return edges;
}

EncounterRate encounter_rate(const std::vector<double>& effort, const std::vector<double>& counts) {
  EncounterRate e;
  e.transects = effort.size();
  e.effort = std::accumulate(effort.begin(), effort.end(), 0.0);
  e.n = std::accumulate(counts.begin(), counts.end(), 0.0);
  if (!(e.effort > 0.0)) throw AnalysisError("encounter rate needs positive effort");
  e.rate = e.n / e.effort;
  const double k = static_cast<double>(effort.size());
  if (effort.size() >= 2) {
    double sum = 0.0;
    for (std::size_t i = 0; i < effort.size(); ++i) {
      const double d = counts[i] / effort[i] - e.rate;
      sum += effort[i] * effort[i] * d * d;
    }
    e.variance = k / (e.effort * e.effort * (k - 1.0)) * sum;
  } else {
    e.variance = nan_value;
  }
  e.cv = e.n > 0.0 ? std::sqrt(e.variance) / e.rate : nan_value;
  return e;
}

double satterthwaite_df(const std::vector<std::pair<double, double>>& cv_and_df) {
  double cv2 = 0.0;
  double denominator = 0.0;
  for (const auto& [cv, df] : cv_and_df) {
    if (!(cv > 0.0) || !(df > 0.0)) continue;
    cv2 += cv * cv;
    denominator += std::pow(cv, 4) / df;
  }
  return denominator > 0.0 ? cv2 * cv2 / denominator : std::numeric_limits<double>::infinity();
}

Interval lognormal_interval(double estimate, double cv, double df, double confidence) {
  check_confidence(confidence);
  const double p = 0.5 + confidence / 2.0;
  double t = 0.0;
  if (std::isfinite(df) && df >= 1.0) {
    const boost::math::students_t law(df);
    t = boost::math::quantile(law, p);
  } else {
    const boost::math::students_t law(1e8);
    t = boost::math::quantile(law, p);
  }
  const double c = std::exp(t * std::sqrt(std::log(1.0 + cv * cv)));
  return {estimate / c, estimate * c};
}

double effort_for_target_cv(double pilot_detections, double pilot_effort, double target_cv, double dispersion) {
  if (!(pilot_detections > 0.0) || !(pilot_effort > 0.0) || !(target_cv > 0.0) || !(dispersion > 0.0))
    throw InputError("effort planning needs positive pilot detections, pilot effort, target CV and dispersion");
  return dispersion / (target_cv * target_cv) * pilot_effort / pilot_detections;
}

TransectSurvey::TransectSurvey(TransectKind kind, std::vector<TransectUnit> transects,
                               std::vector<TransectObservation> observations)
    : kind_(kind), transects_(std::move(transects)), observations_(std::move(observations)) {
  for (const auto& t : transects_)
    if (!(t.effort > 0.0) || !std::isfinite(t.effort))
      throw InputError("transect '" + t.id + "' has no effort (zero length or no visits)");
  for (std::size_t i = 0; i < observations_.size(); ++i) {
    const TransectObservation& o = observations_[i];
    const std::string which = "observation " + std::to_string(i);
    if (o.transect >= transects_.size())
      throw InputError(which + ": transect index " + std::to_string(o.transect) + " but the survey has " +
                       std::to_string(transects_.size()) + " transects");
    if (!(o.distance_m >= 0.0) || !std::isfinite(o.distance_m))
      throw InputError(which + ": distance must be a finite number of metres >= 0");
    if (!(o.size > 0.0) || !std::isfinite(o.size)) throw InputError(which + ": cluster size must be positive");
  }
}

TransectResult analyse_transects(const TransectSurvey& survey, const TransectOptions& options) {
  if (survey.transects().empty()) throw AnalysisError("no transects");
  if (!options.bin_edges.empty()) {
    for (std::size_t k = 1; k < options.bin_edges.size(); ++k)
      if (!(options.bin_edges[k] > options.bin_edges[k - 1]))
        throw InputError("bin_edges must increase strictly", {"bin_edges"});
  }
  TransectResult result;
  result.kind = survey.kind();
  result.unit = options.unit;
  result.confidence = options.confidence;
  const double w = choose_truncation(survey, options);
  result.truncation_m = w;
  for (const auto& o : survey.observations()) result.truncated += o.distance_m > w ? 1u : 0u;

  std::set<std::string> species_set;
  std::set<std::string> strata_set;
  for (const auto& o : survey.observations()) species_set.insert(o.species);
  for (const auto& t : survey.transects())
    if (t.stratum) strata_set.insert(*t.stratum);
  std::vector<Key> species(species_set.begin(), species_set.end());  // named species first, then all together
  species.push_back(std::nullopt);
  std::vector<Key> strata(strata_set.begin(), strata_set.end());
  strata.push_back(std::nullopt);

  // Detection functions: one for all species, and one per species unless pooled.
  std::map<Key, DetectionFit> fits;
  const auto compare = [&](const Key& key, const std::vector<DetectionFit>& candidates) {
    for (const auto& c : candidates)
      result.models_compared.push_back({key, c.function.model(), c.aic, c.aicc, c.aic - candidates.front().aic});
  };
  {
    const auto candidates = fit_candidates(distances_of(survey, std::nullopt, w, options.bin_edges), options.keys,
                                           options.adjustments, options.max_terms);
    fits.emplace(std::nullopt, candidates.front());
    compare(std::nullopt, candidates);
  }
  for (const auto& s : species) {
    if (!s) continue;
    if (options.pool_detection || species_set.size() == 1) {
      fits.emplace(s, fits.at(std::nullopt));
      continue;
    }
    try {
      const auto candidates = fit_candidates(distances_of(survey, s, w, options.bin_edges), options.keys,
                                             options.adjustments, options.max_terms);
      fits.emplace(s, candidates.front());
      compare(s, candidates);
    } catch (const AnalysisError& e) {
      fits.emplace(s, fits.at(std::nullopt));
      result.notes.push_back("species '" + *s + "': " + e.what() +
                             "; the detection function of all species together was used");
    }
  }
  if (options.pool_detection)
    result.notes.push_back(
        "one detection function, fitted to all species and strata, is shared; encounter "
        "rates and cluster sizes stay specific to each species and stratum");

  std::vector<Row> rows;
  for (const auto& s : species)
    for (const auto& t : strata) rows.push_back({s, t});

  const double per_unit = square_metres_per(options.unit);
  for (const auto& row : rows) {
    const DetectionFit& fit = fits.at(row.species);
    const RowNumbers numbers = row_numbers(survey, row, fit, w);
    const Key fit_key = options.pool_detection ? Key{} : row.species;
    TransectEstimate e(row.species, row.stratum, fit,
                       goodness_of_fit(fit, distances_of(survey, fit_key, w, options.bin_edges)));
    e.n = numbers.n;
    e.effort = numbers.effort;
    e.encounter = numbers.encounter;
    e.mean_size = numbers.mean_size;
    e.mean_size_cv = numbers.mean_size_cv;
    e.density = numbers.density * per_unit;
    const double er_cv = numbers.encounter.cv;
    const double det_cv = fit.effective_cv;
    const double size_cv = numbers.mean_size_cv;
    e.density_cv = std::sqrt((std::isfinite(er_cv) ? er_cv * er_cv : 0.0) + det_cv * det_cv + size_cv * size_cv);
    e.df = satterthwaite_df({{er_cv, static_cast<double>(numbers.encounter.transects) - 1.0},
                             {det_cv, static_cast<double>(fit.n) - static_cast<double>(fit.parameter_count)},
                             {size_cv, static_cast<double>(numbers.n) - 1.0}});
    if (e.n > 0 && std::isfinite(er_cv)) {
      e.density_ci = lognormal_interval(e.density, e.density_cv, e.df, options.confidence);
    } else {
      // No detections (or one transect): an exact Poisson upper limit on n (Garwood 1936).
      const double upper_n = garwood_interval(numbers.n, options.confidence).upper;
      const double per_detection = numbers.n > 0
                                       ? e.density / static_cast<double>(numbers.n)
                                       : (survey.kind() == TransectKind::line
                                              ? per_unit / (2.0 * fit.effective_strip_width_m * e.effort * 1000.0)
                                              : per_unit / (e.effort * fit.effective_area_m2));
      e.density_ci = {0.0, upper_n * per_detection};
      e.density_cv = nan_value;
    }
    std::optional<double> area;
    if (!row.stratum)
      area = options.study_area_m2;
    else if (options.stratum_area_m2.count(*row.stratum))
      area = options.stratum_area_m2.at(*row.stratum);
    if (area) {
      e.abundance = e.density / per_unit * *area;
      e.abundance_ci = Interval{e.density_ci.lower / per_unit * *area, e.density_ci.upper / per_unit * *area};
    }
    e.dispersion = static_cast<double>(e.n) * ((std::isfinite(er_cv) ? er_cv * er_cv : 0.0) + det_cv * det_cv);
    if (options.target_cv && e.n > 0) {
      const double b = e.dispersion > 0.0 ? e.dispersion : 3.0;
      e.effort_for_target = effort_for_target_cv(static_cast<double>(e.n), e.effort, *options.target_cv, b);
    }
    result.results.push_back(std::move(e));
  }

  if (options.bootstrap > 0) {
    // Resample transects with replacement within strata; refit each row's selected model.
    std::map<std::string, std::vector<std::size_t>> by_stratum;
    for (std::size_t t = 0; t < survey.transects().size(); ++t)
      by_stratum[survey.transects()[t].stratum.value_or("")].push_back(t);
    std::vector<std::vector<double>> replicates(options.bootstrap, std::vector<double>(rows.size(), nan_value));
    std::mutex progress_mutex;
    std::size_t replicates_done = 0;
    parallel_for(options.bootstrap, options.threads, [&](std::size_t b) {
      options.cancel.check();
      Engine engine(derive_seed(options.seed, seed_key({"transect-bootstrap", std::to_string(b)})));
      std::vector<TransectUnit> units;
      std::vector<TransectObservation> observations;
      std::vector<std::vector<std::size_t>> new_index(survey.transects().size());
      for (const auto& [stratum, members] : by_stratum) {
        boost::random::uniform_int_distribution<std::size_t> pick(0, members.size() - 1);
        for (std::size_t m = 0; m < members.size(); ++m) {
          const std::size_t t = members[pick(engine)];
          new_index[t].push_back(units.size());
          units.push_back(survey.transects()[t]);
        }
      }
      for (const auto& o : survey.observations()) {
        for (const std::size_t t : new_index[o.transect]) {
          TransectObservation copy = o;
          copy.transect = t;
          observations.push_back(copy);
        }
      }
      const TransectSurvey replicate(survey.kind(), std::move(units), std::move(observations));
      std::map<Key, std::optional<DetectionFit>> refits;
      for (std::size_t r = 0; r < rows.size(); ++r) {
        const Key fit_key = options.pool_detection ? Key{} : rows[r].species;
        if (!refits.count(fit_key)) {
          try {
            const DistanceData data = distances_of(replicate, fit_key, w, options.bin_edges);
            const DetectionFunction& original = fits.at(fit_key).function;
            refits.emplace(fit_key, fit_detection_function(data, original.model(), &original));
          } catch (const AnalysisError&) {
            refits.emplace(fit_key, std::nullopt);
          }
        }
        const auto& refit = refits.at(fit_key);
        if (!refit || !refit->converged) continue;
        replicates[b][r] = row_numbers(replicate, rows[r], *refit, w).density * per_unit;
      }
      if (options.progress) {
        const std::lock_guard<std::mutex> lock(progress_mutex);
        options.progress(++replicates_done, options.bootstrap);
      }
    });
    for (std::size_t r = 0; r < rows.size(); ++r) {
      std::vector<double> values;
      for (const auto& rep : replicates)
        if (std::isfinite(rep[r])) values.push_back(rep[r]);
      if (values.size() < 10) continue;
      auto& e = result.results[r];
      e.bootstrap_ci = percentile_interval(values, options.confidence);
      const double mean = std::accumulate(values.begin(), values.end(), 0.0) / static_cast<double>(values.size());
      double ss = 0.0;
      for (const double v : values) ss += (v - mean) * (v - mean);
      e.bootstrap_cv = mean > 0.0 ? std::sqrt(ss / static_cast<double>(values.size() - 1)) / mean : nan_value;
    }
    result.notes.push_back("bootstrap: " + std::to_string(options.bootstrap) +
                           " resamples of transects within strata; each refits the selected detection model");
  }
  return result;
}

}  // namespace stipple
