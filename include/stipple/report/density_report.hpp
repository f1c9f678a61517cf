#pragma once
/// Density results as a readable table, JSON and CSV.

#include <string>
#include <vector>

#include "stipple/intensity/density.hpp"
#include "stipple/io/reader.hpp"

namespace stipple {

/// The cautions printed with every density result (README "Assumptions and cautions").
[[nodiscard]] const std::vector<std::string>& density_cautions();

/// Warnings a reader must see: plots that differ in intensity (the Poisson interval is
/// then too narrow) and a species mix that differs between plots.
[[nodiscard]] std::vector<std::string> density_warnings(const DensityResult& result);

/// A readable report for the terminal.
[[nodiscard]] std::string density_table(const LoadedSurvey& survey, const DensityResult& result);

/// The JSON document of `stipple density --json` (contract in README, "JSON output").
[[nodiscard]] std::string density_json(const LoadedSurvey& survey, const DensityResult& result);

/// One row per plot x species and per pooled species (column `scope`: plot | pooled),
/// empty species = all species together.
[[nodiscard]] std::string density_csv(const DensityResult& result);

}  // namespace stipple
