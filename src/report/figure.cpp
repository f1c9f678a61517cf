#include "stipple/report/figure.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <regex>

#include <optional>

#include <cairo-svg.h>
#include <cairo.h>
#include <boost/math/constants/constants.hpp>

#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple {

namespace {

constexpr double width_px = 900.0;
constexpr double height_px = 600.0;

// Okabe & Ito (2008) colour-blind-safe palette.
struct Rgb {
  double r, g, b;
};
constexpr Rgb palette[] = {
    {0.0, 0.447, 0.698},  // blue
    {0.835, 0.369, 0.0},  // vermillion
    {0.62, 0.62, 0.62},   // grey
    {0.80, 0.80, 0.80},   // light grey
    {0.0, 0.620, 0.451},  // bluish green
};

Rgb colour_of(int index) {
  const int n = static_cast<int>(sizeof palette / sizeof palette[0]);
  return palette[((index % n) + n) % n];
}

// cairo numbers SVG surfaces with a process-wide counter, so the same figure would get other
// ids in another run or thread: renumber them per document for byte-identical re-runs.
std::string stable_ids(const std::string& svg) {
  static const std::regex id("surface([0-9]+)");
  std::map<std::string, std::string> renamed;
  std::string out;
  auto last = svg.cbegin();
  for (auto it = std::sregex_iterator(svg.begin(), svg.end(), id); it != std::sregex_iterator(); ++it) {
    out.append(last, svg.cbegin() + it->position());
    const std::string key = (*it)[1].str();
    auto found = renamed.find(key);
    if (found == renamed.end()) found = renamed.emplace(key, std::to_string(renamed.size() + 1)).first;
    out += "surface" + found->second;
    last = svg.cbegin() + it->position() + it->length();
  }
  out.append(last, svg.cend());
  return out;
}

cairo_status_t append_to_string(void* closure, const unsigned char* data, unsigned int length) {
  static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
  return CAIRO_STATUS_SUCCESS;
}

double nice_step(double span) {
  const double raw = span / 5.0;
  const double magnitude = std::pow(10.0, std::floor(std::log10(raw)));
  for (const double m : {1.0, 2.0, 2.5, 5.0, 10.0})
    if (raw <= m * magnitude) return m * magnitude;
  return 10.0 * magnitude;
}

constexpr double two_pi = boost::math::double_constants::two_pi;
constexpr double dash[] = {8.0, 5.0};

void set_colour(cairo_t* cr, const Rgb& c) {
  cairo_set_source_rgb(cr, c.r, c.g, c.b);
}

// The plotting area in pixels and the data range it shows.
struct Frame {
  double left = 90.0;
  double right = width_px - 30.0;
  double top = 60.0;
  double bottom = height_px - 100.0;
  double xmin = 0.0, xmax = 1.0, ymin = 0.0, ymax = 1.0;
  [[nodiscard]] double X(double x) const { return left + (right - left) * (x - xmin) / (xmax - xmin); }
  [[nodiscard]] double Y(double y) const { return bottom - (bottom - top) * (y - ymin) / (ymax - ymin); }
};

// The data range of every series (bars span x to y_upper), from 0, with 5% headroom above.
// Empty when no series holds a finite x.
std::optional<Frame> frame_of(const Chart& chart) {
  Frame f;
  double xmin = std::numeric_limits<double>::infinity();
  double xmax = -xmin;
  double ymin = 0.0;
  double ymax = -std::numeric_limits<double>::infinity();
  for (const auto& s : chart.series) {
    const bool bars = s.kind == ChartSeries::Kind::bars;
    for (const double v : s.x)
      if (std::isfinite(v)) xmin = std::min(xmin, v), xmax = std::max(xmax, v);
    for (const double v : s.y_upper) {
      if (!std::isfinite(v)) continue;
      if (bars) {
        xmax = std::max(xmax, v);
      } else {
        ymin = std::min(ymin, v);
        ymax = std::max(ymax, v);
      }
    }
    for (const double v : s.y)
      if (std::isfinite(v)) ymin = std::min(ymin, v), ymax = std::max(ymax, v);
  }
  if (!std::isfinite(xmin)) return std::nullopt;
  f.xmin = std::min(0.0, xmin);
  f.xmax = xmax > f.xmin ? xmax : f.xmin + 1.0;
  f.ymin = ymin;
  f.ymax = (ymax > ymin ? ymax : ymin + 1.0) * 1.05;
  return f;
}

void draw_band(cairo_t* cr, const Frame& f, const ChartSeries& s) {
  std::vector<std::size_t> idx;
  for (std::size_t k = 0; k < s.x.size(); ++k)
    if (std::isfinite(s.y[k]) && std::isfinite(s.y_upper[k])) idx.push_back(k);
  if (idx.empty()) return;
  cairo_new_path(cr);
  cairo_move_to(cr, f.X(s.x[idx.front()]), f.Y(s.y_upper[idx.front()]));
  for (const auto k : idx) cairo_line_to(cr, f.X(s.x[k]), f.Y(s.y_upper[k]));
  for (auto it = idx.rbegin(); it != idx.rend(); ++it) cairo_line_to(cr, f.X(s.x[*it]), f.Y(s.y[*it]));
  cairo_close_path(cr);
  set_colour(cr, colour_of(s.colour));
  cairo_fill(cr);
}

void draw_bars(cairo_t* cr, const Frame& f, const ChartSeries& s) {
  for (std::size_t k = 0; k < s.x.size(); ++k) {
    cairo_rectangle(cr, f.X(s.x[k]), f.Y(s.y[k]), f.X(s.y_upper[k]) - f.X(s.x[k]), f.Y(f.ymin) - f.Y(s.y[k]));
    set_colour(cr, colour_of(s.colour));
    cairo_fill_preserve(cr);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_set_line_width(cr, 1.0);
    cairo_stroke(cr);
  }
}

void draw_points(cairo_t* cr, const Frame& f, const ChartSeries& s) {
  for (std::size_t k = 0; k < s.x.size(); ++k) {
    if (!std::isfinite(s.y[k])) continue;
    cairo_new_path(cr);
    cairo_arc(cr, f.X(s.x[k]), f.Y(s.y[k]), 3.5, 0, two_pi);
    set_colour(cr, colour_of(s.colour));
    cairo_fill(cr);
  }
}

// A line broken where y is not finite.
void draw_line(cairo_t* cr, const Frame& f, const ChartSeries& s) {
  cairo_new_path(cr);
  bool open = false;
  for (std::size_t k = 0; k < s.x.size(); ++k) {
    if (!std::isfinite(s.y[k])) {
      open = false;
      continue;
    }
    if (!open)
      cairo_move_to(cr, f.X(s.x[k]), f.Y(s.y[k]));
    else
      cairo_line_to(cr, f.X(s.x[k]), f.Y(s.y[k]));
    open = true;
  }
  cairo_set_dash(cr, dash, s.kind == ChartSeries::Kind::dashed_line ? 2 : 0, 0.0);
  cairo_set_line_width(cr, s.kind == ChartSeries::Kind::line ? 2.5 : 2.0);
  set_colour(cr, colour_of(s.colour));
  cairo_stroke(cr);
  cairo_set_dash(cr, dash, 0, 0.0);
}

void draw_series(cairo_t* cr, const Frame& f, const ChartSeries& s) {
  switch (s.kind) {
    case ChartSeries::Kind::band: draw_band(cr, f, s); break;
    case ChartSeries::Kind::bars: draw_bars(cr, f, s); break;
    case ChartSeries::Kind::points: draw_points(cr, f, s); break;
    case ChartSeries::Kind::line:
    case ChartSeries::Kind::dashed_line: draw_line(cr, f, s); break;
  }
}

// Text with its left edge (align 0), centre (0.5) or right edge (1) at x.
void text_at(cairo_t* cr, const std::string& s, double x, double y, double align_x) {
  cairo_text_extents_t ext;
  cairo_text_extents(cr, s.c_str(), &ext);
  cairo_move_to(cr, x - align_x * ext.width, y);
  cairo_show_text(cr, s.c_str());
}

void draw_axes(cairo_t* cr, const Frame& f, const Chart& chart) {
  cairo_set_source_rgb(cr, 0, 0, 0);
  cairo_set_line_width(cr, 1.2);
  cairo_rectangle(cr, f.left, f.top, f.right - f.left, f.bottom - f.top);
  cairo_stroke(cr);
  cairo_select_font_face(cr, "DejaVu Sans", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, 14.0);
  const auto tick_label = [](double v) { return format_general(std::abs(v) < 1e-12 ? 0.0 : v); };
  const double xstep = nice_step(f.xmax - f.xmin);
  for (double x = std::ceil(f.xmin / xstep) * xstep; x <= f.xmax + 1e-9; x += xstep) {
    cairo_move_to(cr, f.X(x), f.bottom);
    cairo_line_to(cr, f.X(x), f.bottom + 6);
    cairo_stroke(cr);
    text_at(cr, tick_label(x), f.X(x), f.bottom + 24, 0.5);
  }
  const double ystep = nice_step(f.ymax - f.ymin);
  for (double y = std::ceil(f.ymin / ystep) * ystep; y <= f.ymax + 1e-9; y += ystep) {
    cairo_move_to(cr, f.left - 6, f.Y(y));
    cairo_line_to(cr, f.left, f.Y(y));
    cairo_stroke(cr);
    text_at(cr, tick_label(y), f.left - 10, f.Y(y) + 5, 1.0);
  }
  text_at(cr, chart.x_label, (f.left + f.right) / 2.0, f.bottom + 50, 0.5);
  cairo_save(cr);
  cairo_move_to(cr, 28, (f.top + f.bottom) / 2.0);
  cairo_rotate(cr, -boost::math::double_constants::half_pi);
  cairo_text_extents_t ext;
  cairo_text_extents(cr, chart.y_label.c_str(), &ext);
  cairo_rel_move_to(cr, -ext.width / 2.0, 0);
  cairo_show_text(cr, chart.y_label.c_str());
  cairo_restore(cr);
  cairo_set_font_size(cr, 18.0);
  text_at(cr, chart.title, (f.left + f.right) / 2.0, 36, 0.5);
  cairo_set_font_size(cr, 13.0);
  text_at(cr, chart.caption, (f.left + f.right) / 2.0, f.bottom + 80, 0.5);
}

void draw_legend(cairo_t* cr, const Frame& f, const Chart& chart) {
  const double lx = f.left + 16;
  double ly = f.top + 18;
  for (const auto& s : chart.series) {
    if (s.label.empty()) continue;
    set_colour(cr, colour_of(s.colour));
    if (s.kind == ChartSeries::Kind::band || s.kind == ChartSeries::Kind::bars) {
      cairo_rectangle(cr, lx, ly - 9, 28, 12);
      cairo_fill(cr);
    } else if (s.kind == ChartSeries::Kind::points) {
      cairo_arc(cr, lx + 14, ly - 3, 3.5, 0, two_pi);
      cairo_fill(cr);
    } else {
      cairo_set_dash(cr, dash, s.kind == ChartSeries::Kind::dashed_line ? 2 : 0, 0.0);
      cairo_set_line_width(cr, 2.5);
      cairo_move_to(cr, lx, ly - 3);
      cairo_line_to(cr, lx + 28, ly - 3);
      cairo_stroke(cr);
      cairo_set_dash(cr, dash, 0, 0.0);
    }
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_move_to(cr, lx + 36, ly + 2);
    cairo_show_text(cr, s.label.c_str());
    ly += 20;
  }
}

void draw(cairo_t* cr, const Chart& chart) {
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);
  const std::optional<Frame> frame = frame_of(chart);
  if (!frame) return;
  for (const auto& s : chart.series) draw_series(cr, *frame, s);
  draw_axes(cr, *frame, chart);
  draw_legend(cr, *frame, chart);
}

// Map markers: shape and colour both vary by species (Okabe & Ito 2008: blue, vermillion,
// bluish green, reddish purple, orange, sky blue).
void draw_marker(cairo_t* cr, std::size_t s, double x, double y, double r) {
  static constexpr Rgb marker_colours[] = {{0.0, 0.447, 0.698}, {0.835, 0.369, 0.0}, {0.0, 0.620, 0.451},
                                           {0.8, 0.475, 0.655}, {0.902, 0.624, 0.0}, {0.337, 0.706, 0.914}};
  set_colour(cr, marker_colours[s % 6]);
  cairo_new_path(cr);
  switch (s % 5) {
    case 0: cairo_arc(cr, x, y, r, 0, two_pi); break;
    case 1: cairo_rectangle(cr, x - r, y - r, 2 * r, 2 * r); break;
    case 2:
      cairo_move_to(cr, x, y - r * 1.2);
      cairo_line_to(cr, x + r * 1.1, y + r * 0.8);
      cairo_line_to(cr, x - r * 1.1, y + r * 0.8);
      cairo_close_path(cr);
      break;
    case 3:
      cairo_move_to(cr, x, y - r * 1.3);
      cairo_line_to(cr, x + r * 1.1, y);
      cairo_line_to(cr, x, y + r * 1.3);
      cairo_line_to(cr, x - r * 1.1, y);
      cairo_close_path(cr);
      break;
    default:
      cairo_set_line_width(cr, 2.0);
      cairo_move_to(cr, x - r, y - r);
      cairo_line_to(cr, x + r, y + r);
      cairo_move_to(cr, x - r, y + r);
      cairo_line_to(cr, x + r, y - r);
      cairo_stroke(cr);
      return;
  }
  cairo_fill(cr);
}

// The map's area in pixels and the scale from metres.
struct MapFrame {
  double left = 30.0, top = 50.0, map_w = 520.0, map_h = 520.0;
  Bounds bounds;
  double scale = 1.0;
  [[nodiscard]] double X(double x) const { return left + (x - bounds.xmin) * scale; }
  [[nodiscard]] double Y(double y) const { return top + map_h - (y - bounds.ymin) * scale; }
};

// Adds the window's rings (parts and holes) to the current path.
void add_window_path(cairo_t* cr, const MapFrame& m, const Window& window) {
  const auto ring_path = [&](const BgPolygon::ring_type& ring) {
    for (std::size_t i = 0; i < ring.size(); ++i) {
      if (i == 0)
        cairo_move_to(cr, m.X(ring[i].x()), m.Y(ring[i].y()));
      else
        cairo_line_to(cr, m.X(ring[i].x()), m.Y(ring[i].y()));
    }
    cairo_close_path(cr);
  };
  for (const auto& polygon : window.shape()) {
    ring_path(polygon.outer());
    for (const auto& inner : polygon.inners()) ring_path(inner);
  }
}

// The window's parts and holes, filled even-odd and outlined.
void draw_window(cairo_t* cr, const MapFrame& m, const Window& window) {
  cairo_new_path(cr);
  add_window_path(cr, m, window);
  cairo_set_fill_rule(cr, CAIRO_FILL_RULE_EVEN_ODD);
  cairo_set_source_rgb(cr, 0.96, 0.96, 0.93);
  cairo_fill_preserve(cr);
  cairo_set_source_rgb(cr, 0.1, 0.1, 0.1);
  cairo_set_line_width(cr, 1.5);
  cairo_stroke(cr);
}

void draw_map_legend(cairo_t* cr, const MapFrame& m, const MarkedPattern& pattern,
                     const std::vector<std::string>& species) {
  cairo_set_font_size(cr, 14.0);
  double ly = m.top + 20;
  std::vector<std::size_t> counts(species.size(), 0);
  for (const auto mark : pattern.marks) ++counts[mark];
  for (std::size_t s = 0; s < species.size(); ++s) {
    draw_marker(cr, s, m.left + m.map_w + 30, ly - 5, 5.0);
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_move_to(cr, m.left + m.map_w + 45, ly);
    cairo_show_text(cr, (species[s] + " (" + std::to_string(counts[s]) + ")").c_str());
    ly += 24;
  }
}

// A round length (1, 2 or 5 × 10^k m) near a quarter of the map width.
void draw_scale_bar(cairo_t* cr, const MapFrame& m) {
  const double target = 0.25 * m.map_w / m.scale;
  const double magnitude = std::pow(10.0, std::floor(std::log10(target)));
  double length = magnitude;
  for (const double k : {1.0, 2.0, 5.0, 10.0})
    if (k * magnitude <= target) length = k * magnitude;
  const double bx = m.left;
  const double by = m.top + m.map_h + 30;
  cairo_set_source_rgb(cr, 0, 0, 0);
  cairo_rectangle(cr, bx, by, length * m.scale, 6);
  cairo_fill(cr);
  cairo_move_to(cr, bx + length * m.scale + 8, by + 7);
  cairo_show_text(cr, (format_general(length) + " m").c_str());
}

// Ends drawing on `surface` and checks that cairo reported no failure on the way (a failed
// allocation or an invalid font leaves the image incomplete without any other sign).
void finish_drawing(cairo_t* cr, cairo_surface_t* surface, const std::string& figure) {
  const cairo_status_t drawing = cairo_status(cr);
  cairo_destroy(cr);
  cairo_surface_finish(surface);
  const cairo_status_t writing = cairo_surface_status(surface);
  cairo_surface_destroy(surface);
  const cairo_status_t status = drawing != CAIRO_STATUS_SUCCESS ? drawing : writing;
  if (status != CAIRO_STATUS_SUCCESS)
    throw Error("figure '" + figure + "' could not be drawn: " + cairo_status_to_string(status));
}

}  // namespace

std::string chart_svg(const Chart& chart) {
  std::string out;
  cairo_surface_t* surface = cairo_svg_surface_create_for_stream(append_to_string, &out, width_px, height_px);
  cairo_t* cr = cairo_create(surface);
  draw(cr, chart);
  finish_drawing(cr, surface, chart.title);
  return stable_ids(out);
}

std::string chart_png(const Chart& chart) {
  std::string out;
  cairo_surface_t* surface =
      cairo_image_surface_create(CAIRO_FORMAT_RGB24, static_cast<int>(width_px), static_cast<int>(height_px));
  cairo_t* cr = cairo_create(surface);
  draw(cr, chart);
  const cairo_status_t drawing = cairo_status(cr);
  cairo_destroy(cr);
  const cairo_status_t writing =
      drawing == CAIRO_STATUS_SUCCESS ? cairo_surface_write_to_png_stream(surface, append_to_string, &out) : drawing;
  cairo_surface_destroy(surface);
  if (writing != CAIRO_STATUS_SUCCESS)
    throw Error("figure '" + chart.title + "' could not be drawn: " + cairo_status_to_string(writing));
  return out;
}

std::string plot_map_svg(const Plot& plot, const MarkedPattern& pattern, const std::vector<std::string>& species) {
  // The plot fills a 520 px square at most; the canvas ends below its scale bar (or its
  // legend), so a wide plot leaves no empty band above or below it.
  MapFrame m;
  m.bounds = plot.window.bounds();
  m.scale = std::min(m.map_w / m.bounds.width(), m.map_h / m.bounds.height());
  m.map_h = m.bounds.height() * m.scale;
  const double height = std::max(m.top + m.map_h + 60.0, m.top + 40.0 + 24.0 * static_cast<double>(species.size()));
  std::string out;
  cairo_surface_t* surface = cairo_svg_surface_create_for_stream(append_to_string, &out, 760.0, height);
  cairo_t* cr = cairo_create(surface);
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);
  draw_window(cr, m, plot.window);
  for (std::size_t i = 0; i < pattern.points.size(); ++i)
    draw_marker(cr, pattern.marks[i], m.X(pattern.points[i].x), m.Y(pattern.points[i].y), 3.5);
  cairo_select_font_face(cr, "DejaVu Sans", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, 18.0);
  cairo_set_source_rgb(cr, 0, 0, 0);
  cairo_move_to(cr, m.left, 32);
  cairo_show_text(cr, ("Plot " + plot.id + " (" + format_significant(plot.window.area_m2() / 1e4, 3) + " ha, " +
                       std::to_string(pattern.points.size()) + " sightings)")
                          .c_str());
  draw_map_legend(cr, m, pattern, species);
  draw_scale_bar(cr, m);
  finish_drawing(cr, surface, "map of plot " + plot.id);
  return stable_ids(out);
}

std::string field_map_svg(const RasterGrid& field, const std::vector<Plot>& plots, const std::string& title,
                          const std::string& legend, bool diverging) {
  MapFrame m;
  m.bounds = Bounds{field.x_min, field.y_min(), field.x_max(), field.y_max};
  m.scale = std::min(m.map_w / m.bounds.width(), m.map_h / m.bounds.height());
  m.map_h = m.bounds.height() * m.scale;
  double lo = std::numeric_limits<double>::infinity();
  double hi = -lo;
  for (double v : field.values)
    if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  if (!(hi >= lo)) lo = hi = 0.0;
  const double extent = diverging ? std::max({std::abs(lo), std::abs(hi), 1e-300}) : std::max(hi, 1e-300);
  const Rgb blue = colour_of(0);
  const Rgb red = colour_of(1);
  // t in [-1, 1] (diverging) or [0, 1]: white at 0, the palette colour at the ends.
  const auto colour = [&](double t) {
    const Rgb& end = t < 0.0 ? blue : (diverging ? red : blue);
    const double a = std::min(1.0, std::abs(t));
    return Rgb{1.0 + (end.r - 1.0) * a, 1.0 + (end.g - 1.0) * a, 1.0 + (end.b - 1.0) * a};
  };
  const double height = std::max(m.top + m.map_h + 60.0, m.top + 260.0);
  std::string out;
  cairo_surface_t* surface = cairo_svg_surface_create_for_stream(append_to_string, &out, 760.0, height);
  cairo_t* cr = cairo_create(surface);
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);
  const double cw = field.cell_width * m.scale;
  const double ch = field.cell_height * m.scale;
  const auto window_paths = [&] {
    cairo_new_path(cr);
    for (const Plot& plot : plots) add_window_path(cr, m, plot.window);
  };
  // Cells are drawn clipped to the windows, so their edges follow the plot outlines.
  cairo_save(cr);
  window_paths();
  cairo_set_fill_rule(cr, CAIRO_FILL_RULE_EVEN_ODD);
  cairo_clip(cr);
  for (std::size_t r = 0; r < field.rows; ++r)
    for (std::size_t c = 0; c < field.columns; ++c) {
      const double v = field.values[r * field.columns + c];
      if (!std::isfinite(v)) continue;
      const Rgb k = colour(v / extent);
      cairo_set_source_rgb(cr, k.r, k.g, k.b);
      // A hair wider than the cell, so no seams show between cells.
      cairo_rectangle(cr, m.X(field.x_min) + static_cast<double>(c) * cw,
                      m.Y(field.y_max) + static_cast<double>(r) * ch, cw + 0.3, ch + 0.3);
      cairo_fill(cr);
    }
  cairo_restore(cr);
  cairo_set_source_rgb(cr, 0.2, 0.2, 0.2);
  cairo_set_line_width(cr, 1.2);
  window_paths();
  cairo_stroke(cr);
  // Colour bar: 200 px tall right of the map, labelled at its ends and middle.
  const double bx = m.left + m.map_w + 40.0;
  const double by = m.top + 20.0;
  for (int i = 0; i < 100; ++i) {
    const double t = diverging ? 1.0 - 2.0 * i / 99.0 : 1.0 - i / 99.0;
    const Rgb k = colour(t);
    cairo_set_source_rgb(cr, k.r, k.g, k.b);
    cairo_rectangle(cr, bx, by + 2.0 * i, 24.0, 2.3);
    cairo_fill(cr);
  }
  cairo_set_source_rgb(cr, 0, 0, 0);
  cairo_set_line_width(cr, 0.8);
  cairo_rectangle(cr, bx, by, 24.0, 200.0);
  cairo_stroke(cr);
  cairo_select_font_face(cr, "DejaVu Sans", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, 13.0);
  const auto label = [&](double y, double value) {
    cairo_move_to(cr, bx + 30.0, y + 4.0);
    cairo_show_text(cr, format_significant(value, 3).c_str());
  };
  label(by, extent);
  label(by + 100.0, diverging ? 0.0 : 0.5 * extent);
  label(by + 200.0, diverging ? -extent : 0.0);
  // The legend under the bar, broken at its first space when it is long.
  const auto space = legend.find(' ');
  const bool two_lines = legend.size() > 12 && space != std::string::npos;
  cairo_move_to(cr, bx, by + 222.0);
  cairo_show_text(cr, (two_lines ? legend.substr(0, space) : legend).c_str());
  if (two_lines) {
    cairo_move_to(cr, bx, by + 240.0);
    cairo_show_text(cr, legend.substr(space + 1).c_str());
  }
  cairo_set_font_size(cr, 18.0);
  cairo_move_to(cr, m.left, 32);
  cairo_show_text(cr, title.c_str());
  cairo_set_font_size(cr, 13.0);
  draw_scale_bar(cr, m);
  finish_drawing(cr, surface, title);
  return stable_ids(out);
}

Chart envelope_chart(const EnvelopeFigure& f) {
  Chart c;
  c.title = f.title;
  c.x_label = "distance r (m)";
  c.y_label = f.y_label;
  c.caption = f.caption;
  using Kind = ChartSeries::Kind;
  c.series.push_back({Kind::band, f.r, f.global_low, f.global_high, 3, "global envelope (extreme rank)"});
  c.series.push_back({Kind::band, f.r, f.pointwise_low, f.pointwise_high, 2, "pointwise envelope"});
  c.series.push_back({Kind::dashed_line, f.r, f.theoretical, {}, 1, "CSR (theoretical)"});
  c.series.push_back({Kind::line, f.r, f.observed, {}, 0, "observed"});
  return c;
}

}  // namespace stipple
