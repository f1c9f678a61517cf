#include "stipple/intensity/detection.hpp"

#include <cmath>
#include <limits>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

TEST(DetectionCorrection, KnownProbabilityDividesExactLimits) {
  // Source: REFERENCES.md section 9: n = 31 in 1 ha, p = 0.8, se = 0:
  // exact limits / p = [26.328745, 55.002532].
  const auto c = correct_for_detection({31}, {Detection{0.8, 0.0}}, 1.0, 0.95);
  EXPECT_NEAR(c.intensity, 38.75, 1e-12);
  EXPECT_NEAR(c.ci.lower, 26.328745, 1e-6);
  EXPECT_NEAR(c.ci.upper, 55.002532, 1e-6);
  EXPECT_EQ(c.method, CorrectionMethod::exact_divided_by_p);
}

TEST(DetectionCorrection, UncertainProbabilityUsesDeltaMethodOnLogScale) {
  // Source: REFERENCES.md section 9 (common practice): var(log D) = 1/n + (se/p)^2;
  // n = 31, p = 0.8, se 0.05: CV = 0.1901692, [26.6931, 56.2528].
  const auto c = correct_for_detection({31}, {Detection{0.8, 0.05}}, 1.0, 0.95);
  EXPECT_NEAR(c.intensity, 38.75, 1e-12);
  EXPECT_NEAR(std::log(c.ci.upper / c.intensity) / 1.959964, 0.1901692, 1e-6);
  EXPECT_NEAR(c.ci.lower, 26.6931, 1e-4);
  EXPECT_NEAR(c.ci.upper, 56.2528, 1e-4);
  EXPECT_EQ(c.method, CorrectionMethod::delta_log);
}

TEST(DetectionCorrection, CertainDetectionIsTheObservedInterval) {
  const auto c = correct_for_detection({31}, {Detection{}}, 1.0, 0.95);
  EXPECT_NEAR(c.ci.lower, 21.062996, 1e-6);  // Source: REFERENCES.md section 1
  EXPECT_EQ(c.method, CorrectionMethod::none);
}

TEST(DetectionCorrection, SuperposedSpeciesAddTheirCorrectedRates) {
  // Superposition (rates add; Kingman 1993, from memory: section 2.2): D = sum n_s/p_s / A.
  const auto c = correct_for_detection({30, 10}, {Detection{0.5, 0.0}, Detection{1.0, 0.0}}, 2.0, 0.95);
  EXPECT_NEAR(c.intensity, (60.0 + 10.0) / 2.0, 1e-12);
  EXPECT_NEAR(c.detection_probability, 40.0 / 70.0, 1e-12);
  // Delta method: var = 30/0.25 + 10 = 130 on the total 70.
  const double cv = std::sqrt(130.0) / 70.0;
  EXPECT_NEAR(c.ci.upper, 35.0 * std::exp(1.959964 * cv), 1e-4);
}

TEST(DetectionCorrection, ZeroCountKeepsAFiniteUpperLimit) {
  const auto c = correct_for_detection({0}, {Detection{0.5, 0.05}}, 1.0, 0.95);
  EXPECT_EQ(c.intensity, 0.0);
  EXPECT_EQ(c.ci.lower, 0.0);
  EXPECT_GT(c.ci.upper, 3.688879 / 0.5);  // wider than with p known exactly
  EXPECT_TRUE(std::isfinite(c.ci.upper));
}

TEST(MakeDetection, RefusesProbabilityOutsideUnitInterval) {
  for (const double p : {0.0, -0.1, 1.0001, std::nan(""), std::numeric_limits<double>::infinity()}) {
    try {
      (void)make_detection(p, 0.0, "--detection-prob");
      ADD_FAILURE() << "accepted p = " << p;
    } catch (const InputError& e) {
      EXPECT_NE(std::string(e.what()).find("outside (0, 1]"), std::string::npos) << e.what();
    }
  }
  EXPECT_NO_THROW((void)make_detection(1.0, 0.0, "x"));
  EXPECT_THROW((void)make_detection(0.5, -0.1, "x"), InputError);
}

TEST(DetectionTable, UnlistedSpeciesNeedsFallback) {
  const auto table = DetectionTable::by_species({{"hazel", {0.9, 0.03}}}, std::nullopt, "p.csv");
  EXPECT_EQ(table.for_species("hazel").probability, 0.9);
  try {
    (void)table.for_species("birch");
    ADD_FAILURE();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("p.csv: no detection probability for species 'birch'"), std::string::npos);
  }
  const auto with_fallback = DetectionTable::by_species({{"hazel", {0.9, 0.03}}}, Detection{0.7, 0.0}, "p.csv");
  EXPECT_EQ(with_fallback.for_species("birch").probability, 0.7);
  EXPECT_FALSE(with_fallback.is_certain());
  EXPECT_TRUE(DetectionTable().is_certain());
}

}  // namespace
}  // namespace stipple
