// The batch layer as a library: typed results, season pooling and failure isolation.

#include "stipple/batch/batch.hpp"

#include <cmath>
#include <filesystem>
#include <fstream>

#include <gtest/gtest.h>

#include "stipple/report/tables.hpp"
#include "support.hpp"

namespace fs = std::filesystem;

namespace stipple {
namespace {

BatchOptions density_only() {
  BatchOptions options;
  options.run_randomness = false;
  options.figures = false;
  options.threads = 2;
  return options;
}

// The season pooled from the four files equals estimate_density over the same four plots
// read as one survey (reserve.gpkg holds the plots and sightings of season/).
TEST(RunBatch, PoolingEqualsDensityOverAllPlots) {
  test::TempDir out;
  const std::vector<BatchInput> inputs = discover_inputs(test::sample("season"), "*.gpkg", "");
  ASSERT_EQ(inputs.size(), 4u);
  const BatchSummary summary = run_batch(inputs, density_only(), out.file("o"), {}, {});
  ASSERT_TRUE(summary.report.pooled.has_value());
  SurveyReadOptions read;
  read.sightings = SourceSpec{test::sample("reserve.gpkg"), std::nullopt};
  read.plots = SourceSpec{test::sample("reserve.gpkg"), std::nullopt};
  const DensityResult all = estimate_density(load_survey(read).survey, DensityOptions{});
  const DensityResult& pooled = *summary.report.pooled;
  ASSERT_EQ(pooled.pooled.size(), all.pooled.size());
  for (std::size_t i = 0; i < all.pooled.size(); ++i) {
    EXPECT_EQ(pooled.pooled[i].species, all.pooled[i].species);
    EXPECT_EQ(pooled.pooled[i].count, all.pooled[i].count);
    EXPECT_EQ(pooled.pooled[i].plots, 4u);
    EXPECT_NEAR(pooled.pooled[i].intensity, all.pooled[i].intensity, 1e-12 * all.pooled[i].intensity);
    EXPECT_NEAR(pooled.pooled[i].ci.lower, all.pooled[i].ci.lower, 1e-12 * all.pooled[i].ci.lower);
    EXPECT_NEAR(pooled.pooled[i].homogeneity->chi_square.statistic, all.pooled[i].homogeneity->chi_square.statistic,
                1e-9);
  }
  // Typed rows for the report: one per plot x species and all together, in input order.
  EXPECT_EQ(summary.report.densities.size(), 20u);
  EXPECT_EQ(summary.report.densities.front().file, "burn.gpkg");
  EXPECT_EQ(summary.report.run.crs.empty(), false);
  // The folder reads back into the same typed content.
  const SeasonReport loaded = load_batch_folder(out.file("o"));
  ASSERT_EQ(loaded.densities.size(), summary.report.densities.size());
  for (std::size_t i = 0; i < loaded.densities.size(); ++i) {
    EXPECT_EQ(loaded.densities[i].estimate.count, summary.report.densities[i].estimate.count);
    EXPECT_EQ(loaded.densities[i].estimate.intensity,
              summary.report.densities[i].estimate.intensity);  // round-trip numbers
  }
  ASSERT_TRUE(loaded.pooled.has_value());
  EXPECT_EQ(loaded.pooled->pooled.back().corrected.ci.upper, pooled.pooled.back().corrected.ci.upper);
}

// A broken file fails alone; the others' rows and the pooling go on without it.
TEST(RunBatch, AFailingFileIsIsolated) {
  test::TempDir in;
  fs::copy_file(test::sample("season/north.gpkg"), in.path() / "north.gpkg");
  (void)in.write("broken.gpkg", "not a GeoPackage");
  test::TempDir out;
  const BatchSummary summary =
      run_batch(discover_inputs(in.path().string(), "*.gpkg", ""), density_only(), out.file("o"), {}, {});
  EXPECT_EQ(summary.failed, 1u);
  ASSERT_EQ(summary.report.inputs.size(), 2u);
  EXPECT_EQ(summary.report.inputs[0].status, "failed");
  EXPECT_FALSE(summary.report.inputs[0].reason.empty());
  EXPECT_EQ(summary.report.inputs[1].status, "ok");
  EXPECT_EQ(summary.report.pooled->pooled.back().plots, 1u);
}

// The equal-columns rule: a batch table is the single command's table with `file` in front.
TEST(Tables, BatchHeadersAreTheCommandHeadersWithAFileColumn) {
  for (const Table& t : {density_rows({}), randomness_rows({}), transect_rows({}), interaction_rows({})}) {
    const std::string single = csv_text(t);
    EXPECT_EQ(csv_header_with_file(t), "file," + single);  // an empty table is its header line
  }
}

}  // namespace
}  // namespace stipple
