// The tables module: CSV text by RFC 4180 (quote fields holding commas, quotes or line
// breaks; double a quote) and the `file` column batch adds in front.

#include "stipple/report/tables.hpp"

#include <gtest/gtest.h>

namespace stipple {
namespace {

TEST(Tables, CsvQuotesByRfc4180) {
  Table t;
  t.columns = {"plot", "species", "count"};
  t.rows = {{"north", "wood ant", "12"}, {"a,b", "say \"hi\"", ""}, {"two\nlines", "x", "1"}};
  EXPECT_EQ(csv_text(t),
            "plot,species,count\n"
            "north,wood ant,12\n"
            "\"a,b\",\"say \"\"hi\"\"\",\n"
            "\"two\nlines\",x,1\n");
}

TEST(Tables, BatchAddsTheFileInFrontOfTheSameColumns) {
  Table t;
  t.columns = {"plot", "count"};
  t.rows = {{"north", "12"}, {"south", "3"}};
  EXPECT_EQ(csv_header_with_file(t), "file,plot,count\n");
  EXPECT_EQ(csv_rows_with_file(t, "my, file.gpkg"), "\"my, file.gpkg\",north,12\n\"my, file.gpkg\",south,3\n");
}

TEST(Tables, DensityRowsHaveOneRowPerEstimateAndPooledSpecies) {
  DensityResult r;
  DensityEstimate e;
  e.plot = "north";
  e.species = "birch";
  e.count = 10;
  e.area_in_unit = 1.0;
  e.intensity = 10.0;
  r.estimates = {e};
  PooledEstimate p;
  p.species = "birch";
  p.plots = 1;
  p.count = 10;
  r.pooled = {p};
  const Table t = density_rows(r);
  ASSERT_EQ(t.rows.size(), 2u);
  for (const auto& row : t.rows) EXPECT_EQ(row.size(), t.columns.size());
  EXPECT_EQ(t.columns.front(), "scope");
  EXPECT_EQ(t.rows[0][0], "plot");
  EXPECT_EQ(t.rows[1][0], "pooled");
}

}  // namespace
}  // namespace stipple
