#include "stipple/randomness/analysis.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include <boost/math/constants/constants.hpp>

#include "detail/parallel.hpp"
#include "stats/shuffle.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/geometry/spatial_index.hpp"
#include "stipple/simulate/point_process.hpp"
#include "stipple/stats/monte_carlo.hpp"

namespace stipple {

namespace {

constexpr double pi = boost::math::double_constants::pi;

std::string group_key(const std::string& plot, const std::optional<std::string>& species) {
  return seed_key({"group", plot, species ? "species" : "all species", species.value_or("")});
}

std::vector<double> curve_of(const SummaryCurves& c, std::size_t which) {
  switch (which) {
    case 0: return c.l;
    case 1: return c.k;
    case 2: return c.g;
    case 3: return c.nn;
    case 4: return c.f;
    default: return c.j;
  }
}

const char* function_names[] = {"L", "K", "g", "G", "F", "J"};

// A note when `simulations` cannot give p < alpha for the named test, else empty.
std::string too_few_simulations(const std::string& test, std::size_t simulations, double alpha, bool two_sided) {
  const std::size_t needed = minimum_simulations(alpha, two_sided);
  if (simulations >= needed) return {};
  return "verdict undetermined: with " + std::to_string(simulations) + " simulations the " + test +
         " cannot give a p-value below alpha = " + format_general(alpha) + " (smallest attainable " +
         format_significant((two_sided ? 2.0 : 1.0) / static_cast<double>(simulations + 1), 3) + "); run at least " +
         std::to_string(needed);
}

// The DCLF test on L when the envelope ran, else Clark-Evans, else the quadrat test.
void decide_verdict(GroupResult& g, double alpha, std::size_t simulations) {
  std::string cannot_tell;
  if (const EnvelopeResult* l = g.l_envelope()) {
    g.verdict_basis = "DCLF test on L";
    cannot_tell = too_few_simulations("DCLF test", l->simulations, alpha, false);
    if (l->dclf_p_value < alpha) g.verdict = l->mean_deviation > 0.0 ? "clustered" : "regular";
  } else if (g.clark_evans) {
    const double p = g.clark_evans->monte_carlo_p_value.value_or(g.clark_evans->p_value);
    g.verdict_basis = "Clark-Evans test";
    if (g.clark_evans->monte_carlo_p_value)
      cannot_tell = too_few_simulations("Monte Carlo Clark-Evans test", simulations, alpha, true);
    if (std::isnan(p))
      g.verdict = "undetermined";
    else if (p < alpha)
      g.verdict = g.clark_evans->ratio < 1.0 ? "clustered" : "regular";
  } else if (g.quadrat) {
    g.verdict_basis = "quadrat test";
    if (g.quadrat->monte_carlo_p_value)
      cannot_tell = too_few_simulations("Monte Carlo quadrat test", simulations, alpha, true);
    if (g.quadrat->p_value < alpha)
      g.verdict = g.quadrat->chi_square.p_upper < g.quadrat->chi_square.p_lower ? "clustered" : "regular";
  }
  if (!cannot_tell.empty()) {
    g.verdict = "undetermined";
    g.notes.push_back(cannot_tell);
  }
}

}  // namespace

GroupResult analyse_pattern(const std::vector<Point>& points, const Window& window, const RandomnessOptions& options,
                            const std::string& key) {
  GroupResult g;
  g.n = points.size();
  const std::size_t n = points.size();
  // Envelope simulations: fewer by default at large n (large_n_simulations).
  std::size_t simulations = options.simulations;
  if (options.adapt_to_large_n && options.run_envelope && large_n_simulations(n) < simulations) {
    simulations = large_n_simulations(n);
    g.notes.push_back("envelopes from " + std::to_string(simulations) + " simulations, the default for " +
                      std::to_string(n) +
                      " points (999 up to 20,000 points, 199 up to 200,000, 39 beyond); choose "
                      "the number of simulations to run more");
  }

  if (options.run_quadrat) {
    QuadratOptions q = options.quadrat;
    q.simulations = options.simulations;
    Engine engine(derive_seed(options.seed, key + seed_key({"quadrat"})));
    try {
      g.quadrat = quadrat_test(points, window, q, engine);
    } catch (const AnalysisError& e) {
      g.notes.push_back(std::string("quadrat test not run: ") + e.what());
    }
    if (g.quadrat && g.quadrat->cells_too_small) {
      g.notes.push_back("quadrat cells are small for the chi-square law (smallest expected count " +
                        format_significant(g.quadrat->chi_square.min_expected, 3) +
                        " < 5): the Monte Carlo p-value is used; consider fewer quadrats");
    }
  }

  if (g.quadrat && g.quadrat->monte_carlo_p_value) g.simulations_run = options.simulations;
  if (!options.run_clark_evans && !options.run_envelope) {  // quadrat only
    decide_verdict(g, options.alpha, simulations);
    return g;
  }
  const double rmax = options.rmax_m.value_or(default_rmax(window, n));
  g.pair_correction = options.pair_correction;
  g.distance_correction = options.distance_correction;
  // Without envelopes only nearest-neighbour and boundary distances are needed: one grid
  // index per pattern, no summary functions.
  std::optional<SummaryContext> context;
  SummaryCurves observed;
  if (options.run_envelope) {
    SummaryOptions so;
    so.rmax_m = rmax;
    so.steps = options.steps;
    so.pair_correction = options.pair_correction;
    so.distance_correction = options.distance_correction;
    context.emplace(window, so);
    observed = summary_functions(points, *context);
  } else {
    observed.nearest = PointGrid(points).nearest_neighbour_distances();
    observed.boundary.resize(n);
    for (std::size_t i = 0; i < n; ++i) observed.boundary[i] = window.boundary_distance(points[i]);
  }

  if (options.run_clark_evans) {
    try {
      g.clark_evans = clark_evans(observed.nearest, observed.boundary, window, options.edge_correction);
      if (!g.clark_evans->note.empty()) g.notes.push_back(g.clark_evans->note);
    } catch (const AnalysisError& e) {
      g.notes.push_back(std::string("Clark-Evans test not run: ") + e.what());
    }
  }
  // Clark-Evans simulates only where its normal law is doubtful or when asked; when the
  // envelopes simulate, its Monte Carlo p-value comes with them.
  const bool clark_evans_simulates =
      g.clark_evans &&
      (options.clark_evans_monte_carlo || !clark_evans_normal_holds(g.clark_evans->edge_correction, g.clark_evans->n));
  const bool need_simulations = simulations > 0 && (options.run_envelope || clark_evans_simulates);
  if (g.clark_evans && g.clark_evans->edge_correction == NeighbourEdgeCorrection::border &&
      std::isnan(g.clark_evans->p_value) && simulations == 0)
    g.notes.push_back(
        "Clark-Evans with the border method has no p-value without simulations below 1000 points: its normal "
        "approximation rejects too often (8-10% at nominal 5% for n <= 200); run simulations");
  if (g.clark_evans && !options.run_envelope && !clark_evans_simulates && simulations > 0)
    g.notes.push_back(
        "Clark-Evans p-value from the normal approximation, which holds its level at this n with the " +
        std::string(edge_correction_name(g.clark_evans->edge_correction)) +
        " correction (size at nominal 5% in simulation: " +
        (g.clark_evans->edge_correction == NeighbourEdgeCorrection::border ? "5.8-6.8% for n >= 1000" : "4.3-5.3%") +
        "); no simulations were run for it; a Monte Carlo p-value can be requested");
  if (need_simulations) {
    g.simulations_run = simulations;
    std::vector<SummaryCurves> simulated(options.run_envelope ? simulations : 0);
    std::vector<double> simulated_ce(simulations, std::nan(""));
    const NeighbourEdgeCorrection ce_correction =
        g.clark_evans ? g.clark_evans->edge_correction : NeighbourEdgeCorrection::none;
    const bool ce_needs_boundary = ce_correction == NeighbourEdgeCorrection::border;
    parallel_for(simulations, options.threads, [&](std::size_t s) {
      options.cancel.check();
      Engine engine(derive_seed(options.seed, key + seed_key({"csr", std::to_string(s)})));
      const std::vector<Point> pattern = simulate_binomial(window, n, engine);
      if (options.run_envelope) {
        simulated[s] = summary_functions(pattern, *context);
        simulated_ce[s] = clark_evans_mean(simulated[s].nearest, simulated[s].boundary, window, ce_correction);
        // Release the per-point vectors (clear() would keep their memory): only the curves stay.
        std::vector<double>().swap(simulated[s].nearest);
        std::vector<double>().swap(simulated[s].boundary);
        return;
      }
      const std::vector<double> nearest = PointGrid(pattern).nearest_neighbour_distances();
      std::vector<double> boundary;
      if (ce_needs_boundary) {
        boundary.resize(n);
        for (std::size_t i = 0; i < n; ++i) boundary[i] = window.boundary_distance(pattern[i]);
      }
      simulated_ce[s] = clark_evans_mean(nearest, boundary, window, ce_correction);
    });
    if (g.clark_evans) {
      g.clark_evans->monte_carlo_p_value = monte_carlo_tails(g.clark_evans->mean_distance, simulated_ce).two_sided;
      // The border method reports the Monte Carlo p-value, unless the simulations were cut
      // for a large n, where its normal law holds and is the more precise.
      const bool cut = simulations < options.simulations &&
                       clark_evans_normal_holds(g.clark_evans->edge_correction, g.clark_evans->n);
      if (g.clark_evans->edge_correction == NeighbourEdgeCorrection::border && !cut) {
        g.clark_evans->p_value = *g.clark_evans->monte_carlo_p_value;
        g.clark_evans->p_value_method = "monte-carlo";
      }
    }
    if (options.run_envelope) {
      g.rmax_m = rmax;
      const double lambda = static_cast<double>(n) / window.area_m2();
      const SummaryCurves theory = csr_curves(context->r(), lambda);
      for (std::size_t f = 0; f < 6; ++f) {
        std::vector<std::vector<double>> curves;
        curves.reserve(simulated.size());
        for (const auto& sim : simulated) curves.push_back(curve_of(sim, f));
        g.functions.push_back(FunctionEnvelope{
            function_names[f],
            envelope_test(context->r(), curve_of(observed, f), curve_of(theory, f), curves, options.alpha)});
      }
    }
  }
  if (g.clark_evans && g.clark_evans->edge_correction == NeighbourEdgeCorrection::border &&
      g.clark_evans->p_value_method == "normal" && (options.run_envelope || simulations == 0))
    g.notes.push_back(
        "Clark-Evans border method with the normal p-value (n >= 1000): in simulation its size runs about one "
        "point above nominal (5.8-6.8% at 5%)");

  decide_verdict(g, options.alpha, simulations);
  return g;
}

InteractionResult random_labelling_test(const std::vector<Point>& a, const std::vector<Point>& b, const Window& window,
                                        const RandomnessOptions& options, const std::string& key) {
  if (a.size() < 2 || b.size() < 2) throw AnalysisError("random labelling needs 2 points of each species");
  if (options.simulations == 0) throw AnalysisError("random labelling needs simulations > 0", {"simulations"});
  InteractionResult result;
  result.n_a = a.size();
  result.n_b = b.size();
  std::vector<Point> all(a);
  all.insert(all.end(), b.begin(), b.end());
  const std::size_t n = all.size();
  result.rmax_m = options.rmax_m.value_or(default_rmax(window, n));
  const std::size_t steps = options.steps;
  const double dr = result.rmax_m / static_cast<double>(steps);
  std::vector<double> r(steps);
  for (std::size_t k = 0; k < steps; ++k) r[k] = dr * static_cast<double>(k + 1);

  // Ripley's isotropic weights of a pair, centred on each end.
  std::vector<double> boundary(n);
  for (std::size_t i = 0; i < n; ++i) boundary[i] = window.boundary_distance(all[i]);
  const auto weight = [&](std::size_t centre, double d) {
    if (d <= boundary[centre]) return 1.0;
    return 1.0 / std::max(window.circle_fraction_inside(all[centre], d), 1e-6);
  };
  const PointGrid grid(all);
  const double scale = window.area_m2() / (static_cast<double>(a.size()) * static_cast<double>(b.size()));
  const auto to_l = [&](const std::vector<double>& hist) {
    std::vector<double> l(steps);
    double cumulative = 0.0;
    for (std::size_t k = 1; k <= steps; ++k) {
      cumulative += hist[k];
      l[k - 1] = std::sqrt(scale * cumulative / pi);
    }
    return l;
  };
  // Up to 64 labellings at once, one bit each per point: the pairs are enumerated afresh
  // for every batch instead of stored, so memory grows with n, not with the number of
  // pairs (clustered patterns have millions). Each labelling sums its pairs in the grid's
  // fixed order, so results do not depend on the batching or the thread count.
  const auto cross_l_batch = [&](const std::vector<std::vector<std::uint8_t>>& labellings) {
    const std::size_t m = labellings.size();
    std::vector<std::uint64_t> is_a(n, 0);
    for (std::size_t s = 0; s < m; ++s)
      for (std::size_t i = 0; i < n; ++i)
        if (labellings[s][i]) is_a[i] |= std::uint64_t{1} << s;
    std::vector<std::vector<double>> hist(m, std::vector<double>(steps + 2, 0.0));
    grid.for_each_pair_within(result.rmax_m, [&](std::size_t i, std::size_t j, double d) {
      const std::uint64_t from_i = is_a[i] & ~is_a[j];  // i is a, j is b: centred on i
      const std::uint64_t from_j = is_a[j] & ~is_a[i];
      if ((from_i | from_j) == 0) return;
      const double raw_bin = std::ceil(d / dr - 1e-12);
      const std::size_t bin = raw_bin < 1.0 ? std::size_t{1} : static_cast<std::size_t>(raw_bin);
      if (from_i != 0) {
        const double w = weight(i, d);
        for (std::uint64_t bits = from_i; bits != 0; bits &= bits - 1)
          hist[static_cast<std::size_t>(__builtin_ctzll(bits))][bin] += w;
      }
      if (from_j != 0) {
        const double w = weight(j, d);
        for (std::uint64_t bits = from_j; bits != 0; bits &= bits - 1)
          hist[static_cast<std::size_t>(__builtin_ctzll(bits))][bin] += w;
      }
    });
    std::vector<std::vector<double>> curves;
    curves.reserve(m);
    for (const auto& h : hist) curves.push_back(to_l(h));
    return curves;
  };
  std::vector<std::uint8_t> labels(n, 0);
  std::fill(labels.begin(), labels.begin() + static_cast<std::ptrdiff_t>(a.size()), 1);
  const std::vector<double> observed = cross_l_batch({labels}).front();
  constexpr std::size_t batch = 64;
  const std::size_t batches = (options.simulations + batch - 1) / batch;
  std::vector<std::vector<double>> simulated(options.simulations);
  parallel_for(batches, options.threads, [&](std::size_t k) {
    options.cancel.check();
    const std::size_t first = k * batch;
    const std::size_t last = std::min(options.simulations, first + batch);
    std::vector<std::vector<std::uint8_t>> labellings;
    for (std::size_t s = first; s < last; ++s) {
      Engine engine(derive_seed(options.seed, key + seed_key({"labelling", std::to_string(s)})));
      std::vector<std::uint8_t> shuffled = labels;
      shuffle(shuffled, engine);
      labellings.push_back(std::move(shuffled));
    }
    auto curves = cross_l_batch(labellings);
    for (std::size_t s = first; s < last; ++s) simulated[s] = std::move(curves[s - first]);
  });
  result.cross_l = envelope_test(r, observed, r, simulated, options.alpha);
  result.p_value = result.cross_l.dclf_p_value;
  if (result.p_value < options.alpha)
    result.direction = result.cross_l.mean_deviation > 0.0 ? "association" : "segregation";
  result.note = too_few_simulations("random-labelling test", options.simulations, options.alpha, false);
  if (!result.note.empty()) result.direction = "undetermined";
  return result;
}

std::size_t large_n_simulations(std::size_t n) {
  if (n <= 20000) return 999;
  if (n <= 200000) return 199;
  return 39;
}

std::size_t minimum_simulations(double alpha, bool two_sided) {
  const double k = two_sided ? 2.0 : 1.0;
  auto n = static_cast<std::size_t>(std::max(0.0, std::floor(k / alpha) - 2.0));
  while (!(k / static_cast<double>(n + 1) < alpha)) ++n;
  return n;
}

RandomnessResult analyse_randomness(const Survey& survey, const RandomnessOptions& options) {
  RandomnessResult result;
  result.simulations = options.simulations;
  result.seed = options.seed;
  result.alpha = options.alpha;
  // Progress: one step per group (each species present and all together) and per pair.
  std::size_t total = 0;
  std::size_t done = 0;
  const bool pairs = options.run_interactions && options.simulations > 0;
  for (const auto& pattern : survey.patterns()) {
    std::vector<std::size_t> present(survey.species().size(), 0);
    for (const auto m : pattern.marks) ++present[m];
    std::size_t groups = 1, paired = 0;
    for (const auto n : present) {
      groups += n > 0 ? 1 : 0;
      paired += n >= 2 ? 1 : 0;
    }
    total += groups + (pairs && paired >= 2 ? paired * (paired - 1) / 2 : 0);
  }
  const auto step = [&] {
    if (options.progress) options.progress(++done, total);
  };
  for (std::size_t p = 0; p < survey.plots().size(); ++p) {
    const Plot& plot = survey.plots()[p];
    const MarkedPattern& pattern = survey.patterns()[p];
    // Each species' points; a plot of one species uses the pattern itself (no copy).
    std::vector<std::size_t> counts(survey.species().size(), 0);
    for (const auto m : pattern.marks) ++counts[m];
    const auto species_present =
        static_cast<std::size_t>(std::count_if(counts.begin(), counts.end(), [](std::size_t c) { return c > 0; }));
    std::vector<std::vector<Point>> by_species(survey.species().size());
    if (species_present > 1) {
      for (std::size_t s = 0; s < counts.size(); ++s) by_species[s].reserve(counts[s]);
      for (std::size_t i = 0; i < pattern.points.size(); ++i) by_species[pattern.marks[i]].push_back(pattern.points[i]);
    }
    const auto points_of = [&](std::size_t s) -> const std::vector<Point>& {
      return species_present > 1 ? by_species[s] : pattern.points;
    };
    const auto run = [&](const std::vector<Point>& points, const std::optional<std::string>& species) {
      options.cancel.check();
      if (points.size() < options.min_points) {
        const std::string why = "fewer than " + std::to_string(options.min_points) + " sightings";
        result.skipped.push_back({plot.id, species, points.size(), why});
        GroupResult g;
        g.plot = plot.id;
        g.species = species;
        g.n = points.size();
        g.verdict = "too few to tell";
        g.notes.push_back(why + ": no test can run");
        result.results.push_back(std::move(g));
        step();
        return;
      }
      GroupResult g = analyse_pattern(points, plot.window, options, group_key(plot.id, species));
      g.plot = plot.id;
      g.species = species;
      if (g.verdict == "random" && points.size() < options.min_points_for_random) {
        g.verdict = "too few to tell";
        g.notes.push_back("no departure from CSR found, but with fewer than " +
                          std::to_string(options.min_points_for_random) +
                          " sightings the tests have almost no power: that is not evidence of "
                          "randomness");
      }
      result.results.push_back(std::move(g));
      step();
    };
    for (std::size_t s = 0; s < survey.species().size(); ++s) {
      if (counts[s] == 0) continue;
      run(points_of(s), survey.species()[s]);
    }
    if (species_present == 1) {
      // All species together are the one species here: repeat its results, computed once.
      GroupResult all = result.results.back();
      all.species = std::nullopt;
      all.notes.push_back("all species together are the one species " + *result.results.back().species +
                          " in this plot: its results are repeated, not computed again");
      if (!result.skipped.empty() && result.skipped.back().plot == plot.id &&
          result.skipped.back().species == result.results.back().species) {
        SkippedGroup skipped = result.skipped.back();
        skipped.species = std::nullopt;
        result.skipped.push_back(std::move(skipped));
      }
      result.results.push_back(std::move(all));
      step();
    } else {
      run(pattern.points, std::nullopt);
    }
    if (!options.run_interactions || options.simulations == 0) continue;
    for (std::size_t s = 0; s < survey.species().size(); ++s) {
      for (std::size_t t = s + 1; t < survey.species().size(); ++t) {
        if (counts[s] < 2 || counts[t] < 2) continue;
        InteractionResult ir =
            random_labelling_test(by_species[s], by_species[t], plot.window, options,
                                  seed_key({"pair", plot.id, survey.species()[s], survey.species()[t]}));
        ir.plot = plot.id;
        ir.species_a = survey.species()[s];
        ir.species_b = survey.species()[t];
        result.interactions.push_back(std::move(ir));
        step();
      }
    }
  }
  return result;
}

}  // namespace stipple
