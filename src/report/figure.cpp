#include "stipple/report/figure.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <cairo-svg.h>
#include <cairo.h>

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

}  // namespace

std::string chart_svg(const Chart& chart) {
  std::string out;
  cairo_surface_t* surface = cairo_svg_surface_create_for_stream(append_to_string, &out, width_px, height_px);
  cairo_t* cr = cairo_create(surface);
  draw(cr, chart);
  cairo_destroy(cr);
  cairo_surface_finish(surface);
  cairo_surface_destroy(surface);
  return out;
}

std::string chart_png(const Chart& chart) {
  std::string out;
  cairo_surface_t* surface =
      cairo_image_surface_create(CAIRO_FORMAT_RGB24, static_cast<int>(width_px), static_cast<int>(height_px));
  cairo_t* cr = cairo_create(surface);
  draw(cr, chart);
  cairo_destroy(cr);
  cairo_surface_write_to_png_stream(surface, append_to_string, &out);
  cairo_surface_destroy(surface);
  return out;
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
