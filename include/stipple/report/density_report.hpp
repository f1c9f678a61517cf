#pragma once
/// Density results as a readable table, JSON and CSV.

#include <string>
#include <vector>

#include "stipple/geometry/survey.hpp"
#include "stipple/input_facts.hpp"
#include "stipple/intensity/density.hpp"

namespace stipple {

/// The cautions printed with every density result (README "Assumptions and cautions").
[[nodiscard]] const std::vector<std::string>& density_cautions();

/// Warnings a reader must see: plots that differ in intensity (the Poisson interval is
/// then too narrow) and a species mix that differs between plots.
[[nodiscard]] std::vector<std::string> density_warnings(const DensityResult& result);

/// A readable report for the terminal of `result`, estimated from `plots`, whose data came
/// from `input` (a reader's LoadedSurvey, or facts filled by hand).
[[nodiscard]] std::string density_table(const InputFacts& input, const Survey& plots, const DensityResult& result);

/// The JSON document of `stipple density --json` (contract in README, "JSON output").
[[nodiscard]] std::string density_json(const InputFacts& input, const Survey& plots, const DensityResult& result);

/// One row per plot x species and per pooled species (column `scope`: plot | pooled),
/// empty species = all species together.
[[nodiscard]] std::string density_csv(const DensityResult& result);

}  // namespace stipple
