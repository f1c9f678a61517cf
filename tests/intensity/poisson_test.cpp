#include "stipple/intensity/poisson.hpp"

#include <cmath>

#include <gtest/gtest.h>

#include "stipple/error.hpp"

namespace stipple {
namespace {

struct GarwoodRow {
  std::uint64_t x;
  double lower95, upper95, lower90, upper90;
};

// Source: Garwood F. (1936) Biometrika 28:437-442; values as tabulated in
// ../shared/REFERENCES.md section 1 (recomputed with SciPy chi2.ppf), compared to 1e-6.
const GarwoodRow kGarwood[] = {
    {0, 0.0, 3.688879, 0.0, 2.995732},
    {1, 0.025318, 5.571643, 0.051293, 4.743865},
    {2, 0.242209, 7.224688, 0.355362, 6.295794},
    {3, 0.618672, 8.767273, 0.817691, 7.753657},
    {5, 1.623486, 11.668332, 1.970150, 10.513035},
    {10, 4.795389, 18.390356, 5.425406, 16.962219},
    {20, 12.216520, 30.888378, 13.254652, 29.062019},
    {31, 21.062996, 44.002026, 22.444512, 41.837630},
    {50, 37.110964, 65.918767, 38.964733, 63.287074},
};

TEST(GarwoodInterval, MatchesPublishedTable) {
  for (const auto& row : kGarwood) {
    const Interval ci95 = garwood_interval(row.x, 0.95);
    EXPECT_NEAR(ci95.lower, row.lower95, 1e-6) << "x = " << row.x;
    EXPECT_NEAR(ci95.upper, row.upper95, 1e-6) << "x = " << row.x;
    const Interval ci90 = garwood_interval(row.x, 0.90);
    EXPECT_NEAR(ci90.lower, row.lower90, 1e-6) << "x = " << row.x;
    EXPECT_NEAR(ci90.upper, row.upper90, 1e-6) << "x = " << row.x;
  }
}

TEST(GarwoodInterval, ZeroCountUpperIsMinusLogHalfAlpha) {
  // Source: REFERENCES.md section 1: x = 0, U95 = -ln 0.025.
  EXPECT_NEAR(garwood_interval(0, 0.95).upper, -std::log(0.025), 1e-12);
}

TEST(GarwoodInterval, RefusesConfidenceOutsideUnitInterval) {
  EXPECT_THROW((void)garwood_interval(3, 1.0), InputError);
  EXPECT_THROW((void)garwood_interval(3, 0.0), InputError);
  EXPECT_THROW((void)garwood_interval(3, -0.5), InputError);
}

TEST(AreaUnit, ParsesAndScales) {
  EXPECT_EQ(square_metres_per(parse_area_unit("ha")), 1e4);
  EXPECT_EQ(square_metres_per(parse_area_unit("km2")), 1e6);
  EXPECT_EQ(square_metres_per(parse_area_unit("m2")), 1.0);
  EXPECT_EQ(unit_name(AreaUnit::hectare), "ha");
  EXPECT_THROW((void)parse_area_unit("acre"), InputError);
}

}  // namespace
}  // namespace stipple
