#pragma once
/// Habitat-model results as a readable table, JSON and CSV.

#include <string>
#include <vector>

#include "stipple/geometry/survey.hpp"
#include "stipple/habitat/clustering.hpp"
#include "stipple/habitat/diagnostics.hpp"
#include "stipple/habitat/habitat_model.hpp"
#include "stipple/habitat/prediction.hpp"
#include "stipple/input_facts.hpp"
#include "stipple/report/figure.hpp"

namespace stipple {

/// What the report says about the run besides the results.
struct HabitatRunFacts {
  std::string unit = "ha";  ///< the area unit intercepts refer to
  double confidence = 0.95;
  SlopeMode slopes = SlopeMode::separate;
  /// Each covariate: name, where it came from, and its role.
  struct Covariate {
    std::string name;
    std::string source;
    bool factor = false;
    bool bias = false;
  };
  std::vector<Covariate> covariates;
  /// Expected numbers in management units, when asked for.
  std::vector<AbundanceEstimate> abundance;
  /// What habitat leaves unexplained, per species (empty when no simulations ran).
  std::vector<SpeciesClustering> clustering;
  std::size_t simulations = 0;
  std::uint64_t seed = 0;
  /// The intensity surfaces written (GeoTIFF paths).
  std::vector<std::string> surfaces;
};

/// The cautions printed with every habitat result (README "Habitat models").
[[nodiscard]] const std::vector<std::string>& habitat_cautions();
/// A readable report for the terminal.
[[nodiscard]] std::string habitat_table(const InputFacts& input, const Survey& survey, const HabitatRunFacts& run,
                                        const HabitatResult& result);
/// The JSON document of `stipple habitat --json` (contract in README, "JSON output").
[[nodiscard]] std::string habitat_json(const InputFacts& input, const Survey& survey, const HabitatRunFacts& run,
                                       const HabitatResult& result);
/// One row per model coefficient (kind `coefficient`), term test (`term_test`) and
/// covariate test (`covariate_test`); empty species = all species together.
[[nodiscard]] std::string habitat_csv(const Survey& survey, const HabitatRunFacts& run, const HabitatResult& result);

/// The figures of `stipple habitat --figures`: per species and covariate the distribution
/// functions of Berman's KS test (ks-*), the partial effect (effect-*), per species the
/// smoothed residual map (residuals-*) and the inhomogeneous L envelope (L-*), as SVG, with
/// a figures.csv manifest.
[[nodiscard]] std::vector<FigureFile> habitat_figures(const Survey& survey, const HabitatRunFacts& run,
                                                      const HabitatResult& result,
                                                      const std::vector<ResidualField>& residuals,
                                                      const std::vector<PartialEffect>& effects);

}  // namespace stipple
