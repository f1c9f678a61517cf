// `stipple density`: parse options, call the library, print.

#include <iostream>
#include <memory>

#include "commands.hpp"
#include "common_options.hpp"
#include "stipple/error.hpp"
#include "stipple/intensity/density.hpp"
#include "stipple/io/reader.hpp"
#include "stipple/report/density_report.hpp"

namespace stipple::cli {

namespace {

struct DensityCommandOptions {
  CommonOptions common;
  std::string detection_file;
  double detection_prob = 1.0;
  double detection_se = 0.0;
  CLI::Option* prob_option = nullptr;
  CLI::Option* se_option = nullptr;
  std::uint64_t seed = default_seed;
  std::size_t simulations = 999;
};

int run_density(const DensityCommandOptions& o) {
  std::optional<Detection> single;
  if (o.prob_option->count() > 0 || o.se_option->count() > 0) {
    if (o.prob_option->count() == 0) throw InputError("--detection-se needs --detection-prob");
    single = make_detection(o.detection_prob, o.detection_se, "--detection-prob");
  }
  DensityOptions options;
  options.unit = parse_area_unit(o.common.unit);
  options.confidence = o.common.confidence;
  check_confidence(options.confidence);
  options.seed = o.seed;
  options.simulations = o.simulations;
  std::vector<std::string> inputs = input_paths(o.common);
  if (!o.detection_file.empty()) {
    options.detection = read_detection_table(o.detection_file, single);
    inputs.push_back(o.detection_file);
  } else if (single) {
    options.detection = DetectionTable::uniform(*single);
  }

  check_outputs({{"--json", o.common.json}, {"--csv", o.common.csv}}, inputs);
  const LoadedSurvey survey = load_survey(to_read_options(o.common));
  const DensityResult result = estimate_density(survey.survey, options);

  const bool stdout_taken = o.common.json == "-" || o.common.csv == "-";
  if (!o.common.json.empty()) write_output(o.common.json, density_json(survey, survey.survey, result), inputs);
  if (!o.common.csv.empty()) write_output(o.common.csv, density_csv(result), inputs);
  if (!stdout_taken) {
    std::cout << density_table(survey, survey.survey, result);
  } else {
    for (const auto& w : survey.warnings) std::cerr << "warning: " << w << "\n";
    for (const auto& w : density_warnings(result)) std::cerr << "warning: " << w << "\n";
  }
  return 0;
}

}  // namespace

Action add_density_command(CLI::App& app) {
  auto options = std::make_shared<DensityCommandOptions>();
  CLI::App* command =
      app.add_subcommand("density",
                         "Intensity of each species per plot and pooled across plots, with exact Poisson "
                         "intervals, homogeneity and composition tests, corrected for detection");
  add_common_options(*command, options->common);
  command->footer(
      "P(detect) = detection probability used for the correction; homogeneity p = p-value of the test that "
      "the plots share one intensity; (MC) = Monte Carlo p-value; dispersion = X2 / df.");
  command->add_option("--detection", options->detection_file,
                      "CSV of detection probabilities: columns species, p, optional se (default: none)");
  options->prob_option =
      command
          ->add_option("--detection-prob", options->detection_prob,
                       "One detection probability for every species (or for species not in --detection); "
                       "default: 1, no correction")
          ->check(probability());
  options->se_option = command
                           ->add_option("--detection-se", options->detection_se,
                                        "Standard error of --detection-prob (default: 0, p known exactly)")
                           ->check(non_negative_number());
  command->add_option("--seed", options->seed, "Seed of the Monte Carlo p-values")
      ->check(whole_number(0, 18446744073709551615ULL))
      ->capture_default_str();
  command
      ->add_option("--simulations", options->simulations,
                   "Monte Carlo draws for p-values when expected counts are below 5")
      ->check(whole_number(0, 1000000))
      ->capture_default_str();
  return [command, options] {
    if (!command->parsed()) return -1;
    return run_density(*options);
  };
}

}  // namespace stipple::cli
