// stipple::version() is the project version CMake was given (project(stipple VERSION ...)).

#include "stipple/version.hpp"

#include <algorithm>

#include <gtest/gtest.h>

namespace stipple {
namespace {

TEST(Version, IsTheProjectVersionOfCMakeLists) {
  EXPECT_EQ(version(), STIPPLE_TEST_PROJECT_VERSION);
  EXPECT_EQ(std::count(version().begin(), version().end(), '.'), 2);
}

}  // namespace
}  // namespace stipple
