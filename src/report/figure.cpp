#include "stipple/report/figure.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <regex>

#include <cairo-svg.h>
#include <cairo.h>

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
    {0.0, 0.447, 0.698},    // blue
    {0.835, 0.369, 0.0},    // vermillion
    {0.62, 0.62, 0.62},     // grey
    {0.80, 0.80, 0.80},     // light grey
    {0.0, 0.620, 0.451},    // bluish green
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

void draw(cairo_t* cr, const Chart& chart) {
  const double left = 90.0;
  const double right = width_px - 30.0;
  const double top = 60.0;
  const double bottom = height_px - 100.0;
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);

  double xmin = std::numeric_limits<double>::infinity();
  double xmax = -xmin;
  double ymin = 0.0;
  double ymax = -std::numeric_limits<double>::infinity();
  for (const auto& s : chart.series) {
    for (const double v : s.x)
      if (std::isfinite(v)) xmin = std::min(xmin, v), xmax = std::max(xmax, v);
    if (s.kind == ChartSeries::Kind::bars)
      for (const double v : s.y_upper)
        if (std::isfinite(v)) xmax = std::max(xmax, v);
    for (const auto* ys : {&s.y, &s.y_upper}) {
      if (s.kind == ChartSeries::Kind::bars && ys == &s.y_upper) continue;
      for (const double v : *ys)
        if (std::isfinite(v)) ymin = std::min(ymin, v), ymax = std::max(ymax, v);
    }
  }
  if (!std::isfinite(xmin)) return;
  xmin = std::min(0.0, xmin);
  if (!(xmax > xmin)) xmax = xmin + 1.0;
  if (!(ymax > ymin)) ymax = ymin + 1.0;
  ymax *= 1.05;
  const auto X = [&](double x) { return left + (right - left) * (x - xmin) / (xmax - xmin); };
  const auto Y = [&](double y) { return bottom - (bottom - top) * (y - ymin) / (ymax - ymin); };
  const auto set = [&](int c) {
    const Rgb rgb = colour_of(c);
    cairo_set_source_rgb(cr, rgb.r, rgb.g, rgb.b);
  };
  const double dash[] = {8.0, 5.0};

  for (const auto& s : chart.series) {
    switch (s.kind) {
      case ChartSeries::Kind::band: {
        std::vector<std::size_t> idx;
        for (std::size_t k = 0; k < s.x.size(); ++k)
          if (std::isfinite(s.y[k]) && std::isfinite(s.y_upper[k])) idx.push_back(k);
        if (idx.empty()) break;
        cairo_new_path(cr);
        cairo_move_to(cr, X(s.x[idx.front()]), Y(s.y_upper[idx.front()]));
        for (const auto k : idx) cairo_line_to(cr, X(s.x[k]), Y(s.y_upper[k]));
        for (auto it = idx.rbegin(); it != idx.rend(); ++it) cairo_line_to(cr, X(s.x[*it]), Y(s.y[*it]));
        cairo_close_path(cr);
        set(s.colour);
        cairo_fill(cr);
        break;
      }
      case ChartSeries::Kind::bars:
        for (std::size_t k = 0; k < s.x.size(); ++k) {
          cairo_rectangle(cr, X(s.x[k]), Y(s.y[k]), X(s.y_upper[k]) - X(s.x[k]), Y(ymin) - Y(s.y[k]));
          set(s.colour);
          cairo_fill_preserve(cr);
          cairo_set_source_rgb(cr, 1, 1, 1);
          cairo_set_line_width(cr, 1.0);
          cairo_stroke(cr);
        }
        break;
      case ChartSeries::Kind::points:
        for (std::size_t k = 0; k < s.x.size(); ++k) {
          if (!std::isfinite(s.y[k])) continue;
          cairo_new_path(cr);
          cairo_arc(cr, X(s.x[k]), Y(s.y[k]), 3.5, 0, 2 * 3.14159265358979323846);
          set(s.colour);
          cairo_fill(cr);
        }
        break;
      case ChartSeries::Kind::line:
      case ChartSeries::Kind::dashed_line: {
        cairo_new_path(cr);
        bool open = false;
        for (std::size_t k = 0; k < s.x.size(); ++k) {
          if (!std::isfinite(s.y[k])) {
            open = false;
            continue;
          }
          if (!open) cairo_move_to(cr, X(s.x[k]), Y(s.y[k]));
          else cairo_line_to(cr, X(s.x[k]), Y(s.y[k]));
          open = true;
        }
        cairo_set_dash(cr, dash, s.kind == ChartSeries::Kind::dashed_line ? 2 : 0, 0.0);
        cairo_set_line_width(cr, s.kind == ChartSeries::Kind::line ? 2.5 : 2.0);
        set(s.colour);
        cairo_stroke(cr);
        cairo_set_dash(cr, dash, 0, 0.0);
        break;
      }
    }
  }

  // Axes, ticks and labels.
  cairo_set_source_rgb(cr, 0, 0, 0);
  cairo_set_line_width(cr, 1.2);
  cairo_rectangle(cr, left, top, right - left, bottom - top);
  cairo_stroke(cr);
  cairo_select_font_face(cr, "DejaVu Sans", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, 14.0);
  const auto text_at = [&](const std::string& s, double x, double y, double align_x) {
    cairo_text_extents_t ext;
    cairo_text_extents(cr, s.c_str(), &ext);
    cairo_move_to(cr, x - align_x * ext.width, y);
    cairo_show_text(cr, s.c_str());
  };
  const double xstep = nice_step(xmax - xmin);
  for (double x = std::ceil(xmin / xstep) * xstep; x <= xmax + 1e-9; x += xstep) {
    cairo_move_to(cr, X(x), bottom);
    cairo_line_to(cr, X(x), bottom + 6);
    cairo_stroke(cr);
    text_at(format_general(std::abs(x) < 1e-12 ? 0.0 : x), X(x), bottom + 24, 0.5);
  }
  const double ystep = nice_step(ymax - ymin);
  for (double y = std::ceil(ymin / ystep) * ystep; y <= ymax + 1e-9; y += ystep) {
    cairo_move_to(cr, left - 6, Y(y));
    cairo_line_to(cr, left, Y(y));
    cairo_stroke(cr);
    text_at(format_general(std::abs(y) < 1e-12 ? 0.0 : y), left - 10, Y(y) + 5, 1.0);
  }
  text_at(chart.x_label, (left + right) / 2.0, bottom + 50, 0.5);
  cairo_save(cr);
  cairo_move_to(cr, 28, (top + bottom) / 2.0);
  cairo_rotate(cr, -3.14159265358979323846 / 2.0);
  cairo_text_extents_t ext;
  cairo_text_extents(cr, chart.y_label.c_str(), &ext);
  cairo_rel_move_to(cr, -ext.width / 2.0, 0);
  cairo_show_text(cr, chart.y_label.c_str());
  cairo_restore(cr);
  cairo_set_font_size(cr, 18.0);
  text_at(chart.title, (left + right) / 2.0, 36, 0.5);
  cairo_set_font_size(cr, 13.0);
  text_at(chart.caption, (left + right) / 2.0, bottom + 80, 0.5);

  // Legend.
  const double lx = left + 16;
  double ly = top + 18;
  for (const auto& s : chart.series) {
    if (s.label.empty()) continue;
    const Rgb c = colour_of(s.colour);
    cairo_set_source_rgb(cr, c.r, c.g, c.b);
    if (s.kind == ChartSeries::Kind::band || s.kind == ChartSeries::Kind::bars) {
      cairo_rectangle(cr, lx, ly - 9, 28, 12);
      cairo_fill(cr);
    } else if (s.kind == ChartSeries::Kind::points) {
      cairo_arc(cr, lx + 14, ly - 3, 3.5, 0, 2 * 3.14159265358979323846);
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
  const cairo_status_t writing = drawing == CAIRO_STATUS_SUCCESS
                                     ? cairo_surface_write_to_png_stream(surface, append_to_string, &out)
                                     : drawing;
  cairo_surface_destroy(surface);
  if (writing != CAIRO_STATUS_SUCCESS)
    throw Error("figure '" + chart.title + "' could not be drawn: " + cairo_status_to_string(writing));
  return out;
}

std::string plot_map_svg(const Plot& plot, const MarkedPattern& pattern, const std::vector<std::string>& species) {
  std::string out;
  const double width = 760.0;
  const double height = 620.0;
  cairo_surface_t* surface = cairo_svg_surface_create_for_stream(append_to_string, &out, width, height);
  cairo_t* cr = cairo_create(surface);
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);
  const Bounds& b = plot.window.bounds();
  const double left = 30.0, top = 50.0, map_w = 520.0, map_h = 520.0;
  const double scale = std::min(map_w / b.width(), map_h / b.height());
  const auto X = [&](double x) { return left + (x - b.xmin) * scale; };
  const auto Y = [&](double y) { return top + map_h - (y - b.ymin) * scale; };
  // Window: parts and holes, even-odd fill.
  cairo_new_path(cr);
  for (const auto& polygon : plot.window.shape()) {
    const auto ring_path = [&](const BgPolygon::ring_type& ring) {
      for (std::size_t i = 0; i < ring.size(); ++i) {
        if (i == 0) cairo_move_to(cr, X(ring[i].x()), Y(ring[i].y()));
        else cairo_line_to(cr, X(ring[i].x()), Y(ring[i].y()));
      }
      cairo_close_path(cr);
    };
    ring_path(polygon.outer());
    for (const auto& inner : polygon.inners()) ring_path(inner);
  }
  cairo_set_fill_rule(cr, CAIRO_FILL_RULE_EVEN_ODD);
  cairo_set_source_rgb(cr, 0.96, 0.96, 0.93);
  cairo_fill_preserve(cr);
  cairo_set_source_rgb(cr, 0.1, 0.1, 0.1);
  cairo_set_line_width(cr, 1.5);
  cairo_stroke(cr);
  // Markers: shape and colour both vary by species.
  const auto marker = [&](std::size_t s, double x, double y, double r) {
    // Okabe & Ito: blue, vermillion, bluish green, reddish purple, orange, sky blue.
    static constexpr Rgb marker_colours[] = {{0.0, 0.447, 0.698}, {0.835, 0.369, 0.0}, {0.0, 0.620, 0.451},
                                             {0.8, 0.475, 0.655}, {0.902, 0.624, 0.0}, {0.337, 0.706, 0.914}};
    const Rgb c = marker_colours[s % 6];
    cairo_set_source_rgb(cr, c.r, c.g, c.b);
    cairo_new_path(cr);
    switch (s % 5) {
      case 0: cairo_arc(cr, x, y, r, 0, 2 * 3.14159265358979323846); break;
      case 1: cairo_rectangle(cr, x - r, y - r, 2 * r, 2 * r); break;
      case 2: cairo_move_to(cr, x, y - r * 1.2); cairo_line_to(cr, x + r * 1.1, y + r * 0.8);
              cairo_line_to(cr, x - r * 1.1, y + r * 0.8); cairo_close_path(cr); break;
      case 3: cairo_move_to(cr, x, y - r * 1.3); cairo_line_to(cr, x + r * 1.1, y);
              cairo_line_to(cr, x, y + r * 1.3); cairo_line_to(cr, x - r * 1.1, y); cairo_close_path(cr); break;
      default:
        cairo_set_line_width(cr, 2.0);
        cairo_move_to(cr, x - r, y - r); cairo_line_to(cr, x + r, y + r);
        cairo_move_to(cr, x - r, y + r); cairo_line_to(cr, x + r, y - r);
        cairo_stroke(cr);
        return;
    }
    cairo_fill(cr);
  };
  for (std::size_t i = 0; i < pattern.points.size(); ++i)
    marker(pattern.marks[i], X(pattern.points[i].x), Y(pattern.points[i].y), 3.5);
  cairo_select_font_face(cr, "DejaVu Sans", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, 18.0);
  cairo_set_source_rgb(cr, 0, 0, 0);
  cairo_move_to(cr, left, 32);
  cairo_show_text(cr, ("Plot " + plot.id + " (" + format_significant(plot.window.area_m2() / 1e4, 3) + " ha, " +
                       std::to_string(pattern.points.size()) + " sightings)").c_str());
  // Legend.
  cairo_set_font_size(cr, 14.0);
  double ly = top + 20;
  std::vector<std::size_t> counts(species.size(), 0);
  for (const auto m : pattern.marks) ++counts[m];
  for (std::size_t s = 0; s < species.size(); ++s) {
    marker(s, left + map_w + 30, ly - 5, 5.0);
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_move_to(cr, left + map_w + 45, ly);
    cairo_show_text(cr, (species[s] + " (" + std::to_string(counts[s]) + ")").c_str());
    ly += 24;
  }
  // Scale bar: a round length near a quarter of the map width.
  const double target = 0.25 * map_w / scale;
  const double magnitude = std::pow(10.0, std::floor(std::log10(target)));
  double length = magnitude;
  for (const double m : {1.0, 2.0, 5.0, 10.0})
    if (m * magnitude <= target) length = m * magnitude;
  const double bx = left;
  const double by = top + map_h + 30;
  cairo_set_source_rgb(cr, 0, 0, 0);
  cairo_rectangle(cr, bx, by, length * scale, 6);
  cairo_fill(cr);
  cairo_move_to(cr, bx + length * scale + 8, by + 7);
  cairo_show_text(cr, (format_general(length) + " m").c_str());
  finish_drawing(cr, surface, "map of plot " + plot.id);
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
