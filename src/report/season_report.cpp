#include "stipple/report/season_report.hpp"

#include <cmath>
#include <locale>
#include <regex>
#include <set>
#include <sstream>

#include <boost/math/constants/constants.hpp>

#include "stipple/format.hpp"
#include "stipple/report/density_report.hpp"
#include "stipple/report/randomness_report.hpp"
#include "stipple/report/tables.hpp"
#include "stipple/report/transect_report.hpp"

namespace stipple {

namespace {

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

const char* dash = "&ndash;";

std::string num(double v, int digits = 4) {
  return std::isfinite(v) ? format_significant(v, digits) : dash;
}
std::string num(const std::optional<double>& v, int digits = 4) {
  return v ? num(*v, digits) : dash;
}
std::string p_text(const std::optional<double>& p) {
  return p && std::isfinite(*p) ? format_p_value(*p) : dash;
}
std::string interval(const Interval& ci) {
  return "[" + num(ci.lower) + ", " + num(ci.upper) + "]";
}
std::string species_cell(const std::optional<std::string>& s) {
  return s ? escape(*s) : "(all)";
}
std::string td(const std::string& html) {
  return "<td>" + html + "</td>";
}
std::string tdt(const std::string& html) {
  return "<td class=t>" + html + "</td>";
}

std::string level_text(double confidence) {
  const double percent = 100.0 * confidence;
  return format_fixed(percent, percent == std::round(percent) ? 0 : 1) + "%";
}

std::string header_row(const std::vector<std::string>& cells) {
  std::string out = "<tr>";
  for (const auto& c : cells) out += "<th>" + c + "</th>";
  return out + "</tr>\n";
}

// An SVG's <svg> element for inlining. Cairo names the glyphs, clips and surfaces of every
// figure alike (glyph0-1, clip1, ...) and ids are global in an HTML page: without a prefix
// every figure after the first would draw its text with the first one's glyphs. Each
// figure's ids and references get the prefix "f<number>-".
std::string svg_inline(const std::string& text, std::size_t figure) {
  const auto start = text.find("<svg");
  if (start == std::string::npos) return {};
  const std::string svg = text.substr(start);
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

// The references a page may cite, by key; only those cited are listed.
struct Reference {
  const char* key;
  const char* text;
};
const std::vector<Reference>& all_references() {
  static const std::vector<Reference> refs{
      {"Baddeley & Gill 1997",
       "Baddeley A. &amp; Gill R.D. (1997) Kaplan-Meier estimators of distance distributions for spatial point "
       "processes. Ann. Statist. 25:263-292."},
      {"Buckland et al. 2001",
       "Buckland S.T. et al. (2001) Introduction to Distance Sampling. Oxford University Press."},
      {"Clark & Evans 1954",
       "Clark P.J. &amp; Evans F.C. (1954) Distance to nearest neighbor as a measure of spatial relationships in "
       "populations. Ecology 35:445-453."},
      {"Cochran 1977", "Cochran W.G. (1977) Sampling Techniques, 3rd ed. Wiley."},
      {"Diggle 2003", "Diggle P.J. (2003) Statistical Analysis of Spatial Point Patterns, 2nd ed. Arnold."},
      {"Donnelly 1978",
       "Donnelly K.P. (1978) Simulations to determine the variance and edge effect of total nearest-neighbour "
       "distance. In Simulation Methods in Archaeology, Cambridge University Press."},
      {"Fewster et al. 2009",
       "Fewster R.M. et al. (2009) Estimating the encounter rate variance in distance sampling. Biometrics "
       "65:225-236."},
      {"Garwood 1936", "Garwood F. (1936) Fiducial limits for the Poisson distribution. Biometrika 28:437-442."},
      {"Hayes & Buckland 1983",
       "Hayes R.J. &amp; Buckland S.T. (1983) Radial-distance models for the line-transect method. Biometrics "
       "39:29-42."},
      {"Hope 1968", "Hope A.C.A. (1968) A simplified Monte Carlo significance test procedure. JRSS B 30:582-598."},
      {"Loosmore & Ford 2006",
       "Loosmore N.B. &amp; Ford E.D. (2006) Statistical inference using the G or K point pattern spatial statistics. "
       "Ecology 87:1925-1931."},
      {"Myllymaki et al. 2017",
       "Myllym&auml;ki M. et al. (2017) Global envelope tests for spatial processes. JRSS B 79:381-404."},
      {"Ripley 1977", "Ripley B.D. (1977) Modelling spatial patterns. JRSS B 39:172-212."},
      {"Satterthwaite 1946",
       "Satterthwaite F.E. (1946) An approximate distribution of estimates of variance components. Biometrics Bulletin "
       "2:110-114."},
  };
  return refs;
}

class Page {
 public:
  Page() { html.imbue(std::locale::classic()); }  // numbers never follow a host's locale
  std::ostringstream html;
  std::set<std::string> cited;
  std::set<std::string> ids;
  void cite(const char* key) { cited.insert(key); }
  // A section heading with a unique id (for the contents list).
  void section(const std::string& id, const std::string& title) {
    std::string unique = id;
    for (int k = 2; !ids.insert(unique).second; ++k) unique = id + "-" + std::to_string(k);
    html << "<h2 id=\"" << unique << "\">" << title << "</h2>\n";
  }
};

void write_inputs(Page& page, const SeasonReport& r) {
  page.section("inputs", "Inputs");
  page.html << "<table>"
            << header_row({"file", "plots file", "holds", "CRS of the file", "status", "reason", "SHA-256"});
  for (const auto& in : r.inputs) {
    page.html << "<tr>" << tdt(escape(in.name)) << tdt(in.plots.empty() ? dash : escape(in.plots))
              << tdt(escape(in.kind)) << tdt(in.crs.empty() ? dash : escape(in.crs)) << tdt(escape(in.status))
              << tdt(in.reason.empty() ? dash : escape(in.reason))
              << tdt("<code>" + (in.sha256.empty() ? dash : escape(in.sha256)) + "</code>") << "</tr>\n";
  }
  page.html << "</table>\n";
  std::vector<std::string> warnings;
  for (const auto& in : r.inputs)
    for (const auto& w : in.warnings) warnings.push_back(in.name + ": " + w);
  warnings.insert(warnings.end(), r.warnings.begin(), r.warnings.end());
  if (!warnings.empty()) {
    page.html << "<p><strong>Warnings</strong></p><ul class=warn>\n";
    for (const auto& w : warnings) page.html << "<li>" << escape(w) << "</li>\n";
    page.html << "</ul>\n";
  }
}

void write_methods(Page& page, const SeasonReport& r) {
  const SeasonRun& run = r.run;
  page.section("methods", "Methods");
  std::ostringstream& h = page.html;
  h << "<p>";
  if (run.density) {
    page.cite("Garwood 1936");
    page.cite("Cochran 1977");
    h << "Intensity (density) of each species in each plot was estimated as the count divided by the plot area, with "
         "exact Poisson "
      << level_text(run.confidence)
      << " confidence limits (Garwood 1936); all species together "
         "form the superposed process. Plots of every file were pooled per species as the sum of counts over the sum "
         "of areas; a Pearson X<sup>2</sup> test asked whether the plots share one intensity (Monte Carlo p-value from "
      << run.simulations
      << " multinomial draws where an expected count is below 5), and where they differ the "
         "between-plot ratio-estimator interval (Cochran 1977) replaces the Poisson one. Detection: "
      << escape(run.detection) << ". ";
  }
  if (run.randomness) {
    page.cite("Clark & Evans 1954");
    page.cite("Ripley 1977");
    page.cite("Loosmore & Ford 2006");
    page.cite("Myllymaki et al. 2017");
    page.cite("Hope 1968");
    page.cite("Diggle 2003");
    h << "Complete spatial randomness was tested in each plot window with the quadrat-count chi-square test on a "
      << escape(run.quadrats) << " grid clipped to the window, the Clark &amp; Evans (1954) nearest-neighbour test ";
    if (run.edge_correction.empty()) {
      page.cite("Donnelly 1978");
      h << "(Donnelly 1978 correction for rectangular plots, the border method otherwise, whose p-value is the Monte "
           "Carlo one)";
    } else if (run.edge_correction == "donnelly") {
      page.cite("Donnelly 1978");
      h << "(Donnelly 1978 correction where plots are rectangles, the border method otherwise)";
    } else {
      h << "(edge correction: " << escape(run.edge_correction) << ")";
    }
    h << ", and Ripley's L function with " << (run.pair_correction == "border" ? "border" : "Ripley's (1977) isotropic")
      << " edge correction";
    if (run.distance_correction == "kaplan-meier") page.cite("Baddeley & Gill 1997");
    h << " (G and F with "
      << (run.distance_correction == "border" ? "border" : "Kaplan-Meier (Baddeley &amp; Gill 1997)")
      << " correction), up to "
      << (run.rmax_m ? format_general(*run.rmax_m) + " m"
                     : std::string("the smaller of a quarter of the window's shorter side and 4/&radic;&lambda;"))
      << ". " << run.simulations
      << " binomial-process simulations (same n, same window) gave Monte Carlo envelopes and global tests: maximum "
         "absolute deviation (MAD) and Diggle-Cressie-Loosmore-Ford (DCLF; Loosmore &amp; Ford 2006), each curve "
         "measured against the mean of the others, and the extreme rank length (ERL) envelope (Myllym&auml;ki et al. "
         "2017), which L leaves exactly when that test rejects; p = (1 + #more extreme)/(N + 1) (Hope 1968). Pairs of "
         "species were tested by random labelling of cross-L (Diggle 2003). ";
  }
  if (run.transect) {
    page.cite("Buckland et al. 2001");
    page.cite("Hayes & Buckland 1983");
    page.cite("Fewster et al. 2009");
    page.cite("Satterthwaite 1946");
    h << "Densities from transects were estimated by distance sampling (Buckland et al. 2001): detection functions "
      << escape(run.transect_models) << " (hazard-rate: Hayes &amp; Buckland 1983) fitted by maximum likelihood and "
      << "chosen by AIC, truncation " << escape(run.truncation)
      << "; encounter-rate variance by estimator R2 of Fewster et al. (2009); log-normal intervals with "
         "Satterthwaite (1946) degrees of freedom";
    if (run.bootstrap > 0) h << "; " << run.bootstrap << " bootstrap resamples of transects within strata";
    h << ". ";
  }
  h << "Every simulation's seed derives from seed " << run.seed
    << " and the plot and species, so each number can be reproduced with the same version and options.</p>\n";
  h << "<p>Options: <code>" << escape(run.options_text) << "</code></p>\n";
}

void write_pooled(Page& page, const SeasonReport& r) {
  if (!r.pooled) return;
  const DensityResult& d = *r.pooled;
  const std::string unit(unit_name(d.unit));
  const std::string level = level_text(d.confidence);
  page.section("pooled", "The season pooled (all plots of all files)");
  page.html << "<table>"
            << header_row({"species", "plots", "count", "area (" + unit + ")", "intensity (per " + unit + ")",
                           level + " interval (per " + unit + ")", "corrected (per " + unit + ")",
                           "corrected " + level + " interval (per " + unit + ")", "homogeneity X<sup>2</sup>", "df",
                           "homogeneity p", "dispersion X<sup>2</sup>/df",
                           "between-plot " + level + " interval, corrected (per " + unit + ")"});
  for (const auto& p : d.pooled) {
    page.html << "<tr>" << tdt(species_cell(p.species)) << td(std::to_string(p.plots)) << td(std::to_string(p.count))
              << td(num(p.area_in_unit)) << td(num(p.intensity)) << td(interval(p.ci)) << td(num(p.corrected.intensity))
              << td(interval(p.corrected.ci));
    if (p.homogeneity) {
      const HomogeneityTest& t = *p.homogeneity;
      page.html << td(format_fixed(t.chi_square.statistic, 2)) << td(format_fixed(t.chi_square.df, 0))
                << td(format_p_value(t.p_value) + (t.monte_carlo ? " (MC)" : ""))
                << td(format_fixed(t.dispersion_ratio, 2))
                << td(t.significant ? "<strong>" + interval(t.corrected_between_plot_ci) + "</strong>"
                                    : interval(t.corrected_between_plot_ci));
    } else {
      page.html << td(dash) << td(dash) << td(dash) << td(dash) << td(dash);
    }
    page.html << "</tr>\n";
  }
  page.html << "</table>\n<p class=legend>Superposition: sum of counts / sum of plot areas. Homogeneity: Pearson "
               "X<sup>2</sup> of plot counts against area-proportional expectations, (MC) = Monte Carlo p-value. Where "
               "the plots differ (bold), use the between-plot interval, not the Poisson one.</p>\n";
  if (d.composition) {
    const CompositionTest& c = *d.composition;
    page.html << "<p>Species composition across plots: X<sup>2</sup> = " << format_fixed(c.chi_square.statistic, 2)
              << ", df = " << format_fixed(c.chi_square.df, 0) << ", p = " << format_p_value(c.p_value)
              << (c.monte_carlo ? " (Monte Carlo)" : "")
              << (c.significant ? ": the species mix differs between plots." : ": no evidence that the mix differs.")
              << "</p>\n";
  }
}

void write_densities(Page& page, const SeasonReport& r) {
  if (r.densities.empty()) return;
  const std::string unit = r.run.unit;
  const std::string level = level_text(r.run.confidence);
  page.section("densities", "Densities per plot");
  page.html << "<table>"
            << header_row({"file", "plot", "species", "count", "area (" + unit + ")", "intensity (per " + unit + ")",
                           level + " interval", "detection probability", "corrected (per " + unit + ")",
                           "corrected " + level + " interval"});
  for (const auto& row : r.densities) {
    const DensityEstimate& e = row.estimate;
    page.html << "<tr>" << tdt(escape(row.file)) << tdt(escape(e.plot)) << tdt(species_cell(e.species))
              << td(std::to_string(e.count)) << td(num(e.area_in_unit)) << td(num(e.intensity)) << td(interval(e.ci))
              << td(num(e.corrected.detection_probability, 3)) << td(num(e.corrected.intensity))
              << td(interval(e.corrected.ci)) << "</tr>\n";
  }
  page.html << "</table>\n";
}

void write_randomness(Page& page, const SeasonReport& r) {
  if (r.randomness.empty()) return;
  page.section("randomness", "Spatial randomness per plot");
  page.html << "<table>"
            << header_row({"file", "plot", "species", "n", "quadrat p", "CE ratio R", "CE p", "MAD p", "DCLF p",
                           "L leaves the global envelope at", "verdict"});
  for (const auto& g : r.randomness) {
    const std::string ranges = departure_text(g.departures, "clustered", "regular");
    page.html << "<tr>" << tdt(escape(g.file)) << tdt(escape(g.plot)) << tdt(species_cell(g.species))
              << td(std::to_string(g.n)) << td(p_text(g.quadrat_p) + (g.quadrat_monte_carlo ? " (MC)" : ""))
              << td(num(g.clark_evans_ratio, 3)) << td(p_text(g.clark_evans_p)) << td(p_text(g.mad_p))
              << td(p_text(g.dclf_p)) << tdt(ranges.empty() ? (g.dclf_p ? "nowhere" : dash) : escape(ranges))
              << tdt(escape(g.verdict)) << "</tr>\n";
  }
  page.html << "</table>\n<p class=legend>CE = Clark-Evans nearest-neighbour test (R &lt; 1 clustered, &gt; 1 "
               "regular); MAD = maximum absolute deviation and DCLF = Diggle-Cressie-Loosmore-Ford global tests of L "
               "against CSR simulations; the envelope is the global extreme-rank-length (ERL) envelope, distances in "
               "metres; (MC) = Monte Carlo p-value. The verdict follows the DCLF test.</p>\n";
  if (r.interactions.empty()) return;
  page.section("between-species", "Between species (random labelling)");
  page.html << "<table>"
            << header_row({"file", "plot", "species a", "species b", "n a", "n b", "DCLF p", "direction",
                           "cross-L leaves the global envelope at"});
  for (const auto& i : r.interactions) {
    const std::string ranges = departure_text(i.departures, "association", "segregation");
    page.html << "<tr>" << tdt(escape(i.file)) << tdt(escape(i.plot)) << tdt(escape(i.species_a))
              << tdt(escape(i.species_b)) << td(std::to_string(i.n_a)) << td(std::to_string(i.n_b))
              << td(format_p_value(i.p_value)) << tdt(escape(i.direction))
              << tdt(ranges.empty() ? "nowhere" : escape(ranges)) << "</tr>\n";
  }
  page.html << "</table>\n<p class=legend>Cross-L of species b around species a against random relabellings of the "
               "same locations (DCLF test); distances in metres.</p>\n";
}

void write_transects(Page& page, const SeasonReport& r) {
  if (r.transects.empty()) return;
  const std::string unit = r.run.transect_unit;
  const std::string level = level_text(r.run.confidence);
  const bool lines = r.transects.front().lines;
  page.section("transects", "Transect densities");
  page.html << "<table>"
            << header_row({"file", "species", "stratum", "detection model", "n", lines ? "effort (km)" : "visits",
                           lines ? "ESW (m)" : "effective radius (m)", "P<sub>a</sub>", "density (per " + unit + ")",
                           "CV", level + " interval (per " + unit + ")",
                           level + " bootstrap interval (per " + unit + ")", "GOF X<sup>2</sup> p"});
  for (const auto& t : r.transects) {
    page.html << "<tr>" << tdt(escape(t.file)) << tdt(species_cell(t.species)) << tdt(species_cell(t.stratum))
              << tdt(escape(t.model)) << td(std::to_string(t.n)) << td(num(t.effort)) << td(num(t.effective_width_m))
              << td(num(t.detection_probability, 3)) << td(num(t.density)) << td(num(t.density_cv, 3))
              << td(interval(t.density_ci)) << td(t.bootstrap_ci ? interval(*t.bootstrap_ci) : dash)
              << td(p_text(t.gof_p)) << "</tr>\n";
  }
  page.html << "</table>\n<p class=legend>ESW = effective strip half-width; P<sub>a</sub> = probability of detecting "
               "an animal within the truncation distance; CV = coefficient of variation of the density (delta "
               "method); GOF = chi-square goodness of fit of the detection function.</p>\n";
}

void write_figures(Page& page, const SeasonReport& r, const FigureSource& source) {
  std::size_t number = 0;  // numbers the inlined figures: their ids must be unique in the page
  const auto section = [&](const char* kind, const char* id, const char* title, const char* intro) {
    bool any = false;
    for (const auto& f : r.figures) {
      if (f.section != kind) continue;
      if (!any) {
        page.section(id, title);
        page.html << "<p>" << intro << "</p>\n<div class=figs>\n";
      }
      any = true;
      page.html << "<figure>" << svg_inline(source(f.path), ++number) << "<figcaption>" << escape(f.title)
                << "</figcaption></figure>\n";
    }
    if (any) page.html << "</div>\n";
  };
  section("map", "maps", "Plot maps",
          "Each plot's window (holes excluded) with its sightings; species differ in both colour and marker shape; "
          "scale bar in metres.");
  section("detection", "detection-functions", "Detection functions",
          "Distance histograms scaled to the fitted detection function g(x); distances in metres.");
  section("L", "l-envelopes", "L-function envelopes",
          "Observed L(r) against CSR (dashed) with pointwise and global envelopes, r and L in metres; above the "
          "envelope = clustered, below = regular.");
}

void write_cautions_and_references(Page& page, const SeasonReport& r) {
  page.section("cautions", "Assumptions and cautions");
  page.html << "<div class=caution><ul>\n";
  std::vector<std::string> cautions;
  if (r.run.density) cautions = density_cautions();
  if (r.run.randomness) cautions.insert(cautions.end(), randomness_cautions().begin(), randomness_cautions().end());
  if (r.run.transect) cautions.insert(cautions.end(), transect_cautions().begin(), transect_cautions().end());
  std::set<std::string> shown;
  for (const auto& c : cautions)
    if (shown.insert(c).second) page.html << "<li>" << escape(c) << "</li>\n";
  page.html << "</ul></div>\n";
  page.section("references", "References");
  page.html << "<ul class=refs>\n";
  for (const auto& ref : all_references())
    if (page.cited.count(ref.key)) page.html << "<li>" << ref.text << "</li>\n";
  page.html << "</ul>\n";
}

}  // namespace

std::string season_report_html(const SeasonReport& r, const FigureSource& figures) {
  Page page;
  std::ostringstream& h = page.html;
  const SeasonRun& run = r.run;
  h << "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>stipple season report</title>\n"
       "<style>body{font-family:'DejaVu Sans',sans-serif;margin:2em auto;max-width:1100px;color:#222;line-height:1.4}"
       "table{border-collapse:collapse;margin:1em 0;font-size:0.85em}th,td{border:1px solid #bbb;padding:3px "
       "6px;text-align:right}"
       "th{background:#e8eef4}td.t{text-align:left}h2{border-bottom:2px solid #0072b2;padding-bottom:3px}"
       ".figs{display:flex;flex-wrap:wrap}.figs figure{width:48%;margin:1%}.figs svg{width:100%;height:auto;border:1px "
       "solid #ddd}"
       ".legend{font-size:0.85em;color:#444}.caution{background:#fff4e0;border-left:4px solid #e69f00;padding:0.5em "
       "1em}"
       "ul.warn li{color:#8a4b00}code{background:#f2f2f2;padding:1px 3px}</style></head><body>\n";
  h << "<h1>stipple season report</h1>\n";
  std::size_t ok = 0;
  for (const auto& in : r.inputs) ok += in.status == "ok" ? 1u : 0u;
  h << "<p>stipple " << escape(run.version) << "; " << r.inputs.size() << " input file(s), " << ok
    << " analysed; analyses:" << (run.density ? " density" : "") << (run.randomness ? " randomness" : "")
    << (run.transect ? " transect" : "") << "; seed " << run.seed << ", " << run.simulations
    << " simulations; intervals at " << level_text(run.confidence) << "; plot densities per " << escape(run.unit)
    << (run.transect ? ", transect densities per " + escape(run.transect_unit) : std::string()) << "; batch CRS "
    << escape(run.crs.empty() ? std::string("none") : run.crs + (run.crs_name.empty() ? "" : " (" + run.crs_name + ")"))
    << ".</p>\n";
  write_inputs(page, r);
  write_methods(page, r);
  write_pooled(page, r);
  write_densities(page, r);
  write_randomness(page, r);
  write_transects(page, r);
  write_figures(page, r, figures);
  write_cautions_and_references(page, r);
  h << "</body></html>\n";
  return h.str();
}

std::vector<SeasonDensityRow> season_density_rows(const std::string& file, const DensityResult& result) {
  std::vector<SeasonDensityRow> rows;
  for (const auto& e : result.estimates) rows.push_back({file, e});
  return rows;
}

std::vector<SeasonRandomnessRow> season_randomness_rows(const std::string& file, const RandomnessResult& result) {
  std::vector<SeasonRandomnessRow> rows;
  for (const auto& g : result.results) {
    SeasonRandomnessRow row;
    row.file = file;
    row.plot = g.plot;
    row.species = g.species;
    row.n = g.n;
    if (g.quadrat) {
      row.quadrat_p = g.quadrat->p_value;
      row.quadrat_monte_carlo = g.quadrat->monte_carlo_p_value.has_value();
    }
    if (g.clark_evans) {
      row.clark_evans_ratio = g.clark_evans->ratio;
      const double p = g.clark_evans->monte_carlo_p_value.value_or(g.clark_evans->p_value);
      if (std::isfinite(p)) row.clark_evans_p = p;
    }
    if (const EnvelopeResult* l = g.l_envelope()) {
      row.mad_p = l->mad_p_value;
      row.dclf_p = l->dclf_p_value;
      row.erl_p = l->erl_p_value;
      row.rmax_m = g.rmax_m;
      row.departures = l->departures;
    }
    row.verdict = g.verdict;
    rows.push_back(std::move(row));
  }
  return rows;
}

std::vector<SeasonInteractionRow> season_interaction_rows(const std::string& file, const RandomnessResult& result) {
  std::vector<SeasonInteractionRow> rows;
  for (const auto& i : result.interactions)
    rows.push_back(
        {file, i.plot, i.species_a, i.species_b, i.n_a, i.n_b, i.p_value, i.direction, i.cross_l.departures});
  return rows;
}

std::vector<SeasonTransectRow> season_transect_rows(const std::string& file, const TransectResult& result) {
  std::vector<SeasonTransectRow> rows;
  const bool lines = result.kind == TransectKind::line;
  for (const auto& e : result.results) {
    SeasonTransectRow row;
    row.file = file;
    row.species = e.species;
    row.stratum = e.stratum;
    const DetectionModel& m = e.fit.function.model();
    row.model = std::string(key_function_name(m.key));
    if (m.adjustment != Adjustment::none && m.terms > 0)
      row.model += " + " + std::to_string(m.terms) + " " + std::string(adjustment_name(m.adjustment));
    row.n = e.n;
    row.lines = lines;
    row.effort = e.effort;
    row.effective_width_m =
        lines ? e.fit.effective_strip_width_m : std::sqrt(e.fit.effective_area_m2 / boost::math::double_constants::pi);
    row.detection_probability = e.fit.detection_probability;
    row.density = e.density;
    if (std::isfinite(e.density_cv)) row.density_cv = e.density_cv;
    row.density_ci = e.density_ci;
    row.bootstrap_ci = e.bootstrap_ci;
    row.gof_p = e.gof.chi_square_p;
    rows.push_back(std::move(row));
  }
  return rows;
}

}  // namespace stipple
