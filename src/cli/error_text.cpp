#include "error_text.hpp"

#include <cctype>
#include <map>

namespace stipple::cli {

std::string flag_of(const std::string& parameter) {
  static const std::map<std::string, std::string> flags{
      {"adjustments", "--adjustments"},
      {"angle_field", "--angle-field"},
      {"assignment", "--assign"},
      {"assume_crs", "--assume-crs"},
      {"bandwidth_m", "--bandwidth"},
      {"bin_edges", "--bins"},
      {"confidence", "--confidence"},
      {"detection", "--detection"},
      {"detection_probability", "--detection-prob"},
      {"distance_field", "--distance-field"},
      {"edge_correction", "--edge-correction"},
      {"effort_field", "--effort-field"},
      {"encoding", "--encoding"},
      {"keys", "--models"},
      {"lines", "--lines"},
      {"lines.layer", "--transects-layer"},
      {"max_offset_m", "--max-offset"},
      {"pixel_m", "--pixel"},
      {"plot_field", "--plot-field"},
      {"plots", "--plots"},
      {"plots.layer", "--plots-layer"},
      {"quadrats", "--quadrats"},
      {"repair_geometry", "--repair-geometry"},
      {"shard", "--shard"},
      {"sighting_plot_field", "--sightings-plot-field"},
      {"sighting_transect_field", "--sightings-transect-field"},
      {"sightings.layer", "--layer"},
      {"simulations", "--simulations"},
      {"size_field", "--size-field"},
      {"species_field", "--species-field"},
      {"stations", "--stations"},
      {"stations.layer", "--transects-layer"},
      {"stratum_field", "--stratum-field"},
      {"study_area.layer", "--study-area-layer"},
      {"target_crs", "--crs"},
      {"transect_field", "--transect-field"},
      {"truncation", "--truncate"},
      {"unit", "--unit"},
      {"visits_field", "--visits-field"},
      {"window", "--window"},
      {"x_field", "--x-field"},
      {"y_field", "--y-field"},
  };
  const auto found = flags.find(parameter);
  return found == flags.end() ? std::string() : found->second;
}

namespace {

bool word_char(char c) {
  return std::isalnum(static_cast<unsigned char>(c)) != 0 || c == '_' || c == '.' || c == '-';
}

// Position of the first mention of `word` in `text` that is a whole word and not inside
// single quotes (quoted text is the user's: a field or file name). A quote opens after a
// non-word character and closes before one, so the apostrophe of "sightings' field" is
// not a quote.
std::size_t first_mention(const std::string& text, const std::string& word) {
  bool quoted = false;
  for (std::size_t i = 0; i + word.size() <= text.size(); ++i) {
    if (text[i] == '\'') {
      const bool after_word = i > 0 && word_char(text[i - 1]);
      const bool before_word = i + 1 < text.size() && word_char(text[i + 1]);
      if (!quoted && !after_word)
        quoted = true;
      else if (quoted && !before_word)
        quoted = false;
      continue;
    }
    if (quoted || text.compare(i, word.size(), word) != 0) continue;
    const bool starts = i == 0 || !word_char(text[i - 1]);
    const std::size_t end = i + word.size();
    // A trailing full stop ends a sentence, not the word.
    const bool ends = end == text.size() || !word_char(text[end]) ||
                      (text[end] == '.' && (end + 1 == text.size() || !word_char(text[end + 1])));
    if (starts && ends) return i;
  }
  return std::string::npos;
}

}  // namespace

std::string error_text(const Error& error) {
  std::string text = error.what();
  for (const auto& parameter : error.parameters()) {
    const std::string flag = flag_of(parameter);
    if (flag.empty()) continue;
    const std::size_t at = first_mention(text, parameter);
    if (at != std::string::npos) text.replace(at, parameter.size(), flag);
  }
  return text;
}

}  // namespace stipple::cli
