#include "stipple/intensity/poisson.hpp"

#include <cmath>

#include <boost/math/distributions/chi_squared.hpp>

#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple {

void check_confidence(double confidence) {
  if (!(confidence > 0.0 && confidence < 1.0))
    throw InputError("confidence must lie strictly between 0 and 1 (got " + format_general(confidence) + ")",
                     {"confidence"});
}

double alpha_from_confidence(double confidence) {
  check_confidence(confidence);
  return std::round((1.0 - confidence) * 1e12) / 1e12;
}

Interval garwood_interval(std::uint64_t count, double confidence) {
  check_confidence(confidence);
  const double alpha = 1.0 - confidence;
  const double x = static_cast<double>(count);
  Interval ci;
  if (count > 0) {
    const boost::math::chi_squared lower_dist(2.0 * x);
    ci.lower = boost::math::quantile(lower_dist, alpha / 2.0) / 2.0;
  }
  const boost::math::chi_squared upper_dist(2.0 * x + 2.0);
  ci.upper = boost::math::quantile(boost::math::complement(upper_dist, alpha / 2.0)) / 2.0;
  return ci;
}

double square_metres_per(AreaUnit unit) {
  switch (unit) {
    case AreaUnit::square_metre: return 1.0;
    case AreaUnit::hectare: return 1.0e4;
    case AreaUnit::square_kilometre: return 1.0e6;
  }
  return 1.0;
}

std::string_view unit_name(AreaUnit unit) {
  switch (unit) {
    case AreaUnit::square_metre: return "m2";
    case AreaUnit::hectare: return "ha";
    case AreaUnit::square_kilometre: return "km2";
  }
  return "m2";
}

AreaUnit parse_area_unit(std::string_view name) {
  if (name == "m2") return AreaUnit::square_metre;
  if (name == "ha") return AreaUnit::hectare;
  if (name == "km2") return AreaUnit::square_kilometre;
  throw InputError("unit must be one of m2, ha, km2 (got '" + std::string(name) + "')", {"unit"});
}

}  // namespace stipple
