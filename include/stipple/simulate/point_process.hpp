#pragma once
/// Simulation of point processes inside a window.

#include <cstddef>
#include <vector>

#include "stipple/geometry/point.hpp"
#include "stipple/geometry/window.hpp"
#include "stipple/simulate/engine.hpp"

namespace stipple {

/// n points independently and uniformly distributed in the window (the binomial process:
/// CSR conditional on n), by rejection from the bounding box.
[[nodiscard]] std::vector<Point> simulate_binomial(const Window& window, std::size_t n,
                                                   Engine& engine);

/// A homogeneous Poisson process of the given intensity (points per square metre):
/// N ~ Poisson(intensity |W|), then N uniform points (Diggle 2003, ch. 4).
[[nodiscard]] std::vector<Point> simulate_poisson(const Window& window, double intensity_per_m2,
                                                  Engine& engine);

/// Independent p-thinning: keeps each point with probability `keep_probability`.
/// Of a Poisson process of intensity lambda the kept points are Poisson(p lambda) and
/// independent of the removed ones (Kingman 1993, Colouring Theorem, from memory: §5.1).
[[nodiscard]] std::vector<Point> thin(const std::vector<Point>& points, double keep_probability,
                                      Engine& engine);

}  // namespace stipple
