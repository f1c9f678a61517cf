// Density of two species in two plots laid out in code (no file), with stipple's statistics
// only: exact Poisson intervals per plot and pooled across the plots.
#include <cstdio>
#include <vector>

#include "stipple/geometry/survey.hpp"
#include "stipple/intensity/density.hpp"
#include "stipple/version.hpp"

int main() {
  using namespace stipple;
  std::vector<Sighting> sightings;
  std::int64_t id = 0;
  for (int i = 0; i < 12; ++i) sightings.push_back({{2.0 + 3.0 * i, 5.0 + 2.0 * (i % 4)}, ++id, "sedge", std::nullopt});
  for (int i = 0; i < 5; ++i) sightings.push_back({{60.0 + 4.0 * i, 10.0}, ++id, "sedge", std::nullopt});
  for (int i = 0; i < 3; ++i) sightings.push_back({{8.0 + 9.0 * i, 30.0}, ++id, "rush", std::nullopt});
  const Survey survey = assign_to_plots(
      sightings, {Plot{"east", Window::rectangle(0, 0, 50, 40)}, Plot{"west", Window::rectangle(55, 0, 85, 40)}});
  DensityOptions options;
  options.unit = AreaUnit::hectare;
  const DensityResult result = estimate_density(survey, options);
  std::printf("stipple %s\n", std::string(version()).c_str());
  for (const auto& p : result.pooled)
    std::printf("%s: %llu in %.4f ha, %.3f per ha [%.3f, %.3f]\n", p.species ? p.species->c_str() : "all",
                static_cast<unsigned long long>(p.count), p.area_in_unit, p.intensity, p.ci.lower, p.ci.upper);
  return result.pooled.empty() ? 1 : 0;
}
