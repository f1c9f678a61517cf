#include "stipple/batch/batch.hpp"

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <map>
#include <mutex>
#include <regex>
#include <sstream>
#include <string_view>

#include <nlohmann/json.hpp>

#include "json_text.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/io/output.hpp"
#include "stipple/parallel.hpp"
#include "stipple/report/density_report.hpp"
#include "stipple/report/figure.hpp"
#include "stipple/report/randomness_report.hpp"
#include "stipple/report/transect_report.hpp"

namespace fs = std::filesystem;

namespace stipple {

namespace {

using Json = nlohmann::ordered_json;

// Shell-style glob with * and ?; `capture` receives what the first * matched.
bool glob_match(const std::string& pattern, const std::string& text, std::string* capture) {
  std::string expression;
  bool first_star = true;
  for (const char c : pattern) {
    if (c == '*') {
      expression += first_star ? "(.*)" : ".*";
      first_star = false;
    } else if (c == '?') {
      expression += '.';
    } else if (std::string("\\^$.|+()[]{}").find(c) != std::string::npos) {
      expression += '\\';
      expression += c;
    } else {
      expression += c;
    }
  }
  std::smatch match;
  if (!std::regex_match(text, match, std::regex(expression))) return false;
  if (capture && match.size() > 1) *capture = match[1].str();
  return true;
}

std::string number(double v) { return format_round_trip(v); }

std::string stem_of(const std::string& name) {
  std::string s = name;
  for (char& c : s)
    if (c == '/' || c == '\\' || c == ' ') c = '_';
  const auto dot = s.rfind('.');
  return dot == std::string::npos ? s : s.substr(0, dot);
}

std::string first_csv_field(const std::string& line) {
  if (line.empty() || line[0] != '"') return line.substr(0, line.find(','));
  std::string out;
  for (std::size_t i = 1; i < line.size(); ++i) {
    if (line[i] == '"') {
      if (i + 1 < line.size() && line[i + 1] == '"') {
        out += '"';
        ++i;
      } else {
        break;
      }
    } else {
      out += line[i];
    }
  }
  return out;
}

Json with_file(const std::string& name, const Json& record) {
  Json out;
  out["file"] = name;
  for (auto it = record.begin(); it != record.end(); ++it) out[it.key()] = it.value();
  return out;
}

BatchFileResult run_one(const BatchInput& input, const BatchOptions& options) {
  BatchFileResult r;
  r.input = input;
  // Checksums first, inside the per-file isolation: an unreadable file fails alone.
  std::error_code ec;
  if (fs::is_regular_file(input.path, ec)) r.sha256 = sha256_file(input.path);
  if (input.plots_path != input.path && fs::is_regular_file(input.plots_path, ec))
    r.plots_sha256 = sha256_file(input.plots_path);
  SurveyReadOptions read = options.read;
  read.sightings = SourceSpec{input.path, options.read.sightings.layer};
  read.plots = SourceSpec{input.plots_path, options.read.plots ? options.read.plots->layer : std::nullopt};
  read.window = WindowMode::plots;
  const std::string stem = stem_of(input.name);
  if (options.run_transect) {
    TransectReadOptions tr = options.transect_read;
    tr.sightings = SourceSpec{input.path, options.transect_read.sightings.layer};
    tr.lines = SourceSpec{input.path, options.transect_read.lines ? options.transect_read.lines->layer : std::nullopt};
    const LoadedTransects loaded = load_transects(tr);
    const TransectResult result = analyse_transects(loaded.survey, options.transect);
    const Json doc = Json::parse(transect_json(loaded, result));
    r.crs = loaded.crs.code;
    for (const auto& e : doc["results"]) {
      r.transect_records.push_back(json_text(with_file(input.name, e), -1));
      const auto v = [](const Json& x) { return x.is_null() ? std::string() : number(x.get<double>()); };
      std::ostringstream row;
      row << csv_field(input.name) << "," << csv_field(e["species"].is_null() ? "" : e["species"].get<std::string>()) << ","
          << csv_field(e["stratum"].is_null() ? "" : e["stratum"].get<std::string>()) << "," << e["model"].get<std::string>()
          << "," << e["n"].get<std::size_t>() << "," << v(e["effort"]) << "," << v(e["esw"]) << "," << v(e["effective_area"])
          << "," << v(e["detection_probability"]) << "," << v(e["encounter_rate"]) << "," << v(e["density"]) << ","
          << v(e["density_cv"]) << "," << v(e["density_ci"][0]) << "," << v(e["density_ci"][1]) << "," << v(e["abundance"])
          << "," << doc["unit"].get<std::string>();
      r.transect_rows.push_back(row.str());
    }
    if (options.figures)
      for (const auto& [file, content] : transect_figures(loaded, result))
        if (file.size() > 4 && file.substr(file.size() - 4) == ".svg") r.figures.emplace_back("figures/" + stem + "/" + file, content);
    if (!options.run_density && !options.run_randomness) {
      r.ok = true;
      return r;
    }
  }
  r.survey = load_survey(read);
  r.crs = r.survey.crs.code;
  r.warnings = r.survey.warnings;
  if (options.run_density) {
    const DensityResult d = estimate_density(r.survey.survey, options.density);
    const Json doc = Json::parse(density_json(r.survey, d));
    for (const auto& e : doc["estimates"]) {
      r.density_records.push_back(json_text(with_file(input.name, e), -1));
      std::ostringstream row;
      row << csv_field(input.name) << "," << csv_field(e["plot"].get<std::string>()) << ","
          << csv_field(e["species"].is_null() ? "" : e["species"].get<std::string>()) << ","
          << e["count"].get<std::uint64_t>() << "," << number(e["area"]) << "," << number(e["intensity"]) << ","
          << number(e["ci"][0]) << "," << number(e["ci"][1]) << "," << number(e["detection_probability"]) << ","
          << number(e["corrected_intensity"]) << "," << number(e["corrected_ci"][0]) << ","
          << number(e["corrected_ci"][1]) << "," << doc["unit"].get<std::string>();
      r.density_rows.push_back(row.str());
    }
    for (const auto& w : density_warnings(d)) r.warnings.push_back(w);
  }
  if (options.run_randomness) {
    RandomnessOptions ro = options.randomness;
    ro.threads = 1;  // files run in parallel already
    const RandomnessResult rr = analyse_randomness(r.survey.survey, ro);
    const Json doc = Json::parse(randomness_json(r.survey, rr));
    for (const auto& g : doc["results"]) {
      r.randomness_records.push_back(json_text(with_file(input.name, g), -1));
      const auto p = [](const Json& v) { return v.is_null() ? std::string() : number(v.get<double>()); };
      std::ostringstream row;
      row << csv_field(input.name) << "," << csv_field(g["plot"].get<std::string>()) << ","
          << csv_field(g["species"].is_null() ? "" : g["species"].get<std::string>()) << "," << g["n"].get<std::size_t>()
          << "," << (g["quadrat"].is_null() ? "" : p(g["quadrat"]["monte_carlo_p_value"].is_null() ? g["quadrat"]["p_value"] : g["quadrat"]["monte_carlo_p_value"]))
          << "," << (g["clark_evans"].is_null() ? "" : p(g["clark_evans"]["ratio"]))
          << "," << (g["clark_evans"].is_null() ? "" : p(g["clark_evans"]["monte_carlo_p_value"].is_null() ? g["clark_evans"]["p_value"] : g["clark_evans"]["monte_carlo_p_value"]))
          << "," << (g["envelope"].is_null() ? "" : p(g["envelope"]["mad_p_value"]))
          << "," << (g["envelope"].is_null() ? "" : p(g["envelope"]["dclf_p_value"])) << "," << g["verdict"].get<std::string>();
      r.randomness_rows.push_back(row.str());
    }
    if (options.figures) {
      for (const auto& [file, svg] : randomness_figures(rr))
        if (file.size() > 4 && file.substr(file.size() - 4) == ".svg" && file.rfind("L-", 0) == 0)
          r.figures.emplace_back("figures/" + stem + "/" + file, svg);
    }
  }
  if (options.gis) {
    // One feature per plot x species: the density row joined with the randomness result.
    const Survey& s = r.survey.survey;
    std::map<std::pair<std::string, std::string>, Json> tests;
    for (const auto& record : r.randomness_records) {
      const Json g = Json::parse(record);
      tests[{g["plot"].get<std::string>(), g["species"].is_null() ? std::string() : g["species"].get<std::string>()}] = g;
    }
    std::map<std::string, std::size_t> plot_index;
    for (std::size_t p = 0; p < s.plots.size(); ++p) plot_index[s.plots[p].id] = p;
    for (const auto& record : r.density_records) {
      const Json e = Json::parse(record);
      PlotResultFeature f;
      f.plot = e["plot"].get<std::string>();
      f.shape = s.plots[plot_index.at(f.plot)].window.shape();
      f.file = input.name;
      if (!e["species"].is_null()) f.species = e["species"].get<std::string>();
      f.count = e["count"].get<long long>();
      f.area = e["area"].get<double>();
      f.intensity = e["intensity"].get<double>();
      f.ci_low = e["ci"][0].get<double>();
      f.ci_high = e["ci"][1].get<double>();
      f.corrected_intensity = e["corrected_intensity"].get<double>();
      const auto t = tests.find({f.plot, f.species.value_or("")});
      if (t != tests.end()) {
        const Json& g = t->second;
        const auto value = [](const Json& v) { return v.is_null() ? std::nullopt : std::optional<double>(v.get<double>()); };
        if (!g["quadrat"].is_null()) f.quadrat_p = value(g["quadrat"]["monte_carlo_p_value"].is_null() ? g["quadrat"]["p_value"] : g["quadrat"]["monte_carlo_p_value"]);
        if (!g["clark_evans"].is_null()) {
          f.clark_evans_ratio = value(g["clark_evans"]["ratio"]);
          f.clark_evans_p = value(g["clark_evans"]["monte_carlo_p_value"].is_null() ? g["clark_evans"]["p_value"] : g["clark_evans"]["monte_carlo_p_value"]);
        }
        if (!g["envelope"].is_null()) f.dclf_p = value(g["envelope"]["dclf_p_value"]);
        f.verdict = g["verdict"].get<std::string>();
      }
      r.gis_features.push_back(std::move(f));
    }
  }
  if (options.surfaces) {
    const Survey& s = r.survey.survey;
    const double per_unit = square_metres_per(options.density.unit);
    for (std::size_t k = 0; k <= s.species.size(); ++k) {
      const std::optional<std::size_t> species = k < s.species.size() ? std::optional<std::size_t>(k) : std::nullopt;
      const std::string name = species ? file_name_safe(s.species[k]) : std::string("all-species");
      IntensityRaster raster = intensity_surface(s, species, per_unit, options.pixel_m, options.bandwidth_m);
      for (const auto& w : raster.warnings) r.warnings.push_back("surface of " + name + ": " + w);
      r.surfaces.emplace_back("surfaces/" + stem + "/" + name + ".tif", std::move(raster));
    }
  }
  if (options.figures) {
    const Survey& s = r.survey.survey;
    for (std::size_t p = 0; p < s.plots.size(); ++p)
      r.figures.emplace_back("maps/" + stem + "/" + file_name_safe(s.plots[p].id) + ".svg",
                             plot_map_svg(s.plots[p], s.patterns[p], s.species));
  }
  r.ok = true;
  return r;
}

void write_lines(const std::string& path, const std::string& header, const std::vector<std::string>& rows,
                 const std::vector<std::string>& protected_paths) {
  std::string text = header + "\n";
  for (const auto& row : rows) text += row + "\n";
  write_file_safely(path, text, protected_paths);
}

void write_records(const std::string& path, const std::vector<std::string>& records,
                   const std::vector<std::string>& protected_paths) {
  Json array = Json::array();
  for (const auto& r : records) array.push_back(Json::parse(r));
  write_file_safely(path, json_text(array), protected_paths);
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

// A file whose extension names a vector format: an input, never a list of inputs.
bool is_vector_file(const std::string& path) {
  std::string ext = fs::path(path).extension().string();
  for (char& c : ext) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  for (const char* known : {".csv", ".gpkg", ".shp", ".dbf", ".geojson", ".json", ".kml", ".gpx", ".gml", ".fgb"})
    if (ext == known) return true;
  return false;
}

}  // namespace

std::vector<BatchInput> discover_inputs(const std::string& root, const std::string& pattern,
                                        const std::string& plots_template) {
  std::error_code ec;
  if (!fs::exists(root, ec)) throw InputError(root + ": no such file or folder");
  std::vector<BatchInput> inputs;
  const auto plots_for = [&](const fs::path& file, const std::string& capture) {
    if (plots_template.empty()) return file.string();
    std::string name = plots_template;
    const auto at = name.find("{*}");
    if (at != std::string::npos) name.replace(at, 3, capture);
    return (file.parent_path() / name).string();
  };
  if (fs::is_directory(root, ec)) {
    for (auto it = fs::recursive_directory_iterator(root, ec); it != fs::recursive_directory_iterator(); ++it) {
      if (!it->is_regular_file(ec)) continue;
      std::string capture;
      const std::string file_name = it->path().filename().string();
      if (!glob_match(pattern, file_name, &capture)) continue;
      inputs.push_back({it->path().string(), fs::relative(it->path(), root, ec).generic_string(),
                        plots_for(it->path(), capture)});
    }
  } else if (is_vector_file(root)) {
    // One survey file given directly: a batch of one.
    const fs::path path(root);
    inputs.push_back({path.string(), path.filename().string(), plots_for(path, path.stem().string())});
  } else {
    std::ifstream list(root);
    std::string line;
    const fs::path base = fs::path(root).parent_path();
    while (std::getline(list, line)) {
      const auto first = line.find_first_not_of(" \t\r");
      if (first == std::string::npos || line[first] == '#') continue;
      const auto last = line.find_last_not_of(" \t\r");
      const std::string entry = line.substr(first, last - first + 1);
      const fs::path path = fs::path(entry).is_absolute() ? fs::path(entry) : base / entry;
      std::string capture;
      glob_match(pattern, path.filename().string(), &capture);
      inputs.push_back({path.string(), entry, plots_for(path, capture)});
    }
  }
  if (inputs.empty()) throw InputError(root + ": no input matches '" + pattern + "'");
  std::sort(inputs.begin(), inputs.end(), [](const BatchInput& a, const BatchInput& b) { return a.name < b.name; });
  return inputs;
}

std::vector<BatchInput> shard(const std::vector<BatchInput>& inputs, std::size_t k, std::size_t n) {
  std::vector<BatchInput> out;
  for (std::size_t i = 0; i < inputs.size(); ++i)
    if (i % n == k - 1) out.push_back(inputs[i]);
  return out;
}

std::pair<std::size_t, std::size_t> parse_shard(const std::string& text) {
  const auto slash = text.find('/');
  try {
    if (slash == std::string::npos) throw std::invalid_argument(text);
    const auto whole = [](std::string_view digits) {
      const auto value = parse_whole_number(digits);
      if (!value) throw std::invalid_argument(std::string(digits));
      return static_cast<std::size_t>(*value);
    };
    const std::size_t k = whole(std::string_view(text).substr(0, slash));
    const std::size_t n = whole(std::string_view(text).substr(slash + 1));
    if (k < 1 || n < 1 || k > n) throw std::invalid_argument(text);
    return {k, n};
  } catch (const std::exception&) {
    throw InputError("--shard must be K/N with 1 <= K <= N (got '" + text + "')");
  }
}

std::vector<BatchFileResult> run_batch(const std::vector<BatchInput>& inputs, const BatchOptions& options,
                                       const BatchProgress& progress) {
  std::vector<BatchFileResult> results(inputs.size());
  std::mutex mutex;
  std::size_t done = 0;
  parallel_for(inputs.size(), options.threads, [&](std::size_t i) {
    BatchFileResult r;
    // Any failure of one input, of any type, is recorded; the other inputs go on.
    const auto failed = [&](const std::string& reason) {
      r = BatchFileResult{};
      r.input = inputs[i];
      r.ok = false;
      r.failure = reason;
    };
    try {
      r = run_one(inputs[i], options);
    } catch (const Error& e) {
      failed(e.what());
    } catch (const std::exception& e) {
      failed(std::string("internal error: ") + e.what());
    } catch (...) {
      failed("internal error of unknown type");
    }
    results[i] = std::move(r);
    const std::lock_guard<std::mutex> lock(mutex);
    ++done;
    if (progress) progress(done, inputs.size(), results[i]);
  });
  return results;
}

std::string density_table_header() {
  return "file,plot,species,count,area,intensity,ci_low,ci_high,detection_probability,corrected_intensity,"
         "corrected_ci_low,corrected_ci_high,unit";
}

std::string transect_table_header() {
  return "file,species,stratum,model,n,effort,esw,effective_area,detection_probability,encounter_rate,density,"
         "density_cv,density_ci_low,density_ci_high,abundance,unit";
}

std::string randomness_table_header() {
  return "file,plot,species,n,quadrat_p,clark_evans_ratio,clark_evans_p,mad_p,dclf_p,verdict";
}

void write_batch_outputs(const std::string& out_dir, const std::vector<BatchFileResult>& results,
                         const BatchOptions& options, const std::string& options_text,
                         const std::vector<std::string>& protected_paths) {
  make_folder(out_dir);
  std::vector<std::string> density_rows, density_records, randomness_rows, randomness_records, failures;
  std::vector<std::string> transect_rows, transect_records;
  Json inputs = Json::array();
  for (const auto& r : results) {
    density_rows.insert(density_rows.end(), r.density_rows.begin(), r.density_rows.end());
    density_records.insert(density_records.end(), r.density_records.begin(), r.density_records.end());
    randomness_rows.insert(randomness_rows.end(), r.randomness_rows.begin(), r.randomness_rows.end());
    randomness_records.insert(randomness_records.end(), r.randomness_records.begin(), r.randomness_records.end());
    transect_rows.insert(transect_rows.end(), r.transect_rows.begin(), r.transect_rows.end());
    transect_records.insert(transect_records.end(), r.transect_records.begin(), r.transect_records.end());
    if (!r.ok) failures.push_back(csv_field(r.input.name) + "," + csv_field(r.failure));
    Json in;
    in["name"] = r.input.name;
    std::error_code ec;
    in["path"] = fs::absolute(r.input.path, ec).lexically_normal().string();
    in["plots_path"] = fs::absolute(r.input.plots_path, ec).lexically_normal().string();
    in["sha256"] = r.sha256 ? Json(*r.sha256) : Json(nullptr);
    in["plots"] = r.input.plots_path == r.input.path ? Json(nullptr) : Json(fs::path(r.input.plots_path).filename().string());
    in["plots_sha256"] = r.plots_sha256 ? Json(*r.plots_sha256) : Json(nullptr);
    in["crs"] = r.ok ? Json(r.crs) : Json(nullptr);
    in["status"] = r.ok ? "ok" : "failed";
    in["warnings"] = r.warnings;
    inputs.push_back(std::move(in));
    for (const auto& [path, svg] : r.figures) {
      const fs::path target = fs::path(out_dir) / path;
      make_folder(target.parent_path().string());
      write_file_safely(target.string(), svg, protected_paths);
    }
  }
  if (options.gis) {
    std::vector<PlotResultFeature> features;
    std::string wkt;
    for (const auto& r : results) {
      features.insert(features.end(), r.gis_features.begin(), r.gis_features.end());
      if (wkt.empty() && r.ok) wkt = r.survey.crs.wkt;
    }
    if (!wkt.empty()) write_plot_results((fs::path(out_dir) / "plot-results.gpkg").string(), wkt, features, protected_paths);
  }
  if (options.surfaces) {
    for (const auto& r : results) {
      for (const auto& [path, raster] : r.surfaces) {
        const fs::path target = fs::path(out_dir) / path;
        make_folder(target.parent_path().string());
        write_geotiff(target.string(), raster, r.survey.crs.wkt,
                      "intensity per " + std::string(unit_name(options.density.unit)) + ", Gaussian kernel, Scott bandwidth per plot, local edge correction (Jones 1993)",
                      protected_paths);
      }
    }
  }
  if (options.run_density) {
    write_lines((fs::path(out_dir) / "density.csv").string(), density_table_header(), density_rows, protected_paths);
    write_records((fs::path(out_dir) / "density.json").string(), density_records, protected_paths);
  }
  if (options.run_randomness) {
    write_lines((fs::path(out_dir) / "randomness.csv").string(), randomness_table_header(), randomness_rows, protected_paths);
    write_records((fs::path(out_dir) / "randomness.json").string(), randomness_records, protected_paths);
  }
  if (options.run_transect) {
    write_lines((fs::path(out_dir) / "transect.csv").string(), transect_table_header(), transect_rows, protected_paths);
    write_records((fs::path(out_dir) / "transect.json").string(), transect_records, protected_paths);
  }
  write_lines((fs::path(out_dir) / "failures.csv").string(), "file,reason", failures, protected_paths);
  Json run;
  run["stipple_version"] = STIPPLE_VERSION;
  run["options"] = options_text;
  run["analyses"] = Json::array();
  if (options.run_density) run["analyses"].push_back("density");
  if (options.run_randomness) run["analyses"].push_back("randomness");
  if (options.run_transect) run["analyses"].push_back("transect");
  run["seed"] = options.randomness.seed;
  run["simulations"] = options.randomness.simulations;
  run["unit"] = std::string(unit_name(options.density.unit));
  run["confidence"] = options.density.confidence;
  run["inputs"] = std::move(inputs);
  write_file_safely((fs::path(out_dir) / "run.json").string(), json_text(run), protected_paths);
}

void merge_batch_outputs(const std::vector<std::string>& shard_dirs, const std::string& out_dir) {
  if (shard_dirs.empty()) throw InputError("merge needs at least one shard output folder");
  make_folder(out_dir);
  std::vector<std::string> protect = shard_dirs;
  // Tables: rows of all shards, stably ordered by input name (the first column).
  for (const char* table : {"density.csv", "randomness.csv", "transect.csv", "failures.csv"}) {
    std::string header;
    std::vector<std::string> rows;
    bool present = false;
    for (const auto& dir : shard_dirs) {
      const fs::path path = fs::path(dir) / table;
      std::error_code ec;
      if (!fs::exists(path, ec)) continue;
      present = true;
      std::string h;
      auto lines = read_lines(path, h);
      if (!header.empty() && h != header) throw InputError(path.string() + ": header differs from the other shards'");
      header = h;
      rows.insert(rows.end(), lines.begin(), lines.end());
    }
    if (!present) continue;
    std::stable_sort(rows.begin(), rows.end(), [](const std::string& a, const std::string& b) {
      return first_csv_field(a) < first_csv_field(b);
    });
    write_lines((fs::path(out_dir) / table).string(), header, rows, protect);
  }
  for (const char* twin : {"density.json", "randomness.json", "transect.json"}) {
    std::vector<Json> records;
    bool present = false;
    for (const auto& dir : shard_dirs) {
      const fs::path path = fs::path(dir) / twin;
      std::error_code ec;
      if (!fs::exists(path, ec)) continue;
      present = true;
      std::ifstream in(path);
      const Json array = Json::parse(in);
      for (const auto& r : array) records.push_back(r);
    }
    if (!present) continue;
    std::stable_sort(records.begin(), records.end(), [](const Json& a, const Json& b) {
      return a["file"].get<std::string>() < b["file"].get<std::string>();
    });
    Json array = Json::array();
    for (auto& r : records) array.push_back(std::move(r));
    write_file_safely((fs::path(out_dir) / twin).string(), json_text(array), protect);
  }
  // Manifest: the inputs of every shard, ordered by name; options from the first shard.
  Json run;
  std::vector<Json> inputs;
  for (const auto& dir : shard_dirs) {
    std::ifstream in(fs::path(dir) / "run.json");
    if (!in) throw InputError((fs::path(dir) / "run.json").string() + ": missing; is this a batch output folder?");
    const Json shard_run = Json::parse(in);
    if (run.is_null()) run = shard_run;
    for (const auto& i : shard_run["inputs"]) inputs.push_back(i);
  }
  std::stable_sort(inputs.begin(), inputs.end(), [](const Json& a, const Json& b) {
    return a["name"].get<std::string>() < b["name"].get<std::string>();
  });
  run["inputs"] = Json::array();
  for (auto& i : inputs) run["inputs"].push_back(std::move(i));
  write_file_safely((fs::path(out_dir) / "run.json").string(), json_text(run), protect);
  // GIS layer: every shard's features, ordered by file.
  std::vector<std::string> gpkgs;
  for (const auto& dir : shard_dirs) {
    std::error_code ec;
    if (fs::exists(fs::path(dir) / "plot-results.gpkg", ec)) gpkgs.push_back((fs::path(dir) / "plot-results.gpkg").string());
  }
  if (!gpkgs.empty()) merge_plot_results(gpkgs, (fs::path(out_dir) / "plot-results.gpkg").string(), protect);
  // Figures, maps and surfaces: every shard's files, copied.
  for (const auto& dir : shard_dirs) {
    for (const char* sub : {"figures", "maps", "surfaces"}) {
      const fs::path from = fs::path(dir) / sub;
      std::error_code ec;
      if (!fs::is_directory(from, ec)) continue;
      for (auto it = fs::recursive_directory_iterator(from, ec); it != fs::recursive_directory_iterator(); ++it) {
        if (!it->is_regular_file(ec)) continue;
        const fs::path target = fs::path(out_dir) / sub / fs::relative(it->path(), from, ec);
        make_folder(target.parent_path().string());
        std::ifstream in(it->path(), std::ios::binary);
        std::stringstream content;
        content << in.rdbuf();
        write_file_safely(target.string(), content.str(), protect);
      }
    }
  }
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
