#pragma once
/// A survey: plots (windows) and the sightings assigned to them, marked by species.

#include <cstdint>
#include <string>
#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/window.hpp"

namespace stipple {

/// A surveyed plot: its id and its window.
struct Plot {
  std::string id;
  Window window;
};

/// The sightings of one plot: locations and species marks (indices into
/// `Survey::species`).
struct MarkedPattern {
  std::vector<Point> points;
  std::vector<std::size_t> marks;
  std::vector<std::int64_t> feature_ids;
};

/// Sightings assigned to plots. Every sighting read is either in exactly one pattern
/// or listed among the exclusions: nothing is dropped silently.
struct Survey {
  std::vector<std::string> species;                    ///< sorted species names
  std::vector<Plot> plots;                             ///< in input order
  std::vector<MarkedPattern> patterns;                 ///< parallel to `plots`
  std::vector<std::int64_t> outside_feature_ids;       ///< in no plot: excluded
  std::vector<std::int64_t> unknown_plot_feature_ids;  ///< plot attribute names no plot: excluded
  std::vector<std::int64_t> off_window_feature_ids;    ///< kept by attribute, but outside its polygon
  bool assigned_by_attribute = false;                  ///< true when the plot attribute decided

  [[nodiscard]] std::size_t sighting_count() const;

  /// Throws AnalysisError unless the survey is whole: one pattern per plot, one mark and one
  /// feature id per point, every mark naming a species, species sorted and distinct, plot
  /// ids distinct. assign_to_plots always builds such a survey; every analysis checks it,
  /// so a survey put together in code cannot be analysed half-formed.
  void check() const;
};

/// Assigns each sighting to a plot: by its plot attribute when it carries one (then a
/// sighting outside its own polygon is kept and listed in `off_window_feature_ids`),
/// otherwise by point-in-polygon (boundary inclusive). Throws InputError when plot ids
/// repeat or two plots overlap (their areas would be counted twice).
[[nodiscard]] Survey assign_to_plots(const std::vector<Sighting>& sightings, std::vector<Plot> plots);

}  // namespace stipple
