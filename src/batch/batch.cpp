// Batch: each file analysed on typed results, its outputs streamed in input order as it
// finishes, the season pooled at the end.

#include "stipple/batch/batch.hpp"

#include <filesystem>
#include <map>
#include <memory>
#include <mutex>

#include <nlohmann/json.hpp>

#include "detail/parallel.hpp"
#include "json_text.hpp"
#include "report/records.hpp"
#include "stipple/cancel.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/io/inspect.hpp"
#include "stipple/io/output.hpp"
#include "stipple/report/density_report.hpp"
#include "stipple/report/figure.hpp"
#include "stipple/report/randomness_report.hpp"
#include "stipple/report/tables.hpp"
#include "stipple/report/transect_report.hpp"
#include "stipple/version.hpp"

namespace fs = std::filesystem;

namespace stipple {

namespace {

bool ends_with(const std::string& text, const std::string& end) {
  return text.size() >= end.size() && text.compare(text.size() - end.size(), end.size(), end) == 0;
}

using Json = nlohmann::ordered_json;

std::string stem_of(const std::string& name) {
  std::string s = name;
  for (char& c : s)
    if (c == '/' || c == '\\' || c == ' ') c = '_';
  const auto dot = s.rfind('.');
  return dot == std::string::npos ? s : s.substr(0, dot);
}

struct Figure {
  SeasonFigure ref;
  std::string svg;
};

// One file's typed results: alive only until the writer has streamed them.
struct FileResults {
  BatchInput source;
  SeasonInput input;
  std::string crs_wkt;
  std::optional<LoadedSurvey> survey;
  std::optional<DensityResult> density;
  std::optional<RandomnessResult> randomness;
  std::optional<TransectResult> transect;
  std::vector<Figure> figures;
  std::vector<std::pair<std::string, IntensityRaster>> surfaces;  // (relative path, raster)
};

// What the file holds, from its layers' geometry (no features read).
InputKind judge_kind(const BatchInput& input, const BatchOptions& options, std::string& evidence) {
  bool polygons = false;
  bool points = false;
  std::string line_layer;
  for (const auto& layer : layer_shapes(input.path)) {
    if (layer.family == GeometryFamily::line && line_layer.empty()) line_layer = layer.name;
    polygons = polygons || layer.family == GeometryFamily::polygon;
    points = points || layer.family == GeometryFamily::point;
  }
  if (!line_layer.empty()) {
    evidence = "holds transect lines (layer '" + line_layer + "')";
    return InputKind::transects;
  }
  if (polygons || (points && (options.shared_plots || input.plots_path != input.path))) {
    evidence = "holds plots and sightings";
    return InputKind::plots;
  }
  evidence = points ? "holds points but no plot polygons, and no plots layer was given for it"
                    : "holds neither plot polygons nor transect lines";
  return InputKind::unknown;
}

// With one plots layer for a folder of sighting files, a file covers the plots its
// sightings fall in; the others belong to other files (their areas must not be pooled once
// per file).
void keep_plots_with_sightings(LoadedSurvey& loaded) {
  const auto& patterns = loaded.survey.patterns();
  std::vector<std::size_t> kept;
  for (std::size_t i = 0; i < patterns.size(); ++i)
    if (!patterns[i].points.empty()) kept.push_back(i);
  const std::size_t left_out = patterns.size() - kept.size();
  if (left_out > 0)
    loaded.notes.push_back(std::to_string(kept.size()) +
                           " plot(s) of the shared plots layer hold this file's sightings; "
                           "the other " +
                           std::to_string(left_out) + " are left to the files that cover them");
  loaded.survey = std::move(loaded.survey).with_plots(kept);
}

void analyse_plots(FileResults& r, const BatchOptions& options) {
  SurveyReadOptions read = options.read;
  read.sightings = SourceSpec{r.source.path, options.read.sightings.layer};
  if (options.shared_plots)
    read.plots = *options.shared_plots;
  else
    read.plots = SourceSpec{r.source.plots_path, options.read.plots ? options.read.plots->layer : std::nullopt};
  read.window = WindowMode::plots;
  r.survey = load_survey(read);
  if (options.shared_plots) keep_plots_with_sightings(*r.survey);
  r.input.crs = r.survey->crs.code;
  r.crs_wkt = r.survey->crs.wkt;
  r.input.warnings = r.survey->warnings;
  const Survey& s = r.survey->survey;
  const std::string stem = stem_of(r.source.name);
  if (options.run_density) {
    r.density = estimate_density(s, options.density);
    for (const auto& w : density_warnings(*r.density)) r.input.warnings.push_back(w);
  }
  if (options.run_randomness) {
    RandomnessOptions ro = options.randomness;
    ro.threads = 1;  // files run in parallel already
    r.randomness = analyse_randomness(s, ro);
    if (options.figures)
      for (auto& f : randomness_figures(*r.randomness))
        if (ends_with(f.name, ".svg") && f.name.rfind("L-", 0) == 0)
          r.figures.push_back(
              {{"L", "figures/" + stem + "/" + f.name, r.source.name + ": " + f.title}, std::move(f.content)});
  }
  if (options.surfaces) {
    const double per_unit = square_metres_per(options.density.unit);
    for (std::size_t k = 0; k <= s.species().size(); ++k) {
      const std::optional<std::size_t> species = k < s.species().size() ? std::optional<std::size_t>(k) : std::nullopt;
      const std::string name = species ? file_name_safe(s.species()[k]) : std::string("all-species");
      IntensityRaster raster = intensity_surface(s, species, per_unit, options.pixel_m, options.bandwidth_m);
      for (const auto& w : raster.warnings) r.input.warnings.push_back("surface of " + name + ": " + w);
      r.surfaces.emplace_back("surfaces/" + stem + "/" + name + ".tif", std::move(raster));
    }
  }
  if (options.figures)
    for (std::size_t p = 0; p < s.plots().size(); ++p)
      r.figures.push_back({{"map", "maps/" + stem + "/" + file_name_safe(s.plots()[p].id) + ".svg",
                            r.source.name + ": plot " + s.plots()[p].id},
                           plot_map_svg(s.plots()[p], s.patterns()[p], s.species())});
}

void analyse_transect_file(FileResults& r, const BatchOptions& options) {
  TransectReadOptions tr = options.transect_read;
  tr.sightings = SourceSpec{r.source.path, options.transect_read.sightings.layer};
  tr.lines = SourceSpec{r.source.path, options.transect_read.lines ? options.transect_read.lines->layer : std::nullopt};
  const LoadedTransects loaded = load_transects(tr);
  r.transect = analyse_transects(loaded.survey, options.transect);
  r.input.crs = loaded.crs.code;
  if (r.crs_wkt.empty()) r.crs_wkt = loaded.crs.wkt;
  r.input.warnings.insert(r.input.warnings.end(), loaded.warnings.begin(), loaded.warnings.end());
  if (options.figures) {
    const std::string stem = stem_of(r.source.name);
    for (auto& f : transect_figures(loaded.survey, *r.transect))
      if (ends_with(f.name, ".svg"))
        r.figures.push_back(
            {{"detection", "figures/" + stem + "/" + f.name, r.source.name + ": " + f.title}, std::move(f.content)});
  }
}

// Analyses one input; every failure becomes the file's status, never the batch's.
FileResults analyse_file(const BatchInput& source, const BatchOptions& options) {
  FileResults r;
  r.source = source;
  r.input.name = source.name;
  r.input.plots = source.plots_path == source.path ? std::string() : fs::path(source.plots_path).filename().string();
  r.input.status = "ok";
  try {
    // Checksums first, inside the per-file isolation: an unreadable file fails alone.
    std::error_code ec;
    if (fs::is_regular_file(source.path, ec)) r.input.sha256 = sha256_file(source.path);
    std::string evidence;
    const InputKind kind = judge_kind(source, options, evidence);
    r.input.kind = input_kind_name(kind);
    const bool plots_wanted = options.run_density || options.run_randomness;
    if (kind == InputKind::plots && plots_wanted) {
      analyse_plots(r, options);
    } else if (kind == InputKind::transects && options.run_transect) {
      analyse_transect_file(r, options);
    } else {
      r.input.status = "skipped";
      r.input.reason = evidence + "; " +
                       (kind == InputKind::transects ? "not a plot file (the transect analysis fits it)"
                        : kind == InputKind::plots ? "not a transect file (the density and randomness analyses fit it)"
                                                   : "nothing to analyse");
    }
  } catch (const Cancelled&) {
    throw;  // the whole run stops; it is no failure of this file
  } catch (const Error& e) {
    r = FileResults{};
    r.source = source;
    r.input.name = source.name;
    r.input.status = "failed";
    r.input.reason = options.describe_error ? options.describe_error(e) : std::string(e.what());
  } catch (const std::exception& e) {
    r = FileResults{};
    r.source = source;
    r.input.name = source.name;
    r.input.status = "failed";
    r.input.reason = std::string("internal error: ") + e.what();
  }
  if (r.input.kind.empty()) r.input.kind = "unknown";
  return r;
}

// A JSON array written record by record.
class JsonArrayFile {
 public:
  JsonArrayFile(const std::string& path, const std::vector<std::string>& protect) : file_(path, protect) {
    file_.write("[");
  }
  void add(const Json& record) {
    file_.write((first_ ? "\n" : ",\n") + json_text(record, -1));
    first_ = false;
  }
  void commit() {
    file_.write(first_ ? "]\n" : "\n]\n");
    file_.commit();
  }

 private:
  StreamedFile file_;
  bool first_ = true;
};

// One table's CSV and JSON twin.
struct TableFiles {
  TableFiles(const fs::path& dir, const std::string& name, const Table& empty, const std::vector<std::string>& protect)
      : csv((dir / (name + ".csv")).string(), protect), json((dir / (name + ".json")).string(), protect) {
    csv.write(csv_header_with_file(empty));
  }
  StreamedFile csv;
  JsonArrayFile json;
  void commit() {
    csv.commit();
    json.commit();
  }
};

Json with_file(const std::string& name, const Json& record) {
  Json out;
  out["file"] = name;
  for (auto it = record.begin(); it != record.end(); ++it) out[it.key()] = it.value();
  return out;
}

std::vector<PlotResultFeature> gis_features(const FileResults& r, const std::string& unit) {
  std::vector<PlotResultFeature> features;
  if (!r.survey || !r.density) return features;
  const Survey& s = r.survey->survey;
  std::map<std::pair<std::string, std::string>, const GroupResult*> tests;
  if (r.randomness)
    for (const auto& g : r.randomness->results) tests[{g.plot, g.species.value_or("")}] = &g;
  std::map<std::string, std::size_t> plot_index;
  for (std::size_t p = 0; p < s.plots().size(); ++p) plot_index[s.plots()[p].id] = p;
  for (const auto& e : r.density->estimates) {
    PlotResultFeature f;
    f.plot = e.plot;
    f.shape = s.plots()[plot_index.at(e.plot)].window.shape();
    f.file = r.source.name;
    f.species = e.species;
    f.count = static_cast<long long>(e.count);
    f.area_in_unit = e.area_in_unit;
    f.unit = unit;
    f.intensity = e.intensity;
    f.ci_low = e.ci.lower;
    f.ci_high = e.ci.upper;
    f.detection_probability = e.corrected.detection_probability;
    f.corrected_intensity = e.corrected.intensity;
    f.corrected_ci_low = e.corrected.ci.lower;
    f.corrected_ci_high = e.corrected.ci.upper;
    const auto t = tests.find({e.plot, e.species.value_or("")});
    if (t != tests.end()) {
      const GroupResult& g = *t->second;
      if (g.quadrat) f.quadrat_p = g.quadrat->p_value;
      if (g.clark_evans) {
        f.clark_evans_ratio = g.clark_evans->ratio;
        const double p = g.clark_evans->monte_carlo_p_value.value_or(g.clark_evans->p_value);
        if (std::isfinite(p)) f.clark_evans_p = p;
      }
      if (const EnvelopeResult* l = g.l_envelope()) f.dclf_p = l->dclf_p_value;
      f.verdict = g.verdict;
    }
    features.push_back(std::move(f));
  }
  return features;
}

// Streams each file's outputs as it arrives (in input order) and pools the season.
class SeasonWriter {
 public:
  SeasonWriter(const std::string& out_dir, const BatchOptions& options, const std::vector<std::string>& protect)
      : dir_(out_dir), options_(options), protect_(protect) {
    std::error_code ec;
    created_dir_ = !fs::exists(dir_, ec);
    make_folder(out_dir);
    if (options.run_density) density_ = std::make_unique<TableFiles>(dir_, "density", density_rows({}), protect);
    if (options.run_randomness) {
      randomness_ = std::make_unique<TableFiles>(dir_, "randomness", randomness_rows({}), protect);
      interactions_ = std::make_unique<TableFiles>(dir_, "interactions", interaction_rows({}), protect);
    }
    if (options.run_transect) transect_ = std::make_unique<TableFiles>(dir_, "transect", transect_rows({}), protect);
    failures_ = std::make_unique<StreamedFile>((dir_ / "failures.csv").string(), protect);
    failures_->write("file,status,reason\n");
    figures_ = std::make_unique<StreamedFile>((dir_ / "figures.csv").string(), protect);
    figures_->write("file,section,path,title\n");
    summary_.report.run = options.run;
  }

  void set_batch_crs(std::string code, std::string name, std::string wkt) {
    crs_code_ = std::move(code);
    crs_name_ = std::move(name);
    crs_wkt_ = std::move(wkt);
  }

  void consume(FileResults& r) {
    if (crs_wkt_.empty() && !r.crs_wkt.empty())
      set_batch_crs(r.input.crs, r.survey ? r.survey->crs.name : r.input.crs, r.crs_wkt);
    if (!r.crs_wkt.empty() && r.input.crs != crs_code_ && (r.survey || r.transect))
      r.input.warnings.push_back("analysed in its own CRS " + r.input.crs +
                                 "; its GIS features are reprojected to the batch CRS " + crs_code_);
    const std::string& name = r.source.name;
    if (r.density) {
      density_->csv.write(csv_rows_with_file(density_rows(*r.density), name));
      for (const auto& e : r.density->estimates)
        density_->json.add(with_file(name, report_detail::density_estimate_record(e)));
      const auto rows = season_density_rows(name, *r.density);
      summary_.report.densities.insert(summary_.report.densities.end(), rows.begin(), rows.end());
      season_counts_.append(PlotCounts::of(r.survey->survey), name + ":");
      plots_pooled_ += r.survey->survey.plots().size();
    }
    if (r.randomness) {
      randomness_->csv.write(csv_rows_with_file(randomness_rows(*r.randomness), name));
      for (const auto& g : r.randomness->results)
        randomness_->json.add(with_file(name, report_detail::randomness_group_record(g)));
      interactions_->csv.write(csv_rows_with_file(interaction_rows(*r.randomness), name));
      for (const auto& i : r.randomness->interactions)
        interactions_->json.add(with_file(name, report_detail::interaction_record(i)));
      const auto rows = season_randomness_rows(name, *r.randomness);
      summary_.report.randomness.insert(summary_.report.randomness.end(), rows.begin(), rows.end());
      const auto pairs = season_interaction_rows(name, *r.randomness);
      summary_.report.interactions.insert(summary_.report.interactions.end(), pairs.begin(), pairs.end());
    }
    if (r.transect) {
      transect_->csv.write(csv_rows_with_file(transect_rows(*r.transect), name));
      for (const auto& e : r.transect->results)
        transect_->json.add(with_file(name, report_detail::transect_estimate_record(*r.transect, e)));
      const auto rows = season_transect_rows(name, *r.transect);
      summary_.report.transects.insert(summary_.report.transects.end(), rows.begin(), rows.end());
    }
    for (const auto& f : r.figures) {
      const fs::path target = dir_ / f.ref.path;
      make_folder(target.parent_path().string());
      write_file_safely(target.string(), f.svg, protect_);
      written_.push_back(target);
      figures_->write(csv_field(name) + "," + csv_field(f.ref.section) + "," + csv_field(f.ref.path) + "," +
                      csv_field(f.ref.title) + "\n");
      summary_.report.figures.push_back(f.ref);
    }
    if (options_.gis && r.density) {
      if (!gis_) gis_ = std::make_unique<PlotResultsWriter>((dir_ / "plot-results.gpkg").string(), crs_wkt_, protect_);
      gis_->add(gis_features(r, std::string(unit_name(options_.density.unit))), r.crs_wkt);
    }
    for (const auto& [path, raster] : r.surfaces) {
      const fs::path target = dir_ / path;
      make_folder(target.parent_path().string());
      write_geotiff(
          target.string(), raster, r.crs_wkt,
          "intensity per " + std::string(unit_name(options_.density.unit)) +
              ", Gaussian kernel, Scott bandwidth per plot, local edge correction (Jones 1993), in the CRS of " + name +
              " (" + r.input.crs + ")",
          protect_);
      written_.push_back(target);
    }
    if (r.input.status != "ok") {
      failures_->write(csv_field(name) + "," + r.input.status + "," + csv_field(r.input.reason) + "\n");
      (r.input.status == "failed" ? summary_.failed : summary_.skipped) += 1;
    }
    Json in;
    in["name"] = name;
    std::error_code ec;
    in["path"] = fs::absolute(r.source.path, ec).lexically_normal().string();
    in["plots_path"] = options_.shared_plots ? fs::absolute(options_.shared_plots->path, ec).lexically_normal().string()
                                             : fs::absolute(r.source.plots_path, ec).lexically_normal().string();
    in["sha256"] = r.input.sha256.empty() ? Json(nullptr) : Json(r.input.sha256);
    in["plots"] = r.input.plots.empty() ? Json(nullptr) : Json(r.input.plots);
    in["kind"] = r.input.kind;
    in["crs"] = r.input.crs.empty() ? Json(nullptr) : Json(r.input.crs);
    in["status"] = r.input.status;
    in["reason"] = r.input.reason.empty() ? Json(nullptr) : Json(r.input.reason);
    in["warnings"] = r.input.warnings;
    inputs_.push_back(std::move(in));
    summary_.report.inputs.push_back(r.input);
  }

  BatchSummary finish() {
    SeasonRun& run = summary_.report.run;
    run.crs = crs_code_;
    run.crs_name = crs_name_;
    std::vector<std::string> warnings;
    if (options_.run_density) {
      DensityResult pooled = estimate_density(season_counts_, options_.density);
      pooled.estimates.clear();  // the per-plot rows are in density.csv
      write_pooled(pooled);
      for (const auto& w : density_warnings(pooled)) warnings.push_back("season: " + w);
      summary_.report.pooled = std::move(pooled);
      density_->commit();
    }
    summary_.report.warnings = warnings;
    if (randomness_) {
      randomness_->commit();
      interactions_->commit();
    }
    if (transect_) transect_->commit();
    failures_->commit();
    figures_->commit();
    if (gis_) gis_->commit();
    write_run(warnings);
    finished_ = true;
    return std::move(summary_);
  }

  // A run that stops before finish() (cancelled, or an output failed) leaves no partial
  // outputs: its tables were never committed, and the figures and surfaces it wrote are
  // removed, with the folders it made for them when they are left empty.
  ~SeasonWriter() {
    if (finished_) return;
    // The uncommitted tables first: their temporary files go with them.
    density_.reset();
    randomness_.reset();
    interactions_.reset();
    transect_.reset();
    failures_.reset();
    figures_.reset();
    gis_.reset();
    std::error_code ec;
    for (const auto& path : written_) {
      fs::remove(path, ec);
      for (fs::path folder = path.parent_path(); folder != dir_ && folder.has_relative_path();
           folder = folder.parent_path())
        if (!fs::remove(folder, ec)) break;  // not empty (or not ours to judge): stop climbing
    }
    if (created_dir_) fs::remove(dir_, ec);  // only when empty
  }
  SeasonWriter(const SeasonWriter&) = delete;
  SeasonWriter& operator=(const SeasonWriter&) = delete;

 private:
  void write_pooled(const DensityResult& pooled) {
    const Table table = pooled_rows(pooled);
    write_file_safely((dir_ / "pooled.csv").string(), csv_text(table), protect_);
    Json doc;
    doc["stipple_version"] = std::string(version());
    doc["command"] = "batch";
    doc["crs"] = crs_code_;
    doc["unit"] = std::string(unit_name(pooled.unit));
    doc["confidence"] = pooled.confidence;
    doc["alpha"] = pooled.alpha;
    doc["seed"] = pooled.seed;
    doc["simulations"] = pooled.simulations;
    doc["plots"] = plots_pooled_;
    doc["plot_ids"] = "file:plot";
    Json records = Json::array();
    for (const auto& p : pooled.pooled) records.push_back(report_detail::pooled_record(p));
    doc["pooled"] = std::move(records);
    doc["composition"] = report_detail::composition_record(pooled.composition);
    doc["warnings"] = density_warnings(pooled);
    doc["cautions"] = density_cautions();
    write_file_safely((dir_ / "pooled.json").string(), json_text(doc), protect_);
  }

  void write_run(const std::vector<std::string>& season_warnings) {
    const SeasonRun& run = summary_.report.run;
    Json doc;
    doc["stipple_version"] = std::string(version());
    doc["options"] = run.options_text;
    doc["analyses"] = Json::array();
    if (run.density) doc["analyses"].push_back("density");
    if (run.randomness) doc["analyses"].push_back("randomness");
    if (run.transect) doc["analyses"].push_back("transect");
    doc["seed"] = run.seed;
    doc["simulations"] = run.simulations;
    doc["unit"] = run.unit;
    doc["transect_unit"] = run.transect_unit;
    doc["confidence"] = run.confidence;
    doc["crs"] = crs_code_.empty() ? Json(nullptr) : Json(crs_code_);
    doc["crs_name"] = crs_name_.empty() ? Json(nullptr) : Json(crs_name_);
    doc["methods"] = {{"quadrats", run.quadrats},
                      {"edge_correction", run.edge_correction.empty() ? Json(nullptr) : Json(run.edge_correction)},
                      {"pair_correction", run.pair_correction},
                      {"distance_correction", run.distance_correction},
                      {"rmax", run.rmax_m ? Json(*run.rmax_m) : Json(nullptr)},
                      {"detection", run.detection},
                      {"transect_models", run.transect_models},
                      {"truncation", run.truncation},
                      {"bootstrap", run.bootstrap}};
    // The detection probabilities pooling used, so `stipple merge` pools shards alike.
    Json detection = Json::array();
    for (const auto& species : season_counts_.species) {
      const Detection d = options_.density.detection.for_species(species);
      detection.push_back({{"species", species}, {"p", d.probability}, {"se", d.standard_error}});
    }
    doc["detection_table"] = std::move(detection);
    doc["inputs"] = inputs_;
    Json warnings = Json::array();
    for (const auto& in : summary_.report.inputs)
      for (const auto& w : in.warnings) warnings.push_back(in.name + ": " + w);
    for (const auto& w : season_warnings) warnings.push_back(w);
    doc["warnings"] = std::move(warnings);
    Json cautions = Json::array();
    if (run.density)
      for (const auto& c : density_cautions()) cautions.push_back(c);
    if (run.randomness)
      for (const auto& c : randomness_cautions()) cautions.push_back(c);
    if (run.transect)
      for (const auto& c : transect_cautions()) cautions.push_back(c);
    doc["cautions"] = std::move(cautions);
    write_file_safely((dir_ / "run.json").string(), json_text(doc), protect_);
  }

  fs::path dir_;
  const BatchOptions options_;  // a copy: the writer never refers to the caller's value
  std::vector<std::string> protect_;
  std::unique_ptr<TableFiles> density_, randomness_, interactions_, transect_;
  std::unique_ptr<StreamedFile> failures_, figures_;
  std::unique_ptr<PlotResultsWriter> gis_;
  std::vector<fs::path> written_;  // figures and surfaces, removed if the run does not finish
  bool finished_ = false;
  bool created_dir_ = false;
  std::string crs_code_, crs_name_, crs_wkt_;
  PlotCounts season_counts_;
  std::size_t plots_pooled_ = 0;
  Json inputs_ = Json::array();
  BatchSummary summary_;
};

}  // namespace

const char* input_kind_name(InputKind kind) {
  switch (kind) {
    case InputKind::plots: return "plots";
    case InputKind::transects: return "transects";
    case InputKind::unknown: break;
  }
  return "unknown";
}

BatchSummary run_batch(const std::vector<BatchInput>& inputs, const BatchOptions& options, const std::string& out_dir,
                       const std::vector<std::string>& protected_paths, const BatchProgress& progress) {
  SeasonWriter writer(out_dir, options, protected_paths);
  // The batch CRS: the reference input's analysis CRS (the first of all inputs), so every
  // shard of a run agrees; else the first file that loads.
  if (options.crs_reference) {
    const FileResults reference = analyse_file(*options.crs_reference, [&] {
      BatchOptions probe = options;
      probe.run_randomness = false;
      probe.figures = probe.gis = probe.surfaces = false;
      return probe;
    }());
    if (!reference.crs_wkt.empty())
      writer.set_batch_crs(reference.input.crs, reference.survey ? reference.survey->crs.name : reference.input.crs,
                           reference.crs_wkt);
  }
  // Results are handed to the writer strictly in input order: a file that finishes early
  // waits in `pending` for those before it, so outputs never depend on thread timing.
  std::mutex mutex;
  std::map<std::size_t, FileResults> pending;
  std::size_t next = 0;
  std::exception_ptr write_error;
  parallel_for(inputs.size(), options.threads, [&](std::size_t i) {
    options.read.cancel.check();
    FileResults r = analyse_file(inputs[i], options);
    const std::lock_guard<std::mutex> lock(mutex);
    pending.emplace(i, std::move(r));
    while (!write_error && !pending.empty() && pending.begin()->first == next) {
      FileResults ready = std::move(pending.begin()->second);
      pending.erase(pending.begin());
      try {
        writer.consume(ready);
      } catch (...) {
        write_error = std::current_exception();  // an output problem stops the batch
        return;
      }
      ++next;
      if (progress) progress(next, inputs.size(), ready.input);
    }
  });
  if (write_error) std::rethrow_exception(write_error);
  return writer.finish();
}

}  // namespace stipple
