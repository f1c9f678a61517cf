#pragma once
/// Locale-independent number formatting and plain-text tables, shared by every module.

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace stipple {

/// `value` with `decimals` digits after the point, always with '.' as separator.
[[nodiscard]] std::string format_fixed(double value, int decimals);
/// `value` with about `digits` significant digits (fixed notation for readable ranges).
[[nodiscard]] std::string format_significant(double value, int digits);
/// `value` in the shortest general form ("1.5", "0.001", "2e-07"), '.' as separator.
[[nodiscard]] std::string format_general(double value);
/// `value` in the shortest form that reads back as the same double (std::to_chars), '.' as
/// separator; empty for NaN and infinities. Every number in a CSV output goes through it.
[[nodiscard]] std::string format_round_trip(double value);
/// The whole number written in `text` with decimal digits only (no sign, space, point or
/// exponent), or nothing when it is not one or does not fit 64 bits.
[[nodiscard]] std::optional<std::uint64_t> parse_whole_number(std::string_view text);
/// The finite number written in the whole of `text` ('.' decimal point, any locale), or
/// nothing (NaN and infinities included).
[[nodiscard]] std::optional<double> parse_finite_number(std::string_view text);
/// A p-value for people: 3 significant digits, "<0.0001" below that.
[[nodiscard]] std::string format_p_value(double p);

/// A plain-text table with a header, columns padded to their widest cell.
/// Columns whose header is listed as left-aligned are padded on the right.
class TextTable {
 public:
  explicit TextTable(std::vector<std::string> header, std::size_t left_aligned_columns = 1);
  void add_row(std::vector<std::string> row);
  [[nodiscard]] std::string render(const std::string& indent = "  ") const;

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<std::string>> rows_;
  std::size_t left_aligned_;
};

/// `text` with every character other than letters, digits, '-', '_' and '.' replaced by '_',
/// for file names made from plot and species names. When anything was replaced, or the text
/// is empty, starts with '.' or is longer than 60 bytes, it is shortened and a short hash of
/// the whole text is appended, so different names never give the same file name ("a/b" and
/// "a_b" differ) and names stay far below file-name length limits.
[[nodiscard]] std::string file_name_safe(const std::string& text);

/// File names for one output folder built from several names (plot, species, ...): the
/// file_name_safe parts joined by '-', made unique within the folder (two different name
/// lists that would give one file name get a hash of the names appended), at most 150
/// bytes, and listed for a manifest.
class FileNamer {
 public:
  /// The stem for `parts` after `prefix` ("L" + {"north", "birch"} -> "L-north-birch");
  /// the same parts always give the same stem.
  [[nodiscard]] std::string stem(const std::string& prefix, const std::vector<std::string>& parts);

 private:
  std::vector<std::pair<std::string, std::string>> used_;  // stem, joined parts
};

/// `text` as valid UTF-8: every byte that does not start a well-formed UTF-8 sequence
/// (overlong forms, surrogates and code points above U+10FFFF included) becomes U+FFFD.
/// `replaced`, when given, receives the number of replacements.
[[nodiscard]] std::string repair_utf8(std::string_view text, std::size_t* replaced = nullptr);

/// RFC 4180 quoting of one CSV field.
[[nodiscard]] std::string csv_field(const std::string& text);

}  // namespace stipple
