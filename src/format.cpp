#include "stipple/format.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cctype>
#include <cmath>
#include <locale>
#include <sstream>

namespace stipple {

std::string format_fixed(double value, int decimals) {
  if (!std::isfinite(value)) return std::isnan(value) ? "nan" : (value > 0 ? "inf" : "-inf");
  std::ostringstream out;
  out.imbue(std::locale::classic());
  out.setf(std::ios::fixed);
  out.precision(decimals);
  out << value;
  return out.str();
}

std::string format_significant(double value, int digits) {
  if (!std::isfinite(value) || value == 0.0) return format_fixed(value, 0);
  int magnitude = static_cast<int>(std::floor(std::log10(std::abs(value))));
  // Rounding can carry into the next power of ten (0.99996 -> 1.000): measure after it.
  const double scale = std::pow(10.0, digits - 1 - magnitude);
  const double rounded = std::round(value * scale) / scale;
  if (rounded != 0.0) magnitude = static_cast<int>(std::floor(std::log10(std::abs(rounded))));
  const int decimals = std::clamp(digits - 1 - magnitude, 0, 12);
  return format_fixed(value, decimals);
}

std::string format_general(double value) {
  std::ostringstream out;
  out.imbue(std::locale::classic());
  out << value;
  return out.str();
}

std::string format_round_trip(double value) {
  if (!std::isfinite(value)) return {};
  std::array<char, 32> buffer{};
  const auto result = std::to_chars(buffer.data(), buffer.data() + buffer.size(), value);
  return std::string(buffer.data(), result.ptr);
}

std::optional<std::uint64_t> parse_whole_number(std::string_view text) {
  if (text.empty() || !std::all_of(text.begin(), text.end(), [](char c) { return c >= '0' && c <= '9'; }))
    return std::nullopt;
  std::uint64_t value = 0;
  const auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (error != std::errc() || end != text.data() + text.size()) return std::nullopt;
  return value;
}

std::optional<double> parse_finite_number(std::string_view text) {
  double value = 0.0;
  const auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || error != std::errc() || end != text.data() + text.size() || !std::isfinite(value))
    return std::nullopt;
  return value;
}

std::string format_p_value(double p) {
  if (p < 1e-4) return "<0.0001";
  return format_significant(p, 3);
}

TextTable::TextTable(std::vector<std::string> header, std::size_t left_aligned_columns)
    : header_(std::move(header)), left_aligned_(left_aligned_columns) {}

void TextTable::add_row(std::vector<std::string> row) {
  row.resize(header_.size());
  rows_.push_back(std::move(row));
}

std::string TextTable::render(const std::string& indent) const {
  std::vector<std::size_t> width(header_.size(), 0);
  const auto measure = [&](const std::vector<std::string>& row) {
    for (std::size_t c = 0; c < row.size(); ++c) width[c] = std::max(width[c], row[c].size());
  };
  measure(header_);
  for (const auto& row : rows_) measure(row);
  std::ostringstream out;
  const auto emit = [&](const std::vector<std::string>& row) {
    std::string line = indent;
    for (std::size_t c = 0; c < row.size(); ++c) {
      const std::string pad(width[c] - row[c].size(), ' ');
      line += c < left_aligned_ ? row[c] + pad : pad + row[c];
      if (c + 1 < row.size()) line += "  ";
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out << line << '\n';
  };
  emit(header_);
  for (const auto& row : rows_) emit(row);
  return out.str();
}

std::string file_name_safe(const std::string& text) {
  std::string out;
  for (const char c : text) {
    const auto u = static_cast<unsigned char>(c);
    out += (std::isalnum(u) || c == '-' || c == '_' || c == '.') ? c : '_';
  }
  return out;
}

std::string csv_field(const std::string& text) {
  if (text.find_first_of(",\"\n\r") == std::string::npos) return text;
  std::string quoted = "\"";
  for (const char c : text) {
    if (c == '"') quoted += '"';
    quoted += c;
  }
  return quoted + "\"";
}

}  // namespace stipple
