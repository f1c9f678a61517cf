#pragma once
/// Figures drawn with cairo: bands, lines, bars and points on labelled axes, as SVG or PNG.
/// Colours are the Okabe & Ito (2008) palette, readable by colour-blind readers.

#include <string>
#include <vector>

#include "stipple/geometry/raster_grid.hpp"
#include "stipple/geometry/survey.hpp"

namespace stipple {

struct ChartSeries {
  enum class Kind { line, dashed_line, band, bars, points };
  Kind kind = Kind::line;
  std::vector<double> x;        ///< bars: left edges
  std::vector<double> y;        ///< band: lower; bars: heights
  std::vector<double> y_upper;  ///< band: upper; bars: right edges
  int colour = 0;               ///< index into the palette (0 blue, 1 vermillion, 2 grey, 3 light grey, 4 green)
  std::string label;            ///< legend text; empty = no legend entry
};

struct Chart {
  std::string title;
  std::string x_label;
  std::string y_label;
  std::string caption;              ///< one line under the plot
  std::vector<ChartSeries> series;  ///< drawn in order
};

[[nodiscard]] std::string chart_svg(const Chart& chart);
/// PNG bytes, 900 x 600 px.
[[nodiscard]] std::string chart_png(const Chart& chart);

/// A file of a folder of figures: its name, its bytes, and what it shows in words (for a
/// caption; empty for the folder's manifest).
struct FigureFile {
  std::string name;
  std::string content;
  std::string title;
};

/// A summary function with its Monte Carlo envelopes, as a chart.
struct EnvelopeFigure {
  std::string title;
  std::string y_label;
  std::vector<double> r;
  std::vector<double> observed;
  std::vector<double> theoretical;
  std::vector<double> pointwise_low;
  std::vector<double> pointwise_high;
  std::vector<double> global_low;
  std::vector<double> global_high;
  std::string caption;
};
[[nodiscard]] Chart envelope_chart(const EnvelopeFigure& figure);

/// A map of one plot: its window outline (holes and parts), its sightings by species with a
/// distinct colour and marker shape per species (colour-blind-safe), and a scale bar. SVG.
[[nodiscard]] std::string plot_map_svg(const Plot& plot, const MarkedPattern& pattern,
                                       const std::vector<std::string>& species);

/// A map of a field of values on a grid (a residual or intensity map): each cell filled on a
/// colour scale — diverging blue-white-vermillion about 0 (Okabe & Ito 2008 ends), or
/// white-to-blue for a field of one sign — with the plots' outlines over it, a colour bar
/// labelled `legend` and a scale bar. NaN cells are left blank. SVG.
[[nodiscard]] std::string field_map_svg(const RasterGrid& field, const std::vector<Plot>& plots,
                                        const std::string& title, const std::string& legend, bool diverging);

}  // namespace stipple
