// Size of the Clark-Evans test's normal approximation under CSR, by simulation: the share
// of binomial patterns (n points in a window) whose normal p-value is below 0.05 and 0.01,
// for Donnelly's correction in a rectangle and the border method in an irregular window.
// This is the evidence behind the default rule in src/randomness/analysis.cpp (the Monte
// Carlo p-value by default only below the sizes where the normal law holds its level).
// Usage: stipple_clark_evans_size [patterns per size, default 4000]

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "stipple/geometry/spatial_index.hpp"
#include "stipple/randomness/clark_evans.hpp"
#include "stipple/simulate/point_process.hpp"

namespace {

// A wobbly 96-vertex outline of about 0.93 km2 (as bench/whole_process.py's pasture).
stipple::Window pasture() {
  stipple::BgPolygon polygon;
  for (int i = 0; i <= 96; ++i) {
    const double t = -2.0 * 3.141592653589793 * (i % 96) / 96.0;
    const double wobble = 1.0 + 0.06 * std::sin(3.0 * t + 0.4) + 0.03 * std::cos(11.0 * t);
    polygon.outer().push_back(stipple::BgPoint(620.0 * wobble * std::cos(t), 480.0 * wobble * std::sin(t)));
  }
  return stipple::Window::from_polygons({polygon}, "pasture");
}

}  // namespace

int main(int argc, char** argv) {
  const int patterns = argc > 1 ? std::atoi(argv[1]) : 4000;
  const stipple::Window rectangle = stipple::Window::rectangle(0, 0, 1000, 600);
  const stipple::Window irregular = pasture();
  std::printf("%-10s %-8s %8s %10s %10s %8s %8s %8s\n", "window", "method", "n", "size_0.05", "size_0.01", "mean_z",
              "sd_z", "patterns");
  for (const auto* which : {"rectangle", "pasture"}) {
    const stipple::Window& w = std::string(which) == "rectangle" ? rectangle : irregular;
    for (const std::size_t n : {std::size_t{10}, std::size_t{20}, std::size_t{50}, std::size_t{100}, std::size_t{200},
                                std::size_t{500}, std::size_t{1000}, std::size_t{3000}, std::size_t{10000}}) {
      int reject05 = 0;
      int reject01 = 0;
      int valid = 0;
      double z_sum = 0.0;
      double z2_sum = 0.0;
      for (int p = 0; p < patterns; ++p) {
        stipple::Engine engine(
            stipple::derive_seed(7, stipple::seed_key({"ce-size", which, std::to_string(n), std::to_string(p)})));
        const auto points = stipple::simulate_binomial(w, n, engine);
        const stipple::PointGrid grid(points);
        const std::vector<double> nearest = grid.nearest_neighbour_distances();
        std::vector<double> boundary(points.size());
        for (std::size_t i = 0; i < points.size(); ++i) boundary[i] = w.boundary_distance(points[i]);
        const auto r = stipple::clark_evans(nearest, boundary, w, std::nullopt);
        if (std::isnan(r.normal_p_value)) continue;
        ++valid;
        z_sum += r.z;
        z2_sum += r.z * r.z;
        reject05 += r.normal_p_value < 0.05 ? 1 : 0;
        reject01 += r.normal_p_value < 0.01 ? 1 : 0;
      }
      const double mean_z = z_sum / valid;
      std::printf("%-10s %-8s %8zu %10.4f %10.4f %8.3f %8.3f %8d\n", which, w.is_rectangle() ? "donnelly" : "border", n,
                  static_cast<double>(reject05) / valid, static_cast<double>(reject01) / valid, mean_z,
                  std::sqrt(z2_sum / valid - mean_z * mean_z), valid);
      std::fflush(stdout);
    }
  }
  return 0;
}
