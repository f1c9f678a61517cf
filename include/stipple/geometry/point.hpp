#pragma once
/// Planar points in the analysis CRS (metres).

#include <cstdint>
#include <optional>
#include <string>

namespace stipple {

/// A location in the projected analysis CRS, in metres.
struct Point {
  double x = 0.0;
  double y = 0.0;
};

/// One recorded sighting as read from a vector source, already in the analysis CRS.
struct Sighting {
  Point location;
  std::int64_t feature_id = 0;      ///< feature id in the source layer (OGR FID)
  std::string species;              ///< species mark
  std::optional<std::string> plot;  ///< plot id carried by the sighting, if any
};

}  // namespace stipple
