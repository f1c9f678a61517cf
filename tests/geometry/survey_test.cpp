#include "stipple/geometry/survey.hpp"

#include <gtest/gtest.h>

#include <boost/geometry.hpp>

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
    (void)assign_to_plots(std::vector<Sighting>{}, plots);
    FAIL();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("plots 'A' and 'B' overlap"), std::string::npos);
  }
  // Shared edges are fine.
  EXPECT_NO_THROW((void)assign_to_plots(std::vector<Sighting>{}, {Plot{"A", Window::rectangle(0, 0, 10, 10)},
                                                                  Plot{"B", Window::rectangle(10, 0, 20, 10)}}));
}

TEST(AssignToPlots, ThePlotIndexFindsWhatTestingEveryPlotFinds) {
  // 20 x 20 plots of 40 m with 10 m gaps, touching pairs in the last row, and points
  // everywhere including on shared edges and corners; reference: the first plot in input
  // order that Boost.Geometry's covered_by accepts.
  std::vector<Plot> plots;
  for (int i = 0; i < 400; ++i) {
    const double x0 = (i % 20) * 50.0;
    const double y0 = (i / 20) * 50.0;
    plots.push_back(Plot{"P" + std::to_string(i), Window::rectangle(x0, y0, x0 + 40.0, y0 + 40.0)});
  }
  plots.push_back(Plot{"T1", Window::rectangle(0, 1000, 40, 1040)});
  plots.push_back(Plot{"T2", Window::rectangle(40, 1000, 80, 1040)});  // shares the edge x = 40
  std::vector<Sighting> sightings;
  std::uint64_t state = 99;
  const auto uniform = [&state] {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    return static_cast<double>(state >> 11) / 9007199254740992.0;
  };
  std::int64_t id = 0;
  for (int i = 0; i < 20000; ++i)
    sightings.push_back(
        {{-20.0 + uniform() * 1040.0, -20.0 + uniform() * 1080.0}, ++id, i % 3 ? "vole" : "shrew", std::nullopt});
  for (const Point p : {Point{40, 1020}, Point{40, 1000}, Point{0, 0}, Point{40, 40}, Point{990, 990}})
    sightings.push_back({p, ++id, "vole", std::nullopt});
  const Survey s = assign_to_plots(sightings, plots);
  std::vector<std::vector<std::int64_t>> expected(plots.size());
  std::vector<std::int64_t> outside;
  for (const auto& sighting : sightings) {
    std::size_t found = plots.size();
    for (std::size_t k = 0; k < plots.size() && found == plots.size(); ++k)
      if (boost::geometry::covered_by(BgPoint(sighting.location.x, sighting.location.y), plots[k].window.shape()))
        found = k;
    if (found == plots.size())
      outside.push_back(sighting.feature_id);
    else
      expected[found].push_back(sighting.feature_id);
  }
  for (std::size_t k = 0; k < plots.size(); ++k) EXPECT_EQ(s.patterns()[k].feature_ids, expected[k]) << k;
  EXPECT_EQ(s.exclusions().outside_feature_ids, outside);
  EXPECT_EQ(s.patterns()[400].feature_ids.back(), id - 3);  // (40, 1000): T1 comes first
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
