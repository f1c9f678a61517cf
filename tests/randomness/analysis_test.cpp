// analyse_randomness over a survey built in code: one group per plot x species and for all
// species together, random labelling per species pair, and results that do not depend on
// the thread count (each task seeds its own engine).

#include "stipple/randomness/analysis.hpp"

#include <gtest/gtest.h>

#include <boost/random/uniform_real_distribution.hpp>

#include "stipple/simulate/engine.hpp"
#include "stipple/simulate/point_process.hpp"

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

// An L-shaped 1 ha window: not a rectangle, so Clark-Evans uses the border method.
Window l_window() {
  BgMultiPolygon shape;
  BgPolygon p;
  for (const auto& [x, y] :
       std::vector<std::pair<double, double>>{{0, 0}, {0, 120}, {60, 120}, {60, 60}, {110, 60}, {110, 0}, {0, 0}})
    p.outer().push_back(BgPoint(x, y));
  shape.push_back(p);
  return Window::from_polygons(shape, "L");
}

RandomnessOptions clark_evans_only() {
  RandomnessOptions o;
  o.simulations = 99;
  o.run_envelope = false;
  o.run_interactions = false;
  o.run_quadrat = false;
  return o;
}

TEST(AnalysePattern, ClarkEvansAloneSimulatesOnlyWhereItsNormalLawIsDoubtful) {
  Engine engine(derive_seed(3, seed_key({"ce-only"})));
  const Window rectangle = Window::rectangle(0, 0, 100, 100);
  // Donnelly, n = 50: the normal law holds (clark_evans_normal_holds), no simulation.
  const auto fifty = simulate_binomial(rectangle, 50, engine);
  const GroupResult donnelly = analyse_pattern(fifty, rectangle, clark_evans_only(), "k");
  ASSERT_TRUE(donnelly.clark_evans);
  EXPECT_EQ(donnelly.simulations_run, 0U);
  EXPECT_FALSE(donnelly.clark_evans->monte_carlo_p_value);
  EXPECT_EQ(donnelly.clark_evans->p_value, donnelly.clark_evans->normal_p_value);
  EXPECT_EQ(donnelly.verdict_basis, "Clark-Evans test");
  EXPECT_FALSE(donnelly.notes.empty());  // says the normal law was used
  // Asked for: the Monte Carlo p-value, from the same simulations the envelopes would run.
  RandomnessOptions asked = clark_evans_only();
  asked.clark_evans_monte_carlo = true;
  const GroupResult monte_carlo = analyse_pattern(fifty, rectangle, asked, "k");
  EXPECT_EQ(monte_carlo.simulations_run, 99U);
  ASSERT_TRUE(monte_carlo.clark_evans->monte_carlo_p_value);
  RandomnessOptions full;
  full.simulations = 99;
  full.run_interactions = false;
  const GroupResult with_envelopes = analyse_pattern(fifty, rectangle, full, "k");
  EXPECT_EQ(*monte_carlo.clark_evans->monte_carlo_p_value, *with_envelopes.clark_evans->monte_carlo_p_value);
  EXPECT_EQ(monte_carlo.clark_evans->mean_distance, with_envelopes.clark_evans->mean_distance);

  // Border, n = 50: doubtful, so it simulates by default and reports the Monte Carlo p-value.
  const Window l = l_window();
  const auto few = simulate_binomial(l, 50, engine);
  const GroupResult border_few = analyse_pattern(few, l, clark_evans_only(), "k");
  EXPECT_EQ(border_few.clark_evans->edge_correction, NeighbourEdgeCorrection::border);
  EXPECT_EQ(border_few.simulations_run, 99U);
  EXPECT_EQ(border_few.clark_evans->p_value_method, "monte-carlo");
  // Border, n = 1500: the normal p-value, with its caveat.
  const auto many = simulate_binomial(l, 1500, engine);
  const GroupResult border_many = analyse_pattern(many, l, clark_evans_only(), "k");
  EXPECT_EQ(border_many.simulations_run, 0U);
  EXPECT_EQ(border_many.clark_evans->p_value_method, "normal");
  EXPECT_EQ(border_many.clark_evans->p_value, border_many.clark_evans->normal_p_value);
}

TEST(AnalysePattern, LargeGroupsRunFewerEnvelopeSimulationsUnlessTheCountWasChosen) {
  EXPECT_EQ(large_n_simulations(20000), 999U);
  EXPECT_EQ(large_n_simulations(20001), 199U);
  EXPECT_EQ(large_n_simulations(200000), 199U);
  EXPECT_EQ(large_n_simulations(200001), 39U);
  Engine engine(derive_seed(6, seed_key({"large-n"})));
  const Window w = Window::rectangle(0, 0, 500, 500);
  const auto points = simulate_binomial(w, 25000, engine);
  RandomnessOptions o;
  o.run_quadrat = false;
  o.rmax_m = 1.0;  // few pairs: the test is about the count
  o.threads = 2;
  const GroupResult adapted = analyse_pattern(points, w, o, "k");
  EXPECT_EQ(adapted.simulations_run, 199U);
  ASSERT_NE(adapted.l_envelope(), nullptr);
  EXPECT_EQ(adapted.l_envelope()->simulations, 199U);
  ASSERT_FALSE(adapted.notes.empty());
  EXPECT_NE(adapted.notes.front().find("199 simulations, the default for 25000 points"), std::string::npos);
  EXPECT_EQ(adapted.verdict_basis, "DCLF test on L");
  // A chosen count runs as chosen.
  o.adapt_to_large_n = false;
  o.simulations = 249;
  const GroupResult chosen = analyse_pattern(points, w, o, "k");
  EXPECT_EQ(chosen.simulations_run, 249U);
  EXPECT_EQ(chosen.l_envelope()->simulations, 249U);
}

TEST(AnalyseRandomness, APlotOfOneSpeciesComputesItsGroupOnceAndRepeatsItForAllSpecies) {
  Engine engine(derive_seed(4, seed_key({"one-species"})));
  const Window w = Window::rectangle(0, 0, 80, 80);
  std::vector<Sighting> s;
  std::int64_t id = 0;
  for (const auto& p : simulate_binomial(w, 60, engine)) s.push_back({p, ++id, "sedge", std::nullopt});
  RandomnessOptions o;
  o.simulations = 39;
  const RandomnessResult r = analyse_randomness(assign_to_plots(s, {Plot{"fen", w}}), o);
  ASSERT_EQ(r.results.size(), 2U);
  const GroupResult& sedge = r.results[0];
  const GroupResult& all = r.results[1];
  EXPECT_EQ(sedge.species, "sedge");
  EXPECT_FALSE(all.species);
  EXPECT_EQ(all.n, sedge.n);
  EXPECT_EQ(all.l_envelope()->dclf_p_value, sedge.l_envelope()->dclf_p_value);
  EXPECT_EQ(all.clark_evans->ratio, sedge.clark_evans->ratio);
  EXPECT_EQ(all.verdict, sedge.verdict);
  ASSERT_FALSE(all.notes.empty());
  EXPECT_NE(all.notes.back().find("repeated"), std::string::npos);
}

}  // namespace
}  // namespace stipple
