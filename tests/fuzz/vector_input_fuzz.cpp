// Fuzz target: a small vector file through the whole input path - GDAL opening it as CSV or
// GeoJSON, reading sightings, choosing the analysis CRS, building convex-hull windows and
// assigning sightings - and through `inspect`. The first byte picks the format.

#include <cstdint>
#include <string>

#include "fuzz_support.hpp"
#include "stipple/error.hpp"
#include "stipple/io/gdal_session.hpp"
#include "stipple/io/inspect.hpp"
#include "stipple/io/reader.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 1) return 0;
  stipple::register_gdal_drivers();
  const bool geojson = (data[0] & 1) != 0;
  const stipple::fuzz::BytesFile file(data + 1, size - 1, geojson ? ".geojson" : ".csv");
  stipple::SurveyReadOptions options;
  options.sightings.path = file.path();
  options.window = stipple::WindowMode::convex_hull;
  options.assume_crs = (data[0] & 2) != 0 ? "EPSG:4326" : "EPSG:32630";
  try {
    const stipple::LoadedSurvey survey = stipple::load_survey(options);
    (void)survey;
  } catch (const stipple::InputError&) {
  } catch (const stipple::AnalysisError&) {
  }
  try {
    stipple::InspectOptions inspect;
    inspect.assume_crs = options.assume_crs;
    (void)stipple::inspect_source(file.path(), inspect);
  } catch (const stipple::InputError&) {
  }
  return 0;
}
