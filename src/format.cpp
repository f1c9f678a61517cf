#include "stipple/format.hpp"

#include <algorithm>
#include <array>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstdio>
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

namespace {

// Columns on a terminal: UTF-8 code points (continuation bytes 10xxxxxx do not count).
std::size_t display_width(const std::string& text) {
  std::size_t n = 0;
  for (const char c : text) n += (static_cast<unsigned char>(c) & 0xC0u) != 0x80u ? 1u : 0u;
  return n;
}

}  // namespace

std::string TextTable::render(const std::string& indent) const {
  std::vector<std::size_t> width(header_.size(), 0);
  const auto measure = [&](const std::vector<std::string>& row) {
    for (std::size_t c = 0; c < row.size(); ++c) width[c] = std::max(width[c], display_width(row[c]));
  };
  measure(header_);
  for (const auto& row : rows_) measure(row);
  std::ostringstream out;
  out.imbue(std::locale::classic());  // numbers never follow a host's locale
  const auto emit = [&](const std::vector<std::string>& row) {
    std::string line = indent;
    for (std::size_t c = 0; c < row.size(); ++c) {
      const std::string pad(width[c] - display_width(row[c]), ' ');
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

namespace {

std::string short_hash(const std::string& text) {
  std::uint64_t hash = 14695981039346656037ULL;  // FNV-1a, 64 bit
  for (const char c : text) {
    hash ^= static_cast<unsigned char>(c);
    hash *= 1099511628211ULL;
  }
  char digits[17];
  std::snprintf(digits, sizeof digits, "%016llx", static_cast<unsigned long long>(hash));
  return std::string(digits, 10);
}

}  // namespace

std::string file_name_safe(const std::string& text) {
  constexpr std::size_t longest = 60;
  std::string out;
  bool changed = false;
  for (const char c : text) {
    const auto u = static_cast<unsigned char>(c);
    const bool kept = u < 0x80 && (std::isalnum(u) || c == '-' || c == '_' || c == '.');
    out += kept ? c : '_';
    changed = changed || !kept;
  }
  if (!changed && !out.empty() && out.front() != '.' && out.size() <= longest) return out;
  // A hash of the original text: enough to tell apart the names of one survey.
  if (out.size() > longest) out.resize(longest);
  if (!out.empty() && out.front() == '.') out.front() = '_';
  return out + (out.empty() ? "" : "-") + short_hash(text);
}

std::string FileNamer::stem(const std::string& prefix, const std::vector<std::string>& parts) {
  std::string key = prefix;
  std::string name = prefix;
  for (const auto& part : parts) {
    key += '\x1f' + part;
    name += "-" + file_name_safe(part);
  }
  for (const auto& [used_name, used_key] : used_)
    if (used_key == key) return used_name;
  bool taken = name.size() > 150;
  for (const auto& entry : used_) taken = taken || entry.first == name;
  if (taken) {
    if (name.size() > 139) name.resize(139);
    name += "-" + short_hash(key);
  }
  used_.emplace_back(name, key);
  return name;
}

std::string repair_utf8(std::string_view text, std::size_t* replaced) {
  std::string out;
  out.reserve(text.size());
  std::size_t bad = 0;
  const auto byte = [&](std::size_t i) { return static_cast<unsigned char>(text[i]); };
  std::size_t i = 0;
  while (i < text.size()) {
    const unsigned char lead = byte(i);
    std::size_t length = 0;
    std::uint32_t low = 0;
    if (lead < 0x80) {
      out += static_cast<char>(lead);
      ++i;
      continue;
    } else if (lead >= 0xC2 && lead <= 0xDF) {
      length = 2;
      low = 0x80;
    } else if (lead >= 0xE0 && lead <= 0xEF) {
      length = 3;
      low = 0x800;
    } else if (lead >= 0xF0 && lead <= 0xF4) {
      length = 4;
      low = 0x10000;
    }
    bool ok = length > 0 && i + length <= text.size();
    std::uint32_t code = length == 2 ? lead & 0x1Fu : length == 3 ? lead & 0x0Fu : lead & 0x07u;
    for (std::size_t k = 1; ok && k < length; ++k) {
      ok = (byte(i + k) & 0xC0u) == 0x80u;
      code = (code << 6) | (byte(i + k) & 0x3Fu);
    }
    ok = ok && code >= low && code <= 0x10FFFF && !(code >= 0xD800 && code <= 0xDFFF);
    if (ok) {
      out.append(text.substr(i, length));
      i += length;
    } else {
      out += "\xEF\xBF\xBD";
      ++bad;
      ++i;
    }
  }
  if (replaced) *replaced = bad;
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
