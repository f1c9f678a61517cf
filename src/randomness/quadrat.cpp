#include "stipple/randomness/quadrat.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <string_view>

#include <boost/geometry.hpp>

#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace bg = boost::geometry;

namespace stipple {

std::pair<std::size_t, std::size_t> parse_quadrat_grid(const std::string& text) {
  // Each factor is a run of digits checked on its own before the product is formed, so
  // neither a sign nor an overflow can slip through.
  const auto factor = [&](std::string_view digits) -> std::size_t {
    const auto value = parse_whole_number(digits);
    if (!value) throw InputError("quadrats must look like 4x4, two whole numbers (got '" + text + "')", {"quadrats"});
    if (*value < 1 || *value > 10000)
      throw InputError("quadrats needs between 2 and 10000 cells, each side 1 to 10000 (got '" + text + "')",
                       {"quadrats"});
    return static_cast<std::size_t>(*value);
  };
  const auto x = text.find_first_of("xX");
  if (x == std::string::npos)
    throw InputError("quadrats must look like 4x4, two whole numbers (got '" + text + "')", {"quadrats"});
  const std::string_view view(text);
  const std::size_t nx = factor(view.substr(0, x));
  const std::size_t ny = factor(view.substr(x + 1));
  if (nx * ny < 2 || nx * ny > 10000)
    throw InputError("quadrats needs between 2 and 10000 cells (got '" + text + "')", {"quadrats"});
  return {nx, ny};
}

QuadratResult quadrat_test(const std::vector<Point>& points, const Window& window, const QuadratOptions& options,
                           Engine& engine) {
  if (options.nx < 1 || options.ny < 1 || options.nx * options.ny < 2)
    throw AnalysisError("the quadrat test needs at least 2 cells");
  if (points.empty()) throw AnalysisError("the quadrat test needs at least one point");
  const Bounds& b = window.bounds();
  const double cw = b.width() / static_cast<double>(options.nx);
  const double ch = b.height() / static_cast<double>(options.ny);
  const std::size_t cells = options.nx * options.ny;
  std::vector<double> clipped(cells, 0.0);
  for (std::size_t iy = 0; iy < options.ny; ++iy) {
    for (std::size_t ix = 0; ix < options.nx; ++ix) {
      const BgBox box(BgPoint(b.xmin + cw * static_cast<double>(ix), b.ymin + ch * static_cast<double>(iy)),
                      BgPoint(b.xmin + cw * static_cast<double>(ix + 1), b.ymin + ch * static_cast<double>(iy + 1)));
      BgPolygon cell;
      bg::convert(box, cell);
      BgMultiPolygon part;
      bg::intersection(window.shape(), cell, part);
      clipped[iy * options.nx + ix] = bg::area(part);
    }
  }
  std::vector<std::uint64_t> all_counts(cells, 0);
  for (const auto& p : points) {
    const auto ix = std::min(options.nx - 1, static_cast<std::size_t>(std::max(0.0, std::floor((p.x - b.xmin) / cw))));
    const auto iy = std::min(options.ny - 1, static_cast<std::size_t>(std::max(0.0, std::floor((p.y - b.ymin) / ch))));
    ++all_counts[iy * options.nx + ix];
  }
  QuadratResult q;
  q.nx = options.nx;
  q.ny = options.ny;
  const double n = static_cast<double>(points.size());
  const double total_area = window.area_m2();
  // Slivers from clipping (below a millionth of a cell) carry no information.
  const double sliver = 1e-6 * cw * ch;
  for (std::size_t c = 0; c < cells; ++c) {
    if (clipped[c] <= sliver) {
      if (all_counts[c] > 0)
        clipped[c] = sliver;  // a point on a sliver: keep the cell
      else
        continue;
    }
    q.counts.push_back(all_counts[c]);
    q.expected.push_back(n * clipped[c] / total_area);
  }
  q.cells_used = q.counts.size();
  q.chi_square = pearson_goodness_of_fit(q.counts, q.expected);
  q.p_value = q.chi_square.p_two_sided;
  q.cells_too_small = q.chi_square.min_expected < min_expected_for_chi_square * (1.0 - 1e-9);

  const auto [lo, hi] = std::minmax_element(q.expected.begin(), q.expected.end());
  if (*hi - *lo <= 1e-9 * *hi && q.cells_used >= 2) {
    const double mean = n / static_cast<double>(q.cells_used);
    double ss = 0.0;
    for (const auto c : q.counts) ss += (static_cast<double>(c) - mean) * (static_cast<double>(c) - mean);
    q.dispersion_index = ss / static_cast<double>(q.cells_used - 1) / mean;
  }

  if ((q.cells_too_small || options.force_monte_carlo) && options.simulations > 0) {
    q.monte_carlo_p_value = multinomial_monte_carlo(q.counts, q.expected, options.simulations, engine).two_sided;
    q.p_value = *q.monte_carlo_p_value;
  }
  return q;
}

}  // namespace stipple
