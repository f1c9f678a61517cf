#include "stipple/geometry/survey.hpp"

#include <gtest/gtest.h>

#include "stipple/error.hpp"
#include "stipple/intensity/density.hpp"

namespace stipple {
namespace {

std::vector<Plot> two_plots() {
  return {Plot{"A", Window::rectangle(0, 0, 10, 10)}, Plot{"B", Window::rectangle(20, 0, 30, 10)}};
}

TEST(AssignToPlots, PointInPolygonAndExclusionsAreListed) {
  const std::vector<Sighting> sightings{
      {{1, 1}, 1, "oak", std::nullopt},
      {{25, 5}, 2, "ash", std::nullopt},
      {{15, 5}, 3, "oak", std::nullopt},  // between the plots
  };
  const Survey s = assign_to_plots(sightings, two_plots());
  EXPECT_EQ(s.patterns[0].points.size(), 1u);
  EXPECT_EQ(s.patterns[1].points.size(), 1u);
  ASSERT_EQ(s.outside_feature_ids.size(), 1u);
  EXPECT_EQ(s.outside_feature_ids[0], 3);
  EXPECT_EQ(s.species, (std::vector<std::string>{"ash", "oak"}));
  EXPECT_FALSE(s.assigned_by_attribute);
}

TEST(AssignToPlots, AttributeDecidesAndMismatchesAreReported) {
  const std::vector<Sighting> sightings{
      {{1, 1}, 1, "oak", std::string("A")},
      {{1, 1}, 2, "oak", std::string("B")},  // says B but lies in A: kept in B, reported
      {{1, 1}, 3, "oak", std::string("Z")},  // unknown plot: excluded, reported
  };
  const Survey s = assign_to_plots(sightings, two_plots());
  EXPECT_TRUE(s.assigned_by_attribute);
  EXPECT_EQ(s.patterns[0].points.size(), 1u);
  EXPECT_EQ(s.patterns[1].points.size(), 1u);
  EXPECT_EQ(s.off_window_feature_ids, (std::vector<std::int64_t>{2}));
  EXPECT_EQ(s.unknown_plot_feature_ids, (std::vector<std::int64_t>{3}));
  EXPECT_EQ(s.sighting_count(), 2u);
}

TEST(AssignToPlots, RefusesOverlappingPlots) {
  std::vector<Plot> plots{Plot{"A", Window::rectangle(0, 0, 10, 10)}, Plot{"B", Window::rectangle(5, 0, 15, 10)}};
  try {
    (void)assign_to_plots({}, plots);
    FAIL();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("plots 'A' and 'B' overlap"), std::string::npos);
  }
  // Shared edges are fine.
  EXPECT_NO_THROW((void)assign_to_plots(
      {}, {Plot{"A", Window::rectangle(0, 0, 10, 10)}, Plot{"B", Window::rectangle(10, 0, 20, 10)}}));
}

TEST(Survey, AnalysesRefuseASurveyPutTogetherHalfFormed) {
  std::vector<Sighting> sightings{{{1, 1}, 1, "oak", std::nullopt}, {{25, 5}, 2, "ash", std::nullopt}};
  const Survey whole = assign_to_plots(sightings, two_plots());
  EXPECT_NO_THROW(whole.check());
  Survey missing_pattern = whole;
  missing_pattern.patterns.pop_back();
  EXPECT_THROW(missing_pattern.check(), AnalysisError);
  Survey bad_mark = whole;
  bad_mark.patterns[0].marks[0] = 7;  // only two species
  EXPECT_THROW(bad_mark.check(), AnalysisError);
  EXPECT_THROW(static_cast<void>(estimate_density(bad_mark, DensityOptions{})), AnalysisError);
  Survey unsorted = whole;
  std::swap(unsorted.species[0], unsorted.species[1]);
  EXPECT_THROW(unsorted.check(), AnalysisError);
  Survey twice = whole;
  twice.plots[1].id = twice.plots[0].id;
  EXPECT_THROW(twice.check(), AnalysisError);
}

}  // namespace
}  // namespace stipple
