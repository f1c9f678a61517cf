#include "stipple/report/batch_report.hpp"

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <set>
#include <sstream>

#include <nlohmann/json.hpp>

#include "json_text.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/report/density_report.hpp"
#include "stipple/report/randomness_report.hpp"
#include "stipple/report/transect_report.hpp"

namespace fs = std::filesystem;

namespace stipple {

namespace {

using Json = nlohmann::ordered_json;

std::string escape(const std::string& text) {
  std::string out;
  for (const char c : text) {
    switch (c) {
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '&': out += "&amp;"; break;
      case '"': out += "&quot;"; break;
      default: out += c;
    }
  }
  return out;
}

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

std::optional<Json> read_json(const fs::path& path) {
  std::error_code ec;
  if (!fs::exists(path, ec)) return std::nullopt;
  std::ifstream in(path);
  return Json::parse(in);
}

std::string p_cell(const Json& v) { return v.is_null() ? "&ndash;" : format_p_value(v.get<double>()); }

std::string cell(const Json& v, int digits = 4) {
  if (v.is_null()) return "&ndash;";
  if (v.is_number_float()) return format_significant(v.get<double>(), digits);
  if (v.is_number()) return std::to_string(v.get<long long>());
  if (v.is_string()) return escape(v.get<std::string>());
  return escape(json_text(v, -1));
}

// An SVG file's <svg> element for inlining into the page. Cairo names the glyphs, clips and
// surfaces of every figure alike (glyph0-1, clip1, ...), and ids are global in an HTML page:
// without a prefix every figure after the first would draw its text with the first one's
// glyphs. Each figure's ids and references get the prefix "f<number>-".
std::string svg_inline(const fs::path& path, std::size_t figure) {
  std::string svg = read_text(path);
  const auto start = svg.find("<svg");
  if (start == std::string::npos) return {};
  svg = svg.substr(start);
  static const std::regex reference(R"((\bid=")|(href="#)|(url\(#))");
  const std::string prefix = "f" + std::to_string(figure) + "-";
  std::string out;
  auto last = svg.cbegin();
  for (auto it = std::sregex_iterator(svg.begin(), svg.end(), reference); it != std::sregex_iterator(); ++it) {
    out.append(last, svg.cbegin() + it->position() + it->length());
    out += prefix;
    last = svg.cbegin() + it->position() + it->length();
  }
  out.append(last, svg.cend());
  return out;
}

}  // namespace

std::string batch_report_html(const std::string& out_dir) {
  const fs::path dir(out_dir);
  const auto run = read_json(dir / "run.json");
  if (!run) throw InputError(out_dir + ": no run.json; is this a stipple batch output folder?");
  const auto density = read_json(dir / "density.json");
  const auto randomness = read_json(dir / "randomness.json");
  const auto transect = read_json(dir / "transect.json");
  std::ostringstream h;
  h << "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>stipple report</title>\n"
       "<style>body{font-family:'DejaVu Sans',sans-serif;margin:2em auto;max-width:1100px;color:#222;line-height:1.4}"
       "table{border-collapse:collapse;margin:1em 0;font-size:0.85em}th,td{border:1px solid #bbb;padding:3px 6px;text-align:right}"
       "th{background:#e8eef4}td.t{text-align:left}h2{border-bottom:2px solid #0072b2;padding-bottom:3px}"
       ".figs svg{width:48%;height:auto;margin:1%;border:1px solid #ddd}.caution{background:#fff4e0;border-left:4px solid #e69f00;padding:0.5em 1em}"
       "code{background:#f2f2f2;padding:1px 3px}</style></head><body>\n";
  h << "<h1>stipple report</h1>\n";
  h << "<p>stipple " << escape((*run)["stipple_version"].get<std::string>()) << "; analyses: ";
  for (const auto& a : (*run)["analyses"]) h << escape(a.get<std::string>()) << " ";
  h << "; seed " << (*run)["seed"] << ", " << (*run)["simulations"] << " simulations; intervals at "
    << format_general(100.0 * (*run)["confidence"].get<double>()) << "%, densities per "
    << escape((*run)["unit"].get<std::string>()) << ".</p>\n";
  h << "<p>Options: <code>" << escape((*run)["options"].get<std::string>()) << "</code></p>\n";

  h << "<h2>Inputs</h2>\n<table><tr><th>file</th><th>plots</th><th>CRS</th><th>status</th><th>SHA-256</th></tr>\n";
  for (const auto& in : (*run)["inputs"]) {
    h << "<tr><td class=t>" << cell(in["name"]) << "</td><td class=t>" << cell(in["plots"]) << "</td><td class=t>"
      << cell(in["crs"]) << "</td><td class=t>" << cell(in["status"]) << "</td><td class=t><code>"
      << cell(in["sha256"]) << "</code></td></tr>\n";
  }
  h << "</table>\n";
  const auto failures = read_text(dir / "failures.csv");
  if (std::count(failures.begin(), failures.end(), '\n') > 1)
    h << "<p><strong>Failed inputs</strong> (see failures.csv):</p><pre>" << escape(failures) << "</pre>\n";

  // Methods paragraph from the options used.
  h << "<h2>Methods</h2>\n<p>";
  std::set<std::string> analyses;
  for (const auto& a : (*run)["analyses"]) analyses.insert(a.get<std::string>());
  if (analyses.count("density"))
    h << "Intensity (density) of each species in each plot was estimated as the count divided by the plot area, "
         "with exact Poisson confidence limits (Garwood 1936); all species together form the superposed process. "
         "Detection probabilities, where given, were applied as independent thinning (Kingman 1993), the "
         "observed intensity divided by p. ";
  if (analyses.count("randomness"))
    h << "Complete spatial randomness was tested in each plot window with the quadrat-count chi-square test, "
         "the Clark &amp; Evans (1954) nearest-neighbour test (Donnelly 1978 correction for rectangles, the border "
         "method otherwise, whose p-value is the Monte Carlo one), and Ripley's K and L functions with Ripley's "
         "(1977) isotropic edge correction, the "
         "pair correlation function, and G, F and J with Kaplan-Meier correction (Baddeley &amp; Gill 1997). "
         << (*run)["simulations"] << " binomial-process simulations gave Monte Carlo envelopes and global tests "
         "(maximum absolute deviation and Diggle-Cressie-Loosmore-Ford tests, Loosmore &amp; Ford 2006, each curve "
         "measured against the mean of the others; extreme rank length envelope, Myllym&auml;ki et al. 2017, which "
         "the observed L leaves exactly when that test rejects), with p = (1 + #more extreme)/(N + 1) (Hope "
         "1968). "
         "Pairs of species were tested by random labelling of cross-L (Diggle 2003). ";
  if (analyses.count("transect"))
    h << "Density from line transects was estimated by distance sampling (Buckland et al. 2001): half-normal, "
         "hazard-rate (Hayes &amp; Buckland 1983) and uniform detection functions with adjustment terms, fitted by "
         "maximum likelihood and chosen by AIC; encounter-rate variance by estimator R2 of Fewster et al. (2009); "
         "log-normal intervals with Satterthwaite degrees of freedom. ";
  h << "Every simulation's seed derives from seed " << (*run)["seed"]
    << " and the plot and species, so each number above can be reproduced with the same version and options.</p>\n";

  if (density) {
    h << "<h2>Densities</h2>\n<table><tr><th>file</th><th>plot</th><th>species</th><th>count</th><th>area</th>"
         "<th>intensity</th><th>interval</th><th>p</th><th>corrected</th><th>corrected interval</th></tr>\n";
    for (const auto& e : *density) {
      h << "<tr><td class=t>" << cell(e["file"]) << "</td><td class=t>" << cell(e["plot"]) << "</td><td class=t>"
        << (e["species"].is_null() ? std::string("(all)") : cell(e["species"])) << "</td><td>" << cell(e["count"])
        << "</td><td>" << cell(e["area"]) << "</td><td>" << cell(e["intensity"]) << "</td><td>[" << cell(e["ci"][0])
        << ", " << cell(e["ci"][1]) << "]</td><td>" << cell(e["detection_probability"], 3) << "</td><td>"
        << cell(e["corrected_intensity"]) << "</td><td>[" << cell(e["corrected_ci"][0]) << ", "
        << cell(e["corrected_ci"][1]) << "]</td></tr>\n";
    }
    h << "</table>\n";
  }
  if (randomness) {
    h << "<h2>Spatial randomness</h2>\n<table><tr><th>file</th><th>plot</th><th>species</th><th>n</th>"
         "<th>quadrat p</th><th>Clark-Evans R</th><th>CE p</th><th>MAD p</th><th>DCLF p</th><th>verdict</th></tr>\n";
    for (const auto& g : *randomness) {
      const Json& q = g["quadrat"];
      const Json& c = g["clark_evans"];
      const Json& e = g["envelope"];
      h << "<tr><td class=t>" << cell(g["file"]) << "</td><td class=t>" << cell(g["plot"]) << "</td><td class=t>"
        << (g["species"].is_null() ? std::string("(all)") : cell(g["species"])) << "</td><td>" << cell(g["n"])
        << "</td><td>" << (q.is_null() ? "&ndash;" : p_cell(q["monte_carlo_p_value"].is_null() ? q["p_value"] : q["monte_carlo_p_value"]))
        << "</td><td>" << (c.is_null() ? "&ndash;" : cell(c["ratio"], 3)) << "</td><td>"
        << (c.is_null() ? "&ndash;" : p_cell(c["monte_carlo_p_value"].is_null() ? c["p_value"] : c["monte_carlo_p_value"]))
        << "</td><td>" << (e.is_null() ? "&ndash;" : p_cell(e["mad_p_value"])) << "</td><td>"
        << (e.is_null() ? "&ndash;" : p_cell(e["dclf_p_value"])) << "</td><td class=t>" << cell(g["verdict"]) << "</td></tr>\n";
    }
    h << "</table>\n";
  }
  if (transect) {
    h << "<h2>Transect densities</h2>\n<table><tr><th>file</th><th>species</th><th>stratum</th><th>model</th><th>n</th>"
         "<th>effort</th><th>ESW (m)</th><th>P_a</th><th>density</th><th>CV</th><th>interval</th><th>GOF chi2 p</th></tr>\n";
    for (const auto& e : *transect) {
      h << "<tr><td class=t>" << cell(e["file"]) << "</td><td class=t>"
        << (e["species"].is_null() ? std::string("(all)") : cell(e["species"])) << "</td><td class=t>"
        << (e["stratum"].is_null() ? std::string("(all)") : cell(e["stratum"])) << "</td><td class=t>" << cell(e["model"])
        << "</td><td>" << cell(e["n"]) << "</td><td>" << cell(e["effort"]) << "</td><td>" << cell(e["esw"]) << "</td><td>"
        << cell(e["detection_probability"], 3) << "</td><td>" << cell(e["density"]) << "</td><td>" << cell(e["density_cv"], 3)
        << "</td><td>[" << cell(e["density_ci"][0]) << ", " << cell(e["density_ci"][1]) << "]</td><td>"
        << p_cell(e["gof"]["chi_square_p"]) << "</td></tr>\n";
    }
    h << "</table>\n";
  }
  std::size_t figures = 0;  // numbers the inlined figures: their ids must be unique in the page
  const auto section = [&](const char* sub, const char* prefix, const char* title, const char* intro) {
    std::error_code ec;
    const fs::path root = dir / sub;
    if (!fs::is_directory(root, ec)) return;
    std::vector<fs::path> files;
    for (auto it = fs::recursive_directory_iterator(root, ec); it != fs::recursive_directory_iterator(); ++it)
      if (it->is_regular_file(ec) && it->path().extension() == ".svg" &&
          it->path().filename().string().rfind(prefix, 0) == 0)
        files.push_back(it->path());
    std::sort(files.begin(), files.end());
    if (files.empty()) return;
    h << "<h2>" << title << "</h2>\n<p>" << intro << "</p>\n<div class=figs>\n";
    for (const auto& f : files) h << svg_inline(f, ++figures) << "\n";
    h << "</div>\n";
  };
  section("maps", "", "Plot maps",
          "Each plot's window (holes excluded) with its sightings; species differ in both colour and marker shape.");
  section("figures", "detection-", "Detection functions",
          "Distance histograms scaled to the fitted detection function g(x).");
  section("figures", "L-", "L-function envelopes",
          "Observed L(r) (blue) against CSR (dashed) with pointwise and global envelopes; above the envelope = clustered, below = regular.");
  h << "<h2>Assumptions and cautions</h2>\n<div class=caution><ul>\n";
  for (const auto& c : density_cautions()) h << "<li>" << escape(c) << "</li>\n";
  for (const auto& c : randomness_cautions()) h << "<li>" << escape(c) << "</li>\n";
  if (transect)
    for (const auto& c : transect_cautions()) h << "<li>" << escape(c) << "</li>\n";
  h << "</ul></div>\n<h2>References</h2>\n<p>Baddeley &amp; Gill (1997) Ann. Statist. 25:263-292. Clark &amp; Evans (1954) Ecology "
       "35:445-453. Diggle (2003) Statistical Analysis of Spatial Point Patterns. Donnelly (1978) in Simulation Methods in "
       "Archaeology. Garwood (1936) Biometrika 28:437-442. Hope (1968) JRSS B 30:582-598. Kingman (1993) Poisson Processes. "
       "Loosmore &amp; Ford (2006) Ecology 87:1925-1931. Myllym&auml;ki et al. (2017) JRSS B 79:381-404. Ripley (1977) JRSS B "
       "39:172-212.</p>\n</body></html>\n";
  return h.str();
}

}  // namespace stipple
