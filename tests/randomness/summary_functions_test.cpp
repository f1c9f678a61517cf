#include "stipple/randomness/summary_functions.hpp"

#include <algorithm>
#include <cmath>

#include <gtest/gtest.h>
#include <boost/geometry.hpp>

#include "stipple/simulate/point_process.hpp"

namespace stipple {
namespace {

constexpr double pi = 3.14159265358979323846;

Window window_with_hole() {
  BgMultiPolygon shape;
  boost::geometry::read_wkt("MULTIPOLYGON(((0 0,0 100,60 100,60 60,100 60,100 0,0 0),(20 20,40 20,40 40,20 40,20 20)))",
                            shape);
  return Window::from_polygons(shape, "test");
}

TEST(IsotropicWeight, MatchesPublishedRectangleValues) {
  // Source: Ripley (1977) isotropic correction; values from REFERENCES.md section 7
  // (numpy check with 2e6 angles): W = [0,10]^2.
  const Window w = Window::rectangle(0, 0, 10, 10);
  EXPECT_NEAR(w.circle_fraction_inside({1, 5}, 3.0), 0.6081734, 1e-7);
  EXPECT_NEAR(w.circle_fraction_inside({1, 2}, 3.0), 0.4202265, 1e-7);  // corner inside circle
  EXPECT_NEAR(w.circle_fraction_inside({2, 2}, 2.5), 0.5903345, 1e-7);
  EXPECT_NEAR(1.0 / w.circle_fraction_inside({1, 5}, 3.0), 1.644268, 1e-6);
  EXPECT_NEAR(w.circle_fraction_inside({5, 5}, 3.0), 1.0, 1e-12);
}

// Share of the circle of radius r centred at (x, y) inside [0, a] x [0, b], for r below
// half of either side. Source: REFERENCES.md section 7 (Ripley 1977; derived, numpy-checked):
// share = 1 - (a1 + a2) / pi, or 3/4 - (a1 + a2) / (2 pi) when the corner lies inside the
// circle, a_k = acos(min(d_k, r) / r), d_1, d_2 the distances to the nearest vertical and
// horizontal edges.
double rectangle_share(double x, double y, double r, double a, double b) {
  const double d1 = std::min(x, a - x);
  const double d2 = std::min(y, b - y);
  const double a1 = std::acos(std::min(d1, r) / r);
  const double a2 = std::acos(std::min(d2, r) / r);
  if (d1 * d1 + d2 * d2 < r * r) return 0.75 - (a1 + a2) / (2.0 * pi);
  return 1.0 - (a1 + a2) / pi;
}

TEST(PairCorrelation, IsotropicIsTheExactKernelSum) {
  // g(r) = |W| / (n (n - 1)) sum_{i != j} w_ij k_h(r - d_ij) / (2 pi r), Epanechnikov
  // k_h(u) = 3/4 (1 - (u/h)^2) / h, h = 0.15 / sqrt(lambda), w_ij = 1 / share of the circle
  // about x_i through x_j inside W (Ripley 1977; Stoyan & Stoyan 1994, from memory),
  // written out here with the rectangle formula above. Binning the distances (the old
  // estimator) was off by up to 0.03; the exact sum agrees to rounding.
  const double a = 100.0;
  const double b = 80.0;
  const Window w = Window::rectangle(0, 0, a, b);
  Engine engine(derive_seed(5, "pcf-exact"));
  const std::vector<Point> points = simulate_binomial(w, 40, engine);
  SummaryOptions o;
  o.rmax_m = 12.0;
  o.steps = 48;
  o.pair_correction = PairCorrection::isotropic;
  const SummaryContext context(w, o);
  const SummaryCurves c = summary_functions(points, context);
  const double n = static_cast<double>(points.size());
  const double h = 0.15 / std::sqrt(n / (a * b));
  for (std::size_t k = 0; k < c.r.size(); ++k) {
    double sum = 0.0;
    for (std::size_t i = 0; i < points.size(); ++i) {
      for (std::size_t j = 0; j < points.size(); ++j) {
        if (i == j) continue;
        const double d = std::hypot(points[i].x - points[j].x, points[i].y - points[j].y);
        const double u = (c.r[k] - d) / h;
        if (std::abs(u) >= 1.0) continue;
        sum += 0.75 * (1.0 - u * u) / h / rectangle_share(points[i].x, points[i].y, d, a, b);
      }
    }
    const double expected = a * b / (n * (n - 1.0)) * sum / (2.0 * pi * c.r[k]);
    EXPECT_NEAR(c.g[k], expected, 1e-9 * std::max(1.0, expected)) << "r = " << c.r[k];
  }
}

TEST(IsotropicWeight, PolygonWithHoleAgreesWithAngleSampling) {
  // Common practice: the share of a circle inside a window equals the share of equally
  // spaced angles whose circle point lies inside (here 200 000 angles, error < 1e-4).
  const Window w = window_with_hole();
  const std::pair<Point, double> cases[] = {{{45, 30}, 8.0}, {{55, 55}, 10.0}, {{10, 90}, 15.0}, {{30, 50}, 12.0}};
  for (const auto& [c, r] : cases) {
    const int steps = 200000;
    int inside = 0;
    for (int k = 0; k < steps; ++k) {
      const double a = 2.0 * pi * (k + 0.5) / steps;
      inside += w.contains({c.x + r * std::cos(a), c.y + r * std::sin(a)}) ? 1 : 0;
    }
    EXPECT_NEAR(w.circle_fraction_inside(c, r), static_cast<double>(inside) / steps, 1e-4)
        << c.x << "," << c.y << " r " << r;
  }
}

TEST(BoundaryDistance, CountsHoleEdges) {
  const Window w = window_with_hole();
  EXPECT_NEAR(w.boundary_distance({30, 45}), 5.0, 1e-12);  // 5 m above the hole
  EXPECT_NEAR(w.boundary_distance({10, 10}), 10.0, 1e-12);
}

// Averages over many CSR patterns of the estimators, against CSR theory.
struct CsrAverages {
  std::vector<double> r, k, l, g, nn, f;
};

CsrAverages average_over_csr(const Window& window, std::size_t n, int patterns, PairCorrection pc,
                             DistanceCorrection dc) {
  SummaryOptions o;
  o.rmax_m = 12.0;
  o.steps = 12;
  o.pair_correction = pc;
  o.distance_correction = dc;
  const SummaryContext context(window, o);
  CsrAverages a;
  a.r = context.r();
  a.k.assign(o.steps, 0.0);
  a.l = a.g = a.nn = a.f = a.k;
  Engine engine(derive_seed(9, "csr-averages"));
  for (int p = 0; p < patterns; ++p) {
    const SummaryCurves c = summary_functions(simulate_binomial(window, n, engine), context);
    for (std::size_t s = 0; s < o.steps; ++s) {
      a.k[s] += c.k[s] / patterns;
      a.l[s] += c.l[s] / patterns;
      a.g[s] += c.g[s] / patterns;
      a.nn[s] += c.nn[s] / patterns;
      a.f[s] += c.f[s] / patterns;
    }
  }
  return a;
}

TEST(SummaryFunctions, CsrMatchesTheoryInPolygonWithHole) {
  // Source: REFERENCES.md section 6 (Diggle 2003; Illian et al. 2008): under CSR K = pi r^2,
  // L = r, g = 1, G = F = 1 - exp(-lambda pi r^2). 300 patterns of 100 points in a
  // 0.82-ha window with a hole. Tolerances: 3% on K, 1.5% on L, 0.05 on g at r >= 6 m
  // (kernel bias below), 0.02 on G and F (binomial-process values sit slightly below
  // Poisson ones at fixed n).
  const Window w = window_with_hole();
  const double lambda = 100.0 / w.area_m2();
  const CsrAverages iso = average_over_csr(w, 100, 300, PairCorrection::isotropic, DistanceCorrection::kaplan_meier);
  for (std::size_t s = 0; s < iso.r.size(); ++s) {
    const double r = iso.r[s];
    EXPECT_NEAR(iso.k[s] / (pi * r * r), 1.0, 0.03) << "K at r = " << r;
    EXPECT_NEAR(std::sqrt(iso.k[s] / pi) / r, 1.0, 0.015) << "L of mean K at r = " << r;
    if (r >= 3.0) {  // below, few pairs: the mean of a square root is biased low (Jensen)
      EXPECT_NEAR(iso.l[s] / r, 1.0, 0.015) << "mean L at r = " << r;
    }
    if (r >= 6.0) {
      EXPECT_NEAR(iso.g[s], 1.0, 0.05) << "g at r = " << r;
    }
    const double theory = 1.0 - std::exp(-lambda * pi * r * r);
    EXPECT_NEAR(iso.nn[s], theory, 0.02) << "G (Kaplan-Meier) at r = " << r;
    EXPECT_NEAR(iso.f[s], theory, 0.02) << "F (Kaplan-Meier) at r = " << r;
  }
  const CsrAverages border = average_over_csr(w, 100, 300, PairCorrection::border, DistanceCorrection::border);
  for (std::size_t s = 0; s < border.r.size(); ++s) {
    const double r = border.r[s];
    EXPECT_NEAR(border.k[s] / (pi * r * r), 1.0, 0.05) << "border K at r = " << r;
    if (r >= 6.0) {
      EXPECT_NEAR(border.g[s], 1.0, 0.08) << "border g at r = " << r;
    }
    const double theory = 1.0 - std::exp(-lambda * pi * r * r);
    EXPECT_NEAR(border.nn[s], theory, 0.03) << "border G at r = " << r;
    EXPECT_NEAR(border.f[s], theory, 0.03) << "border F at r = " << r;
  }
}

TEST(SummaryFunctions, ThomasProcessMatchesItsKFunction) {
  // Source: REFERENCES.md section 6: Thomas process K = pi r^2 + (1 - exp(-r^2 / 4 sigma^2)) / kappa;
  // kappa = 0.001, sigma = 5: K(10) = 946.27982. 400 patterns in 200 x 200 m (parents 40,
  // mu = 5); tolerance 5% (replicate SE about 1.5%).
  const Window w = Window::rectangle(0, 0, 200, 200);
  SummaryOptions o;
  o.rmax_m = 10.0;
  o.steps = 2;
  const SummaryContext context(w, o);
  Engine engine(derive_seed(10, "thomas-k"));
  double k10 = 0.0;
  const int patterns = 400;
  for (int p = 0; p < patterns; ++p) {
    const auto points = simulate_thomas(w, 0.001, 5.0, 5.0, engine);
    // K is estimated with the pattern's own intensity n / |W|.
    k10 += summary_functions(points, context).k.back() / patterns;
  }
  EXPECT_NEAR(k10, 946.27982, 0.05 * 946.27982);
}

TEST(SummaryContext, OutlivesTheWindowItWasMadeFrom) {
  // A context made from a temporary window keeps its own copy (ASan would flag a dangling
  // one); the curves equal those of a context over a window that is still alive.
  SummaryOptions o;
  o.rmax_m = 10.0;
  o.steps = 4;
  const SummaryContext from_temporary(Window::rectangle(0, 0, 50, 40), o);
  const Window alive = Window::rectangle(0, 0, 50, 40);
  const SummaryContext from_alive(alive, o);
  const std::vector<Point> points{{5, 5}, {9, 7}, {30, 20}, {44, 33}, {12, 30}};
  EXPECT_DOUBLE_EQ(from_temporary.window().area_m2(), 2000.0);
  EXPECT_EQ(summary_functions(points, from_temporary).k, summary_functions(points, from_alive).k);
}

TEST(SummaryFunctions, CsrCurvesAreTheory) {
  const SummaryCurves c = csr_curves({5.0}, 0.01);
  EXPECT_NEAR(c.nn[0], 0.5440619, 1e-7);  // Source: REFERENCES.md section 6
  EXPECT_NEAR(c.k[0], 78.539816, 1e-6);
}

TEST(DefaultRmax, IsStatedRule) {
  const Window w = Window::rectangle(0, 0, 100, 200);
  EXPECT_NEAR(default_rmax(w, 10), 25.0, 1e-12);                     // quarter of the shorter side
  EXPECT_NEAR(default_rmax(w, 20000), 4.0 / std::sqrt(1.0), 1e-12);  // 4 / sqrt(lambda)
}

}  // namespace
}  // namespace stipple
