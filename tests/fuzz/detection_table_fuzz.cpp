// Fuzz target: a detection-probability table (CSV) read through GDAL. Every table gives
// probabilities in (0, 1] with finite standard errors, or an InputError naming the line.

#include <cmath>
#include <cstdint>
#include <cstdlib>

#include "fuzz_support.hpp"
#include "stipple/error.hpp"
#include "stipple/io/gdal_session.hpp"
#include "stipple/io/reader.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  stipple::register_gdal_drivers();
  const stipple::fuzz::BytesFile file(data, size, ".csv");
  try {
    const auto table = stipple::read_detection_table(file.path(), std::nullopt);
    for (const auto& species : table.listed_species()) {
      const stipple::Detection d = table.for_species(species);
      if (!(d.probability > 0.0 && d.probability <= 1.0) || !std::isfinite(d.standard_error) || d.standard_error < 0.0)
        std::abort();
    }
  } catch (const stipple::InputError&) {
  }
  return 0;
}
