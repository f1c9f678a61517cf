#pragma once
/// Randomness results as a readable table, JSON, a curves CSV and figures.

#include <string>
#include <utility>
#include <vector>

#include "stipple/input_facts.hpp"
#include "stipple/randomness/analysis.hpp"
#include "stipple/report/figure.hpp"

namespace stipple {

/// The cautions printed with every randomness result.
[[nodiscard]] const std::vector<std::string>& randomness_cautions();

[[nodiscard]] std::string randomness_table(const InputFacts& input, const RandomnessResult& result);
/// The JSON document of `stipple randomness --json` (contract in README, "JSON output").
[[nodiscard]] std::string randomness_json(const InputFacts& input, const RandomnessResult& result);
/// `--csv`: one row per plot x species with every p-value and the verdict (tables.hpp).
[[nodiscard]] std::string randomness_csv(const RandomnessResult& result);
/// One row per group, function and distance: plot, species, species_b, function, r,
/// observed, theoretical, low, high (pointwise envelope), global_low, global_high.
[[nodiscard]] std::string randomness_curves_csv(const RandomnessResult& result);
/// The figures: L with its envelopes, SVG and PNG, per group and per species pair, and a
/// manifest `figures.csv` of which file shows which plot and species.
[[nodiscard]] std::vector<FigureFile> randomness_figures(const RandomnessResult& result);

}  // namespace stipple
