#include "stipple/format.hpp"

#include <charconv>
#include <clocale>
#include <cmath>
#include <string>

#include <gtest/gtest.h>

namespace stipple {
namespace {

// The test main sets a decimal-comma locale where available: these must still print '.'.
// Locale-independent parse of a whole field (std::from_chars; strtod follows the C locale
// and refuses subnormals).
double read_double(const std::string& text) {
  double value = 0.0;
  const auto result = std::from_chars(text.data(), text.data() + text.size(), value);
  EXPECT_EQ(result.ptr, text.data() + text.size()) << text;
  return value;
}

TEST(Format, TheSuiteRunsUnderADecimalCommaLocale) {
  // The test main switches to de_DE.UTF-8 (scripts/install-deps.sh generates it); without
  // it the locale tests below prove nothing, and this says so instead of passing.
  const char* point = std::localeconv()->decimal_point;
  if (point == nullptr || std::string(point) != ",")
    GTEST_SKIP() << "no decimal-comma locale installed: the locale checks ran in the C locale "
                    "(scripts/install-deps.sh generates de_DE.UTF-8)";
  EXPECT_EQ(std::to_string(1.5), "1,500000");  // the C library does follow it
  EXPECT_EQ(format_general(1.5), "1.5");       // stipple does not
}

TEST(Format, IgnoresTheLocaleDecimalSeparator) {
  EXPECT_EQ(format_fixed(1.25, 2), "1.25");
  EXPECT_EQ(format_general(1.5), "1.5");
  EXPECT_EQ(format_significant(0.012345, 3), "0.0123");
  EXPECT_EQ(format_significant(123.456, 4), "123.5");
  EXPECT_EQ(format_significant(0.99999999, 4), "1.000");
  EXPECT_EQ(format_p_value(0.00001), "<0.0001");
  EXPECT_EQ(format_p_value(0.3219583), "0.322");
}

TEST(Format, RoundTripFormReadsBackTheSameDouble) {
  // C++17 [charconv]: std::to_chars without a precision gives the shortest text that
  // from_chars reads back as the same value.
  for (const double x : {1.0 / 3.0, 2.0 / 3.0 * 1e-7, 123456.789012345678, 5e-324, 1.7976931348623157e308, -0.1, 0.95,
                         55.59999999999999}) {
    const std::string text = format_round_trip(x);
    EXPECT_EQ(read_double(text), x) << text;
    EXPECT_EQ(text.find(','), std::string::npos);
  }
  EXPECT_EQ(format_round_trip(0.5), "0.5");
  EXPECT_EQ(format_round_trip(std::nan("")), "");
}

TEST(Format, WholeAndFiniteNumbersAreParsedStrictly) {
  // Common practice: a count is digits only; "-1" must never wrap to 2^64 - 1.
  EXPECT_EQ(parse_whole_number("999"), 999u);
  EXPECT_EQ(parse_whole_number("18446744073709551615"), 18446744073709551615ULL);
  for (const char* bad : {"", "-1", "+3", "1e3", "2.5", " 7", "18446744073709551616", "0x10"})
    EXPECT_FALSE(parse_whole_number(bad)) << bad;
  EXPECT_EQ(parse_finite_number("0.95"), 0.95);
  EXPECT_EQ(parse_finite_number("-3"), -3.0);
  for (const char* bad : {"", "nan", "inf", "1,5", "12m", "1e999"}) EXPECT_FALSE(parse_finite_number(bad)) << bad;
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
