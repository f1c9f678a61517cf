#include <algorithm>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <regex>
#include <string_view>

#include "stipple/batch/batch.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace fs = std::filesystem;

namespace stipple {

namespace {

// Shell-style glob with * and ?; `capture` receives what the first * matched.
bool glob_match(const std::string& pattern, const std::string& text, std::string* capture) {
  std::string expression;
  bool first_star = true;
  for (const char c : pattern) {
    if (c == '*') {
      expression += first_star ? "(.*)" : ".*";
      first_star = false;
    } else if (c == '?') {
      expression += '.';
    } else if (std::string("\\^$.|+()[]{}").find(c) != std::string::npos) {
      expression += '\\';
      expression += c;
    } else {
      expression += c;
    }
  }
  std::smatch match;
  if (!std::regex_match(text, match, std::regex(expression))) return false;
  if (capture && match.size() > 1) *capture = match[1].str();
  return true;
}

// A file whose extension names a vector format: an input, never a list of inputs.
bool is_vector_file(const std::string& path) {
  std::string ext = fs::path(path).extension().string();
  for (char& c : ext) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  for (const char* known : {".csv", ".gpkg", ".shp", ".dbf", ".geojson", ".json", ".kml", ".gpx", ".gml", ".fgb"})
    if (ext == known) return true;
  return false;
}

}  // namespace

std::vector<BatchInput> discover_inputs(const std::string& root, const std::string& pattern,
                                        const std::string& plots_template) {
  std::error_code ec;
  if (!fs::exists(root, ec)) throw InputError(root + ": no such file or folder");
  std::vector<BatchInput> inputs;
  const auto plots_for = [&](const fs::path& file, const std::string& capture) {
    if (plots_template.empty()) return file.string();
    std::string name = plots_template;
    const auto at = name.find("{*}");
    if (at != std::string::npos) name.replace(at, 3, capture);
    return (file.parent_path() / name).string();
  };
  if (fs::is_directory(root, ec)) {
    for (auto it = fs::recursive_directory_iterator(root, ec); it != fs::recursive_directory_iterator(); ++it) {
      if (!it->is_regular_file(ec)) continue;
      std::string capture;
      const std::string file_name = it->path().filename().string();
      if (!glob_match(pattern, file_name, &capture)) continue;
      inputs.push_back(
          {it->path().string(), fs::relative(it->path(), root, ec).generic_string(), plots_for(it->path(), capture)});
    }
  } else if (is_vector_file(root)) {
    // One survey file given directly: a batch of one.
    const fs::path path(root);
    inputs.push_back({path.string(), path.filename().string(), plots_for(path, path.stem().string())});
  } else {
    std::ifstream list(root);
    std::string line;
    const fs::path base = fs::path(root).parent_path();
    while (std::getline(list, line)) {
      const auto first = line.find_first_not_of(" \t\r");
      if (first == std::string::npos || line[first] == '#') continue;
      const auto last = line.find_last_not_of(" \t\r");
      const std::string entry = line.substr(first, last - first + 1);
      const fs::path path = fs::path(entry).is_absolute() ? fs::path(entry) : base / entry;
      std::string capture;
      glob_match(pattern, path.filename().string(), &capture);
      inputs.push_back({path.string(), entry, plots_for(path, capture)});
    }
  }
  if (inputs.empty()) throw InputError(root + ": no input matches '" + pattern + "'");
  std::sort(inputs.begin(), inputs.end(), [](const BatchInput& a, const BatchInput& b) { return a.name < b.name; });
  return inputs;
}

std::vector<BatchInput> shard(const std::vector<BatchInput>& inputs, std::size_t k, std::size_t n) {
  std::vector<BatchInput> out;
  for (std::size_t i = 0; i < inputs.size(); ++i)
    if (i % n == k - 1) out.push_back(inputs[i]);
  return out;
}

std::pair<std::size_t, std::size_t> parse_shard(const std::string& text) {
  const auto slash = text.find('/');
  try {
    if (slash == std::string::npos) throw std::invalid_argument(text);
    const auto whole = [](std::string_view digits) {
      const auto value = parse_whole_number(digits);
      if (!value) throw std::invalid_argument(std::string(digits));
      return static_cast<std::size_t>(*value);
    };
    const std::size_t k = whole(std::string_view(text).substr(0, slash));
    const std::size_t n = whole(std::string_view(text).substr(slash + 1));
    if (k < 1 || n < 1 || k > n) throw std::invalid_argument(text);
    return {k, n};
  } catch (const std::exception&) {
    throw InputError("shard must be K/N with 1 <= K <= N (got '" + text + "')", {"shard"});
  }
}

}  // namespace stipple
