#pragma once
/// The Clark-Evans nearest-neighbour test of complete spatial randomness.

#include <cstddef>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/window.hpp"

namespace stipple {

enum class NeighbourEdgeCorrection {
  none,      ///< Clark & Evans (1954) as published
  donnelly,  ///< Donnelly (1978) expectation and variance for rectangular windows
  border,    ///< buffer method: reference points at least w from the boundary,
             ///< w = min(1/sqrt(lambda), median boundary distance)
};

[[nodiscard]] std::string_view edge_correction_name(NeighbourEdgeCorrection c);
/// Parses none | donnelly | border; throws InputError otherwise.
[[nodiscard]] NeighbourEdgeCorrection parse_edge_correction(std::string_view name);

/// Donnelly for rectangles, the border method for any other window.
[[nodiscard]] NeighbourEdgeCorrection default_edge_correction(const Window& window);

struct ClarkEvansResult {
  std::size_t n = 0;
  std::size_t reference_points = 0;  ///< points whose distances enter the mean
  double mean_distance = 0.0;        ///< r-bar, metres
  double expected_distance = 0.0;    ///< under CSR, with the chosen correction
  double standard_error = 0.0;
  double ratio = 0.0;  ///< R = r-bar / expected
  double z = 0.0;
  double normal_p_value = 1.0;  ///< two-sided, from the normal law of z
  /// The p-value to report: normal (= normal_p_value) where clark_evans_normal_holds(),
  /// else NaN, and the analysis fills it with the Monte Carlo p-value when simulations run.
  double p_value = 1.0;
  std::string p_value_method = "normal";  ///< normal | monte-carlo | none
  NeighbourEdgeCorrection edge_correction = NeighbourEdgeCorrection::none;
  std::optional<double> monte_carlo_p_value;  ///< two-sided, filled by the caller's simulations
  std::string note;                           ///< e.g. why a requested correction was replaced
};

/// Clark & Evans (1954): r_E = 1 / (2 sqrt(lambda)), SE = 0.26136 / sqrt(n lambda),
/// R = r-bar / r_E, z = (r-bar - r_E) / SE. Donnelly (1978) for rectangles:
/// E = 0.5 sqrt(A/n) + (0.0514 + 0.041 / sqrt(n)) P / n,
/// Var = 0.0703 A / n^2 + 0.037 P sqrt(A / n^5) (from memory: constants; REFERENCES.md §4).
/// Border: only points at least w = min(1/sqrt(lambda), median boundary distance) from the
/// boundary are reference points (their neighbours may lie anywhere in the window), with
/// n replaced by their number in the SE. `nearest` holds each point's nearest-neighbour
/// distance and `boundary` its distance to the window boundary (parallel to the points).
/// A requested Donnelly correction on a non-rectangular window falls back to border, with a
/// note. Throws AnalysisError with fewer than 2 points or no reference point.
[[nodiscard]] ClarkEvansResult clark_evans(const std::vector<double>& nearest, const std::vector<double>& boundary,
                                           const Window& window, std::optional<NeighbourEdgeCorrection> requested);

/// Whether the normal law of z holds the test's level well enough to report its p-value
/// without simulations. The rule, from the size of the normal test under CSR
/// (bench/clark_evans_size.cpp, 4,000 binomial patterns per n, rejection rate at nominal 5%):
/// - Donnelly (rectangles): 4.3-5.3% for every n from 10 to 10,000: holds for n >= 10.
/// - border: 8-10% for n <= 200, 6.7% at 500, 5.8-6.8% from 1,000 to 10,000 (z has SD
///   about 1.05: the reference points' distances are positively correlated, which the
///   Clark-Evans standard error ignores): holds for n >= 1,000 by Bradley's (1978) liberal
///   criterion (size within 0.5 alpha to 1.5 alpha), and the note says it runs about one
///   point above nominal.
/// - none: never (edge effects bias the mean distance upward, more so as n grows).
[[nodiscard]] bool clark_evans_normal_holds(NeighbourEdgeCorrection correction, std::size_t n);

/// The statistic the Monte Carlo test compares: the mean nearest-neighbour distance over
/// the reference points of the chosen correction (NaN when there is none).
[[nodiscard]] double clark_evans_mean(const std::vector<double>& nearest, const std::vector<double>& boundary,
                                      const Window& window, NeighbourEdgeCorrection correction);

}  // namespace stipple
