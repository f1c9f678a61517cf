#include "stipple/habitat/diagnostics.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <boost/math/constants/constants.hpp>
#include <boost/math/distributions/normal.hpp>

#include "habitat/pieces.hpp"
#include "habitat/predictor.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/geometry/spatial_index.hpp"
#include "stipple/intensity/kernel.hpp"

namespace stipple {

namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();
constexpr double pi = boost::math::double_constants::pi;

struct Piece {
  Point centre;
  double area_m2;
  std::vector<double> values;
};

std::vector<Piece> all_pieces(const Survey& survey, const std::vector<HabitatCovariate>& covariates) {
  std::vector<Piece> out;
  for (const Plot& plot : survey.plots())
    habitat_detail::cut_window(plot.window, covariates, [&](const Point& c, double a, const std::vector<double>& v) {
      out.push_back({c, a, v});
    });
  return out;
}

}  // namespace

std::vector<ResidualField> smoothed_residuals(const Survey& survey, const std::vector<HabitatCovariate>& covariates,
                                              const HabitatOptions& options, const HabitatResult& result, double cell_m,
                                              double bandwidth_m) {
  if (!(cell_m > 0.0) || !std::isfinite(cell_m))
    throw InputError("residual map: cell size " + format_general(cell_m) + " m");
  const Bounds b = plots_bounds(survey);
  const double columns = std::ceil(b.width() / cell_m);
  const double rows = std::ceil(b.height() / cell_m);
  if (columns * rows > 4e6)
    throw InputError("residual map: " + format_general(columns * rows) + " cells of " + format_general(cell_m) +
                     " m; choose larger cells");
  std::vector<ResidualField> out;
  std::vector<double> x;
  std::vector<double> v;
  for (const auto& predictor : habitat_detail::predictors(result)) {
    // The observed pattern's model: bias terms at their actual values.
    const habitat_detail::Predictor p = predictor.observed();
    std::vector<Point> points;
    std::vector<double> bandwidths;  // Scott's rule in each plot with sightings
    for (std::size_t j = 0; j < survey.plots().size(); ++j) {
      const MarkedPattern& pattern = survey.patterns()[j];
      std::vector<Point> in_plot;
      for (std::size_t i = 0; i < pattern.points.size(); ++i) {
        if (p.species && pattern.marks[i] != *p.species) continue;
        habitat_detail::values_at(covariates, pattern.points[i], v);
        if (habitat_detail::design_row(p, result.columns, v, x)) in_plot.push_back(pattern.points[i]);
      }
      if (in_plot.size() >= 2) bandwidths.push_back(scott_bandwidth(in_plot));
      points.insert(points.end(), in_plot.begin(), in_plot.end());
    }
    std::sort(bandwidths.begin(), bandwidths.end());
    ResidualField f;
    f.species = p.species;
    const double median = bandwidths.empty() ? 0.0
                          : bandwidths.size() % 2 == 1
                              ? bandwidths[bandwidths.size() / 2]
                              : 0.5 * (bandwidths[bandwidths.size() / 2 - 1] + bandwidths[bandwidths.size() / 2]);
    f.bandwidth_m = bandwidth_m > 0.0 ? bandwidth_m : std::max(median, 2.0 * cell_m);
    const double h = f.bandwidth_m;
    const double reach = 4.0 * h;
    const auto kernel = [h](double dx, double dy) {
      return std::exp(-(dx * dx + dy * dy) / (2.0 * h * h)) / (2.0 * pi * h * h);
    };
    f.field.x_min = b.xmin;
    f.field.y_max = b.ymax;
    f.field.cell_width = f.field.cell_height = cell_m;
    f.field.columns = static_cast<std::size_t>(std::max(1.0, columns));
    f.field.rows = static_cast<std::size_t>(std::max(1.0, rows));
    const std::size_t nc = f.field.columns;
    const std::size_t nr = f.field.rows;
    f.field.values.assign(nc * nr, nan);
    // The integrals over the windows by the midpoint rule on the map's own cells: each cell
    // whose centre is in a window, at the fitted intensity there.
    const auto centre_of = [&](std::size_t r, std::size_t c) {
      return Point{b.xmin + (static_cast<double>(c) + 0.5) * cell_m, b.ymax - (static_cast<double>(r) + 0.5) * cell_m};
    };
    std::vector<double> lambda(nc * nr, nan);  // per m2; NaN outside the windows
    for (std::size_t r = 0; r < nr; ++r)
      for (std::size_t c = 0; c < nc; ++c) {
        const Point u = centre_of(r, c);
        if (!std::any_of(survey.plots().begin(), survey.plots().end(),
                         [&](const Plot& plot) { return plot.window.contains_almost_surely(u); }))
          continue;
        habitat_detail::values_at(covariates, u, v);
        if (habitat_detail::design_row(p, result.columns, v, x))
          lambda[r * nc + c] = std::exp(habitat_detail::dot(p.beta, x)) / options.unit_m2;
      }
    const PointGrid index(points);
    const auto span = static_cast<std::ptrdiff_t>(std::ceil(reach / cell_m));
    const double cell_area = cell_m * cell_m;
    for (std::size_t r = 0; r < nr; ++r) {
      for (std::size_t c = 0; c < nc; ++c) {
        if (std::isnan(lambda[r * nc + c])) continue;
        const Point u = centre_of(r, c);
        double observed = 0.0;
        index.for_each_within(u, reach,
                              [&](std::size_t j, double) { observed += kernel(points[j].x - u.x, points[j].y - u.y); });
        double expected = 0.0;
        double mass = 0.0;
        const auto r0 = static_cast<std::ptrdiff_t>(r);
        const auto c0 = static_cast<std::ptrdiff_t>(c);
        for (std::ptrdiff_t rr = std::max<std::ptrdiff_t>(0, r0 - span);
             rr <= std::min<std::ptrdiff_t>(static_cast<std::ptrdiff_t>(nr) - 1, r0 + span); ++rr)
          for (std::ptrdiff_t cc = std::max<std::ptrdiff_t>(0, c0 - span);
               cc <= std::min<std::ptrdiff_t>(static_cast<std::ptrdiff_t>(nc) - 1, c0 + span); ++cc) {
            const double l = lambda[static_cast<std::size_t>(rr) * nc + static_cast<std::size_t>(cc)];
            if (std::isnan(l)) continue;
            const double k =
                kernel(static_cast<double>(cc - c0) * cell_m, static_cast<double>(rr - r0) * cell_m) * cell_area;
            expected += k * l;
            mass += k;
          }
        if (mass > 0.0) f.field.values[r * nc + c] = (observed - expected) / mass * options.unit_m2;
      }
    }
    out.push_back(std::move(f));
  }
  return out;
}

std::vector<PartialEffect> partial_effects(const Survey& survey, const std::vector<HabitatCovariate>& covariates,
                                           const HabitatOptions& options, const HabitatResult& result) {
  const std::vector<Piece> pieces = all_pieces(survey, covariates);
  // Area-weighted means and ranges of each covariate over the windows.
  std::vector<double> mean(covariates.size(), 0.0);
  std::vector<double> lo(covariates.size(), std::numeric_limits<double>::infinity());
  std::vector<double> hi(covariates.size(), -std::numeric_limits<double>::infinity());
  double area = 0.0;
  for (const Piece& piece : pieces) {
    if (std::any_of(piece.values.begin(), piece.values.end(), [](double z) { return std::isnan(z); })) continue;
    area += piece.area_m2;
    for (std::size_t k = 0; k < covariates.size(); ++k) {
      mean[k] += piece.area_m2 * piece.values[k];
      lo[k] = std::min(lo[k], piece.values[k]);
      hi[k] = std::max(hi[k], piece.values[k]);
    }
  }
  for (double& m : mean) m /= area;
  const double z = boost::math::quantile(boost::math::normal(), 0.5 + 0.5 * options.confidence);
  std::vector<PartialEffect> out;
  std::vector<double> x;
  for (const auto& p : habitat_detail::predictors(result)) {
    for (std::size_t k = 0; k < covariates.size(); ++k) {
      if (covariates[k].bias) continue;  // observation terms are held at their reference
      PartialEffect e;
      e.species = p.species;
      e.covariate = covariates[k].name;
      e.factor = covariates[k].factor;
      std::vector<double> grid;
      if (e.factor) {
        for (const auto& f : result.factors)
          if (f.covariate == covariates[k].name) {
            grid.push_back(f.reference);
            grid.insert(grid.end(), f.classes.begin(), f.classes.end());
          }
      } else {
        for (int i = 0; i < 50; ++i) grid.push_back(lo[k] + (hi[k] - lo[k]) * i / 49.0);
      }
      for (double value : grid) {
        std::vector<double> v = mean;
        for (std::size_t j = 0; j < covariates.size(); ++j)
          if (covariates[j].factor) {
            for (const auto& f : result.factors)
              if (f.covariate == covariates[j].name) v[j] = f.reference;
          }
        v[k] = value;
        if (!habitat_detail::design_row(p, result.columns, v, x)) continue;
        const double eta = habitat_detail::dot(p.beta, x);
        const double se = std::sqrt(habitat_detail::quadratic_form(p.covariance, x));
        e.x.push_back(value);
        e.fit.push_back(std::exp(eta));
        e.low.push_back(std::exp(eta - z * se));
        e.high.push_back(std::exp(eta + z * se));
      }
      out.push_back(std::move(e));
    }
  }
  return out;
}

}  // namespace stipple
