// Figures drawn with cairo: a PNG that decodes at the stated size with ink where the
// series are, an SVG that is a complete document and identical on a re-run, a map with its
// window and markers. The PNG is decoded by cairo's own PNG reader (libpng).

#include "stipple/report/figure.hpp"

#include <cairo.h>
#include <gtest/gtest.h>

#include <string>

namespace stipple {
namespace {

Chart line_chart() {
  Chart c;
  c.title = "L of birch in plot north";
  c.x_label = "distance r (m)";
  c.y_label = "L(r) (m)";
  c.caption = "99 CSR simulations";
  c.series.push_back({ChartSeries::Kind::band, {0, 10, 20}, {0, 9, 18}, {0, 11, 22}, 3, "global envelope"});
  c.series.push_back({ChartSeries::Kind::line, {0, 10, 20}, {0, 10, 20}, {}, 0, "observed"});
  return c;
}

struct PngReader {
  const std::string* bytes;
  std::size_t at = 0;
};

cairo_status_t read_png(void* closure, unsigned char* data, unsigned int length) {
  auto* r = static_cast<PngReader*>(closure);
  if (r->at + length > r->bytes->size()) return CAIRO_STATUS_READ_ERROR;
  std::copy_n(r->bytes->data() + r->at, length, data);
  r->at += length;
  return CAIRO_STATUS_SUCCESS;
}

TEST(Figure, PngDecodesAtNineHundredBySixHundredWithTheLineDrawn) {
  const std::string png = chart_png(line_chart());
  PngReader reader{&png};
  cairo_surface_t* image = cairo_image_surface_create_from_png_stream(read_png, &reader);
  ASSERT_EQ(cairo_surface_status(image), CAIRO_STATUS_SUCCESS);
  EXPECT_EQ(cairo_image_surface_get_width(image), 900);
  EXPECT_EQ(cairo_image_surface_get_height(image), 600);
  // The observed line (Okabe-Ito blue, 0 114 178) crosses the plotting area's middle.
  const unsigned char* data = cairo_image_surface_get_data(image);
  const int stride = cairo_image_surface_get_stride(image);
  std::size_t blue = 0;
  for (int y = 60; y < 500; ++y)
    for (int x = 90; x < 870; ++x) {
      const unsigned char* px = data + y * stride + 4 * x;  // B G R A in memory
      blue += px[0] > 150 && px[2] < 40 ? 1 : 0;
    }
  cairo_surface_destroy(image);
  EXPECT_GT(blue, 500u);
}

TEST(Figure, SvgIsACompleteDocumentAndTheSameOnEveryRun) {
  const std::string svg = chart_svg(line_chart());
  EXPECT_EQ(svg.rfind("<?xml", 0), 0u);
  EXPECT_NE(svg.find("<svg"), std::string::npos);
  EXPECT_NE(svg.find("</svg>"), std::string::npos);
  EXPECT_NE(svg.find("width=\"900pt\""), std::string::npos);
  EXPECT_EQ(chart_svg(line_chart()), svg);  // ids renumbered per document (cairo counts per process)
}

TEST(Figure, EnvelopeChartHasTheEnvelopesTheoryAndObservedWithLegends) {
  EnvelopeFigure f{"t", "L(r) (m)", {1, 2}, {1, 2}, {1, 2}, {0.9, 1.9}, {1.1, 2.1}, {0.8, 1.8}, {1.2, 2.2}, "c"};
  const Chart c = envelope_chart(f);
  ASSERT_EQ(c.series.size(), 4u);
  for (const auto& s : c.series) EXPECT_FALSE(s.label.empty());
  EXPECT_EQ(c.series.back().y, f.observed);  // drawn last, on top
}

TEST(Figure, MapShowsTheWindowAndEverySpecies) {
  const Plot plot{"north", Window::rectangle(0, 0, 100, 50)};
  MarkedPattern pattern;
  pattern.points = {{10, 10}, {50, 25}, {90, 40}};
  pattern.marks = {0, 1, 1};
  pattern.feature_ids = {1, 2, 3};
  const std::string svg = plot_map_svg(plot, pattern, {"birch", "hazel"});
  EXPECT_NE(svg.find("<svg"), std::string::npos);
  EXPECT_NE(svg.find("</svg>"), std::string::npos);
  EXPECT_GT(svg.size(), 2000u);  // window outline, three markers, legend and scale bar glyphs
}

}  // namespace
}  // namespace stipple
