#include <algorithm>
#include <map>
#include <set>

#include <boost/geometry.hpp>

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

Survey assign_to_plots(const std::vector<Sighting>& sightings, std::vector<Plot> plots) {
  check_plots(plots);
  std::set<std::string> names;
  for (const auto& s : sightings) names.insert(s.species);
  std::vector<std::string> species(names.begin(), names.end());
  std::map<std::string, std::size_t> species_index;
  for (std::size_t i = 0; i < species.size(); ++i) species_index[species[i]] = i;
  std::map<std::string, std::size_t> plot_index;
  for (std::size_t i = 0; i < plots.size(); ++i) plot_index[plots[i].id] = i;

  std::vector<MarkedPattern> patterns(plots.size());
  SurveyExclusions excluded;
  for (const auto& s : sightings) {
    std::size_t target = plots.size();
    if (s.plot && !s.plot->empty()) {
      excluded.assigned_by_attribute = true;
      const auto found = plot_index.find(*s.plot);
      if (found == plot_index.end()) {
        excluded.unknown_plot_feature_ids.push_back(s.feature_id);
        continue;
      }
      target = found->second;
      if (!plots[target].window.contains(s.location)) excluded.off_window_feature_ids.push_back(s.feature_id);
    } else {
      for (std::size_t i = 0; i < plots.size(); ++i) {
        if (plots[i].window.contains(s.location)) {
          target = i;
          break;
        }
      }
      if (target == plots.size()) {
        excluded.outside_feature_ids.push_back(s.feature_id);
        continue;
      }
    }
    auto& pattern = patterns[target];
    pattern.points.push_back(s.location);
    pattern.marks.push_back(species_index.at(s.species));
    pattern.feature_ids.push_back(s.feature_id);
  }
  return {std::move(species), std::move(plots), std::move(patterns), std::move(excluded)};
}

}  // namespace stipple
