// Points and sightings: plain values in metres of the analysis CRS.

#include "stipple/geometry/point.hpp"

#include <gtest/gtest.h>

namespace stipple {
namespace {

TEST(Point, StartsAtTheOriginAndKeepsItsCoordinates) {
  const Point origin;
  EXPECT_EQ(origin.x, 0.0);
  EXPECT_EQ(origin.y, 0.0);
  const Sighting s{{512010.5, 6290010.25}, 17, "juniper", std::string("north")};
  EXPECT_EQ(s.location.x, 512010.5);
  EXPECT_EQ(s.location.y, 6290010.25);
  EXPECT_EQ(s.feature_id, 17);
  EXPECT_EQ(s.species, "juniper");
  ASSERT_TRUE(s.plot);
  EXPECT_EQ(*s.plot, "north");
  EXPECT_FALSE(Sighting{}.plot);
}

}  // namespace
}  // namespace stipple
