#pragma once
/// Transect results as a readable table, JSON, CSV and detection-function figures.

#include <string>
#include <utility>
#include <vector>

#include "stipple/input_facts.hpp"
#include "stipple/report/figure.hpp"
#include "stipple/transect/estimate.hpp"

namespace stipple {

/// The cautions printed with every transect result (README "Assumptions and cautions").
[[nodiscard]] const std::vector<std::string>& transect_cautions();

/// A readable report for the terminal of `result`, estimated from `survey`, whose data came
/// from `input` (a reader's LoadedTransects, or facts filled by hand).
[[nodiscard]] std::string transect_table(const InputFacts& input, const TransectSurvey& survey,
                                         const TransectResult& result);
/// The JSON document of `stipple transect --json` (contract in README, "JSON output").
[[nodiscard]] std::string transect_json(const InputFacts& input, const TransectResult& result);
/// The JSON document of `stipple effort --json`: the pilot values, the target CV, the
/// dispersion factor b, the effort needed and the detections it should yield.
[[nodiscard]] std::string effort_json(double pilot_detections, double pilot_effort, double target_cv, double dispersion,
                                      double effort_needed);
/// One row per species x stratum.
[[nodiscard]] std::string transect_csv(const TransectResult& result);
/// Per fitted detection function: the distance histogram scaled to g with the fitted curve,
/// and a Q-Q plot of exact distances; SVG and PNG, and a manifest figures.csv.
[[nodiscard]] std::vector<FigureFile> transect_figures(const TransectSurvey& survey, const TransectResult& result);

}  // namespace stipple
