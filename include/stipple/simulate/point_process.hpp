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
[[nodiscard]] std::vector<Point> simulate_binomial(const Window& window, std::size_t n, Engine& engine);

/// A homogeneous Poisson process of the given intensity (points per square metre):
/// N ~ Poisson(intensity |W|), then N uniform points (Diggle 2003, ch. 4).
[[nodiscard]] std::vector<Point> simulate_poisson(const Window& window, double intensity_per_m2, Engine& engine);

/// Independent p-thinning: keeps each point with probability `keep_probability`.
/// Of a Poisson process of intensity lambda the kept points are Poisson(p lambda) and
/// independent of the removed ones (Kingman 1993, Colouring Theorem, from memory: §5.1).
[[nodiscard]] std::vector<Point> thin(const std::vector<Point>& points, double keep_probability, Engine& engine);

/// A Thomas cluster process: parents Poisson(kappa) on the window dilated by 4 sigma,
/// each with Poisson(mu) offspring displaced by isotropic Gaussian N(0, sigma^2) steps;
/// offspring inside the window are kept. Intensity kappa * mu (Thomas 1949; Diggle 2003,
/// ch. 4). `kappa_per_m2` parents per square metre, `sigma_m` in metres.
[[nodiscard]] std::vector<Point> simulate_thomas(const Window& window, double kappa_per_m2, double mean_offspring,
                                                 double sigma_m, Engine& engine);

/// A Matern cluster process: parents Poisson(kappa) on the window dilated by R, each with
/// Poisson(mu) offspring uniform in the disc of radius R about it; offspring inside the
/// window are kept. Intensity kappa * mu (Matern 1960; Stoyan, Kendall & Mecke 1995, 5.3).
[[nodiscard]] std::vector<Point> simulate_matern_cluster(const Window& window, double kappa_per_m2,
                                                         double mean_offspring, double radius_m, Engine& engine);

/// Matern's hard-core process of type II: a Poisson(intensity) proposal on the window
/// dilated by the hard-core distance, each point with a uniform mark; a point is deleted
/// when another point within `hard_core_m` has a smaller mark (Matern 1960; Illian et al.
/// 2008, ch. 6, from memory: chapter).
[[nodiscard]] std::vector<Point> simulate_matern_ii(const Window& window, double intensity_per_m2, double hard_core_m,
                                                    Engine& engine);

/// Simple sequential inhibition: up to `n` points placed one by one uniformly, each
/// rejected when closer than `inhibition_m` to one already placed (Diggle 2003, ch. 4).
/// Stops early after `max_attempts` rejections in a row.
[[nodiscard]] std::vector<Point> simulate_sequential_inhibition(const Window& window, std::size_t n,
                                                                double inhibition_m, Engine& engine,
                                                                std::size_t max_attempts = 10000);

}  // namespace stipple
