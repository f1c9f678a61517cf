#pragma once
/// Second-order and nearest-neighbour summary functions of a point pattern in a polygon
/// window: Ripley's K and L, the pair correlation function g, the nearest-neighbour
/// distribution G, the empty-space function F and J = (1 - G) / (1 - F).

#include <cstddef>
#include <string_view>
#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/window.hpp"

namespace stipple {

/// Edge correction of K, L and g.
enum class PairCorrection {
  isotropic,  ///< Ripley (1977): weight 1 / (share of the circle through j, centred at i, inside W)
  border,     ///< reduced sample: only points farther than r from the boundary count as centres
};

/// Edge correction of G and F.
enum class DistanceCorrection {
  kaplan_meier,  ///< Baddeley & Gill (1997) Kaplan-Meier estimator (censoring at the boundary)
  border,        ///< reduced sample (Ripley 1988)
};

[[nodiscard]] std::string_view pair_correction_name(PairCorrection c);
[[nodiscard]] std::string_view distance_correction_name(DistanceCorrection c);

struct SummaryOptions {
  double rmax_m = 0.0;     ///< largest distance, metres (> 0)
  std::size_t steps = 64;  ///< distances r_k = k rmax / steps, k = 1..steps
  PairCorrection pair_correction = PairCorrection::isotropic;
  DistanceCorrection distance_correction = DistanceCorrection::kaplan_meier;
  std::size_t f_grid = 32;  ///< F test locations: an f_grid x f_grid lattice over the bounds
};

/// Values of every summary function on the distance grid `r` (metres; K in m2).
struct SummaryCurves {
  std::vector<double> r;
  std::vector<double> k;
  std::vector<double> l;
  std::vector<double> g;         ///< pair correlation
  std::vector<double> nn;        ///< G
  std::vector<double> f;         ///< F
  std::vector<double> j;         ///< J (NaN where F = 1)
  std::vector<double> nearest;   ///< per point: nearest-neighbour distance (summary_functions)
  std::vector<double> boundary;  ///< per point: distance to the window boundary
};

/// The default largest distance: the smaller of a quarter of the shorter side of the
/// window's bounding box (Ripley's rule of thumb; Ripley 1988, from memory) and 4/sqrt(lambda),
/// eight CSR mean nearest-neighbour distances, which keeps the pair count linear in n.
[[nodiscard]] double default_rmax(const Window& window, std::size_t n);

/// Precomputed, pattern-independent parts (F's test locations and their boundary
/// distances), so simulations in the same window reuse them. Holds its own copy of the
/// window, so it may outlive the one it was made from.
class SummaryContext {
 public:
  SummaryContext(const Window& window, SummaryOptions options);
  [[nodiscard]] const Window& window() const { return window_; }
  [[nodiscard]] const SummaryOptions& options() const { return options_; }
  [[nodiscard]] const std::vector<double>& r() const { return r_; }
  [[nodiscard]] const std::vector<Point>& test_locations() const { return test_locations_; }
  [[nodiscard]] const std::vector<double>& test_boundary() const { return test_boundary_; }

 private:
  Window window_;
  SummaryOptions options_;
  std::vector<double> r_;
  std::vector<Point> test_locations_;
  std::vector<double> test_boundary_;
};

/// All summary functions of the pattern (points must lie in the window; n >= 2).
/// K: |W| / (n (n - 1)) sum_{i != j} w_ij 1(d_ij <= r) (isotropic) or the border estimator;
/// L = sqrt(K / pi); g by an Epanechnikov kernel of bandwidth 0.15 / sqrt(lambda)
/// (Stoyan & Stoyan 1994, from memory), summed exactly over the same weighted pair
/// distances at every r (no histogram), or from centres at least r from the boundary with
/// border correction;
/// G, F by Kaplan-Meier or border; J = (1 - G) / (1 - F) (van Lieshout & Baddeley 1996).
[[nodiscard]] SummaryCurves summary_functions(const std::vector<Point>& points, const SummaryContext& context);

/// CSR values on the grid: K = pi r^2, L = r, g = 1, G = F = 1 - exp(-lambda pi r^2), J = 1.
[[nodiscard]] SummaryCurves csr_curves(const std::vector<double>& r, double intensity_per_m2);

}  // namespace stipple
