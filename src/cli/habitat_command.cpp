// `stipple habitat`: parse options, call the library, print.

#include <algorithm>
#include <filesystem>
#include <iostream>
#include <map>
#include <memory>

#include "commands.hpp"
#include "common_options.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/habitat/clustering.hpp"
#include "stipple/habitat/diagnostics.hpp"
#include "stipple/habitat/habitat_model.hpp"
#include "stipple/habitat/prediction.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/io/covariate_reader.hpp"
#include "stipple/io/gis_writer.hpp"
#include "stipple/io/output.hpp"
#include "stipple/report/habitat_report.hpp"
#include "stipple/simulate/engine.hpp"

namespace stipple::cli {

namespace {

struct HabitatCommandOptions {
  CommonOptions common;
  std::vector<std::string> covariates;
  std::vector<std::string> factors;
  std::vector<std::string> biases;
  std::vector<std::string> bias_references;
  std::vector<std::string> distances;
  std::vector<std::string> bias_distances;
  double spacing = 0.0;
  std::string surface;
  std::string figures;
  std::string detection_file;
  double detection_prob = 1.0;
  double detection_se = 0.0;
  CLI::Option* prob_option = nullptr;
  CLI::Option* se_option = nullptr;
  double cell = 0.0;
  std::string abundance;
  std::string abundance_layer;
  std::string abundance_field;
  std::size_t bootstrap = 0;
  std::uint64_t seed = default_seed;
  std::size_t simulations = 199;
  unsigned threads = 0;
  double rmax = 0.0;
  std::string slopes = "separate";
  bool drop_missing = false;
};

// NAME=VALUE, both non-empty; `option` names the option in the refusal.
std::pair<std::string, std::string> name_value(const std::string& text, const std::string& option) {
  const auto eq = text.find('=');
  if (eq == std::string::npos || eq == 0 || eq + 1 == text.size())
    throw InputError(option + " '" + text + "': expected NAME=" + (option == "--bias-reference" ? "VALUE" : "RASTER") +
                     ", e.g. " + (option == "--bias-reference" ? "effort=0" : "moisture=soil-moisture.tif"));
  return {text.substr(0, eq), text.substr(eq + 1)};
}

// The finest raster cell among the covariates, else 1/200 of the survey's extent.
double finest_cell(const std::vector<HabitatCovariate>& covariates, const Bounds& area) {
  double cell = 0.0;
  for (const auto& c : covariates)
    if (!c.distance_to && (cell == 0.0 || std::min(c.grid.cell_width, c.grid.cell_height) < cell))
      cell = std::min(c.grid.cell_width, c.grid.cell_height);
  return cell > 0.0 ? cell : std::max(area.width(), area.height()) / 200.0;
}

int run_habitat(const HabitatCommandOptions& o) {
  check_confidence(o.common.confidence);
  HabitatOptions options;
  options.confidence = o.common.confidence;
  options.unit_m2 = square_metres_per(parse_area_unit(o.common.unit));
  options.slopes = o.slopes == "shared" ? SlopeMode::shared : SlopeMode::separate;
  options.drop_missing = o.drop_missing;

  struct Given {
    std::string name;
    std::string path;
    bool factor;
    bool bias;
    std::string option;
    bool distance = false;
  };
  std::vector<Given> given;
  for (const auto& t : o.covariates) {
    auto [n, p] = name_value(t, "--covariate");
    given.push_back({n, p, false, false, "--covariate"});
  }
  for (const auto& t : o.factors) {
    auto [n, p] = name_value(t, "--factor");
    given.push_back({n, p, true, false, "--factor"});
  }
  for (const auto& t : o.biases) {
    auto [n, p] = name_value(t, "--bias");
    given.push_back({n, p, false, true, "--bias"});
  }
  for (const auto& t : o.distances) {
    auto [n, p] = name_value(t, "--distance-to");
    given.push_back({n, p, false, false, "--distance-to", true});
  }
  for (const auto& t : o.bias_distances) {
    auto [n, p] = name_value(t, "--bias-distance");
    given.push_back({n, p, false, true, "--bias-distance", true});
  }
  if (given.empty())
    throw InputError(
        "stipple habitat needs at least one --covariate NAME=RASTER (or --factor, --bias, --distance-to, "
        "--bias-distance)");
  for (std::size_t i = 0; i < given.size(); ++i)
    for (std::size_t j = 0; j < i; ++j)
      if (given[i].name == given[j].name)
        throw InputError(given[i].option + " " + given[i].name + ": the name '" + given[i].name +
                         "' is already used by " + given[j].option);
  std::map<std::string, double> references;
  for (const auto& t : o.bias_references) {
    const auto [n, v] = name_value(t, "--bias-reference");
    const std::string name = n;
    const auto it = std::find_if(given.begin(), given.end(), [&](const Given& g) { return g.name == name; });
    if (it == given.end() || !it->bias)
      throw InputError("--bias-reference " + t + ": '" + n + "' is not a --bias or --bias-distance term");
    const auto value = parse_finite_number(v);
    if (!value) throw InputError("--bias-reference " + t + ": '" + v + "' is not a number");
    references[n] = *value;
  }

  std::optional<Detection> single;
  if (o.prob_option->count() > 0 || o.se_option->count() > 0) {
    if (o.prob_option->count() == 0) throw InputError("--detection-se needs --detection-prob");
    single = make_detection(o.detection_prob, o.detection_se, "--detection-prob");
  }
  std::vector<std::string> inputs = input_paths(o.common);
  if (!o.detection_file.empty()) {
    options.detection = read_detection_table(o.detection_file, single);
    inputs.push_back(o.detection_file);
  } else if (single) {
    options.detection = DetectionTable::uniform(*single);
  }
  for (const auto& g : given) inputs.push_back(g.distance ? g.path.substr(0, g.path.rfind(',')) : g.path);
  if (!o.abundance.empty()) inputs.push_back(o.abundance);
  check_outputs({{"--json", o.common.json}, {"--csv", o.common.csv}}, inputs);
  LoadedSurvey survey = load_survey(to_read_options(o.common));
  const Bounds area = plots_bounds(survey.survey);

  std::vector<HabitatCovariate> covariates;
  HabitatRunFacts run;
  run.unit = o.common.unit;
  run.confidence = o.common.confidence;
  run.slopes = options.slopes;
  for (const auto& g : given) {
    if (g.distance) {
      // VECTOR or VECTOR,LAYER
      const auto comma = g.path.rfind(',');
      const std::string path = comma == std::string::npos ? g.path : g.path.substr(0, comma);
      const std::optional<std::string> layer =
          comma == std::string::npos ? std::nullopt : std::optional<std::string>(g.path.substr(comma + 1));
      CovariateFeatures features = read_covariate_features(path, layer, survey.crs);
      HabitatCovariate c;
      c.name = g.name;
      c.distance_to = DistanceField(features.features);
      c.spacing_m = o.spacing;
      c.source = "distance to " + features.label;
      c.bias = g.bias;
      if (const auto it = references.find(g.name); it != references.end()) c.bias_reference = it->second;
      survey.notes.insert(survey.notes.end(), features.notes.begin(), features.notes.end());
      run.covariates.push_back({g.name, c.source, false, g.bias});
      covariates.push_back(std::move(c));
      continue;
    }
    CovariateRaster raster = read_covariate_raster(g.path, survey.crs, area);
    HabitatCovariate c;
    c.name = g.name;
    c.grid = std::move(raster.grid);
    c.source = raster.label;
    c.factor = g.factor;
    c.bias = g.bias;
    if (const auto it = references.find(g.name); it != references.end()) c.bias_reference = it->second;
    survey.notes.insert(survey.notes.end(), raster.notes.begin(), raster.notes.end());
    run.covariates.push_back({g.name, raster.label, g.factor, g.bias});
    covariates.push_back(std::move(c));
  }
  HabitatResult result;
  try {
    result = fit_habitat(survey.survey, covariates, options);
  } catch (const InputError& e) {
    const std::string what = e.what();
    if (what.find("no value of covariate") != std::string::npos)
      throw InputError(what + "; or leave such places out with --drop-missing");
    throw;
  }

  if (o.simulations > 0) {
    ClusteringOptions c;
    c.simulations = o.simulations;
    c.seed = o.seed;
    c.threads = o.threads;
    c.alpha = 1.0 - o.common.confidence;
    c.rmax_m = o.rmax;
    c.unit_m2 = options.unit_m2;
    c.cancel = interrupt_token();
    run.clustering = analyse_clustering(survey.survey, covariates, result, c);
    run.simulations = o.simulations;
    run.seed = o.seed;
  }
  if (!o.abundance.empty()) {
    std::vector<AbundanceUnit> units;
    for (Plot& p :
         read_polygon_units(o.abundance, o.abundance_layer.empty() ? std::nullopt : std::optional(o.abundance_layer),
                            o.abundance_field.empty() ? std::nullopt : std::optional(o.abundance_field), survey.crs))
      units.push_back({p.id, std::move(p.window)});
    AbundanceOptions a;
    a.bootstrap = o.bootstrap;
    a.seed = o.seed;
    run.abundance = predict_abundance(survey.survey, covariates, options, result, units, a);
    for (const auto& e : run.abundance)
      if (e.extrapolated_share > 0.0)
        result.warnings.push_back("management unit '" + e.unit +
                                  "': " + format_significant(100.0 * e.extrapolated_share, 3) +
                                  "% of its area has covariate values outside their range over the surveyed plots; "
                                  "the expected number there extrapolates the model");
  }
  if (!o.surface.empty()) {
    const double cell = o.cell > 0.0 ? o.cell : finest_cell(covariates, area);
    // Every surface is computed before the folder is made, so a refusal leaves nothing behind.
    const std::vector<HabitatSurface> surfaces =
        predict_surfaces(survey.survey, covariates, options, result, area, cell);
    make_folder(o.surface);
    std::string bias_note;
    for (const auto& m : result.models)
      for (const auto& c : m.coefficients)
        if (c.bias_reference && bias_note.find(c.covariate) == std::string::npos)
          bias_note += "; " + c.covariate + " at " + format_general(*c.bias_reference);
    for (const auto& s : surfaces) {
      const std::string name = s.species ? file_name_safe(survey.survey.species()[*s.species]) : "all-species";
      const std::string path = (std::filesystem::path(o.surface) / (name + ".tif")).string();
      write_geotiff(path, s.intensity,
                    {GridBand{"predicted intensity per " + o.common.unit + bias_note, s.intensity.values},
                     GridBand{"standard error (delta method)", s.standard_error}},
                    survey.crs.wkt, inputs);
      run.surfaces.push_back(path);
    }
  }

  if (!o.figures.empty()) {
    // Residual maps: the finest raster cell, but no finer than 1/400 of the extent.
    double cell = finest_cell(covariates, area);
    if (std::max(area.width(), area.height()) / cell > 400.0) cell = std::max(area.width(), area.height()) / 200.0;
    write_folder(o.figures,
                 habitat_figures(survey.survey, run, result,
                                 smoothed_residuals(survey.survey, covariates, options, result, cell),
                                 partial_effects(survey.survey, covariates, options, result)),
                 inputs);
  }
  const bool stdout_taken = o.common.json == "-" || o.common.csv == "-";
  if (!o.common.json.empty()) write_output(o.common.json, habitat_json(survey, survey.survey, run, result), inputs);
  if (!o.common.csv.empty()) write_output(o.common.csv, habitat_csv(survey.survey, run, result), inputs);
  if (!stdout_taken) {
    std::cout << habitat_table(survey, survey.survey, run, result);
  } else {
    for (const auto& w : survey.warnings) std::cerr << "warning: " << w << "\n";
    for (const auto& w : result.warnings) std::cerr << "warning: " << w << "\n";
  }
  return 0;
}

}  // namespace

Action add_habitat_command(CLI::App& app) {
  auto options = std::make_shared<HabitatCommandOptions>();
  CLI::App* command = app.add_subcommand(
      "habitat",
      "Intensity that depends on the landscape: a log-linear Poisson model of each species on raster covariates, "
      "fitted by exact maximum likelihood, with Berman's covariate tests");
  add_common_options(*command, options->common);
  command->footer(
      "The value at a sighting is that of the raster cell holding it; windows are cut along every raster's cell "
      "edges, so the likelihood is exact. Intercept: log intensity per --unit where every covariate is 0.");
  command->add_option("--covariate", options->covariates, "NAME=RASTER: a numeric covariate (any GDAL raster)")
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  command
      ->add_option("--factor", options->factors,
                   "NAME=RASTER: a categorical raster of whole-number classes (reference: the class of "
                   "largest area)")
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  command
      ->add_option("--bias", options->biases,
                   "NAME=RASTER: observer effort or detectability, fitted like a covariate and set to "
                   "its reference in predictions")
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  command
      ->add_option("--bias-reference", options->bias_references,
                   "NAME=VALUE: the value of a --bias term at which to predict (default: that of best "
                   "observation over the windows)")
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  command
      ->add_option("--distance-to", options->distances,
                   "NAME=VECTOR or NAME=VECTOR,LAYER: the distance to the nearest line or polygon of a layer "
                   "(rivers, tracks, woodland edges) as a covariate, in metres")
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  command
      ->add_option("--bias-distance", options->bias_distances,
                   "NAME=VECTOR[,LAYER]: a distance that thins the sightings (distance to paths or roads), "
                   "set to its reference in predictions")
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  command
      ->add_option("--spacing", options->spacing,
                   "Quadrature cells of distance covariates, metres (default: the finest raster cell, else 1/200 "
                   "of the survey's extent); the fit is repeated at half of it and the change reported")
      ->check(positive_number());
  command->add_option("--surface", options->surface,
                      "Folder for <species>.tif: predicted intensity per --unit (band 1) and its standard error "
                      "(band 2) over the plots' extent, bias terms at their reference");
  command->add_option("--figures", options->figures,
                      "Folder for the figures (SVG): covariate distribution functions, partial effects, residual "
                      "maps and inhomogeneous L envelopes, with figures.csv");
  command->add_option("--cell", options->cell, "Cell size of --surface, metres (default: the finest raster cell)")
      ->check(positive_number());
  command->add_option("--abundance", options->abundance,
                      "Polygons (management units): the expected number of each species in each, with its interval");
  command->add_option("--abundance-layer", options->abundance_layer, "Layer of --abundance to read");
  command->add_option("--abundance-field", options->abundance_field,
                      "Name attribute of --abundance (default: name, unit, plot or id, else the feature id)");
  command
      ->add_option("--bootstrap", options->bootstrap,
                   "Parametric bootstrap draws for the --abundance intervals (default: 0, the delta method)")
      ->check(whole_number(0, 1000000));
  command
      ->add_option("--simulations", options->simulations,
                   "Simulations of the fitted model for the inhomogeneous L test and the cluster fits' tests "
                   "(0: skip them)")
      ->check(whole_number(0, 100000))
      ->capture_default_str();
  command->add_option("--threads", options->threads, "Threads for the simulations (default: all cores)")
      ->check(whole_number(0, 1024));
  command
      ->add_option("--rmax", options->rmax,
                   "Largest distance of the inhomogeneous K, metres (default: a quarter of the smallest plot's "
                   "shorter side, at most 4 / sqrt(intensity))")
      ->check(positive_number());
  command->add_option("--seed", options->seed, "Seed of the simulations and the parametric bootstrap")
      ->check(whole_number(0, 18446744073709551615ULL))
      ->capture_default_str();
  command->add_option("--detection", options->detection_file,
                      "CSV of detection probabilities (species, p, optional se): each species' intensity is "
                      "divided by its p, as in density");
  options->prob_option =
      command
          ->add_option("--detection-prob", options->detection_prob,
                       "One detection probability for every species (or for species not in --detection)")
          ->check(probability());
  options->se_option =
      command->add_option("--detection-se", options->detection_se, "Standard error of --detection-prob")
          ->check(non_negative_number());
  command->add_option("--slopes", options->slopes, "separate: each species its own slopes; shared: common slopes")
      ->check(CLI::IsMember({"separate", "shared"}))
      ->capture_default_str();
  command->add_flag("--drop-missing", options->drop_missing,
                    "Leave out window parts and sightings where a covariate has no value (reported), instead "
                    "of refusing");
  return [command, options] {
    if (!command->parsed()) return -1;
    return run_habitat(*options);
  };
}

}  // namespace stipple::cli
