#pragma once
// The window as pieces of constant covariate value, shared by the habitat fits and tests
// (internal).

#include <cmath>
#include <cstddef>
#include <string>
#include <vector>

#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple::habitat_detail {

// The window's total area; throws InputError, naming `who` and the piece, unless every
// area is finite and positive and there is at least one.
inline double total_piece_area(const std::vector<double>& area_m2, const std::string& who) {
  if (area_m2.empty()) throw InputError(who + ": the window has no pieces");
  double total = 0.0;
  for (std::size_t i = 0; i < area_m2.size(); ++i) {
    const double a = area_m2[i];
    if (!(a > 0.0) || !std::isfinite(a))
      throw InputError(who + ": window piece " + std::to_string(i) + " has area " + format_general(a));
    total += a;
  }
  return total;
}

struct Moments {
  double mean = 0.0;
  double variance = 0.0;
};

// Area-weighted mean and variance over the window of the values at offset, offset +
// stride, ... (one per piece).
inline Moments area_moments(const std::vector<double>& area_m2, double total, const std::vector<double>& values,
                            std::size_t stride = 1, std::size_t offset = 0) {
  Moments m;
  for (std::size_t i = 0; i < area_m2.size(); ++i) m.mean += area_m2[i] * values[i * stride + offset];
  m.mean /= total;
  for (std::size_t i = 0; i < area_m2.size(); ++i) {
    const double e = values[i * stride + offset] - m.mean;
    m.variance += area_m2[i] * e * e;
  }
  m.variance /= total;
  return m;
}

}  // namespace stipple::habitat_detail
