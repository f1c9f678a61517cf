// analyse_randomness over a survey built in code: one group per plot x species and for all
// species together, random labelling per species pair, and results that do not depend on
// the thread count (each task seeds its own engine).

#include "stipple/randomness/analysis.hpp"

#include <gtest/gtest.h>

#include <boost/random/uniform_real_distribution.hpp>

#include "stipple/simulate/engine.hpp"

namespace stipple {
namespace {

Survey two_species_in_two_plots() {
  Engine engine(derive_seed(5, seed_key({"analysis-test"})));
  boost::random::uniform_real_distribution<double> u(0.0, 50.0);
  std::vector<Sighting> s;
  std::int64_t id = 0;
  for (const double x0 : {0.0, 100.0})
    for (int i = 0; i < 40; ++i)
      s.push_back({{x0 + u(engine), u(engine)}, ++id, i % 2 ? "birch" : "hazel", std::nullopt});
  return assign_to_plots(s,
                         {Plot{"a", Window::rectangle(0, 0, 50, 50)}, Plot{"b", Window::rectangle(100, 0, 150, 50)}});
}

TEST(AnalyseRandomness, OneGroupPerPlotAndSpeciesPlusAllAndOnePairPerPlot) {
  RandomnessOptions o;
  o.simulations = 39;
  o.threads = 1;
  const RandomnessResult r = analyse_randomness(two_species_in_two_plots(), o);
  EXPECT_EQ(r.results.size(), 6u);  // 2 plots x (2 species + all)
  EXPECT_EQ(r.interactions.size(), 2u);
  for (const auto& g : r.results) {
    ASSERT_TRUE(g.clark_evans) << g.plot;
    EXPECT_EQ(g.n, g.species ? 20u : 40u);
    ASSERT_NE(g.l_envelope(), nullptr);
    EXPECT_EQ(g.l_envelope()->simulations, 39u);
  }
  EXPECT_EQ(r.simulations, 39u);
}

TEST(AnalyseRandomness, ResultsAreTheSameForAnyThreadCount) {
  RandomnessOptions o;
  o.simulations = 39;
  o.threads = 1;
  const RandomnessResult one = analyse_randomness(two_species_in_two_plots(), o);
  o.threads = 2;
  const RandomnessResult two = analyse_randomness(two_species_in_two_plots(), o);
  ASSERT_EQ(one.results.size(), two.results.size());
  for (std::size_t i = 0; i < one.results.size(); ++i) {
    EXPECT_EQ(one.results[i].l_envelope()->dclf_p_value, two.results[i].l_envelope()->dclf_p_value);
    EXPECT_EQ(one.results[i].clark_evans->monte_carlo_p_value, two.results[i].clark_evans->monte_carlo_p_value);
  }
  for (std::size_t i = 0; i < one.interactions.size(); ++i)
    EXPECT_EQ(one.interactions[i].p_value, two.interactions[i].p_value);
}

TEST(AnalyseRandomness, OnlyRunsWhatWasAskedFor) {
  RandomnessOptions o;
  o.simulations = 39;
  o.run_envelope = false;
  o.run_interactions = false;
  o.run_quadrat = false;
  const RandomnessResult r = analyse_randomness(two_species_in_two_plots(), o);
  for (const auto& g : r.results) {
    EXPECT_FALSE(g.quadrat);
    EXPECT_EQ(g.l_envelope(), nullptr);
    EXPECT_TRUE(g.clark_evans);
  }
  EXPECT_TRUE(r.interactions.empty());
}

}  // namespace
}  // namespace stipple
