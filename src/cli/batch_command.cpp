// `stipple batch`, `stipple merge` and `stipple report`: parse options, call the library,
// show progress.

#include <algorithm>
#include <chrono>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <sstream>

#include <toml++/toml.h>

#include "commands.hpp"
#include "common_options.hpp"
#include "error_text.hpp"
#include "progress.hpp"
#include "stipple/batch/batch.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/io/output.hpp"
#include "stipple/randomness/quadrat.hpp"
#include "stipple/report/season_report.hpp"
#include "stipple/transect/detection_function.hpp"
#include "stipple/version.hpp"

namespace stipple::cli {

namespace {

struct BatchCommandOptions {
  CommonOptions common;  // common.sightings holds the input folder or list file
  std::string out;
  std::string pattern = "*.gpkg";
  std::string plots_name;
  std::string plots;  // one plots layer for every input
  std::vector<std::string> analyses{"density", "randomness"};
  std::string shard_text;
  unsigned threads = 0;
  bool quiet = false;
  std::string run_file;
  bool report = false;
  std::string detection_file;
  double detection_prob = 1.0;
  double detection_se = 0.0;
  std::size_t simulations = 999;
  std::uint64_t seed = default_seed;
  std::string quadrats = "4x4";
  std::string edge_correction;
  double rmax = 0.0;
  bool gis = false;
  bool surfaces = false;
  std::string distance_field;
  std::string size_field;
  std::string transect_field = "transect";
  std::string truncate;
  double pixel = 0.0;
  double bandwidth = 0.0;
};

// Refuses a key the run file format does not have, naming the nearest valid one: a typing
// error must not silently leave an option at its default.
void check_run_file_keys(const toml::table& file, const std::string& path) {
  static const std::vector<std::string> top{
      "analyses", "pattern",  "plots_name", "plots", "species_field", "plot_field", "sightings_plot_field",
      "assign",   "encoding", "unit",       "crs",   "assume_crs",    "confidence", "gis",
      "surface",  "density",  "randomness"};
  static const std::vector<std::string> density{"detection", "detection_prob", "detection_se"};
  static const std::vector<std::string> randomness{"simulations", "seed", "quadrats", "edge_correction", "rmax"};
  const auto check = [&](const toml::table& table, const std::vector<std::string>& known, const std::string& where) {
    for (const auto& [key, value] : table) {
      const std::string name(key.str());
      if (std::find(known.begin(), known.end(), name) != known.end()) continue;
      const std::string best = nearest_name(name, known);
      throw InputError(path + ": unknown key '" + where + name + "'" +
                       (best.empty() ? "" : " (did you mean '" + where + best + "'?)"));
    }
  };
  check(file, top, "");
  if (const auto* t = file["density"].as_table()) check(*t, density, "density.");
  if (const auto* t = file["randomness"].as_table()) check(*t, randomness, "randomness.");
}

toml::table parse_run_file(const std::string& path) {
  try {
    return toml::parse_file(path);
  } catch (const toml::parse_error& e) {
    std::ostringstream message;
    message << path << ": line " << e.source().begin.line << ": " << e.description();
    throw InputError(message.str());
  }
}

// Applies run-file values unless the command line names the same option; each value passes
// the same type and range checks as the option on the command line.
class RunFileValues {
 public:
  RunFileValues(const std::string& path, CLI::App& command) : path_(path), command_(command) {}

  bool given(const char* option) const { return command_.get_option(option)->count() > 0; }

  void text(const toml::node_view<const toml::node> node, std::string& target, const char* option) const {
    if (!node) return;
    if (!node.is_string()) throw InputError(path_ + ": '" + key(option) + "' must be a string");
    if (!given(option)) target = *node.value<std::string>();
  }

  // A path, relative to the run file's folder (not to where the command happens to run).
  void path(const toml::node_view<const toml::node> node, std::string& target, const char* option) const {
    text(node, target, option);
    if (node && !given(option) && !target.empty() && std::filesystem::path(target).is_relative())
      target = (std::filesystem::path(path_).parent_path() / target).string();
  }

  void real(const toml::node_view<const toml::node> node, double& target, const char* option) const {
    if (!node) return;
    if (!node.is_number()) throw InputError(path_ + ": '" + key(option) + "' must be a number");
    if (given(option)) return;
    target = *node.value<double>();
    validate(option, format_round_trip(target));
  }

  template <typename T>
  void whole(const toml::node_view<const toml::node> node, T& target, const char* option) const {
    if (!node) return;
    if (!node.is_integer() || *node.value<long long>() < 0)
      throw InputError(path_ + ": '" + key(option) + "' must be a whole number >= 0");
    if (given(option)) return;
    validate(option, std::to_string(*node.value<long long>()));
    target = static_cast<T>(*node.value<long long>());
  }

  void flag(const toml::node_view<const toml::node> node, bool& target, const char* option) const {
    if (node && !given(option)) target = node.value_or(false);
  }

  void validate(const char* option, const std::string& value) const {
    CLI::Option* opt = command_.get_option(option);
    for (int i = 0;; ++i) {
      CLI::Validator* validator = nullptr;
      try {
        validator = opt->get_validator(i);
      } catch (const CLI::OptionNotFound&) {
        return;
      }
      const std::string problem = (*validator)(value);
      if (!problem.empty()) throw InputError(path_ + ": '" + key(option) + "' " + problem);
    }
  }

 private:
  static std::string key(const char* option) { return std::string(option).substr(2); }

  const std::string& path_;
  CLI::App& command_;
};

void apply_top_level_keys(const toml::table& file, const RunFileValues& v, BatchCommandOptions& o) {
  if (auto list = file["analyses"]; list && !v.given("--analyses")) {
    if (!list.is_array()) throw InputError(o.run_file + ": 'analyses' must be a list, e.g. [\"density\"]");
    o.analyses.clear();
    for (const auto& item : *list.as_array()) {
      if (!item.is_string()) throw InputError(o.run_file + ": 'analyses' holds a value that is not a string");
      o.analyses.push_back(*item.value<std::string>());
    }
  }
  v.text(file["pattern"], o.pattern, "--pattern");
  v.text(file["plots_name"], o.plots_name, "--plots-name");
  v.path(file["plots"], o.plots, "--plots");
  v.text(file["species_field"], o.common.species_field, "--species-field");
  v.text(file["plot_field"], o.common.plot_field, "--plot-field");
  v.text(file["sightings_plot_field"], o.common.sightings_plot_field, "--sightings-plot-field");
  v.text(file["assign"], o.common.assign, "--assign");
  v.validate("--assign", o.common.assign);
  v.text(file["encoding"], o.common.encoding, "--encoding");
  v.text(file["unit"], o.common.unit, "--unit");
  v.text(file["crs"], o.common.crs, "--crs");
  v.text(file["assume_crs"], o.common.assume_crs, "--assume-crs");
  v.real(file["confidence"], o.common.confidence, "--confidence");
  v.flag(file["gis"], o.gis, "--gis");
  v.flag(file["surface"], o.surfaces, "--surface");
}

void apply_analysis_keys(const toml::table& file, const RunFileValues& v, BatchCommandOptions& o) {
  v.path(file["density"]["detection"], o.detection_file, "--detection");
  v.real(file["density"]["detection_prob"], o.detection_prob, "--detection-prob");
  v.real(file["density"]["detection_se"], o.detection_se, "--detection-se");
  v.whole(file["randomness"]["simulations"], o.simulations, "--simulations");
  v.whole(file["randomness"]["seed"], o.seed, "--seed");
  v.text(file["randomness"]["quadrats"], o.quadrats, "--quadrats");
  v.text(file["randomness"]["edge_correction"], o.edge_correction, "--edge-correction");
  v.real(file["randomness"]["rmax"], o.rmax, "--rmax");
}

// Values of the run file, applied unless the command line names the same option.
void apply_run_file(BatchCommandOptions& o, CLI::App& command) {
  const toml::table file = parse_run_file(o.run_file);
  check_run_file_keys(file, o.run_file);
  const RunFileValues values(o.run_file, command);
  apply_top_level_keys(file, values, o);
  apply_analysis_keys(file, values, o);
}

// A figure the batch wrote, by its path inside the output folder; a path leaving the folder
// (a damaged figures.csv) is refused.
std::string read_output_file(const std::string& dir, const std::string& relative) {
  const std::filesystem::path path = std::filesystem::path(relative).lexically_normal();
  if (path.is_absolute() || (!path.empty() && *path.begin() == ".."))
    throw InputError(dir + "/figures.csv: figure path '" + relative + "' leaves the folder");
  std::ifstream in(std::filesystem::path(dir) / path, std::ios::binary);
  if (!in)
    throw InputError((std::filesystem::path(dir) / path).string() + ": listed in figures.csv but cannot be read");
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

std::optional<Detection> single_detection(const BatchCommandOptions& o, CLI::App& command) {
  if (command.get_option("--detection-prob")->count() > 0 || o.detection_prob != 1.0 || o.detection_se != 0.0)
    return make_detection(o.detection_prob, o.detection_se, "--detection-prob");
  return std::nullopt;
}

void set_analyses(const BatchCommandOptions& o, BatchOptions& options) {
  options.run_density = options.run_randomness = options.run_transect = false;
  for (const auto& a : o.analyses) {
    if (a == "density")
      options.run_density = true;
    else if (a == "randomness")
      options.run_randomness = true;
    else if (a == "transect")
      options.run_transect = true;
    else
      throw InputError("--analyses takes density, randomness, transect (got '" + a + "')");
  }
}

void set_transect_options(const BatchCommandOptions& o, CLI::App& command, BatchOptions& options) {
  options.transect_read.transect_field = o.transect_field;
  options.transect_read.encoding = options.read.encoding;
  options.transect_read.species_field = o.common.species_field;
  if (!o.distance_field.empty()) options.transect_read.distance_field = o.distance_field;
  if (!o.size_field.empty()) options.transect_read.size_field = o.size_field;
  if (!o.common.assume_crs.empty()) options.transect_read.assume_crs = o.common.assume_crs;
  if (!o.common.crs.empty()) options.transect_read.target_crs = o.common.crs;
  options.transect.confidence = o.common.confidence;
  if (command.get_option("--unit")->count() > 0) options.transect.unit = parse_area_unit(o.common.unit);
  options.transect.truncation = parse_truncation(o.truncate);
}

BatchOptions batch_options_of(const BatchCommandOptions& o, CLI::App& command, const std::optional<Detection>& single) {
  BatchOptions options;
  options.read = to_read_options(o.common);
  set_analyses(o, options);
  options.density.unit = parse_area_unit(o.common.unit);
  options.density.confidence = o.common.confidence;
  options.density.seed = o.seed;
  if (!o.detection_file.empty())
    options.density.detection = read_detection_table(o.detection_file, single);
  else if (single)
    options.density.detection = DetectionTable::uniform(*single);
  options.randomness.simulations = o.simulations;
  // A count from the command line or the run file is run at every n; the default adapts.
  options.randomness.adapt_to_large_n = command.get_option("--simulations")->count() == 0 && o.simulations == 999;
  options.randomness.seed = o.seed;
  options.randomness.alpha = alpha_from_confidence(o.common.confidence);
  std::tie(options.randomness.quadrat.nx, options.randomness.quadrat.ny) = parse_quadrat_grid(o.quadrats);
  if (!o.edge_correction.empty()) options.randomness.edge_correction = parse_edge_correction(o.edge_correction);
  if (o.rmax > 0.0) options.randomness.rmax_m = o.rmax;
  options.threads = o.threads;
  if (options.run_transect) set_transect_options(o, command, options);
  options.gis = o.gis;
  options.surfaces = o.surfaces;
  if (o.pixel < 0.0 || o.bandwidth < 0.0) throw InputError("--pixel and --bandwidth must be positive");
  if (o.pixel > 0.0) options.pixel_m = o.pixel;
  if (o.bandwidth > 0.0) options.bandwidth_m = o.bandwidth;
  if (!o.plots.empty()) {
    if (!o.plots_name.empty()) throw InputError("--plots and --plots-name both name the plots; give one");
    options.shared_plots = SourceSpec{
        o.plots, o.common.plots_layer.empty() ? std::nullopt : std::optional<std::string>(o.common.plots_layer)};
  }
  return options;
}

// Every input the run reads: no output may replace one of them.
std::vector<std::string> inputs_to_protect(const BatchCommandOptions& o, const std::vector<BatchInput>& inputs) {
  std::vector<std::string> protect{o.common.sightings};
  if (!o.plots.empty()) protect.push_back(o.plots);
  if (!o.detection_file.empty()) protect.push_back(o.detection_file);
  for (const auto& in : inputs) {
    protect.push_back(in.path);
    protect.push_back(in.plots_path);
  }
  return protect;
}

void check_output_folder(const std::string& out_text, const std::vector<BatchInput>& inputs) {
  const std::filesystem::path out(out_text);
  std::error_code ec;
  if (std::filesystem::exists(out, ec) && !std::filesystem::is_directory(out, ec))
    throw InputError(out_text + ": exists and is not a folder; --out names the output folder");
  for (const auto& in : inputs)
    if (std::filesystem::equivalent(out, std::filesystem::path(in.path).parent_path(), ec))
      throw InputError(out_text + ": the output folder holds inputs; choose another --out");
}

// Progress per finished file: a bar with an ETA on a terminal, one line per file otherwise.
std::function<void(std::size_t, std::size_t, const SeasonInput&)> file_progress(bool quiet) {
  if (quiet) return [](std::size_t, std::size_t, const SeasonInput&) {};
  auto bar = std::make_shared<TerminalProgress>("stipple batch: files");
  if (auto draw = bar->callback())
    return [bar, draw](std::size_t done, std::size_t total, const SeasonInput&) { draw(done, total); };
  const auto start = std::chrono::steady_clock::now();
  return [start](std::size_t done, std::size_t total, const SeasonInput& r) {
    const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    std::cerr << "stipple batch: " << done << "/" << total << " " << r.name << " "
              << (r.status == "ok"        ? "ok"
                  : r.status == "skipped" ? "skipped"
                                          : "FAILED")
              << " (" << format_fixed(elapsed, 1) << " s)\n";
  };
}

// The options as the user gave them, one line for run.json and the report.
std::string options_used_text(const BatchCommandOptions& o) {
  const auto name = [](const std::string& path) { return std::filesystem::path(path).filename().string(); };
  std::string used = "analyses=";
  for (const auto& a : o.analyses) used += a + ",";
  used += " unit=" + o.common.unit + " confidence=" + format_general(o.common.confidence) +
          " simulations=" + std::to_string(o.simulations) + " seed=" + std::to_string(o.seed) +
          " quadrats=" + o.quadrats;
  if (!o.edge_correction.empty()) used += " edge-correction=" + o.edge_correction;
  if (o.rmax > 0.0) used += " rmax=" + format_general(o.rmax);
  if (!o.detection_file.empty()) used += " detection=" + name(o.detection_file);
  used += " pattern=" + o.pattern;
  if (!o.plots_name.empty()) used += " plots-name=" + o.plots_name;
  if (!o.plots.empty()) used += " plots=" + name(o.plots);
  if (!o.run_file.empty()) used += " run-file=" + name(o.run_file);
  return used;
}

std::string detection_text(const BatchCommandOptions& o, const std::optional<Detection>& single) {
  if (!o.detection_file.empty())
    return "per-species probabilities from " + std::filesystem::path(o.detection_file).filename().string() +
           "; intensity divided by p";
  if (single)
    return "one detection probability p = " + format_general(single->probability) + " (se " +
           format_general(single->standard_error) + ") for every species; intensity divided by p";
  return "none (p = 1 for every species)";
}

// The facts of the run the report's methods paragraph is generated from.
SeasonRun season_run_of(const BatchCommandOptions& o, const BatchOptions& options,
                        const std::optional<Detection>& single) {
  SeasonRun run;
  run.version = std::string(version());
  run.options_text = options_used_text(o);
  run.density = options.run_density;
  run.randomness = options.run_randomness;
  run.transect = options.run_transect;
  run.seed = o.seed;
  run.simulations = o.simulations;
  run.unit = o.common.unit;
  run.transect_unit = std::string(unit_name(options.transect.unit));
  run.confidence = o.common.confidence;
  run.quadrats = o.quadrats;
  run.edge_correction = o.edge_correction;
  run.rmax_m = options.randomness.rmax_m;
  run.detection = detection_text(o, single);
  std::string models;
  for (const auto k : options.transect.keys) models += (models.empty() ? "" : ", ") + std::string(key_function_name(k));
  for (const auto a : options.transect.adjustments)
    models +=
        " with up to " + std::to_string(options.transect.max_terms) + " " + std::string(adjustment_name(a)) + " terms";
  run.transect_models = models;
  run.truncation = o.truncate.empty() ? "at the largest distance" : o.truncate;
  return run;
}

int run_batch_command(BatchCommandOptions& o, CLI::App& command) {
  if (!o.run_file.empty()) apply_run_file(o, command);
  const std::optional<Detection> single = single_detection(o, command);
  BatchOptions options = batch_options_of(o, command, single);
  options.read.cancel = options.randomness.cancel = options.transect.cancel = interrupt_token();
  std::vector<BatchInput> inputs = discover_inputs(o.common.sightings, o.pattern, o.plots_name);
  const std::size_t all_inputs = inputs.size();
  options.crs_reference = inputs.front();
  if (!o.shard_text.empty()) {
    const auto [k, n] = parse_shard(o.shard_text);
    inputs = shard(inputs, k, n);
  }
  const std::vector<std::string> protect = inputs_to_protect(o, inputs);
  check_output_folder(o.out, inputs);
  options.run = season_run_of(o, options, single);
  options.describe_error = [](const Error& e) { return error_text(e); };
  if (!o.quiet)
    std::cerr << "stipple batch: " << inputs.size() << " of " << all_inputs << " input(s)"
              << (o.shard_text.empty() ? "" : " (shard " + o.shard_text + ")") << "\n";
  const BatchSummary summary = run_batch(inputs, options, o.out, protect, file_progress(o.quiet));
  const std::filesystem::path out(o.out);
  if (o.report) {
    const std::string out_dir = o.out;
    write_file_safely(
        (out / "report.html").string(),
        season_report_html(summary.report, [&](const std::string& path) { return read_output_file(out_dir, path); }),
        protect);
  }
  for (const auto& r : summary.report.inputs)
    if (r.status != "ok") std::cerr << r.status << ": " << r.name << ": " << r.reason << "\n";
  if (!o.quiet)
    std::cerr << "stipple batch: " << summary.report.inputs.size() - summary.failed - summary.skipped << " ok, "
              << summary.skipped << " skipped, " << summary.failed << " failed; tables in " << o.out
              << (o.report ? ", report " + (out / "report.html").string() : std::string()) << "\n";
  return summary.failed > 0 ? static_cast<int>(ExitCode::some_inputs_failed) : 0;
}

}  // namespace

Action add_batch_command(CLI::App& app) {
  auto o = std::make_shared<BatchCommandOptions>();
  CLI::App* c = app.add_subcommand(
      "batch", "Run density and randomness over a folder (or list) of plot files: tidy tables, figures, a report");
  c->add_option("INPUTS", o->common.sightings, "A folder searched recursively, or a file listing one input per line")
      ->required();
  c->add_option("--out", o->out, "Output folder")->required();
  c->add_option("--pattern", o->pattern, "File-name pattern of the inputs (* and ?)")->capture_default_str();
  c->add_option("--plots", o->plots,
                "One plots layer for every input (a folder of sighting files over one plots file); sightings are "
                "assigned by their plot attribute or by location (--assign)");
  c->add_option("--plots-name", o->plots_name,
                "Plots file beside each input, {*} = what the pattern's * matched (default: the input itself)");
  c->add_option("--analyses", o->analyses, "density, randomness, transect (inputs holding transect lines)")
      ->delimiter(',')
      ->capture_default_str();
  c->add_option("--distance-field", o->distance_field, "transect: recorded distance field (else from locations)");
  c->add_option("--size-field", o->size_field, "transect: cluster size field");
  c->add_option("--transect-field", o->transect_field, "transect: transect id field")->capture_default_str();
  c->add_option(
      "--truncate", o->truncate,
      "transect: truncation distance (m > 0), percentage in [0, 100) (5%) or none (default: the largest distance)");
  c->add_option("--shard", o->shard_text,
                "Process only the K-th of N deterministic slices, K/N with 1 <= K <= N (default: all inputs)");
  c->add_option("--threads", o->threads, "Files processed in parallel (0 = all cores)")
      ->check(whole_number(0, 1024))
      ->capture_default_str();
  c->add_flag("--quiet", o->quiet, "No progress output");
  c->add_option("--run-file", o->run_file, "TOML run file with the analyses and options (the command line wins)");
  c->add_flag("--report", o->report, "Also write OUT/report.html");
  c->add_flag("--gis", o->gis, "Also write OUT/plot-results.gpkg: plot polygons with density and test attributes");
  c->add_flag("--surface", o->surfaces, "Also write kernel intensity surfaces per species: OUT/surfaces/*/*.tif");
  c->add_option("--pixel", o->pixel, "Surface pixel size, metres (default: 1/200 of the plots' extent)")
      ->check(positive_number());
  c->add_option("--bandwidth", o->bandwidth, "Kernel bandwidth, metres (default: Scott's rule per plot)")
      ->check(positive_number());
  c->add_option("--layer", o->common.layer, "Sightings layer in each input");
  c->add_option("--plots-layer", o->common.plots_layer, "Plots layer in each input");
  o->common.plot_field_option =
      c->add_option(
           "--plot-field", o->common.plot_field,
           "Plot-id attribute of the plot polygons (and of the sightings, unless --sightings-plot-field names theirs)")
          ->capture_default_str();
  c->add_option("--sightings-plot-field", o->common.sightings_plot_field,
                "Plot attribute of the sightings (default: the --plot-field name)");
  add_assign_option(*c, o->common.assign, "plot");
  c->add_option("--encoding", o->common.encoding,
                "Text encoding of the inputs' attributes, e.g. LATIN1 (default: UTF-8; invalid bytes shown as U+FFFD)");
  c->add_option("--species-field", o->common.species_field, "Species attribute")->capture_default_str();
  c->add_option("--crs", o->common.crs, "Analysis CRS, projected in metres (default: as for density)");
  c->add_option("--assume-crs", o->common.assume_crs,
                "CRS of layers that carry none (default: none; such layers are refused)");
  c->add_option("--unit", o->common.unit, "Area unit: m2, ha or km2")
      ->check(CLI::IsMember({"m2", "ha", "km2"}))
      ->capture_default_str();
  c->add_option("--confidence", o->common.confidence, "Two-sided confidence level")
      ->check(number_between(0.0, 1.0, "e.g. 0.95"))
      ->capture_default_str();
  c->add_option("--detection", o->detection_file, "CSV of detection probabilities: species, p, optional se");
  c->add_option("--detection-prob", o->detection_prob,
                "One detection probability for every species (default: 1, no correction)")
      ->check(probability());
  c->add_option("--detection-se", o->detection_se, "Standard error of --detection-prob (default: 0)")
      ->check(non_negative_number());
  c->add_option("--simulations", o->simulations,
                "CSR simulations per group (if not given: 999, 199 above 20,000 points, 39 above 200,000)")
      ->check(whole_number(0, 1000000))
      ->capture_default_str();
  c->add_option("--seed", o->seed, "Seed; each plot's simulations derive their own from it")
      ->check(whole_number(0, 18446744073709551615ULL))
      ->capture_default_str();
  c->add_option("--quadrats", o->quadrats, "Quadrat grid NxM: 1-10000 cells a side, 2-10000 in all")
      ->capture_default_str();
  c->add_option("--edge-correction", o->edge_correction, "Clark-Evans edge correction: none, donnelly, border")
      ->check(CLI::IsMember({"none", "donnelly", "border"}));
  c->add_option("--rmax", o->rmax,
                "Largest distance of the summary functions, metres (default: the smaller of a quarter of the window's "
                "shorter side and 4/sqrt(intensity))")
      ->check(positive_number());
  return [c, o] {
    if (!c->parsed()) return -1;
    return run_batch_command(*o, *c);
  };
}

Action add_merge_command(CLI::App& app) {
  auto dirs = std::make_shared<std::vector<std::string>>();
  auto out = std::make_shared<std::string>();
  CLI::App* c = app.add_subcommand("merge", "Combine the output folders of batch shards into one run's tables");
  c->add_option("SHARDS", *dirs, "Output folders of `stipple batch --shard K/N`")->required();
  c->add_option("--out", *out, "Output folder")->required();
  return [c, dirs, out] {
    if (!c->parsed()) return -1;
    merge_batch_outputs(*dirs, *out);
    return 0;
  };
}

Action add_report_command(CLI::App& app) {
  auto dir = std::make_shared<std::string>();
  auto output = std::make_shared<std::string>();
  CLI::App* c = app.add_subcommand("report", "Write the self-contained HTML report of a batch output folder");
  c->add_option("FOLDER", *dir, "A folder written by `stipple batch` or `stipple merge`")->required();
  c->add_option("--out", *output, "HTML file (default FOLDER/report.html)");
  return [c, dir, output] {
    if (!c->parsed()) return -1;
    const std::string target = output->empty() ? (std::filesystem::path(*dir) / "report.html").string() : *output;
    const std::vector<std::string> protect = files_a_report_must_not_replace(*dir);
    check_outputs({{"--out", target}}, protect);
    const SeasonReport report = load_batch_folder(*dir);
    const std::string folder = *dir;
    write_file_safely(
        target, season_report_html(report, [&](const std::string& path) { return read_output_file(folder, path); }),
        protect);
    std::cout << "report written to " << target << "\n";
    return 0;
  };
}

}  // namespace stipple::cli
