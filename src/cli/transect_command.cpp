// `stipple transect` and `stipple effort`: parse options, call the library, print.

#include <charconv>
#include <filesystem>
#include <iostream>
#include <memory>
#include <sstream>

#include "commands.hpp"
#include "common_options.hpp"
#include "progress.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/io/transect_reader.hpp"
#include "stipple/report/transect_report.hpp"
#include "stipple/transect/estimate.hpp"

namespace stipple::cli {

namespace {

struct TransectCommandOptions {
  CommonOptions common;
  std::string lines;
  std::string stations;
  std::string transects_layer;
  std::string transect_field = "transect";
  std::string sightings_transect_field;
  std::string assign = "auto";
  std::string effort_field;
  std::string visits_field;
  std::string distance_field;
  std::string angle_field;
  std::string size_field;
  std::string stratum_field;
  std::string truncate;
  std::string bins;
  std::vector<std::string> models{"half-normal", "hazard-rate", "uniform"};
  std::vector<std::string> adjustments{"cosine"};
  std::size_t max_terms = 2;
  bool pool_detection = false;
  std::string study_area;
  std::string study_area_layer;
  std::size_t bootstrap = 0;
  std::uint64_t seed = default_seed;
  unsigned threads = 0;
  double max_offset = 1000.0;
  double target_cv = 0.0;
  std::string figures;
};

std::optional<std::string> opt(const std::string& s) {
  return s.empty() ? std::nullopt : std::optional<std::string>(s);
}

std::optional<double> parse_number(const std::string& text) {
  double value = 0.0;
  const auto r = std::from_chars(text.data(), text.data() + text.size(), value);
  if (r.ec != std::errc() || r.ptr != text.data() + text.size()) return std::nullopt;
  return value;
}

int run_transect(const TransectCommandOptions& o) {
  TransectReadOptions read;
  read.sightings = SourceSpec{o.common.sightings, opt(o.common.layer)};
  if (!o.lines.empty()) read.lines = SourceSpec{o.lines, opt(o.transects_layer)};
  if (!o.stations.empty()) read.stations = SourceSpec{o.stations, opt(o.transects_layer)};
  read.transect_field = o.transect_field;
  read.sighting_transect_field = opt(o.sightings_transect_field);
  read.assignment = parse_assignment(o.assign);
  read.encoding = opt(o.common.encoding);
  read.effort_field = opt(o.effort_field);
  read.visits_field = opt(o.visits_field);
  read.distance_field = opt(o.distance_field);
  read.angle_field = opt(o.angle_field);
  read.size_field = opt(o.size_field);
  read.species_field = o.common.species_field;
  read.stratum_field = opt(o.stratum_field);
  read.x_field = opt(o.common.x_field);
  read.y_field = opt(o.common.y_field);
  read.target_crs = opt(o.common.crs);
  read.assume_crs = opt(o.common.assume_crs);
  if (!(o.max_offset > 0.0)) throw InputError("--max-offset must be positive");
  read.max_offset_m = o.max_offset;
  std::vector<double> bins;
  try {
    bins = parse_bin_edges(o.bins);
  } catch (const InputError& e) {
    throw InputError(std::string("--bins ") + e.what());
  }
  read.bin_edges = bins;

  TransectOptions options;
  options.cancel = interrupt_token();
  options.keys.clear();
  for (const auto& m : o.models) options.keys.push_back(parse_key_function(m));
  options.adjustments.clear();
  for (const auto& a : o.adjustments) options.adjustments.push_back(parse_adjustment(a));
  options.max_terms = o.max_terms;
  options.truncation = parse_truncation(o.truncate);
  if (!o.bins.empty() && !o.truncate.empty())
    throw InputError("--truncate and --bins both set the truncation distance; give one (the last bin edge truncates)");
  options.bin_edges = bins;
  options.unit = parse_area_unit(o.common.unit);
  options.confidence = o.common.confidence;
  check_confidence(options.confidence);
  options.pool_detection = o.pool_detection;
  options.bootstrap = o.bootstrap;
  options.seed = o.seed;
  options.threads = o.threads;
  if (o.target_cv < 0.0 || o.target_cv >= 1.0) throw InputError("--target-cv must lie in (0, 1)");
  if (o.target_cv > 0.0) options.target_cv = o.target_cv;
  if (!o.study_area.empty()) {
    if (const auto area = parse_number(o.study_area)) {
      if (!(*area > 0.0)) throw InputError("--study-area must be positive");
      options.study_area_m2 = *area * square_metres_per(options.unit);
    } else {
      read.study_area = SourceSpec{o.study_area, opt(o.study_area_layer)};
    }
  }

  std::vector<std::string> inputs{o.common.sightings};
  if (!o.lines.empty()) inputs.push_back(o.lines);
  if (!o.stations.empty()) inputs.push_back(o.stations);
  if (read.study_area) inputs.push_back(read.study_area->path);
  check_outputs({{"--json", o.common.json}, {"--csv", o.common.csv}}, inputs);

  const LoadedTransects input = load_transects(read);
  options.study_area_m2 = input.study_area_m2 ? input.study_area_m2 : options.study_area_m2;
  options.stratum_area_m2 = input.stratum_area_m2;
  TransectResult result;
  {
    TerminalProgress bar("stipple transect: bootstrap");
    options.progress = bar.callback();
    result = analyse_transects(input.survey, options);
  }

  const bool stdout_taken = o.common.json == "-" || o.common.csv == "-";
  if (!o.common.json.empty()) write_output(o.common.json, transect_json(input, result), inputs);
  if (!o.common.csv.empty()) write_output(o.common.csv, transect_csv(result), inputs);
  if (!o.figures.empty()) write_folder(o.figures, transect_figures(input.survey, result), inputs);
  if (!stdout_taken) std::cout << transect_table(input, input.survey, result);
  return 0;
}

}  // namespace

Action add_transect_command(CLI::App& app) {
  auto o = std::make_shared<TransectCommandOptions>();
  o->common.unit = "km2";
  CLI::App* c = app.add_subcommand("transect",
                                   "Density and abundance from line or point transects: detection functions fitted to "
                                   "sighting distances, encounter rates, intervals");
  c->footer(
      "Abbreviations: ESW = effective strip half-width (lines); P_a = probability of detecting an animal "
      "within the truncation distance; E(s) = mean cluster size; CV = coefficient of variation; AIC = Akaike "
      "information criterion; GOF = goodness of fit.");
  add_sighting_options(*c, o->common);
  add_output_options(*c, o->common);
  c->add_option("--lines", o->lines, "Transect lines: an OGR line layer with a transect id");
  c->add_option("--stations", o->stations, "Point stations: an OGR point layer with a station id");
  c->add_option("--transects-layer", o->transects_layer, "Layer of --lines or --stations");
  c->add_option("--transect-field", o->transect_field,
                "Transect (or station) id field of the lines or stations (and of the sightings, unless "
                "--sightings-transect-field names theirs)")
      ->capture_default_str();
  c->add_option("--sightings-transect-field", o->sightings_transect_field,
                "Transect attribute of the sightings (default: the --transect-field name)");
  add_assign_option(*c, o->assign, "transect");
  c->add_option("--effort-field", o->effort_field, "Line length in km from this field instead of the geometry");
  c->add_option("--visits-field", o->visits_field,
                "Repeat visits of each transect (default: field 'visits' if present, else 1)");
  c->add_option("--distance-field", o->distance_field,
                "Recorded distance (m), perpendicular or radial; without it, distances come from sighting locations");
  c->add_option("--angle-field", o->angle_field, "Sighting angle (degrees) for radial distances: x = r sin(angle)");
  c->add_option("--size-field", o->size_field, "Cluster size (default 1)");
  c->add_option("--stratum-field", o->stratum_field, "Stratum field of the transects (and of --study-area polygons)");
  c->add_option("--truncate", o->truncate,
                "Right truncation: a distance in m (> 0), a percentage in [0, 100) of the largest distances (5%), or "
                "none (default: the largest distance)");
  c->add_option("--bins", o->bins,
                "Distance bin edges in m (binned analysis), 2-1000 increasing numbers >= 0, e.g. 0,10,25,50,100 "
                "(default: exact distances)");
  c->add_option("--models", o->models, "Key functions: half-normal, hazard-rate, uniform")
      ->delimiter(',')
      ->capture_default_str();
  c->add_option("--adjustments", o->adjustments, "Adjustment series: none, cosine, polynomial, hermite")
      ->delimiter(',')
      ->capture_default_str();
  c->add_option("--max-terms", o->max_terms, "Most adjustment terms per model")
      ->check(whole_number(0, 5))
      ->capture_default_str();
  c->add_flag("--pool-detection", o->pool_detection,
              "One detection function shared by all species and strata; encounter rates stay specific");
  c->add_option("--study-area", o->study_area,
                "Study area for abundance: a number (in --unit) or a polygon layer (default: none, density only)");
  c->add_option("--study-area-layer", o->study_area_layer, "Layer of --study-area");
  c->add_option("--bootstrap", o->bootstrap, "Non-parametric bootstrap replicates over transects (0 = none)")
      ->check(whole_number(0, 100000))
      ->capture_default_str();
  c->add_option("--seed", o->seed, "Seed of the bootstrap")
      ->check(whole_number(0, 18446744073709551615ULL))
      ->capture_default_str();
  c->add_option("--threads", o->threads, "Threads (0 = all cores; results do not depend on it)")
      ->check(whole_number(0, 1024))
      ->capture_default_str();
  c->add_option("--max-offset", o->max_offset, "Sightings farther than this (m) from every transect are refused")
      ->check(positive_number())
      ->capture_default_str();
  c->add_option("--target-cv", o->target_cv,
                "Also report the effort needed for this CV of density, a fraction in (0, 1), e.g. 0.15 (default: none)")
      ->check(number_between(0.0, 1.0, "a CV is a fraction: 0.15 for 15%"));
  c->add_option("--figures", o->figures, "Folder for detection-function and Q-Q figures (SVG and PNG)");
  return [c, o] {
    if (!c->parsed()) return -1;
    return run_transect(*o);
  };
}

Action add_effort_command(CLI::App& app) {
  struct Options {
    double detections = 0.0;
    double effort = 0.0;
    double target_cv = 0.0;
    double dispersion = 3.0;
    std::string json;
  };
  auto o = std::make_shared<Options>();
  CLI::App* c = app.add_subcommand("effort", "Transect effort needed for a target CV of density, from a pilot survey");
  c->add_option("--pilot-detections", o->detections, "Detections in the pilot survey (n0)")
      ->required()
      ->check(positive_number());
  c->add_option("--pilot-effort", o->effort, "Pilot effort: km of line (L0) or point visits")
      ->required()
      ->check(positive_number());
  c->add_option("--target-cv", o->target_cv, "Target coefficient of variation of density (a fraction, e.g. 0.15)")
      ->required()
      ->check(number_between(0.0, 1.0, "a CV is a fraction: 0.15 for 15%"));
  c->add_option("--dispersion", o->dispersion, "Dispersion factor b (3 is the rule of thumb)")
      ->check(positive_number())
      ->capture_default_str();
  c->add_option("--json", o->json, "Write the result as JSON to FILE ('-' = standard output)");
  return [c, o] {
    if (!c->parsed()) return -1;
    const double needed = effort_for_target_cv(o->detections, o->effort, o->target_cv, o->dispersion);
    if (!o->json.empty()) {
      write_output(o->json, effort_json(o->detections, o->effort, o->target_cv, o->dispersion, needed), {});
      if (o->json == "-") return 0;
    }
    std::cout << "effort needed for CV " << format_general(o->target_cv) << ": " << format_significant(needed, 4)
              << " (same unit as --pilot-effort), about " << format_significant(needed / o->effort * o->detections, 4)
              << " detections; L = (b / CV^2) (L0 / n0), b = " << format_general(o->dispersion)
              << " (Buckland et al. 2001)\n";
    return 0;
  };
}

}  // namespace stipple::cli
