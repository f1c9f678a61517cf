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

/// The sightings read but kept out of every pattern, and how plots were decided.
struct SurveyExclusions {
  std::vector<std::int64_t> outside_feature_ids;       ///< in no plot: excluded
  std::vector<std::int64_t> unknown_plot_feature_ids;  ///< plot attribute names no plot: excluded
  std::vector<std::int64_t> off_window_feature_ids;    ///< kept by attribute, but outside its polygon
  bool assigned_by_attribute = false;                  ///< true when the plot attribute decided
};

/// Sightings assigned to plots. Every sighting read is either in exactly one pattern
/// or listed among the exclusions: nothing is dropped silently.
///
/// A Survey can only be built whole: one pattern per plot, one mark and one feature id
/// per point, every mark naming a species, species sorted and distinct, plot ids distinct.
/// The constructor throws AnalysisError otherwise, and the members cannot be changed
/// afterwards, so every analysis can rely on them.
class Survey {
 public:
  /// An empty survey: no species, no plots.
  Survey() = default;
  Survey(std::vector<std::string> species, std::vector<Plot> plots, std::vector<MarkedPattern> patterns,
         SurveyExclusions exclusions = {});

  [[nodiscard]] const std::vector<std::string>& species() const noexcept { return species_; }  ///< sorted
  [[nodiscard]] const std::vector<Plot>& plots() const noexcept { return plots_; }             ///< in input order
  /// Parallel to plots().
  [[nodiscard]] const std::vector<MarkedPattern>& patterns() const noexcept { return patterns_; }
  [[nodiscard]] const SurveyExclusions& exclusions() const noexcept { return exclusions_; }
  [[nodiscard]] std::size_t sighting_count() const;

  /// The same survey restricted to the plots at `indices` (in that order, each at most
  /// once); species and exclusions are kept.
  [[nodiscard]] Survey with_plots(const std::vector<std::size_t>& indices) &&;

 private:
  std::vector<std::string> species_;
  std::vector<Plot> plots_;
  std::vector<MarkedPattern> patterns_;
  SurveyExclusions exclusions_;
};

/// Sightings as columns, species and plot attributes as codes into name lists: the compact
/// form a reader builds for large inputs (32 bytes a sighting).
struct SightingTable {
  std::vector<Point> locations;
  std::vector<std::int64_t> feature_ids;
  std::vector<std::uint32_t> species;      ///< index into species_names
  std::vector<std::string> species_names;  ///< any order, distinct
  /// Per sighting 0 (no plot attribute) or k: plot_names[k - 1]; empty when no sighting
  /// carries one.
  std::vector<std::uint32_t> plots;
  std::vector<std::string> plot_names;  ///< distinct, none empty

  [[nodiscard]] std::size_t size() const { return locations.size(); }
  /// Appends a sighting; species and plot names are coded on the way.
  void add(const Sighting& sighting);
  /// Throws AnalysisError unless the columns are parallel and every code names a name.
  void check() const;
};

/// The bounding rectangle of every plot window; throws AnalysisError when there are no plots.
[[nodiscard]] Bounds plots_bounds(const Survey& survey);

/// Assigns each sighting to a plot: by its plot attribute when it carries one (then a
/// sighting outside its own polygon is kept and listed in `off_window_feature_ids`),
/// otherwise by point-in-polygon (boundary inclusive). Throws InputError when plot ids
/// repeat or two plots overlap (their areas would be counted twice).
[[nodiscard]] Survey assign_to_plots(const std::vector<Sighting>& sightings, std::vector<Plot> plots);

/// The same for sightings as columns; plots are found through an index of their bounding
/// boxes, and each candidate's window answers by its edge index.
[[nodiscard]] Survey assign_to_plots(const SightingTable& sightings, std::vector<Plot> plots);
/// The same, freeing the table's columns as they are copied (a reader's peak memory).
[[nodiscard]] Survey assign_to_plots(SightingTable&& sightings, std::vector<Plot> plots);

}  // namespace stipple
