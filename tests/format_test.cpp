#include "stipple/format.hpp"

#include <gtest/gtest.h>

namespace stipple {
namespace {

// The test main sets a decimal-comma locale where available: these must still print '.'.
TEST(Format, IgnoresTheLocaleDecimalSeparator) {
  EXPECT_EQ(format_fixed(1.25, 2), "1.25");
  EXPECT_EQ(format_general(1.5), "1.5");
  EXPECT_EQ(format_significant(0.012345, 3), "0.0123");
  EXPECT_EQ(format_significant(123.456, 4), "123.5");
  EXPECT_EQ(format_significant(0.99999999, 4), "1.000");
  EXPECT_EQ(format_p_value(0.00001), "<0.0001");
  EXPECT_EQ(format_p_value(0.3219583), "0.322");
}

TEST(Format, CsvFieldsAreQuotedWhenNeeded) {
  EXPECT_EQ(csv_field("oak"), "oak");
  EXPECT_EQ(csv_field("a,b"), "\"a,b\"");
  EXPECT_EQ(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
}

TEST(TextTable, PadsColumns) {
  TextTable table({"plot", "count"});
  table.add_row({"north", "5"});
  table.add_row({"p", "120"});
  EXPECT_EQ(table.render(""), "plot   count\nnorth      5\np        120\n");
}

}  // namespace
}  // namespace stipple
