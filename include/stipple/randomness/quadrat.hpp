#pragma once
/// The quadrat-count test of complete spatial randomness in a polygon window.

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/window.hpp"
#include "stipple/simulate/engine.hpp"
#include "stipple/stats/chi_square.hpp"

namespace stipple {

struct QuadratOptions {
  std::size_t nx = 4;
  std::size_t ny = 4;
  bool force_monte_carlo = false;  ///< Monte Carlo p-value even when expected counts are >= 5
  std::size_t simulations = 999;
};

struct QuadratResult {
  std::size_t nx = 0;
  std::size_t ny = 0;
  std::size_t cells_used = 0;                 ///< cells with a positive share of the window
  std::vector<std::uint64_t> counts;          ///< per used cell
  std::vector<double> expected;               ///< n * clipped area / |W|
  ChiSquareTest chi_square;                   ///< df = cells used - 1
  double p_value = 1.0;                       ///< two-sided chi-square p (or Monte Carlo when used)
  std::optional<double> monte_carlo_p_value;  ///< two-sided, binomial process
  std::optional<double> dispersion_index;     ///< variance / mean, when all cells have equal area
  bool cells_too_small = false;               ///< some expected count below 5
};

/// Parses a quadrat grid "NxM" (2 to 10000 cells); throws InputError naming `quadrats`.
[[nodiscard]] std::pair<std::size_t, std::size_t> parse_quadrat_grid(const std::string& text);

/// Counts points in an nx x ny grid over the window's bounding box, each cell clipped to
/// the window, against expectations proportional to clipped area; Pearson X2 with
/// df = cells - 1 (common practice; Diggle 2003, ch. 2). The Monte Carlo p-value draws the
/// same n points uniformly in the window (as cell counts: a multinomial with probabilities
/// proportional to clipped area) and is two-sided: 2 min(upper, lower) rank shares
/// (Hope 1968). Throws AnalysisError with fewer than two usable cells or no points.
[[nodiscard]] QuadratResult quadrat_test(const std::vector<Point>& points, const Window& window,
                                         const QuadratOptions& options, Engine& engine);

}  // namespace stipple
