// Reads a survey file (sightings and plot polygons in one GeoPackage) and prints each
// species' pooled density: stipple's reader and statistics through stipple::stipple.
#include <cstdio>
#include <exception>

#include "stipple/error.hpp"
#include "stipple/intensity/density.hpp"
#include "stipple/io/reader.hpp"

int main(int argc, char** argv) {
  if (argc != 2) {
    std::fprintf(stderr, "usage: read_and_estimate SURVEY.gpkg\n");
    return 2;
  }
  try {
    stipple::SurveyReadOptions read;
    read.sightings = stipple::SourceSpec{argv[1], std::nullopt};
    read.plots = stipple::SourceSpec{argv[1], std::nullopt};
    const stipple::LoadedSurvey survey = stipple::load_survey(read);
    const stipple::DensityResult result = stipple::estimate_density(survey.survey, stipple::DensityOptions{});
    for (const auto& p : result.pooled)
      std::printf("%s %.4f per ha\n", p.species ? p.species->c_str() : "all", p.intensity);
  } catch (const stipple::Error& e) {
    std::fprintf(stderr, "error: %s\n", e.what());
    return 2;
  }
  return 0;
}
