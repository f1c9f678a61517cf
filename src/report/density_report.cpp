#include "stipple/report/density_report.hpp"

#include <cmath>
#include <locale>
#include <sstream>

#include <nlohmann/json.hpp>

#include "json_text.hpp"
#include "report/input_summary.hpp"
#include "report/records.hpp"
#include "stipple/format.hpp"
#include "stipple/report/tables.hpp"
#include "stipple/version.hpp"

namespace stipple {

namespace {

using Json = nlohmann::ordered_json;
using report_detail::crs_area_note;
using report_detail::duplicate_locations_json;

Json interval_json(const Interval& ci) {
  return Json::array({ci.lower, ci.upper});
}

Json species_json(const std::optional<std::string>& species) {
  return species ? Json(*species) : Json(nullptr);
}

std::string species_text(const std::optional<std::string>& species) {
  return species ? *species : "(all)";
}

std::string number(double value) {
  return format_significant(value, 4);
}

std::string interval_text(const Interval& ci) {
  return "[" + number(ci.lower) + ", " + number(ci.upper) + "]";
}

Json ids_json(const std::vector<std::int64_t>& ids) {
  Json array = Json::array();
  for (const auto id : ids) array.push_back(id);
  return array;
}

Json chi_square_json(const ChiSquareTest& t, double p_value, bool monte_carlo) {
  Json j;
  j["statistic"] = t.statistic;
  j["df"] = t.df;
  j["p_value"] = p_value;
  j["p_value_method"] = monte_carlo ? "monte-carlo" : "chi-square";
  j["chi_square_p_value"] = t.p_upper;
  j["monte_carlo_p_value"] = t.monte_carlo_p_value ? Json(*t.monte_carlo_p_value) : Json(nullptr);
  j["simulations"] = t.simulations;
  j["min_expected"] = t.min_expected;
  return j;
}

std::string method_line(const DensityResult& result) {
  bool any = false;
  bool delta = false;
  for (const auto& e : result.estimates) {
    if (e.corrected.method != CorrectionMethod::none) any = true;
    if (e.corrected.method == CorrectionMethod::delta_log) delta = true;
  }
  if (!any) return "no detection correction (p = 1 for every species)";
  return delta ? "detection-corrected intervals: exact limits / p where se(p) = 0, otherwise "
                 "log-normal with var(log D) = 1/n + (se/p)^2 (delta method)"
               : "detection-corrected intervals: exact Poisson limits divided by p";
}

}  // namespace

namespace report_detail {

namespace {

// The detection-corrected intensity's fields of an estimate or pooled record.
void add_corrected(Json& j, const CorrectedIntensity& c) {
  j["detection_probability"] = c.detection_probability;
  j["corrected_intensity"] = c.intensity;
  j["corrected_ci"] = interval_json(c.ci);
  j["correction_method"] = std::string(correction_method_name(c.method));
}

}  // namespace

Json density_estimate_record(const DensityEstimate& e) {
  Json j;
  j["plot"] = e.plot;
  j["species"] = species_json(e.species);
  j["count"] = e.count;
  j["area"] = e.area_in_unit;
  j["area_m2"] = e.area_m2;
  j["intensity"] = e.intensity;
  j["ci"] = interval_json(e.ci);
  add_corrected(j, e.corrected);
  return j;
}

Json pooled_record(const PooledEstimate& p) {
  Json j;
  j["species"] = species_json(p.species);
  j["plots"] = p.plots;
  j["count"] = p.count;
  j["area"] = p.area_in_unit;
  j["intensity"] = p.intensity;
  j["ci"] = interval_json(p.ci);
  add_corrected(j, p.corrected);
  if (p.homogeneity) {
    const auto& h = *p.homogeneity;
    Json t = chi_square_json(h.chi_square, h.p_value, h.monte_carlo);
    t["dispersion_ratio"] = h.dispersion_ratio;
    t["significant"] = h.significant;
    t["between_plot_se"] = h.between_plot_se;
    t["between_plot_ci"] = interval_json(h.between_plot_ci);
    t["corrected_between_plot_se"] = h.corrected_between_plot_se;
    t["corrected_between_plot_ci"] = interval_json(h.corrected_between_plot_ci);
    t["corrected_between_plot_df"] =
        std::isfinite(h.corrected_between_plot_df) ? Json(h.corrected_between_plot_df) : Json(nullptr);
    t["between_plot_method"] =
        "ratio estimator (Cochran 1977), t interval with k - 1 df; corrected: plot counts "
        "divided by p, delta-method variance of p added, Satterthwaite df";
    j["homogeneity"] = std::move(t);
  } else {
    j["homogeneity"] = nullptr;
  }
  return j;
}

Json composition_record(const std::optional<CompositionTest>& test) {
  if (!test) return nullptr;
  Json t = chi_square_json(test->chi_square, test->p_value, test->monte_carlo);
  t["significant"] = test->significant;
  return t;
}

}  // namespace report_detail

std::vector<std::string> density_warnings(const DensityResult& result) {
  std::vector<std::string> warnings;
  const std::string unit(unit_name(result.unit));
  for (const auto& p : result.pooled) {
    if (!p.homogeneity || !p.homogeneity->significant) continue;
    const auto& h = *p.homogeneity;
    warnings.push_back((p.species ? "species '" + *p.species + "'" : std::string("all species together")) +
                       ": plots differ in intensity (homogeneity p = " + format_p_value(h.p_value) +
                       ", dispersion ratio " + format_fixed(h.dispersion_ratio, 2) +
                       "); the pooled Poisson interval assumes one shared intensity and is too narrow: use "
                       "the between-plot interval " +
                       (p.corrected.method == CorrectionMethod::none
                            ? interval_text(h.between_plot_ci) + " per " + unit
                            : interval_text(h.corrected_between_plot_ci) + " per " + unit +
                                  " (detection-corrected: ratio estimator of the plot counts divided by p, with "
                                  "the uncertainty of p added by the delta method)"));
  }
  if (result.composition && result.composition->significant) {
    warnings.push_back("species composition differs between plots (p = " + format_p_value(result.composition->p_value) +
                       "): species marks are not independent of plot, so each pooled species intensity "
                       "averages over plots with different species mixes; report plots separately too");
  }
  return warnings;
}

const std::vector<std::string>& density_cautions() {
  static const std::vector<std::string> cautions{
      "Intervals assume the sightings of each plot form a homogeneous Poisson pattern; "
      "clustered species make them too narrow (see the homogeneity test and the randomness "
      "analyses).",
      "Detection correction assumes every individual is detected independently with the "
      "given probability p, that p is constant within a plot, and that plot areas are "
      "correct; an error in p biases the density by the same factor.",
      "Densities that feed harvest quotas, culls or protection decisions need a survey design "
      "and analysis reviewed by a qualified biometrician under the local agency's protocol; "
      "this output does not replace that review.",
  };
  return cautions;
}

std::string density_json(const InputFacts& input, const Survey& plots, const DensityResult& result) {
  Json doc;
  doc["stipple_version"] = std::string(version());
  doc["command"] = "density";
  doc["crs"] = input.crs.code;
  doc["crs_name"] = input.crs.name;
  doc["crs_reason"] = input.crs.reason;
  doc["crs_max_area_error"] = input.crs.max_area_error;
  doc["unit"] = std::string(unit_name(result.unit));
  doc["confidence"] = result.confidence;
  doc["alpha"] = result.alpha;
  doc["seed"] = result.seed;
  doc["simulations"] = result.simulations;
  doc["sightings"] = input.sightings_label;
  doc["plots"] = input.plots_label.empty() ? Json(nullptr) : Json(input.plots_label);
  doc["window"] = input.model_based_window ? "convex-hull" : "plots";
  doc["interval_method"] = "exact Poisson (Garwood 1936)";

  Json estimates = Json::array();
  for (const auto& e : result.estimates) estimates.push_back(report_detail::density_estimate_record(e));
  doc["estimates"] = std::move(estimates);

  Json pooled = Json::array();
  for (const auto& p : result.pooled) pooled.push_back(report_detail::pooled_record(p));
  doc["pooled"] = std::move(pooled);

  doc["composition"] = report_detail::composition_record(result.composition);

  const Survey& s = plots;
  Json excluded;
  excluded["outside_plots"] = s.exclusions().outside_feature_ids.size();
  excluded["outside_plots_feature_ids"] = ids_json(s.exclusions().outside_feature_ids);
  excluded["unknown_plot"] = s.exclusions().unknown_plot_feature_ids.size();
  excluded["unknown_plot_feature_ids"] = ids_json(s.exclusions().unknown_plot_feature_ids);
  doc["excluded"] = std::move(excluded);
  Json assignment;
  assignment["by"] = s.exclusions().assigned_by_attribute ? "attribute" : "point-in-polygon";
  assignment["outside_own_plot_feature_ids"] = ids_json(s.exclusions().off_window_feature_ids);
  doc["assignment"] = std::move(assignment);
  doc["detection_method"] = method_line(result);
  doc["duplicate_locations"] = duplicate_locations_json(input);
  doc["notes"] = input.notes;
  Json warnings = Json::array();
  for (const auto& w : input.warnings) warnings.push_back(w);
  for (const auto& w : density_warnings(result)) warnings.push_back(w);
  doc["warnings"] = std::move(warnings);
  doc["cautions"] = density_cautions();
  return json_text(doc);
}

namespace {

std::string level_text(double confidence) {
  const double percent = 100.0 * confidence;
  return format_fixed(percent, percent == std::round(percent) ? 0 : 1) + "%";
}

void write_plot_section(std::ostream& out, const DensityResult& result, const std::string& unit,
                        const std::string& level) {
  out << "Per plot\n";
  TextTable plots({"plot", "species", "count", "area_" + unit, "intensity", level + " CI", "P(detect)", "corrected",
                   "corrected " + level + " CI"},
                  2);
  for (const auto& e : result.estimates) {
    plots.add_row({e.plot, species_text(e.species), std::to_string(e.count), number(e.area_in_unit),
                   number(e.intensity), interval_text(e.ci), format_significant(e.corrected.detection_probability, 3),
                   number(e.corrected.intensity), interval_text(e.corrected.ci)});
  }
  out << plots.render();
  out << "  intensity and corrected per " << unit
      << "; P(detect): detection probability used for the "
         "correction (corrected = intensity / P(detect))\n\n";
}

void write_pooled_section(std::ostream& out, const DensityResult& result, const std::string& unit,
                          const std::string& level) {
  out << "Pooled across plots (superposition: sum n / sum area)\n";
  TextTable pooled({"species", "plots", "count", "area_" + unit, "intensity", level + " CI", "corrected",
                    "corrected " + level + " CI", "homogeneity X2", "df", "homogeneity p", "dispersion"},
                   1);
  for (const auto& p : result.pooled) {
    std::vector<std::string> row{species_text(p.species),       std::to_string(p.plots),      std::to_string(p.count),
                                 number(p.area_in_unit),        number(p.intensity),          interval_text(p.ci),
                                 number(p.corrected.intensity), interval_text(p.corrected.ci)};
    if (p.homogeneity) {
      const auto& h = *p.homogeneity;
      row.push_back(format_fixed(h.chi_square.statistic, 2));
      row.push_back(format_fixed(h.chi_square.df, 0));
      row.push_back(format_p_value(h.p_value) + (h.monte_carlo ? " (MC)" : ""));
      row.push_back(format_fixed(h.dispersion_ratio, 2));
    } else {
      row.insert(row.end(), {"-", "-", "-", "-"});
    }
    pooled.add_row(std::move(row));
  }
  out << pooled.render();
  out << "  homogeneity: Pearson X2 of plot counts against area-proportional expectations; "
         "(MC) = Monte Carlo p-value, used when an expected count is below 5;\n"
         "  dispersion = X2 / df (about 1 when the plots share one intensity)\n\n";
}

void write_composition_line(std::ostream& out, const CompositionTest& c) {
  out << "Species composition across plots: X2 = " << format_fixed(c.chi_square.statistic, 2)
      << ", df = " << format_fixed(c.chi_square.df, 0) << ", p = " << format_p_value(c.p_value)
      << (c.monte_carlo ? " (Monte Carlo)" : "")
      << (c.significant ? " -> the species mix differs between plots" : " -> no evidence the mix differs") << "\n\n";
}

void write_notes_warnings_cautions(std::ostream& out, const InputFacts& input, const DensityResult& result) {
  if (!input.notes.empty()) {
    out << "\nNotes\n";
    for (const auto& n : input.notes) out << "  - " << n << "\n";
  }
  const std::vector<std::string> warnings = density_warnings(result);
  if (!input.warnings.empty() || !warnings.empty()) {
    out << "\nWarnings\n";
    for (const auto& w : input.warnings) out << "  - " << w << "\n";
    for (const auto& w : warnings) out << "  - " << w << "\n";
  }
  out << "\nCautions\n";
  for (const auto& c : density_cautions()) out << "  - " << c << "\n";
}

}  // namespace

std::string density_table(const InputFacts& input, const Survey& plots, const DensityResult& result) {
  std::ostringstream out;
  out.imbue(std::locale::classic());  // numbers never follow a host's locale
  const std::string unit(unit_name(result.unit));
  const std::string level = level_text(result.confidence);
  out << "stipple density\n";
  out << "  sightings: " << input.sightings_label << "\n";
  if (!input.plots_label.empty()) out << "  plots:     " << input.plots_label << "\n";
  out << "  CRS:       " << input.crs.code << " (" << input.crs.name << "), " << input.crs.reason << "; "
      << crs_area_note(input.crs) << "\n";
  out << "  intensity per " << unit << "; " << level << " exact Poisson (Garwood) intervals; " << method_line(result)
      << "\n\n";
  write_plot_section(out, result, unit, level);
  if (!result.pooled.empty()) write_pooled_section(out, result, unit, level);
  if (result.composition) write_composition_line(out, *result.composition);
  const Survey& s = plots;
  out << "Sightings: " << s.sighting_count() << " analysed, "
      << s.exclusions().outside_feature_ids.size() + s.exclusions().unknown_plot_feature_ids.size() << " excluded; "
      << "assigned by " << (s.exclusions().assigned_by_attribute ? "plot attribute" : "point-in-polygon") << "\n";
  write_notes_warnings_cautions(out, input, result);
  return out.str();
}

std::string density_csv(const DensityResult& result) {
  return csv_text(density_rows(result));
}

}  // namespace stipple
