#pragma once
// Private helpers of the report module: how the input was read, shared by the density and
// randomness outputs.

#include <string>

#include <nlohmann/json.hpp>

#include "stipple/format.hpp"
#include "stipple/input_facts.hpp"

namespace stipple::report_detail {

/// "plot areas within 0.0012% of their geodesic areas" for the CRS line.
inline std::string crs_area_note(const AnalysisCrs& crs) {
  return "plot areas within " + format_significant(100.0 * crs.max_area_error, 2) +
         "% of their geodesic (ellipsoidal) areas";
}

/// The `duplicate_locations` records: x, y (analysis CRS) and the feature ids found there.
inline nlohmann::ordered_json duplicate_locations_json(const InputFacts& survey) {
  nlohmann::ordered_json out = nlohmann::ordered_json::array();
  for (const auto& d : survey.duplicate_locations)
    out.push_back({{"x", d.location.x}, {"y", d.location.y}, {"feature_ids", d.feature_ids}});
  return out;
}

}  // namespace stipple::report_detail
