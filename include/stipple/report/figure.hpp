#pragma once
/// Figures drawn with cairo: a summary function with its Monte Carlo envelopes.

#include <string>
#include <vector>

namespace stipple {

struct EnvelopeFigure {
  std::string title;     ///< e.g. "glade - hazel"
  std::string y_label;   ///< e.g. "L(r) (m)"
  std::vector<double> r;
  std::vector<double> observed;
  std::vector<double> theoretical;
  std::vector<double> pointwise_low;
  std::vector<double> pointwise_high;
  std::vector<double> global_low;
  std::vector<double> global_high;
  std::string caption;   ///< one line under the plot (test results)
};

/// The figure as SVG text.
[[nodiscard]] std::string envelope_figure_svg(const EnvelopeFigure& figure);
/// The figure as PNG bytes (900 x 600 px).
[[nodiscard]] std::string envelope_figure_png(const EnvelopeFigure& figure);

}  // namespace stipple
