#pragma once
/// Transect results as a readable table, JSON, CSV and detection-function figures.

#include <string>
#include <utility>
#include <vector>

#include "stipple/io/transect_reader.hpp"
#include "stipple/report/figure.hpp"
#include "stipple/transect/estimate.hpp"

namespace stipple {

/// The cautions printed with every transect result (README "Assumptions and cautions").
[[nodiscard]] const std::vector<std::string>& transect_cautions();

[[nodiscard]] std::string transect_table(const LoadedTransects& input, const TransectResult& result);
/// The JSON document of `stipple transect --json` (contract in README, "JSON output").
[[nodiscard]] std::string transect_json(const LoadedTransects& input, const TransectResult& result);
/// The JSON document of `stipple effort --json`: the pilot values, the target CV, the
/// dispersion factor b, the effort needed and the detections it should yield.
[[nodiscard]] std::string effort_json(double pilot_detections, double pilot_effort, double target_cv,
                                      double dispersion, double effort_needed);
/// One row per species x stratum.
[[nodiscard]] std::string transect_csv(const TransectResult& result);
/// Per fitted detection function: the distance histogram scaled to g with the fitted curve,
/// and a Q-Q plot of exact distances; SVG and PNG (file name, content).
[[nodiscard]] std::vector<FigureFile> transect_figures(const LoadedTransects& input,
                                                                               const TransectResult& result);

}  // namespace stipple
