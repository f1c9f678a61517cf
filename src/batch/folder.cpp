// The batch output folder: merging shards' folders, reading a folder back for the report.

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <limits>
#include <map>
#include <set>
#include <sstream>

#include <nlohmann/json.hpp>

#include "json_text.hpp"
#include "report/records.hpp"
#include "stipple/batch/batch.hpp"
#include "stipple/error.hpp"
#include "stipple/io/gis_writer.hpp"
#include "stipple/io/output.hpp"
#include "stipple/report/density_report.hpp"
#include "stipple/report/tables.hpp"

namespace fs = std::filesystem;

namespace stipple {

namespace {

using Json = nlohmann::ordered_json;

void write_lines(const std::string& path, const std::string& header, const std::vector<std::string>& rows,
                 const std::vector<std::string>& protected_paths) {
  std::string text = header + "\n";
  for (const auto& row : rows) text += row + "\n";
  write_file_safely(path, text, protected_paths);
}

// The cells of one CSV line (quoted cells may hold commas and doubled quotes).
std::vector<std::string> csv_cells(const std::string& line) {
  std::vector<std::string> cells(1);
  bool quoted = false;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const char c = line[i];
    if (quoted) {
      if (c == '"' && i + 1 < line.size() && line[i + 1] == '"')
        cells.back() += '"', ++i;
      else if (c == '"')
        quoted = false;
      else
        cells.back() += c;
    } else if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      cells.emplace_back();
    } else {
      cells.back() += c;
    }
  }
  return cells;
}

// The batch's JSON arrays: one compact record per line (as run_batch streams them).
std::string json_array_text(const std::vector<Json>& records) {
  std::string text = "[";
  for (std::size_t i = 0; i < records.size(); ++i) text += (i == 0 ? "\n" : ",\n") + json_text(records[i], -1);
  return text + (records.empty() ? "]\n" : "\n]\n");
}

Json read_json_file(const fs::path& path) {
  std::ifstream in(path);
  if (!in) throw InputError(path.string() + ": cannot be read");
  Json doc = Json::parse(in, nullptr, false);
  if (doc.is_discarded()) throw InputError(path.string() + ": not valid JSON; is this a stipple batch output folder?");
  return doc;
}

bool file_exists(const fs::path& path) {
  std::error_code ec;
  return fs::exists(path, ec);
}

// The chi-square part of a homogeneity or composition record.
template <typename Test>
void read_chi_square_test(const Json& record, Test& t) {
  t.chi_square.statistic = record.value("statistic", 0.0);
  t.chi_square.df = record.value("df", 0.0);
  t.p_value = record.value("p_value", 1.0);
  t.monte_carlo = record.value("p_value_method", "") == "monte-carlo";
  t.significant = record.value("significant", false);
}

std::optional<double> opt_number(const Json& v) {
  return v.is_number() ? std::optional<double>(v.get<double>()) : std::nullopt;
}
std::optional<std::string> opt_text(const Json& v) {
  return v.is_string() ? std::optional<std::string>(v.get<std::string>()) : std::nullopt;
}
double number_or_nan(const Json& v) {
  return v.is_number() ? v.get<double>() : std::numeric_limits<double>::quiet_NaN();
}
Interval interval_of(const Json& v) {
  if (!v.is_array() || v.size() != 2) return {};
  return {number_or_nan(v[0]), number_or_nan(v[1])};
}
std::vector<Departure> departures_of(const Json& list) {
  std::vector<Departure> out;
  if (!list.is_array()) return out;
  for (const auto& d : list) {
    const std::string direction = d.value("direction", "");
    out.push_back({d.value("from", 0.0), d.value("to", 0.0),
                   direction == "clustered" || direction == "association" ? "above" : "below"});
  }
  return out;
}

CorrectionMethod correction_method_of(const std::string& name) {
  for (const auto m : {CorrectionMethod::none, CorrectionMethod::exact_divided_by_p, CorrectionMethod::delta_log})
    if (name == correction_method_name(m)) return m;
  return CorrectionMethod::none;
}

// The detection-corrected intensity of an estimate or pooled record.
CorrectedIntensity corrected_of(const Json& j) {
  CorrectedIntensity c;
  c.detection_probability = j.value("detection_probability", 1.0);
  c.intensity = j.value("corrected_intensity", 0.0);
  c.ci = interval_of(j["corrected_ci"]);
  c.method = correction_method_of(j.value("correction_method", ""));
  return c;
}

DensityEstimate density_estimate_of(const Json& e) {
  DensityEstimate d;
  d.plot = e.value("plot", "");
  d.species = opt_text(e["species"]);
  d.count = e.value("count", std::uint64_t{0});
  d.area_in_unit = e.value("area", 0.0);
  d.area_m2 = e.value("area_m2", 0.0);
  d.intensity = e.value("intensity", 0.0);
  d.ci = interval_of(e["ci"]);
  d.corrected = corrected_of(e);
  return d;
}

PooledEstimate pooled_of(const Json& p) {
  PooledEstimate out;
  out.species = opt_text(p["species"]);
  out.plots = p.value("plots", std::size_t{0});
  out.count = p.value("count", std::uint64_t{0});
  out.area_in_unit = p.value("area", 0.0);
  out.intensity = p.value("intensity", 0.0);
  out.ci = interval_of(p["ci"]);
  out.corrected = corrected_of(p);
  if (p["homogeneity"].is_object()) {
    const Json& h = p["homogeneity"];
    HomogeneityTest t;
    read_chi_square_test(h, t);
    t.dispersion_ratio = h.value("dispersion_ratio", 0.0);
    t.between_plot_se = h.value("between_plot_se", 0.0);
    t.between_plot_ci = interval_of(h["between_plot_ci"]);
    t.corrected_between_plot_se = h.value("corrected_between_plot_se", 0.0);
    t.corrected_between_plot_ci = interval_of(h["corrected_between_plot_ci"]);
    out.homogeneity = t;
  }
  return out;
}

void load_run(const Json& run, SeasonReport& report) {
  SeasonRun& r = report.run;
  r.version = run.value("stipple_version", "");
  r.options_text = run.value("options", "");
  for (const auto& a : run.value("analyses", Json::array())) {
    r.density = r.density || a == "density";
    r.randomness = r.randomness || a == "randomness";
    r.transect = r.transect || a == "transect";
  }
  r.seed = run.value("seed", std::uint64_t{0});
  r.simulations = run.value("simulations", std::size_t{0});
  r.unit = run.value("unit", "ha");
  r.transect_unit = run.value("transect_unit", "km2");
  r.confidence = run.value("confidence", 0.95);
  r.crs = opt_text(run["crs"]).value_or("");
  r.crs_name = opt_text(run["crs_name"]).value_or("");
  const Json methods = run.value("methods", Json::object());
  r.quadrats = methods.value("quadrats", "4x4");
  r.edge_correction = opt_text(methods["edge_correction"]).value_or("");
  r.pair_correction = methods.value("pair_correction", "isotropic");
  r.distance_correction = methods.value("distance_correction", "kaplan-meier");
  r.rmax_m = opt_number(methods["rmax"]);
  r.detection = methods.value("detection", "");
  r.transect_models = methods.value("transect_models", "");
  r.truncation = methods.value("truncation", "");
  r.bootstrap = methods.value("bootstrap", std::size_t{0});
  for (const auto& in : run.value("inputs", Json::array())) {
    SeasonInput i;
    i.name = in.value("name", "");
    i.plots = opt_text(in["plots"]).value_or("");
    i.kind = in.value("kind", "unknown");
    i.crs = opt_text(in["crs"]).value_or("");
    i.status = in.value("status", "");
    i.reason = opt_text(in["reason"]).value_or("");
    i.sha256 = opt_text(in["sha256"]).value_or("");
    for (const auto& w : in.value("warnings", Json::array())) i.warnings.push_back(w.get<std::string>());
    report.inputs.push_back(std::move(i));
  }
}

// Pools the plots listed in density.json records (per-species rows) as run_batch did.
DensityResult pool_records(const std::vector<Json>& records, const Json& run) {
  std::map<std::string, std::map<std::string, std::uint64_t>> by_plot;  // file:plot -> species -> n
  std::vector<std::string> order;
  std::map<std::string, double> area_m2;
  std::set<std::string> species;
  for (const auto& r : records) {
    const std::string id = r.value("file", "") + ":" + r.value("plot", "");
    if (!area_m2.count(id)) {
      order.push_back(id);
      area_m2[id] = r.value("area_m2", 0.0);
      by_plot[id];
    }
    if (r["species"].is_string()) {
      by_plot[id][r["species"].get<std::string>()] = r.value("count", std::uint64_t{0});
      species.insert(r["species"].get<std::string>());
    }
  }
  PlotCounts counts;
  counts.species.assign(species.begin(), species.end());
  for (const auto& id : order) {
    counts.plots.push_back(id);
    counts.areas_m2.push_back(area_m2[id]);
    std::vector<std::uint64_t> row;
    for (const auto& s : counts.species) row.push_back(by_plot[id].count(s) ? by_plot[id][s] : 0);
    counts.counts.push_back(std::move(row));
  }
  DensityOptions options;
  options.unit = parse_area_unit(run.value("unit", "ha"));
  options.confidence = run.value("confidence", 0.95);
  options.seed = run.value("seed", std::uint64_t{0});
  options.simulations = run.value("simulations", std::size_t{0});
  std::map<std::string, Detection> table;
  for (const auto& d : run.value("detection_table", Json::array()))
    table[d.value("species", "")] = Detection{d.value("p", 1.0), d.value("se", 0.0)};
  options.detection = DetectionTable::by_species(table, Detection{}, "run.json");
  DensityResult pooled = estimate_density(counts, options);
  pooled.estimates.clear();
  return pooled;
}

std::vector<std::string> read_lines(const fs::path& path, std::string& header) {
  std::ifstream in(path);
  if (!in) throw InputError(path.string() + ": missing from the shard output");
  std::vector<std::string> lines;
  std::string line;
  std::getline(in, header);
  while (std::getline(in, line))
    if (!line.empty()) lines.push_back(line);
  return lines;
}

// Tables: rows of all shards, stably ordered by input name (the first column).
void merge_tables(const std::vector<std::string>& shard_dirs, const fs::path& out,
                  const std::vector<std::string>& protect) {
  for (const char* table :
       {"density.csv", "randomness.csv", "interactions.csv", "transect.csv", "failures.csv", "figures.csv"}) {
    std::string header;
    std::vector<std::string> rows;
    bool present = false;
    for (const auto& dir : shard_dirs) {
      const fs::path path = fs::path(dir) / table;
      if (!file_exists(path)) continue;
      present = true;
      std::string h;
      auto lines = read_lines(path, h);
      if (!header.empty() && h != header) throw InputError(path.string() + ": header differs from the other shards'");
      header = h;
      rows.insert(rows.end(), lines.begin(), lines.end());
    }
    if (!present) continue;
    std::stable_sort(rows.begin(), rows.end(), [](const std::string& a, const std::string& b) {
      return csv_cells(a).front() < csv_cells(b).front();
    });
    write_lines((out / table).string(), header, rows, protect);
  }
}

// JSON twins: records of all shards ordered by file. Returns the density records.
std::vector<Json> merge_twins(const std::vector<std::string>& shard_dirs, const fs::path& out,
                              const std::vector<std::string>& protect) {
  std::vector<Json> density_records;
  for (const std::string twin : {"density.json", "randomness.json", "interactions.json", "transect.json"}) {
    std::vector<Json> records;
    bool present = false;
    for (const auto& dir : shard_dirs) {
      const fs::path path = fs::path(dir) / twin;
      if (!file_exists(path)) continue;
      present = true;
      for (const auto& r : read_json_file(path)) records.push_back(r);
    }
    if (!present) continue;
    std::stable_sort(records.begin(), records.end(), [](const Json& a, const Json& b) {
      return a["file"].get<std::string>() < b["file"].get<std::string>();
    });
    write_file_safely((out / twin).string(), json_array_text(records), protect);
    if (twin == "density.json") density_records = std::move(records);
  }
  return density_records;
}

// Manifest: the inputs of every shard, ordered by name; options from the first shard.
Json merged_manifest(const std::vector<std::string>& shard_dirs) {
  Json run;
  std::vector<Json> inputs;
  for (const auto& dir : shard_dirs) {
    const fs::path path = fs::path(dir) / "run.json";
    if (!file_exists(path)) throw InputError(path.string() + ": missing; is this a batch output folder?");
    const Json shard_run = read_json_file(path);
    if (run.is_null()) run = shard_run;
    for (const auto& i : shard_run["inputs"]) inputs.push_back(i);
  }
  std::stable_sort(inputs.begin(), inputs.end(), [](const Json& a, const Json& b) {
    return a["name"].get<std::string>() < b["name"].get<std::string>();
  });
  run["inputs"] = Json::array();
  for (auto& i : inputs) run["inputs"].push_back(std::move(i));
  return run;
}

// The season pooled again over the plots of every shard, as one run pools them; the
// manifest's warnings gathered again with the season's.
void merge_pooled(const std::vector<std::string>& shard_dirs, const std::vector<Json>& density_records, Json& run,
                  const fs::path& out, const std::vector<std::string>& protect) {
  const DensityResult pooled = pool_records(density_records, run);
  write_file_safely((out / "pooled.csv").string(), csv_text(pooled_rows(pooled)), protect);
  Json doc = read_json_file(fs::path(shard_dirs.front()) / "pooled.json");
  Json records = Json::array();
  for (const auto& p : pooled.pooled) records.push_back(report_detail::pooled_record(p));
  std::set<std::string> plots;
  for (const auto& r : density_records) plots.insert(r.value("file", "") + ":" + r.value("plot", ""));
  doc["plots"] = plots.size();
  doc["pooled"] = std::move(records);
  doc["composition"] = report_detail::composition_record(pooled.composition);
  doc["warnings"] = density_warnings(pooled);
  write_file_safely((out / "pooled.json").string(), json_text(doc), protect);
  Json warnings = Json::array();
  for (const auto& in : run["inputs"])
    for (const auto& w : in.value("warnings", Json::array()))
      warnings.push_back(in.value("name", "") + ": " + w.get<std::string>());
  for (const auto& w : density_warnings(pooled)) warnings.push_back("season: " + w);
  run["warnings"] = std::move(warnings);
}

// Figures, maps and surfaces: every shard's files, copied.
void copy_figure_files(const std::vector<std::string>& shard_dirs, const fs::path& out,
                       const std::vector<std::string>& protect) {
  for (const auto& dir : shard_dirs) {
    for (const char* sub : {"figures", "maps", "surfaces"}) {
      const fs::path from = fs::path(dir) / sub;
      std::error_code ec;
      if (!fs::is_directory(from, ec)) continue;
      for (auto it = fs::recursive_directory_iterator(from, ec); it != fs::recursive_directory_iterator(); ++it) {
        if (!it->is_regular_file(ec)) continue;
        const fs::path target = out / sub / fs::relative(it->path(), from, ec);
        make_folder(target.parent_path().string());
        std::ifstream in(it->path(), std::ios::binary);
        std::stringstream content;
        content << in.rdbuf();
        write_file_safely(target.string(), content.str(), protect);
      }
    }
  }
}

SeasonRandomnessRow randomness_row_of(const Json& g) {
  SeasonRandomnessRow row;
  row.file = g.value("file", "");
  row.plot = g.value("plot", "");
  row.species = opt_text(g["species"]);
  row.n = g.value("n", std::size_t{0});
  if (g["quadrat"].is_object()) {
    row.quadrat_monte_carlo = g["quadrat"]["monte_carlo_p_value"].is_number();
    row.quadrat_p = opt_number(row.quadrat_monte_carlo ? g["quadrat"]["monte_carlo_p_value"] : g["quadrat"]["p_value"]);
  }
  if (g["clark_evans"].is_object()) {
    const Json& c = g["clark_evans"];
    row.clark_evans_ratio = opt_number(c["ratio"]);
    row.clark_evans_p = opt_number(c["monte_carlo_p_value"].is_number() ? c["monte_carlo_p_value"] : c["p_value"]);
  }
  if (g["envelope"].is_object()) {
    const Json& e = g["envelope"];
    row.mad_p = opt_number(e["mad_p_value"]);
    row.dclf_p = opt_number(e["dclf_p_value"]);
    row.erl_p = opt_number(e["erl_p_value"]);
    row.rmax_m = opt_number(e["rmax"]);
    row.departures = departures_of(e["departures"]);
  }
  row.verdict = g.value("verdict", "");
  return row;
}

SeasonInteractionRow interaction_row_of(const Json& i) {
  return {i.value("file", ""),
          i.value("plot", ""),
          i.value("species_a", ""),
          i.value("species_b", ""),
          i.value("n_a", std::size_t{0}),
          i.value("n_b", std::size_t{0}),
          i.value("p_value", 1.0),
          i.value("direction", ""),
          departures_of(i["departures"])};
}

SeasonTransectRow transect_row_of(const Json& e) {
  SeasonTransectRow row;
  row.file = e.value("file", "");
  row.species = opt_text(e["species"]);
  row.stratum = opt_text(e["stratum"]);
  row.model = e.value("model", "");
  // "adjustments": ["cosine 2", "cosine 3"]: the series' name and how many terms.
  const Json adjustments = e.value("adjustments", Json::array());
  if (!adjustments.empty() && adjustments[0].is_string()) {
    const std::string first = adjustments[0].get<std::string>();
    row.model += " + " + std::to_string(adjustments.size()) + " " + first.substr(0, first.find(' '));
  }
  row.n = e.value("n", std::size_t{0});
  row.lines = e.value("effort_unit", "km") == "km";
  row.effort = e.value("effort", 0.0);
  row.effective_width_m = number_or_nan(row.lines ? e["esw"] : e["effective_radius"]);
  row.detection_probability = number_or_nan(e["detection_probability"]);
  row.density = e.value("density", 0.0);
  row.density_cv = opt_number(e["density_cv"]);
  row.density_ci = interval_of(e["density_ci"]);
  if (e["bootstrap_ci"].is_array()) row.bootstrap_ci = interval_of(e["bootstrap_ci"]);
  if (e["gof"].is_object()) row.gof_p = opt_number(e["gof"]["chi_square_p"]);
  return row;
}

// pooled.json: the season's pooled estimates and composition test.
DensityResult pooled_result_of(const Json& doc) {
  DensityResult pooled;
  pooled.unit = parse_area_unit(doc.value("unit", "ha"));
  pooled.confidence = doc.value("confidence", 0.95);
  pooled.alpha = doc.value("alpha", 0.05);
  for (const auto& p : doc.value("pooled", Json::array())) pooled.pooled.push_back(pooled_of(p));
  if (doc["composition"].is_object()) {
    const Json& c = doc["composition"];
    CompositionTest t;
    read_chi_square_test(c, t);
    pooled.composition = t;
  }
  return pooled;
}

std::vector<SeasonFigure> figures_of(const fs::path& path) {
  std::vector<SeasonFigure> figures;
  std::string header;
  for (const auto& line : read_lines(path, header)) {
    const std::vector<std::string> cells = csv_cells(line);
    if (cells.size() != 4) throw InputError(path.string() + ": damaged line '" + line + "'");
    figures.push_back({cells[1], cells[2], cells[3]});
  }
  return figures;
}

}  // namespace

void merge_batch_outputs(const std::vector<std::string>& shard_dirs, const std::string& out_dir) {
  if (shard_dirs.empty()) throw InputError("merge needs at least one shard output folder");
  make_folder(out_dir);
  const fs::path out(out_dir);
  const std::vector<std::string>& protect = shard_dirs;
  merge_tables(shard_dirs, out, protect);
  const std::vector<Json> density_records = merge_twins(shard_dirs, out, protect);
  Json run = merged_manifest(shard_dirs);
  if (file_exists(fs::path(shard_dirs.front()) / "pooled.json"))
    merge_pooled(shard_dirs, density_records, run, out, protect);
  write_file_safely((out / "run.json").string(), json_text(run), protect);
  // GIS layer: every shard's features, ordered by file.
  std::vector<std::string> gpkgs;
  for (const auto& dir : shard_dirs)
    if (file_exists(fs::path(dir) / "plot-results.gpkg"))
      gpkgs.push_back((fs::path(dir) / "plot-results.gpkg").string());
  if (!gpkgs.empty()) merge_plot_results(gpkgs, (out / "plot-results.gpkg").string(), protect);
  copy_figure_files(shard_dirs, out, protect);
}

SeasonReport load_batch_folder(const std::string& dir_text) {
  const fs::path dir(dir_text);
  if (!file_exists(dir / "run.json"))
    throw InputError(dir_text + ": no run.json; is this a stipple batch output folder?");
  SeasonReport report;
  load_run(read_json_file(dir / "run.json"), report);
  const auto records = [&](const char* name) {
    const fs::path path = dir / name;
    if (!file_exists(path)) return Json::array();
    Json array = read_json_file(path);
    if (!array.is_array()) throw InputError(path.string() + ": not a JSON array of records");
    return array;
  };
  for (const auto& e : records("density.json"))
    report.densities.push_back({e.value("file", ""), density_estimate_of(e)});
  for (const auto& g : records("randomness.json")) report.randomness.push_back(randomness_row_of(g));
  for (const auto& i : records("interactions.json")) report.interactions.push_back(interaction_row_of(i));
  for (const auto& e : records("transect.json")) report.transects.push_back(transect_row_of(e));
  if (file_exists(dir / "pooled.json")) {
    const Json doc = read_json_file(dir / "pooled.json");
    report.pooled = pooled_result_of(doc);
    for (const auto& w : doc.value("warnings", Json::array()))
      report.warnings.push_back("season: " + w.get<std::string>());
  }
  if (file_exists(dir / "figures.csv")) report.figures = figures_of(dir / "figures.csv");
  return report;
}

std::vector<std::string> files_a_report_must_not_replace(const std::string& dir) {
  std::vector<std::string> files;
  std::error_code ec;
  for (auto it = fs::recursive_directory_iterator(dir, ec); !ec && it != fs::recursive_directory_iterator();
       it.increment(ec)) {
    if (it->path().filename() == "report.html" && it->path().parent_path() == fs::path(dir)) continue;
    if (it->is_regular_file(ec)) files.push_back(it->path().string());
  }
  std::ifstream in(fs::path(dir) / "run.json");
  if (in) {
    const Json run = Json::parse(in, nullptr, false);
    if (!run.is_discarded() && run.contains("inputs")) {
      for (const auto& input : run["inputs"]) {
        for (const char* key : {"path", "plots_path"})
          if (input.contains(key) && input[key].is_string()) files.push_back(input[key].get<std::string>());
      }
    }
  }
  return files;
}

}  // namespace stipple
