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
  EXPECT_EQ(s.patterns()[0].points.size(), 1u);
  EXPECT_EQ(s.patterns()[1].points.size(), 1u);
  ASSERT_EQ(s.exclusions().outside_feature_ids.size(), 1u);
  EXPECT_EQ(s.exclusions().outside_feature_ids[0], 3);
  EXPECT_EQ(s.species(), (std::vector<std::string>{"ash", "oak"}));
  EXPECT_FALSE(s.exclusions().assigned_by_attribute);
}

TEST(AssignToPlots, AttributeDecidesAndMismatchesAreReported) {
  const std::vector<Sighting> sightings{
      {{1, 1}, 1, "oak", std::string("A")},
      {{1, 1}, 2, "oak", std::string("B")},  // says B but lies in A: kept in B, reported
      {{1, 1}, 3, "oak", std::string("Z")},  // unknown plot: excluded, reported
  };
  const Survey s = assign_to_plots(sightings, two_plots());
  EXPECT_TRUE(s.exclusions().assigned_by_attribute);
  EXPECT_EQ(s.patterns()[0].points.size(), 1u);
  EXPECT_EQ(s.patterns()[1].points.size(), 1u);
  EXPECT_EQ(s.exclusions().off_window_feature_ids, (std::vector<std::int64_t>{2}));
  EXPECT_EQ(s.exclusions().unknown_plot_feature_ids, (std::vector<std::int64_t>{3}));
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

TEST(Survey, CanOnlyBeBuiltWhole) {
  const auto plots = two_plots();
  const auto pattern = [](std::vector<std::size_t> marks) {
    MarkedPattern p;
    for (std::size_t i = 0; i < marks.size(); ++i) {
      p.points.push_back({1.0 + static_cast<double>(i), 1.0});
      p.feature_ids.push_back(static_cast<std::int64_t>(i));
    }
    p.marks = std::move(marks);
    return p;
  };
  const std::vector<std::string> species{"ash", "oak"};
  EXPECT_NO_THROW((Survey{species, plots, {pattern({0, 1}), pattern({})}}));
  // One pattern per plot.
  EXPECT_THROW((Survey{species, plots, {pattern({0})}}), AnalysisError);
  // Every mark names a species (two here).
  EXPECT_THROW((Survey{species, plots, {pattern({0, 7}), pattern({})}}), AnalysisError);
  // A mark and a feature id for every point.
  MarkedPattern short_marks = pattern({0, 1});
  short_marks.marks.pop_back();
  EXPECT_THROW((Survey{species, plots, {short_marks, pattern({})}}), AnalysisError);
  MarkedPattern short_ids = pattern({0, 1});
  short_ids.feature_ids.pop_back();
  EXPECT_THROW((Survey{species, plots, {short_ids, pattern({})}}), AnalysisError);
  // Species sorted and distinct.
  EXPECT_THROW((Survey{{"oak", "ash"}, plots, {pattern({}), pattern({})}}), AnalysisError);
  EXPECT_THROW((Survey{{"oak", "oak"}, plots, {pattern({}), pattern({})}}), AnalysisError);
  // Plot ids distinct.
  auto twice = plots;
  twice[1].id = twice[0].id;
  EXPECT_THROW((Survey{species, twice, {pattern({}), pattern({})}}), AnalysisError);
}

TEST(Survey, WithPlotsKeepsTheChosenPlotsTheirPatternsAndTheExclusions) {
  std::vector<Sighting> sightings{
      {{1, 1}, 1, "oak", std::nullopt}, {{25, 5}, 2, "ash", std::nullopt}, {{500, 500}, 3, "ash", std::nullopt}};
  Survey whole = assign_to_plots(sightings, two_plots());
  const std::string second_id = whole.plots()[1].id;
  const Survey second = std::move(whole).with_plots({1});
  ASSERT_EQ(second.plots().size(), 1U);
  EXPECT_EQ(second.plots()[0].id, second_id);
  ASSERT_EQ(second.patterns()[0].feature_ids.size(), 1U);
  EXPECT_EQ(second.patterns()[0].feature_ids[0], 2);
  EXPECT_EQ(second.species(), (std::vector<std::string>{"ash", "oak"}));
  EXPECT_EQ(second.exclusions().outside_feature_ids, (std::vector<std::int64_t>{3}));
  Survey again = assign_to_plots(sightings, two_plots());
  EXPECT_THROW(static_cast<void>(std::move(again).with_plots({0, 0})), AnalysisError);
}

}  // namespace
}  // namespace stipple
