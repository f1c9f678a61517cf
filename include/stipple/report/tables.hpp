#pragma once
/// The machine-readable tables of every analysis, as columns and rows of cell text. One
/// definition per table serves the single commands (`--csv`) and batch (which adds a `file`
/// column in front), so both always have the same columns in the same order.

#include <string>
#include <vector>

#include "stipple/intensity/density.hpp"
#include "stipple/randomness/analysis.hpp"
#include "stipple/transect/estimate.hpp"

namespace stipple {

/// Columns and rows of text; numbers in shortest round-trip form, absent values empty.
struct Table {
  std::vector<std::string> columns;
  std::vector<std::vector<std::string>> rows;
};

/// The header line and one line per row, each ending in a newline; CSV-quoted.
[[nodiscard]] std::string csv_text(const Table& table);
/// The rows alone (no header), each with `file` as a first cell.
[[nodiscard]] std::string csv_rows_with_file(const Table& table, const std::string& file);
/// The header with a `file` column in front.
[[nodiscard]] std::string csv_header_with_file(const Table& table);

/// `stipple density --csv`: one row per plot x species (scope `plot`) and per pooled
/// species (scope `pooled`); empty species = all species together.
[[nodiscard]] Table density_rows(const DensityResult& result);

/// Pooled rows only, with the homogeneity test, dispersion ratio and between-plot interval
/// (batch `pooled.csv`): species, plots, count, area, unit, intensity, ci_low, ci_high,
/// detection_probability, corrected_intensity, corrected_ci_low, corrected_ci_high,
/// homogeneity_statistic, homogeneity_df, homogeneity_p, homogeneity_p_method,
/// dispersion_ratio, between_plot_ci_low, between_plot_ci_high,
/// corrected_between_plot_ci_low, corrected_between_plot_ci_high.
[[nodiscard]] Table pooled_rows(const DensityResult& result);

/// `stipple randomness --csv`: one row per plot x species with every p-value and the
/// verdict, and the distance ranges where L leaves its global envelope.
[[nodiscard]] Table randomness_rows(const RandomnessResult& result);

/// Random-labelling tests between species: one row per plot and species pair.
[[nodiscard]] Table interaction_rows(const RandomnessResult& result);

/// `stipple transect --csv`: one row per species x stratum, with the bootstrap interval
/// when a bootstrap ran.
[[nodiscard]] Table transect_rows(const TransectResult& result);

/// "12-30 m clustered; 41 m regular": the ranges where a curve leaves its global envelope.
[[nodiscard]] std::string departure_text(const std::vector<Departure>& departures, const char* above,
                                         const char* below);

}  // namespace stipple
