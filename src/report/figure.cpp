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
constexpr Rgb observed_colour{0.0, 0.447, 0.698};      // blue
constexpr Rgb theory_colour{0.835, 0.369, 0.0};        // vermillion
constexpr Rgb global_band{0.80, 0.80, 0.80};
constexpr Rgb pointwise_band{0.62, 0.62, 0.62};

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

void draw(cairo_t* cr, const EnvelopeFigure& f) {
  const double left = 90.0;
  const double right = width_px - 30.0;
  const double top = 60.0;
  const double bottom = height_px - 100.0;
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);
  if (f.r.empty()) return;

  double ymin = std::numeric_limits<double>::infinity();
  double ymax = -ymin;
  for (const auto* series : {&f.observed, &f.theoretical, &f.global_low, &f.global_high,
                             &f.pointwise_low, &f.pointwise_high}) {
    for (const double v : *series) {
      if (std::isnan(v)) continue;
      ymin = std::min(ymin, v);
      ymax = std::max(ymax, v);
    }
  }
  if (!(ymax > ymin)) ymax = ymin + 1.0;
  ymin = std::min(0.0, ymin);
  const double xmax = f.r.back();
  const auto X = [&](double x) { return left + (right - left) * x / xmax; };
  const auto Y = [&](double y) { return bottom - (bottom - top) * (y - ymin) / (ymax - ymin); };

  const auto band = [&](const std::vector<double>& lo, const std::vector<double>& hi, Rgb c) {
    bool open = false;
    std::vector<std::size_t> idx;
    for (std::size_t k = 0; k < f.r.size(); ++k)
      if (!std::isnan(lo[k]) && !std::isnan(hi[k])) idx.push_back(k);
    if (idx.empty()) return;
    cairo_new_path(cr);
    for (const auto k : idx) {
      if (!open) cairo_move_to(cr, X(f.r[k]), Y(hi[k]));
      else cairo_line_to(cr, X(f.r[k]), Y(hi[k]));
      open = true;
    }
    for (auto it = idx.rbegin(); it != idx.rend(); ++it) cairo_line_to(cr, X(f.r[*it]), Y(lo[*it]));
    cairo_close_path(cr);
    cairo_set_source_rgb(cr, c.r, c.g, c.b);
    cairo_fill(cr);
  };
  band(f.global_low, f.global_high, global_band);
  band(f.pointwise_low, f.pointwise_high, pointwise_band);

  const auto line = [&](const std::vector<double>& y, Rgb c, double width, bool dashed) {
    cairo_new_path(cr);
    bool open = false;
    for (std::size_t k = 0; k < f.r.size(); ++k) {
      if (std::isnan(y[k])) {
        open = false;
        continue;
      }
      if (!open) cairo_move_to(cr, X(f.r[k]), Y(y[k]));
      else cairo_line_to(cr, X(f.r[k]), Y(y[k]));
      open = true;
    }
    const double dash[] = {8.0, 5.0};
    cairo_set_dash(cr, dash, dashed ? 2 : 0, 0.0);
    cairo_set_line_width(cr, width);
    cairo_set_source_rgb(cr, c.r, c.g, c.b);
    cairo_stroke(cr);
    cairo_set_dash(cr, dash, 0, 0.0);
  };
  line(f.theoretical, theory_colour, 2.0, true);
  line(f.observed, observed_colour, 2.5, false);

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
  const double xstep = nice_step(xmax);
  for (double x = 0.0; x <= xmax + 1e-9; x += xstep) {
    cairo_move_to(cr, X(x), bottom);
    cairo_line_to(cr, X(x), bottom + 6);
    cairo_stroke(cr);
    text_at(format_general(x), X(x), bottom + 24, 0.5);
  }
  const double ystep = nice_step(ymax - ymin);
  for (double y = std::ceil(ymin / ystep) * ystep; y <= ymax + 1e-9; y += ystep) {
    cairo_move_to(cr, left - 6, Y(y));
    cairo_line_to(cr, left, Y(y));
    cairo_stroke(cr);
    text_at(format_general(y), left - 10, Y(y) + 5, 1.0);
  }
  text_at("distance r (m)", (left + right) / 2.0, bottom + 50, 0.5);
  cairo_save(cr);
  cairo_move_to(cr, 28, (top + bottom) / 2.0);
  cairo_rotate(cr, -3.14159265358979323846 / 2.0);
  cairo_text_extents_t ext;
  cairo_text_extents(cr, f.y_label.c_str(), &ext);
  cairo_rel_move_to(cr, -ext.width / 2.0, 0);
  cairo_show_text(cr, f.y_label.c_str());
  cairo_restore(cr);
  cairo_set_font_size(cr, 18.0);
  text_at(f.title, (left + right) / 2.0, 36, 0.5);
  cairo_set_font_size(cr, 13.0);
  text_at(f.caption, (left + right) / 2.0, bottom + 80, 0.5);

  // Legend.
  const double lx = left + 16;
  double ly = top + 18;
  const auto legend = [&](const std::string& label, Rgb c, bool filled, bool dashed) {
    if (filled) {
      cairo_set_source_rgb(cr, c.r, c.g, c.b);
      cairo_rectangle(cr, lx, ly - 9, 28, 12);
      cairo_fill(cr);
    } else {
      const double dash[] = {8.0, 5.0};
      cairo_set_dash(cr, dash, dashed ? 2 : 0, 0.0);
      cairo_set_source_rgb(cr, c.r, c.g, c.b);
      cairo_set_line_width(cr, 2.5);
      cairo_move_to(cr, lx, ly - 3);
      cairo_line_to(cr, lx + 28, ly - 3);
      cairo_stroke(cr);
      cairo_set_dash(cr, dash, 0, 0.0);
    }
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_move_to(cr, lx + 36, ly + 2);
    cairo_show_text(cr, label.c_str());
    ly += 20;
  };
  legend("observed", observed_colour, false, false);
  legend("CSR (theoretical)", theory_colour, false, true);
  legend("pointwise envelope", pointwise_band, true, false);
  legend("global envelope (extreme rank)", global_band, true, false);
}

}  // namespace

std::string envelope_figure_svg(const EnvelopeFigure& figure) {
  std::string out;
  cairo_surface_t* surface =
      cairo_svg_surface_create_for_stream(append_to_string, &out, width_px, height_px);
  cairo_t* cr = cairo_create(surface);
  draw(cr, figure);
  cairo_destroy(cr);
  cairo_surface_finish(surface);
  cairo_surface_destroy(surface);
  return out;
}

std::string envelope_figure_png(const EnvelopeFigure& figure) {
  std::string out;
  cairo_surface_t* surface = cairo_image_surface_create(
      CAIRO_FORMAT_RGB24, static_cast<int>(width_px), static_cast<int>(height_px));
  cairo_t* cr = cairo_create(surface);
  draw(cr, figure);
  cairo_destroy(cr);
  cairo_surface_write_to_png_stream(surface, append_to_string, &out);
  cairo_surface_destroy(surface);
  return out;
}

}  // namespace stipple
