#include "stipple/randomness/envelope.hpp"

#include <string>
#include <tuple>

#include <gtest/gtest.h>
#include <boost/random/normal_distribution.hpp>

#include "stipple/error.hpp"
#include "stipple/simulate/engine.hpp"

namespace stipple {
namespace {

std::vector<std::vector<double>> flat_simulations(std::size_t n, std::size_t m) {
  std::vector<std::vector<double>> sims;
  for (std::size_t i = 0; i < n; ++i) {
    std::vector<double> curve(m);
    for (std::size_t k = 0; k < m; ++k)
      curve[k] = static_cast<double>(k) + 0.01 * (static_cast<double>((i * 37 + k * 11) % 19) - 9.0);
    sims.push_back(curve);
  }
  return sims;
}

TEST(EnvelopeTest, ExtremeObservedGetsSmallestPValues) {
  // Source: Hope (1968) and Myllymaki et al. (2017): an observed curve beyond every
  // simulation has p = 1 / (N + 1) for MAD, DCLF and the extreme rank length test.
  const std::size_t m = 10;
  const auto sims = flat_simulations(99, m);
  std::vector<double> r(m), observed(m), theory(m);
  for (std::size_t k = 0; k < m; ++k) {
    r[k] = static_cast<double>(k + 1);
    theory[k] = static_cast<double>(k);
    observed[k] = static_cast<double>(k) + (k >= 4 ? 1.0 : 0.0);  // above from r = 5 on
  }
  const EnvelopeResult e = envelope_test(r, observed, theory, sims, 0.05);
  EXPECT_DOUBLE_EQ(e.mad_p_value, 0.01);
  EXPECT_DOUBLE_EQ(e.dclf_p_value, 0.01);
  EXPECT_DOUBLE_EQ(e.erl_p_value, 0.01);
  ASSERT_EQ(e.departures.size(), 1u);
  EXPECT_EQ(e.departures[0].direction, "above");
  EXPECT_EQ(e.departures[0].from_m, 5.0);
  EXPECT_EQ(e.departures[0].to_m, 10.0);
  EXPECT_GT(e.mean_deviation, 0.0);
  for (std::size_t k = 0; k < m; ++k) {
    EXPECT_LE(e.global_low[k], e.pointwise_low[k] + 1e-12);
    EXPECT_GE(e.global_high[k], e.pointwise_high[k] - 1e-12);
  }
}

TEST(EnvelopeTest, TypicalObservedIsNotRejected) {
  const auto sims = flat_simulations(99, 10);
  std::vector<double> r(10), theory(10);
  for (std::size_t k = 0; k < 10; ++k) r[k] = theory[k] = static_cast<double>(k + 1);
  const EnvelopeResult e = envelope_test(r, sims[5], theory, sims, 0.05);
  EXPECT_GT(e.dclf_p_value, 0.05);
  EXPECT_TRUE(e.departures.empty());
}

// N + 1 exchangeable curves (Gaussian random walks over m distances): the null hypothesis
// of every global test, with the observed curve drawn like the simulations.
struct NullCurves {
  std::vector<double> r;
  std::vector<double> observed;
  std::vector<std::vector<double>> simulated;
};

NullCurves null_curves(std::size_t simulations, std::size_t m, Engine& engine) {
  boost::random::normal_distribution<double> step(0.0, 1.0);
  const auto walk = [&] {
    std::vector<double> c(m);
    double v = 0.0;
    for (auto& x : c) x = v += step(engine);
    return c;
  };
  NullCurves n;
  for (std::size_t k = 0; k < m; ++k) n.r.push_back(static_cast<double>(k + 1));
  n.observed = walk();
  for (std::size_t i = 0; i < simulations; ++i) n.simulated.push_back(walk());
  return n;
}

TEST(EnvelopeTest, ObservedLeavesTheGlobalEnvelopeExactlyWhenTheErlTestRejects) {
  // Myllymaki, Mrkvicka, Grabarnik, Seijo & Hahn (2017), JRSS B 79:381-404, section 4: the
  // global ERL envelope is built from all N + 1 curves so that the observed curve leaves
  // it if and only if the ERL test rejects. Size: the test rejects at p < alpha, i.e. when
  // at most ceil(alpha (N + 1)) - 1 curves are as extreme, an exact probability of
  // 4 / 100 = 0.04 for N = 99 and 1 / 20 = 0.05 for N = 19 at alpha = 0.1. Band: binomial
  // 99.9% for 2000 trials (SciPy 1.10 binom.ppf(0.0005 / 0.9995)): 0.04 -> [53, 110],
  // 0.05 -> [69, 133].
  const std::size_t trials = 2000;
  for (const auto& [simulations, alpha, low, high] :
       {std::tuple<std::size_t, double, int, int>{99, 0.05, 53, 110}, {19, 0.1, 69, 133}}) {
    int left = 0;
    for (std::size_t t = 0; t < trials; ++t) {
      Engine engine(derive_seed(7, "erl/" + std::to_string(simulations) + "/" + std::to_string(t)));
      const NullCurves n = null_curves(simulations, 12, engine);
      const EnvelopeResult e = envelope_test(n.r, n.observed, n.r, n.simulated, alpha);
      const bool rejects = e.erl_p_value < alpha;
      ASSERT_EQ(e.erl_rejects, rejects);
      ASSERT_EQ(!e.departures.empty(), rejects) << "trial " << t << ", N = " << simulations;
      left += e.departures.empty() ? 0 : 1;
    }
    EXPECT_GE(left, low) << "N = " << simulations;
    EXPECT_LE(left, high) << "N = " << simulations;
  }
}

TEST(EnvelopeTest, MadAndDclfAreExactWithFewSimulations) {
  // Hope (1968): with N + 1 exchangeable statistics, P(p <= k / (N + 1)) = k / (N + 1)
  // exactly. N = 4: P(p <= 0.2) = 0.2; N = 19: P(p <= 0.05) = 0.05. Band: binomial 99.9%
  // for 4000 trials (SciPy 1.10 binom.ppf(0.0005 / 0.9995)): 0.2 -> [718, 884],
  // 0.05 -> [156, 247]. The old reference (the simulation mean) gave 42-51% at N = 4.
  const std::size_t trials = 4000;
  for (const auto& [simulations, level, low, high] :
       {std::tuple<std::size_t, double, int, int>{4, 0.2, 718, 884}, {19, 0.05, 156, 247}}) {
    int mad = 0;
    int dclf = 0;
    for (std::size_t t = 0; t < trials; ++t) {
      Engine engine(derive_seed(11, "mad/" + std::to_string(simulations) + "/" + std::to_string(t)));
      const NullCurves n = null_curves(simulations, 12, engine);
      const EnvelopeResult e = envelope_test(n.r, n.observed, n.r, n.simulated, 0.05);
      mad += e.mad_p_value <= level + 1e-12 ? 1 : 0;
      dclf += e.dclf_p_value <= level + 1e-12 ? 1 : 0;
    }
    EXPECT_GE(mad, low) << "MAD, N = " << simulations;
    EXPECT_LE(mad, high) << "MAD, N = " << simulations;
    EXPECT_GE(dclf, low) << "DCLF, N = " << simulations;
    EXPECT_LE(dclf, high) << "DCLF, N = " << simulations;
  }
}

TEST(EnvelopeTest, NeedsSimulations) {
  EXPECT_THROW((void)envelope_test({1.0}, {1.0}, {1.0}, {}, 0.05), AnalysisError);
}

}  // namespace
}  // namespace stipple
