#pragma once
/// Tests of complete spatial randomness for every plot x species of a survey (and all
/// species together), and random-labelling tests between species.

#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "stipple/cancel.hpp"
#include "stipple/geometry/survey.hpp"
#include "stipple/randomness/clark_evans.hpp"
#include "stipple/randomness/envelope.hpp"
#include "stipple/randomness/quadrat.hpp"
#include "stipple/randomness/summary_functions.hpp"
#include "stipple/simulate/engine.hpp"

namespace stipple {

struct RandomnessOptions {
  QuadratOptions quadrat;                                  ///< its `simulations` is set from below
  std::optional<NeighbourEdgeCorrection> edge_correction;  ///< default per window shape
  std::size_t simulations = 999;
  /// When the simulation count was not chosen by the user: groups with envelopes above
  /// 20,000 points run large_n_simulations(n) if that is fewer (199, then 39 above 200,000),
  /// with a note, so a run stays within minutes at any n. Set false to run `simulations`
  /// at every n.
  bool adapt_to_large_n = true;
  std::uint64_t seed = default_seed;
  unsigned threads = 0;          ///< 0 = all cores; results never depend on it
  std::optional<double> rmax_m;  ///< default: default_rmax() per group
  std::size_t steps = 64;
  PairCorrection pair_correction = PairCorrection::isotropic;                 ///< K, L, g
  DistanceCorrection distance_correction = DistanceCorrection::kaplan_meier;  ///< G, F
  double alpha = 0.05;
  bool run_quadrat = true;
  bool run_clark_evans = true;
  bool run_envelope = true;
  bool run_interactions = true;
  /// Monte Carlo Clark-Evans p-value even where its normal law holds
  /// (clark_evans_normal_holds); it is computed anyway whenever the envelopes simulate.
  bool clark_evans_monte_carlo = false;
  std::size_t min_points = 3;  ///< smaller groups get no test (listed as skipped)
  /// Below this many sightings a test that does not reject says `too few to tell`, not
  /// `random`: no CSR test has useful power there (README "Randomness", power table).
  std::size_t min_points_for_random = 10;
  /// Called on the caller's thread after each group and each species pair: (done, total).
  std::function<void(std::size_t, std::size_t)> progress;
  CancelToken cancel;  ///< polled before every simulation and labelling batch
};

/// One summary function with its Monte Carlo envelope.
struct FunctionEnvelope {
  std::string function;  ///< "L", "K", "g", "G", "F", "J"
  EnvelopeResult envelope;
};

struct GroupResult {
  std::string plot;
  std::optional<std::string> species;  ///< empty = all species together
  std::size_t n = 0;
  /// CSR simulations this group ran: the requested number, large_n_simulations(n) when that
  /// is fewer and adapt_to_large_n holds, or 0 where no test needed them (Clark-Evans alone
  /// where its normal law holds, quadrat test by chi-square).
  std::size_t simulations_run = 0;
  std::optional<QuadratResult> quadrat;
  std::optional<ClarkEvansResult> clark_evans;
  std::optional<double> rmax_m;
  PairCorrection pair_correction = PairCorrection::isotropic;
  DistanceCorrection distance_correction = DistanceCorrection::kaplan_meier;
  std::vector<FunctionEnvelope> functions;  ///< L first; empty when the envelope did not run
  std::string verdict = "random";           ///< clustered | regular | random | undetermined | too few to tell
  std::string verdict_basis;                ///< which test decided
  std::vector<std::string> notes;
  /// The L envelope, when it ran.
  [[nodiscard]] const EnvelopeResult* l_envelope() const {
    return functions.empty() ? nullptr : &functions.front().envelope;
  }
};

struct InteractionResult {
  std::string plot;
  std::string species_a;
  std::string species_b;
  std::size_t n_a = 0;
  std::size_t n_b = 0;
  double rmax_m = 0.0;
  EnvelopeResult cross_l;          ///< cross-L of b around a against random labellings
  double p_value = 1.0;            ///< DCLF test of cross-L under random labelling
  std::string direction = "none";  ///< association | segregation | none | undetermined, at alpha
  std::string note;                ///< why the direction is undetermined, when it is
};

struct SkippedGroup {
  std::string plot;
  std::optional<std::string> species;
  std::size_t n = 0;
  std::string reason;
};

struct RandomnessResult {
  std::size_t simulations = 0;
  std::uint64_t seed = default_seed;
  double alpha = 0.05;
  std::vector<GroupResult> results;
  std::vector<InteractionResult> interactions;
  std::vector<SkippedGroup> skipped;
};

/// The envelope simulations a group of n points runs by default when the user chose none:
/// 999 up to 20,000 points, 199 up to 200,000, 39 beyond (each simulation costs about n
/// times the pairs within rmax, and the DCLF test reaches p = 0.025 with 39 simulations).
[[nodiscard]] std::size_t large_n_simulations(std::size_t n);

/// The fewest simulations N with which a Monte Carlo rank test can reject at p < alpha:
/// the smallest attainable p-value is 1 / (N + 1) for a one-sided test (DCLF, MAD) and
/// 2 / (N + 1) for the two-sided Clark-Evans and quadrat tests (Hope 1968), so N must
/// exceed 1 / alpha - 1 (one-sided) or 2 / alpha - 1 (two-sided): 20 and 40 at alpha = 0.05.
[[nodiscard]] std::size_t minimum_simulations(double alpha, bool two_sided);

/// Runs the quadrat, Clark-Evans and envelope tests for each species of each plot and
/// for all species together, and random-labelling tests for each pair of species in a
/// plot. CSR is simulated as the binomial process (same n, same window); every simulation
/// has its own seed derived from (seed, plot, species, index), so results are identical for
/// any thread count. The verdict follows the DCLF test on L when the envelope ran (direction
/// from the sign of the mean deviation from the simulation mean), else the Clark-Evans test,
/// else the quadrat test; it is `undetermined`, with a note giving minimum_simulations, when
/// that test is a Monte Carlo one whose simulations cannot reach p < alpha.
[[nodiscard]] RandomnessResult analyse_randomness(const Survey& survey, const RandomnessOptions& options);

/// One group's tests: exposed for the statistical test suite and the benchmarks.
[[nodiscard]] GroupResult analyse_pattern(const std::vector<Point>& points, const Window& window,
                                          const RandomnessOptions& options, const std::string& key);

/// Random labelling of two species over their fixed locations (Diggle 2003, ch. 7).
[[nodiscard]] InteractionResult random_labelling_test(const std::vector<Point>& a, const std::vector<Point>& b,
                                                      const Window& window, const RandomnessOptions& options,
                                                      const std::string& key);

}  // namespace stipple
