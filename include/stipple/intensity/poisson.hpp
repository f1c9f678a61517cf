#pragma once
/// Exact confidence limits for a Poisson mean, and area units.

#include <cstdint>
#include <string>
#include <string_view>

#include "stipple/stats/interval.hpp"

namespace stipple {

/// Exact (Garwood) limits for the mean of a Poisson count x at the given two-sided
/// confidence level: L = chi2_{a/2; 2x} / 2 (0 when x = 0), U = chi2_{1-a/2; 2x+2} / 2.
/// Source: Garwood F. (1936) Fiducial limits for the Poisson distribution,
/// Biometrika 28:437-442. Throws InputError unless 0 < confidence < 1.
[[nodiscard]] Interval garwood_interval(std::uint64_t count, double confidence);

/// Area units in which intensities are reported (per unit area).
enum class AreaUnit { square_metre, hectare, square_kilometre };

/// Square metres in one unit.
[[nodiscard]] double square_metres_per(AreaUnit unit);
/// The unit's name as used on the command line and in output: m2, ha, km2.
[[nodiscard]] std::string_view unit_name(AreaUnit unit);
/// Parses m2 | ha | km2; throws InputError otherwise.
[[nodiscard]] AreaUnit parse_area_unit(std::string_view name);

/// Checks a two-sided confidence level; throws InputError unless 0 < level < 1.
void check_confidence(double confidence);

/// alpha = 1 - confidence, rounded to 12 decimals so 0.95 gives exactly 0.05.
[[nodiscard]] double alpha_from_confidence(double confidence);

}  // namespace stipple
