// The readers fill InputFacts, the value reports take: labels, CRS, window kind.

#include "stipple/input_facts.hpp"

#include <gtest/gtest.h>

#include "stipple/io/reader.hpp"
#include "support.hpp"

namespace stipple {
namespace {

TEST(InputFacts, TheSurveyReaderFillsThemForPlotsAndForAModelBasedWindow) {
  SurveyReadOptions o;
  o.sightings = SourceSpec{test::sample("reserve.gpkg"), std::string("sightings")};
  o.plots = SourceSpec{test::sample("reserve.gpkg"), std::string("plots")};
  const LoadedSurvey plots = load_survey(o);
  const InputFacts& facts = plots;  // a LoadedSurvey is the facts of its reading
  EXPECT_EQ(facts.crs.code, "EPSG:32630");
  EXPECT_NE(facts.sightings_label.find("layer 'sightings'"), std::string::npos);
  EXPECT_NE(facts.plots_label.find("layer 'plots'"), std::string::npos);
  EXPECT_TRUE(facts.transects_label.empty());
  EXPECT_FALSE(facts.model_based_window);
  EXPECT_LT(facts.crs.max_area_error, 1e-3);
  o.plots.reset();
  o.window = WindowMode::convex_hull;
  const LoadedSurvey hull = load_survey(o);
  EXPECT_TRUE(hull.model_based_window);
  EXPECT_TRUE(hull.plots_label.empty());
  EXPECT_FALSE(hull.warnings.empty());  // a model-based window is said to be one
}

}  // namespace
}  // namespace stipple
