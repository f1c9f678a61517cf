// `stipple randomness`: parse options, call the library, print.

#include <filesystem>
#include <iostream>
#include <memory>
#include <sstream>

#include "commands.hpp"
#include "common_options.hpp"
#include "progress.hpp"
#include "stipple/error.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/randomness/analysis.hpp"
#include "stipple/report/randomness_report.hpp"

namespace stipple::cli {

namespace {

struct RandomnessCommandOptions {
  CommonOptions common;
  std::string quadrats = "4x4";
  bool quadrat_monte_carlo = false;
  bool clark_evans_monte_carlo = false;
  std::string edge_correction;
  std::size_t simulations = 999;
  bool simulations_given = false;
  std::uint64_t seed = default_seed;
  unsigned threads = 0;
  double rmax = 0.0;
  std::vector<std::string> only;
  std::string curves;
  std::string figures;
  std::string pair_correction = "isotropic";
  std::string distance_correction = "kaplan-meier";
};

int run_randomness(const RandomnessCommandOptions& o) {
  RandomnessOptions options;
  std::tie(options.quadrat.nx, options.quadrat.ny) = parse_quadrat_grid(o.quadrats);
  options.quadrat.force_monte_carlo = o.quadrat_monte_carlo;
  options.clark_evans_monte_carlo = o.clark_evans_monte_carlo;
  options.cancel = interrupt_token();
  if (!o.edge_correction.empty()) options.edge_correction = parse_edge_correction(o.edge_correction);
  options.pair_correction = o.pair_correction == "border" ? PairCorrection::border : PairCorrection::isotropic;
  options.distance_correction =
      o.distance_correction == "border" ? DistanceCorrection::border : DistanceCorrection::kaplan_meier;
  options.simulations = o.simulations;
  options.adapt_to_large_n = !o.simulations_given;
  options.seed = o.seed;
  options.threads = o.threads;
  if (o.rmax < 0.0) throw InputError("--rmax must be positive");
  if (o.rmax > 0.0) options.rmax_m = o.rmax;
  options.alpha = alpha_from_confidence(o.common.confidence);
  if (!o.only.empty()) {
    options.run_quadrat = options.run_clark_evans = options.run_envelope = options.run_interactions = false;
    for (const auto& name : o.only) {
      if (name == "quadrat")
        options.run_quadrat = true;
      else if (name == "clark-evans")
        options.run_clark_evans = true;
      else if (name == "envelope")
        options.run_envelope = true;
      else if (name == "interactions")
        options.run_interactions = true;
      else
        throw InputError("--only takes quadrat, clark-evans, envelope, interactions (got '" + name + "')");
    }
  }
  if (options.simulations == 0 && (options.run_envelope || options.run_interactions))
    throw InputError("--simulations 0 leaves no envelope or labelling test; use --only quadrat,clark-evans");

  const std::vector<std::string> inputs = input_paths(o.common);
  check_outputs({{"--json", o.common.json}, {"--csv", o.common.csv}, {"--curves", o.curves}}, inputs);
  const LoadedSurvey survey = load_survey(to_read_options(o.common));
  RandomnessResult result;
  {
    TerminalProgress bar("stipple randomness: groups");
    options.progress = bar.callback();
    result = analyse_randomness(survey.survey, options);
  }

  const bool stdout_taken = o.common.json == "-" || o.common.csv == "-" || o.curves == "-";
  if (!o.common.json.empty()) write_output(o.common.json, randomness_json(survey, result), inputs);
  if (!o.curves.empty()) write_output(o.curves, randomness_curves_csv(result), inputs);
  if (!o.common.csv.empty()) write_output(o.common.csv, randomness_csv(result), inputs);
  if (!o.figures.empty()) write_folder(o.figures, randomness_figures(result), inputs);
  if (!stdout_taken) {
    std::cout << randomness_table(survey, result);
  } else {
    for (const auto& w : survey.warnings) std::cerr << "warning: " << w << "\n";
  }
  return 0;
}

}  // namespace

Action add_randomness_command(CLI::App& app) {
  auto o = std::make_shared<RandomnessCommandOptions>();
  CLI::App* command =
      app.add_subcommand("randomness",
                         "Tests of complete spatial randomness per plot and species (quadrats, Clark-Evans, "
                         "summary functions with Monte Carlo envelopes) and random-labelling tests between species");
  add_common_options(*command, o->common);
  command->footer(
      "Abbreviations: CE = Clark-Evans nearest-neighbour test; MAD = maximum absolute deviation test; DCLF = "
      "Diggle-Cressie-Loosmore-Ford test; ERL = extreme rank length global envelope; CSR = complete spatial "
      "randomness. --csv writes one row per plot x species with every p-value and the verdict; --curves the "
      "summary-function curves.");
  command
      ->add_option("--quadrats", o->quadrats,
                   "Quadrat grid NxM over the window's bounding box: 1-10000 cells a side, 2-10000 in all")
      ->capture_default_str();
  command->add_flag("--quadrat-monte-carlo", o->quadrat_monte_carlo,
                    "Monte Carlo quadrat p-value even when every expected count is 5 or more");
  command->add_flag("--clark-evans-monte-carlo", o->clark_evans_monte_carlo,
                    "Monte Carlo Clark-Evans p-value even where its normal law holds (Donnelly n >= 10, border "
                    "n >= 1000); it comes with the envelopes whenever they run");
  command
      ->add_option("--edge-correction", o->edge_correction,
                   "Clark-Evans edge correction: none, donnelly (rectangles) or border "
                   "(default: donnelly for rectangles, border otherwise)")
      ->check(CLI::IsMember({"none", "donnelly", "border"}));
  command
      ->add_option("--pair-correction", o->pair_correction,
                   "Edge correction of K, L and g: isotropic (Ripley) or border")
      ->check(CLI::IsMember({"isotropic", "border"}))
      ->capture_default_str();
  command
      ->add_option("--distance-correction", o->distance_correction,
                   "Edge correction of G and F: kaplan-meier or border")
      ->check(CLI::IsMember({"kaplan-meier", "border"}))
      ->capture_default_str();
  command
      ->add_option(
          "--simulations", o->simulations,
          "CSR simulations and random labellings (if not given: 999, but groups above 20,000 points run 199 and "
          "above 200,000 run 39, each with a note)")
      ->check(whole_number(0, 1000000))
      ->capture_default_str();
  command->add_option("--seed", o->seed, "Seed of every simulation")
      ->check(whole_number(0, 18446744073709551615ULL))
      ->capture_default_str();
  command->add_option("--threads", o->threads, "Threads (0 = all cores; results do not depend on it)")
      ->check(whole_number(0, 1024))
      ->capture_default_str();
  command
      ->add_option("--rmax", o->rmax,
                   "Largest distance of the summary functions, metres (default: the smaller of "
                   "a quarter of the window's shorter side and 4/sqrt(intensity))")
      ->check(positive_number());
  command->add_option("--only", o->only, "Run only these: quadrat, clark-evans, envelope, interactions (default: all)")
      ->delimiter(',');
  command->add_option("--curves", o->curves, "CSV of r, observed, theoretical and envelopes per group and function");
  command->add_option("--figures", o->figures, "Folder for one L-envelope figure per group (SVG and PNG)");
  return [command, o] {
    if (!command->parsed()) return -1;
    o->simulations_given = command->get_option("--simulations")->count() > 0;
    return run_randomness(*o);
  };
}

}  // namespace stipple::cli
