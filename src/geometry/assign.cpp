#include <algorithm>
#include <limits>
#include <map>
#include <numeric>
#include <set>

#include <boost/geometry.hpp>

#include "box_grid.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/geometry/survey.hpp"

namespace bg = boost::geometry;

namespace stipple {

namespace {

bool bounds_overlap(const Bounds& a, const Bounds& b) {
  return a.xmin < b.xmax && b.xmin < a.xmax && a.ymin < b.ymax && b.ymin < a.ymax;
}

void check_plots(const std::vector<Plot>& plots) {
  std::set<std::string> seen;
  for (const auto& plot : plots) {
    if (!seen.insert(plot.id).second)
      throw InputError("plot id '" + plot.id + "' is used by more than one plot polygon");
  }
  for (std::size_t i = 0; i < plots.size(); ++i) {
    for (std::size_t j = i + 1; j < plots.size(); ++j) {
      const auto& a = plots[i].window;
      const auto& b = plots[j].window;
      if (!bounds_overlap(a.bounds(), b.bounds())) continue;
      BgMultiPolygon common;
      bg::intersection(a.shape(), b.shape(), common);
      const double overlap = bg::area(common);
      // Shared edges have zero area; allow for rounding in reprojected vertices.
      if (overlap > 1e-6 * std::min(a.area_m2(), b.area_m2())) {
        throw InputError("plots '" + plots[i].id + "' and '" + plots[j].id + "' overlap by " +
                         format_fixed(overlap, 1) + " m2; their area would be counted twice");
      }
    }
  }
}

}  // namespace

Bounds plots_bounds(const Survey& survey) {
  if (survey.plots().empty()) throw AnalysisError("the survey has no plots");
  Bounds b = survey.plots().front().window.bounds();
  for (const Plot& p : survey.plots()) {
    const Bounds& q = p.window.bounds();
    b.xmin = std::min(b.xmin, q.xmin);
    b.ymin = std::min(b.ymin, q.ymin);
    b.xmax = std::max(b.xmax, q.xmax);
    b.ymax = std::max(b.ymax, q.ymax);
  }
  return b;
}

std::size_t Survey::sighting_count() const {
  std::size_t n = 0;
  for (const auto& pattern : patterns_) n += pattern.points.size();
  return n;
}

Survey::Survey(std::vector<std::string> species, std::vector<Plot> plots, std::vector<MarkedPattern> patterns,
               SurveyExclusions exclusions)
    : species_(std::move(species)),
      plots_(std::move(plots)),
      patterns_(std::move(patterns)),
      exclusions_(std::move(exclusions)) {
  if (patterns_.size() != plots_.size())
    throw AnalysisError("a survey needs one pattern per plot (" + std::to_string(plots_.size()) + " plots, " +
                        std::to_string(patterns_.size()) + " patterns)");
  for (std::size_t s = 1; s < species_.size(); ++s)
    if (!(species_[s - 1] < species_[s])) throw AnalysisError("a survey's species must be sorted and distinct");
  std::set<std::string> ids;
  for (std::size_t p = 0; p < plots_.size(); ++p) {
    if (!ids.insert(plots_[p].id).second) throw AnalysisError("plot id '" + plots_[p].id + "' appears twice");
    const MarkedPattern& pattern = patterns_[p];
    if (pattern.marks.size() != pattern.points.size() || pattern.feature_ids.size() != pattern.points.size())
      throw AnalysisError("plot '" + plots_[p].id + "': a mark and a feature id are needed for every point");
    for (const auto m : pattern.marks)
      if (m >= species_.size())
        throw AnalysisError("plot '" + plots_[p].id + "': mark " + std::to_string(m) + " names no species (" +
                            std::to_string(species_.size()) + " species)");
  }
}

Survey Survey::with_plots(const std::vector<std::size_t>& indices) && {
  std::vector<Plot> plots;
  std::vector<MarkedPattern> patterns;
  std::vector<bool> taken(plots_.size(), false);
  for (const auto i : indices) {
    if (i >= plots_.size() || taken[i])
      throw AnalysisError("with_plots: plot index " + std::to_string(i) + " is out of range or repeated");
    taken[i] = true;
    plots.push_back(std::move(plots_[i]));
    patterns.push_back(std::move(patterns_[i]));
  }
  return {std::move(species_), std::move(plots), std::move(patterns), std::move(exclusions_)};
}

void SightingTable::add(const Sighting& sighting) {
  const auto code_of = [](std::vector<std::string>& names, const std::string& name) {
    const auto found = std::find(names.begin(), names.end(), name);
    if (found != names.end()) return static_cast<std::uint32_t>(found - names.begin());
    names.push_back(name);
    return static_cast<std::uint32_t>(names.size() - 1);
  };
  locations.push_back(sighting.location);
  feature_ids.push_back(sighting.feature_id);
  species.push_back(code_of(species_names, sighting.species));
  if (sighting.plot && !sighting.plot->empty()) {
    if (plots.size() < locations.size() - 1) plots.resize(locations.size() - 1, 0);
    plots.push_back(code_of(plot_names, *sighting.plot) + 1);
  } else if (!plots.empty()) {
    plots.push_back(0);
  }
}

void SightingTable::check() const {
  const std::size_t n = locations.size();
  if (feature_ids.size() != n || species.size() != n || (!plots.empty() && plots.size() != n))
    throw AnalysisError("a sighting table needs a feature id, a species and (when any) a plot code for every sighting");
  for (const auto c : species)
    if (c >= species_names.size()) throw AnalysisError("a sighting table's species code names no species");
  for (const auto c : plots)
    if (c > plot_names.size()) throw AnalysisError("a sighting table's plot code names no plot");
  for (const auto& name : plot_names)
    if (name.empty()) throw AnalysisError("a sighting table's plot names must not be empty");
}

namespace {

// Candidate plots of a location: a grid over the plots' bounding boxes, each cell listing,
// in input order, the plots whose boxes overlap it.
class PlotLocator {
 public:
  explicit PlotLocator(const std::vector<Plot>& plots) : plots_(plots) {
    if (plots.empty()) return;
    std::vector<Bounds> boxes;
    Bounds all = plots.front().window.bounds();
    for (const auto& p : plots) {
      const Bounds& b = p.window.bounds();
      boxes.push_back(b);
      all = {std::min(all.xmin, b.xmin), std::min(all.ymin, b.ymin), std::max(all.xmax, b.xmax),
             std::max(all.ymax, b.ymax)};
    }
    grid_ = geometry_detail::BoxGrid(all, boxes, 4.0 * static_cast<double>(plots.size()), 2048.0, false);
  }

  // The first plot, in input order, whose window contains the point (boundary inclusive);
  // plots.size() when none does.
  [[nodiscard]] std::size_t find(const Point& p) const {
    const Bounds& b = grid_.bounds();
    if (grid_.empty() || p.x < b.xmin || p.x > b.xmax || p.y < b.ymin || p.y > b.ymax) return plots_.size();
    for (const auto i : grid_.cell(grid_.column(p.x), grid_.row(p.y)))
      if (plots_[i].window.contains(p)) return i;
    return plots_.size();
  }

 private:
  const std::vector<Plot>& plots_;
  geometry_detail::BoxGrid grid_;
};

}  // namespace

Survey assign_to_plots(const std::vector<Sighting>& sightings, std::vector<Plot> plots) {
  SightingTable table;
  for (const auto& s : sightings) table.add(s);
  return assign_to_plots(table, std::move(plots));
}

namespace {

// Which column of the table pass 2 has finished with.
enum class Column { locations, species, feature_ids };

// Assigns the table's sightings; `done(column)` is called when a column is no longer read,
// so a caller that owns the table can free it early.
template <typename Done>
Survey assign_table(const SightingTable& sightings, std::vector<Plot> plots, Done&& done) {
  sightings.check();
  check_plots(plots);
  // Species sorted by name; codes remapped to their sorted positions.
  std::vector<std::uint32_t> by_name(sightings.species_names.size());
  std::iota(by_name.begin(), by_name.end(), 0U);
  std::sort(by_name.begin(), by_name.end(),
            [&](std::uint32_t a, std::uint32_t b) { return sightings.species_names[a] < sightings.species_names[b]; });
  std::vector<std::string> species;
  std::vector<std::size_t> sorted_index(by_name.size());
  for (const auto code : by_name) {
    if (!species.empty() && species.back() == sightings.species_names[code])
      throw AnalysisError("a sighting table's species names must be distinct");
    sorted_index[code] = species.size();
    species.push_back(sightings.species_names[code]);
  }
  // Plot attribute codes -> plot index (plots.size() when the id names no plot).
  std::map<std::string, std::size_t> plot_index;
  for (std::size_t i = 0; i < plots.size(); ++i) plot_index[plots[i].id] = i;
  std::vector<std::size_t> attribute_plot(sightings.plot_names.size(), plots.size());
  for (std::size_t k = 0; k < sightings.plot_names.size(); ++k)
    if (const auto found = plot_index.find(sightings.plot_names[k]); found != plot_index.end())
      attribute_plot[k] = found->second;

  // Pass 1: each sighting's plot (or its exclusion), and the size of every pattern.
  constexpr auto excluded_mark = std::numeric_limits<std::uint32_t>::max();
  const PlotLocator locator(plots);
  SurveyExclusions excluded;
  std::vector<std::uint32_t> target(sightings.size(), excluded_mark);
  std::vector<std::size_t> sizes(plots.size(), 0);
  for (std::size_t i = 0; i < sightings.size(); ++i) {
    const Point& p = sightings.locations[i];
    std::size_t t = plots.size();
    const std::uint32_t code = sightings.plots.empty() ? 0 : sightings.plots[i];
    if (code != 0) {
      excluded.assigned_by_attribute = true;
      t = attribute_plot[code - 1];
      if (t == plots.size()) {
        excluded.unknown_plot_feature_ids.push_back(sightings.feature_ids[i]);
        continue;
      }
      if (!plots[t].window.contains(p)) excluded.off_window_feature_ids.push_back(sightings.feature_ids[i]);
    } else {
      t = locator.find(p);
      if (t == plots.size()) {
        excluded.outside_feature_ids.push_back(sightings.feature_ids[i]);
        continue;
      }
    }
    target[i] = static_cast<std::uint32_t>(t);
    ++sizes[t];
  }
  // Pass 2: fill the patterns, each in sighting order.
  std::vector<MarkedPattern> patterns(plots.size());
  for (std::size_t t = 0; t < plots.size(); ++t) {
    patterns[t].points.reserve(sizes[t]);
    patterns[t].marks.reserve(sizes[t]);
    patterns[t].feature_ids.reserve(sizes[t]);
  }
  // Column by column, so each can be released before the next is copied.
  const std::size_t n = sightings.size();
  for (std::size_t i = 0; i < n; ++i)
    if (target[i] != excluded_mark) patterns[target[i]].points.push_back(sightings.locations[i]);
  done(Column::locations);
  for (std::size_t i = 0; i < n; ++i)
    if (target[i] != excluded_mark) patterns[target[i]].marks.push_back(sorted_index[sightings.species[i]]);
  done(Column::species);
  for (std::size_t i = 0; i < n; ++i)
    if (target[i] != excluded_mark) patterns[target[i]].feature_ids.push_back(sightings.feature_ids[i]);
  done(Column::feature_ids);
  return {std::move(species), std::move(plots), std::move(patterns), std::move(excluded)};
}

}  // namespace

Survey assign_to_plots(const SightingTable& sightings, std::vector<Plot> plots) {
  return assign_table(sightings, std::move(plots), [](Column) {});
}

Survey assign_to_plots(SightingTable&& sightings, std::vector<Plot> plots) {
  SightingTable owned = std::move(sightings);
  return assign_table(owned, std::move(plots), [&owned](Column c) {
    switch (c) {
      case Column::locations: std::vector<Point>().swap(owned.locations); break;
      case Column::species: std::vector<std::uint32_t>().swap(owned.species); break;
      case Column::feature_ids: std::vector<std::int64_t>().swap(owned.feature_ids); break;
    }
  });
}

}  // namespace stipple
