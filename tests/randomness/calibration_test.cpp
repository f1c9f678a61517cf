// Type-I error and power of the randomness tests, by simulation with fixed seeds.
// Calibration band: 200 CSR patterns at alpha = 0.05 must give 3..19 rejections, the
// binomial 99% band (REFERENCES.md section 5, common practice).

#include <cmath>

#include <gtest/gtest.h>
#include <boost/geometry.hpp>

#include "stipple/randomness/analysis.hpp"
#include "stipple/simulate/point_process.hpp"

namespace stipple {
namespace {

Window irregular_window() {
  // 1 ha less a pond, L-shaped outline: neither rectangle nor convex.
  BgMultiPolygon shape;
  boost::geometry::read_wkt("MULTIPOLYGON(((0 0,0 100,60 100,60 60,120 60,120 0,0 0),(20 20,40 20,40 40,20 40,20 20)))",
                            shape);
  return Window::from_polygons(shape, "test");
}

RandomnessOptions quick_options() {
  RandomnessOptions o;
  o.simulations = 99;
  o.steps = 24;
  o.threads = 2;
  o.quadrat.nx = 3;
  o.quadrat.ny = 3;
  return o;
}

struct Rejections {
  int quadrat = 0, clark_evans = 0, clark_evans_mc = 0, mad = 0, dclf = 0, erl = 0, departures = 0;
};

template <typename Generate>
Rejections count_rejections(const Window& w, int patterns, const std::string& key, Generate generate,
                            const RandomnessOptions& o) {
  Rejections r;
  for (int p = 0; p < patterns; ++p) {
    Engine engine(derive_seed(2024, key + std::to_string(p)));
    const std::vector<Point> points = generate(engine);
    const GroupResult g = analyse_pattern(points, w, o, key + std::to_string(p));
    r.quadrat += g.quadrat->p_value < o.alpha ? 1 : 0;
    r.clark_evans += g.clark_evans->p_value < o.alpha ? 1 : 0;
    r.clark_evans_mc += *g.clark_evans->monte_carlo_p_value < o.alpha ? 1 : 0;
    r.mad += g.l_envelope()->mad_p_value < o.alpha ? 1 : 0;
    r.dclf += g.l_envelope()->dclf_p_value < o.alpha ? 1 : 0;
    r.erl += g.l_envelope()->erl_p_value < o.alpha ? 1 : 0;
    // Myllymaki et al. (2017): L leaves the global envelope exactly when the ERL test rejects.
    r.departures += g.l_envelope()->departures.empty() ? 0 : 1;
    EXPECT_EQ(!g.l_envelope()->departures.empty(), g.l_envelope()->erl_rejects) << key << p;
  }
  return r;
}

void expect_calibrated(const Rejections& r) {
  for (const auto& [name, count] : {std::pair{"quadrat", r.quadrat},
                                    {"Clark-Evans", r.clark_evans},
                                    {"Clark-Evans MC", r.clark_evans_mc},
                                    {"MAD", r.mad},
                                    {"DCLF", r.dclf},
                                    {"ERL", r.erl},
                                    {"departures from the global envelope", r.departures}}) {
    EXPECT_GE(count, 3) << name;
    EXPECT_LE(count, 19) << name;
  }
}

TEST(Calibration, CsrRejectsAtNominalRateInIrregularWindow) {
  const Window w = irregular_window();
  const auto r = count_rejections(
      w, 200, "csr-irregular/", [&](Engine& e) { return simulate_binomial(w, 60, e); }, quick_options());
  expect_calibrated(r);
}

TEST(Calibration, CsrRejectsAtNominalRateInRectangle) {
  // Rectangle: the Clark-Evans default is Donnelly's correction.
  const Window w = Window::rectangle(0, 0, 100, 50);
  const auto r = count_rejections(
      w, 200, "csr-rectangle/", [&](Engine& e) { return simulate_binomial(w, 40, e); }, quick_options());
  expect_calibrated(r);
}

TEST(Calibration, ClarkEvansBorderReportsACalibratedPValue) {
  // The border method's normal approximation rejected 11.1% of CSR patterns at nominal 5%
  // for n = 10 in 100 x 60 m (independent audit), so its reported p-value is the Monte
  // Carlo one: two-sided, p = 2 min(#{T_i >= T}, #{T_i <= T}) + 1) / (N + 1) (Hope 1968),
  // which with N = 99 rejects at p < 0.05 with probability 0.04 under CSR. Band: binomial
  // 99.9% for 600 patterns at 0.04 (SciPy 1.10 binom.ppf): [10, 41]; 11.1% would give
  // at most 40 rejections with probability 0.00015.
  const Window w = Window::rectangle(0, 0, 100, 60);
  RandomnessOptions o = quick_options();
  o.run_quadrat = false;
  o.run_envelope = false;
  o.edge_correction = NeighbourEdgeCorrection::border;
  int rejected = 0;
  for (int p = 0; p < 600; ++p) {
    Engine engine(derive_seed(2024, "ce-border/" + std::to_string(p)));
    const GroupResult g = analyse_pattern(simulate_binomial(w, 10, engine), w, o, "ce-border/" + std::to_string(p));
    ASSERT_TRUE(g.clark_evans);
    ASSERT_EQ(g.clark_evans->p_value_method, "monte-carlo");
    rejected += g.clark_evans->p_value < o.alpha ? 1 : 0;
  }
  EXPECT_GE(rejected, 10);
  EXPECT_LE(rejected, 41);

  // Without simulations there is no p-value to report, and the verdict says so.
  o.simulations = 0;
  Engine engine(derive_seed(2024, "ce-border/none"));
  const GroupResult g = analyse_pattern(simulate_binomial(w, 10, engine), w, o, "ce-border/none");
  EXPECT_TRUE(std::isnan(g.clark_evans->p_value));
  EXPECT_EQ(g.verdict, "undetermined");
}

TEST(Calibration, ClarkEvansBorderNormalLawHoldsBradleysLiberalBoundsFromAThousandPoints) {
  // clark_evans_normal_holds: from n = 1000 the border method reports its normal p-value,
  // whose size must lie within Bradley's (1978) liberal bounds, 0.5 alpha to 1.5 alpha
  // (2.5% to 7.5% at 5%). bench/clark_evans_size.cpp measured 5.8-6.8%; 2000 patterns at
  // 6.1% give 122 +- 11 rejections, so the bounds [50, 150] fail by chance with
  // probability about 0.005 (binomial, common practice).
  const Window w = Window::rectangle(0, 0, 300, 200);
  RandomnessOptions o = quick_options();
  o.run_quadrat = false;
  o.run_envelope = false;
  o.run_interactions = false;
  o.edge_correction = NeighbourEdgeCorrection::border;
  int rejected = 0;
  for (int p = 0; p < 2000; ++p) {
    Engine engine(derive_seed(2026, "ce-border-normal/" + std::to_string(p)));
    const GroupResult g = analyse_pattern(simulate_binomial(w, 1000, engine), w, o, "unused");
    ASSERT_EQ(g.clark_evans->p_value_method, "normal");
    ASSERT_EQ(g.simulations_run, 0U);
    rejected += g.clark_evans->p_value < 0.05 ? 1 : 0;
  }
  EXPECT_GE(rejected, 50);
  EXPECT_LE(rejected, 150);
}

TEST(MonteCarlo, TooFewSimulationsLeaveTheVerdictUndetermined) {
  // Hope (1968): the smallest Monte Carlo p-value is 1 / (N + 1) one-sided, 2 / (N + 1)
  // two-sided; rejecting at p < alpha needs N >= 20 (one-sided) or 40 (two-sided) at 0.05.
  EXPECT_EQ(minimum_simulations(0.05, false), 20u);
  EXPECT_EQ(minimum_simulations(0.05, true), 40u);
  EXPECT_EQ(minimum_simulations(0.01, false), 100u);
  EXPECT_EQ(minimum_simulations(0.1, false), 10u);
  // A strongly clustered pattern (Thomas, as in the power test) with 19 simulations: the
  // DCLF test cannot reject, so the verdict is undetermined, never `random`; with 20 it is
  // clustered.
  const Window w = irregular_window();
  Engine engine(derive_seed(2024, "undetermined"));
  const std::vector<Point> points = simulate_thomas(w, 8e-4, 8.0, 4.0, engine);
  RandomnessOptions o = quick_options();
  o.simulations = 19;
  const GroupResult few = analyse_pattern(points, w, o, "undetermined");
  EXPECT_EQ(few.verdict, "undetermined");
  ASSERT_FALSE(few.notes.empty());
  EXPECT_NE(few.notes.back().find("run at least 20"), std::string::npos) << few.notes.back();
  o.simulations = 20;
  EXPECT_EQ(analyse_pattern(points, w, o, "undetermined").verdict, "clustered");
}

TEST(Power, ThomasClustersAreDetected) {
  // Thomas process, 8 parents per ha, 8 offspring, sigma 4 m: strongly clustered.
  const Window w = irregular_window();
  const int patterns = 30;
  const auto r = count_rejections(
      w, patterns, "thomas/", [&](Engine& e) { return simulate_thomas(w, 8e-4, 8.0, 4.0, e); }, quick_options());
  EXPECT_GE(r.dclf, 27) << "DCLF power";
  EXPECT_GE(r.mad, 25) << "MAD power";
  EXPECT_GE(r.clark_evans_mc, 25) << "Clark-Evans power";
  EXPECT_GE(r.quadrat, 15) << "quadrat power";
}

TEST(Power, HardCoreRegularityIsDetected) {
  // Simple sequential inhibition: 60 points at least 7 m apart in the 0.68-ha window.
  const Window w = irregular_window();
  const int patterns = 30;
  const auto r = count_rejections(
      w, patterns, "ssi/", [&](Engine& e) { return simulate_sequential_inhibition(w, 60, 7.0, e); }, quick_options());
  EXPECT_GE(r.dclf, 27) << "DCLF power";
  EXPECT_GE(r.clark_evans_mc, 27) << "Clark-Evans power";
  // Matern II: hard core 6 m.
  const auto m = count_rejections(
      w, patterns, "matern/", [&](Engine& e) { return simulate_matern_ii(w, 0.02, 6.0, e); }, quick_options());
  EXPECT_GE(m.dclf, 25) << "DCLF power, Matern II";
}

TEST(Verdict, NamesTheDirection) {
  const Window w = irregular_window();
  const RandomnessOptions o = quick_options();
  Engine e1(1);
  EXPECT_EQ(analyse_pattern(simulate_thomas(w, 8e-4, 8.0, 4.0, e1), w, o, "v1").verdict, "clustered");
  Engine e2(2);
  EXPECT_EQ(analyse_pattern(simulate_sequential_inhibition(w, 60, 7.0, e2), w, o, "v2").verdict, "regular");
}

TEST(Calibration, RandomLabellingHoldsItsLevel) {
  // Two independent CSR species are randomly labelled: 200 pairs -> 3..19 rejections.
  const Window w = irregular_window();
  const RandomnessOptions o = quick_options();
  int rejections = 0;
  for (int p = 0; p < 200; ++p) {
    Engine engine(derive_seed(77, "labelling/" + std::to_string(p)));
    const auto a = simulate_binomial(w, 30, engine);
    const auto b = simulate_binomial(w, 30, engine);
    rejections += random_labelling_test(a, b, w, o, "rl" + std::to_string(p)).p_value < o.alpha ? 1 : 0;
  }
  EXPECT_GE(rejections, 3);
  EXPECT_LE(rejections, 19);
}

TEST(Power, RandomLabellingFindsSegregation) {
  // Species a on the west half, b on the east half: segregated.
  const Window w = Window::rectangle(0, 0, 100, 100);
  const Window west = Window::rectangle(0, 0, 50, 100);
  const Window east = Window::rectangle(50, 0, 100, 100);
  Engine engine(5);
  const auto r = random_labelling_test(simulate_binomial(west, 30, engine), simulate_binomial(east, 30, engine), w,
                                       quick_options(), "seg");
  EXPECT_LT(r.p_value, 0.05);
  EXPECT_EQ(r.direction, "segregation");
}

TEST(Reproducibility, ResultsDoNotDependOnThreadCount) {
  const Window w = irregular_window();
  Engine engine(6);
  const auto points = simulate_binomial(w, 50, engine);
  RandomnessOptions one = quick_options();
  one.threads = 1;
  RandomnessOptions two = quick_options();
  two.threads = 2;
  const GroupResult a = analyse_pattern(points, w, one, "repro");
  const GroupResult b = analyse_pattern(points, w, two, "repro");
  EXPECT_EQ(a.l_envelope()->dclf_p_value, b.l_envelope()->dclf_p_value);
  EXPECT_EQ(a.l_envelope()->global_high, b.l_envelope()->global_high);
  EXPECT_EQ(*a.clark_evans->monte_carlo_p_value, *b.clark_evans->monte_carlo_p_value);
}

}  // namespace
}  // namespace stipple
