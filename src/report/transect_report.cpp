#include "stipple/report/transect_report.hpp"

#include <algorithm>
#include <cmath>
#include <locale>
#include <numeric>
#include <set>
#include <sstream>

#include <nlohmann/json.hpp>

#include <boost/math/constants/constants.hpp>

#include "json_text.hpp"
#include "report/records.hpp"
#include "stipple/format.hpp"
#include "stipple/report/figure.hpp"
#include "stipple/report/tables.hpp"
#include "stipple/version.hpp"

namespace stipple {

namespace {

using Json = nlohmann::ordered_json;
constexpr double pi = boost::math::double_constants::pi;

Json num(double v) {
  return std::isfinite(v) ? Json(v) : Json(nullptr);
}
Json opt(const std::optional<std::string>& s) {
  return s ? Json(*s) : Json(nullptr);
}
Json interval(const Interval& i) {
  return Json::array({num(i.lower), num(i.upper)});
}

std::string model_text(const DetectionModel& m) {
  std::string s(key_function_name(m.key));
  if (m.adjustment != Adjustment::none && m.terms > 0)
    s += " + " + std::to_string(m.terms) + " " + std::string(adjustment_name(m.adjustment));
  return s;
}

Json adjustments_json(const DetectionModel& m) {
  Json list = Json::array();
  const std::size_t offset = m.key == KeyFunction::uniform ? 0 : 1;
  for (std::size_t j = 1; j <= m.terms && m.adjustment != Adjustment::none; ++j)
    list.push_back(std::string(adjustment_name(m.adjustment)) + " " + std::to_string(j + offset));
  return list;
}

std::string label(const std::optional<std::string>& s, const char* all) {
  return s ? *s : all;
}

}  // namespace

namespace report_detail {

Json transect_estimate_record(const TransectResult& result, const TransectEstimate& e) {
  Json j;
  j["species"] = opt(e.species);
  j["stratum"] = opt(e.stratum);
  const DetectionModel& m = e.fit.function.model();
  j["model"] = std::string(key_function_name(m.key));
  j["adjustments"] = adjustments_json(m);
  Json parameters;
  const auto names = parameter_names(m);
  for (std::size_t i = 0; i < names.size() && i < e.fit.function.parameters().size(); ++i)
    parameters[names[i]] = e.fit.function.parameters()[i];
  j["parameters"] = parameters.is_null() ? Json::object() : parameters;
  j["aic"] = e.fit.aic;
  j["aicc"] = num(e.fit.aicc);
  j["n"] = e.n;
  j["effort"] = e.effort;
  j["effort_unit"] = result.kind == TransectKind::line ? "km" : "visits";
  j["truncation"] = num(result.truncation_m);
  j["esw"] = result.kind == TransectKind::line ? num(e.fit.effective_strip_width_m) : Json(nullptr);
  j["effective_area"] = result.kind == TransectKind::point ? num(e.fit.effective_area_m2) : Json(nullptr);
  j["effective_radius"] =
      result.kind == TransectKind::point ? num(std::sqrt(e.fit.effective_area_m2 / pi)) : Json(nullptr);
  j["detection_probability"] = num(e.fit.detection_probability);
  j["detection_probability_cv"] = num(e.fit.detection_probability_cv);
  j["encounter_rate"] = e.encounter.rate;
  j["encounter_rate_cv"] = num(e.encounter.cv);
  j["mean_cluster_size"] = e.mean_size;
  j["mean_cluster_size_cv"] = e.mean_size_cv;
  j["density"] = e.density;
  j["density_cv"] = num(e.density_cv);
  j["density_df"] = num(e.df);
  j["density_ci"] = interval(e.density_ci);
  j["abundance"] = e.abundance ? num(*e.abundance) : Json(nullptr);
  j["abundance_ci"] = e.abundance_ci ? interval(*e.abundance_ci) : Json(nullptr);
  j["bootstrap_ci"] = e.bootstrap_ci ? interval(*e.bootstrap_ci) : Json(nullptr);
  j["bootstrap_cv"] = e.bootstrap_cv ? num(*e.bootstrap_cv) : Json(nullptr);
  j["gof"] = {{"chi_square", e.gof.chi_square},
              {"chi_square_df", e.gof.chi_square_df},
              {"chi_square_p", e.gof.chi_square_p ? num(*e.gof.chi_square_p) : Json(nullptr)},
              {"ks_p", e.gof.ks_p ? num(*e.gof.ks_p) : Json(nullptr)},
              {"cvm_p", e.gof.cvm_p ? num(*e.gof.cvm_p) : Json(nullptr)}};
  j["dispersion"] = num(e.dispersion);
  j["effort_for_target_cv"] = e.effort_for_target ? num(*e.effort_for_target) : Json(nullptr);
  return j;
}

}  // namespace report_detail

const std::vector<std::string>& transect_cautions() {
  // Each caution is one sentence, its literal split over lines.
  // NOLINTBEGIN(bugprone-suspicious-missing-comma)
  static const std::vector<std::string> cautions{
      "Distance sampling assumes certain detection on the line or point (g(0) = 1); animals "
      "missed there bias density low by the share missed.",
      "It assumes animals do not move in response to the observer before detection: "
      "attraction biases density high, avoidance low.",
      "It assumes distances (and angles) are measured accurately: rounding to favoured values "
      "distorts the fit (bin the data), and systematic under-estimation biases density high.",
      "It assumes detections are independent events; clusters must be recorded as clusters, "
      "with their size. Transects must be placed independently of the animals' distribution.",
      "AIC model selection adds uncertainty the analytic interval does not carry; the "
      "bootstrap interval refits the selected model only.",
      "Estimates that feed management or harvest decisions need a survey design reviewed "
      "under the local agency's protocol and qualified review of the analysis.",
  };
  // NOLINTEND(bugprone-suspicious-missing-comma)
  return cautions;
}

std::string transect_json(const InputFacts& input, const TransectResult& result) {
  Json doc;
  doc["stipple_version"] = std::string(version());
  doc["command"] = "transect";
  doc["unit"] = std::string(unit_name(result.unit));
  doc["crs"] = input.crs.code;
  doc["crs_max_area_error"] = input.study_area_m2 ? Json(input.crs.max_area_error) : Json(nullptr);
  doc["survey"] = result.kind == TransectKind::line ? "line" : "point";
  doc["confidence"] = result.confidence;
  doc["truncation"] = num(result.truncation_m);
  doc["truncated"] = result.truncated;
  doc["sightings"] = input.sightings_label;
  doc["transects"] = input.transects_label;
  Json results = Json::array();
  for (const auto& e : result.results) results.push_back(report_detail::transect_estimate_record(result, e));
  doc["results"] = std::move(results);
  Json compared = Json::array();
  for (const auto& c : result.models_compared)
    compared.push_back({{"species", opt(c.species)},
                        {"model", std::string(key_function_name(c.model.key))},
                        {"adjustments", adjustments_json(c.model)},
                        {"aic", c.aic},
                        {"aicc", num(c.aicc)},
                        {"delta_aic", c.delta_aic}});
  doc["models_compared"] = std::move(compared);
  Json notes = Json::array();
  for (const auto& n : input.notes) notes.push_back(n);
  for (const auto& n : result.notes) notes.push_back(n);
  doc["notes"] = std::move(notes);
  doc["warnings"] = input.warnings;
  doc["cautions"] = transect_cautions();
  return json_text(doc);
}

std::string transect_table(const InputFacts& input, const TransectSurvey& survey, const TransectResult& result) {
  std::ostringstream out;
  out.imbue(std::locale::classic());  // numbers never follow a host's locale
  const std::string unit(unit_name(result.unit));
  const bool lines = result.kind == TransectKind::line;
  out << "stipple transect (" << (lines ? "line" : "point") << " transects)\n";
  out << "  sightings: " << input.sightings_label << "\n";
  out << "  transects: " << input.transects_label << " (" << survey.transects().size() << ")\n";
  out << "  CRS:       " << input.crs.code << " (" << input.crs.name << "), " << input.crs.reason << "\n";
  out << "  truncation " << format_significant(result.truncation_m, 4) << " m (" << result.truncated
      << " detections beyond it); density per " << unit << "; " << format_general(100.0 * result.confidence)
      << "% log-normal intervals, Satterthwaite df\n\n";
  const double percent = 100.0 * result.confidence;
  const std::string level = format_fixed(percent, percent == std::round(percent) ? 0 : 1) + "%";
  bool bootstrapped = false;
  for (const auto& e : result.results) bootstrapped = bootstrapped || e.bootstrap_ci.has_value();
  std::vector<std::string> columns{"species",
                                   "stratum",
                                   "model",
                                   "n",
                                   lines ? "effort_km" : "visits",
                                   lines ? "n/L" : "n/visit",
                                   lines ? "ESW_m" : "rho_m",
                                   "P_a",
                                   "E(s)",
                                   "density",
                                   "CV",
                                   level + " interval"};
  if (bootstrapped) columns.push_back(level + " bootstrap");
  columns.push_back("abundance");
  TextTable table(columns, 3);
  const auto interval_text = [](const Interval& ci) {
    return "[" + format_significant(ci.lower, 4) + ", " + format_significant(ci.upper, 4) + "]";
  };
  for (const auto& e : result.results) {
    const double width = lines ? e.fit.effective_strip_width_m : std::sqrt(e.fit.effective_area_m2 / pi);
    std::vector<std::string> row{label(e.species, "(all)"),
                                 label(e.stratum, "(all)"),
                                 model_text(e.fit.function.model()),
                                 std::to_string(e.n),
                                 format_significant(e.effort, 4),
                                 format_significant(e.encounter.rate, 4),
                                 format_significant(width, 4),
                                 format_fixed(e.fit.detection_probability, 3),
                                 format_significant(e.mean_size, 3),
                                 format_significant(e.density, 4),
                                 std::isfinite(e.density_cv) ? format_fixed(e.density_cv, 3) : "-",
                                 interval_text(e.density_ci)};
    if (bootstrapped) row.push_back(e.bootstrap_ci ? interval_text(*e.bootstrap_ci) : "-");
    row.push_back(e.abundance ? format_significant(*e.abundance, 4) : "-");
    table.add_row(std::move(row));
  }
  out << table.render();
  out << "  "
      << (lines ? "n/L: detections per km; ESW_m: effective strip half-width (m)"
                : "n/visit: detections per visit; rho_m: effective detection radius (m)")
      << "; P_a: probability of detecting an animal within the truncation distance; E(s): mean cluster size;\n"
         "  density per "
      << unit << "; CV: its coefficient of variation (delta method); interval: " << level << " log-normal"
      << (bootstrapped ? "; bootstrap: " + level + " percentile interval over resampled transects" : std::string())
      << "\n\n";
  out << "Goodness of fit and model selection\n";
  TextTable gof({"species", "model", "AIC", "dAIC", "chi2 p", "KS p", "CvM p"}, 2);
  std::set<std::string> shown;
  for (const auto& e : result.results) {
    const std::string key = label(e.species, "(all)");
    if (e.stratum || shown.count(key)) continue;
    shown.insert(key);
    const auto p = [](const std::optional<double>& v) { return v ? format_p_value(*v) : std::string("-"); };
    gof.add_row({key, model_text(e.fit.function.model()), format_fixed(e.fit.aic, 2), "0", p(e.gof.chi_square_p),
                 p(e.gof.ks_p), p(e.gof.cvm_p)});
    for (const auto& c : result.models_compared) {
      if (label(c.species, "(all)") != key || c.delta_aic == 0.0) continue;
      gof.add_row({"", model_text(c.model), format_fixed(c.aic, 2), format_fixed(c.delta_aic, 2), "", "", ""});
    }
  }
  out << gof.render();
  bool planning = false;
  for (const auto& e : result.results) {
    if (!e.effort_for_target || e.stratum) continue;
    if (!planning) out << "\nEffort for the target CV (b estimated from this survey; b = 3 is the rule of thumb)\n";
    planning = true;
    out << "  " << label(e.species, "(all)") << ": b = " << format_fixed(e.dispersion, 2) << ", "
        << format_significant(*e.effort_for_target, 4) << (lines ? " km" : " visits") << "\n";
  }
  if (!input.warnings.empty()) {
    out << "\nWarnings:\n";
    for (const auto& w : input.warnings) out << "  - " << w << "\n";
  }
  if (!input.notes.empty() || !result.notes.empty()) {
    out << "\nNotes\n";
    for (const auto& n : input.notes) out << "  - " << n << "\n";
    for (const auto& n : result.notes) out << "  - " << n << "\n";
  }
  out << "\nCautions\n";
  for (const auto& c : transect_cautions()) out << "  - " << c << "\n";
  return out.str();
}

std::string effort_json(double pilot_detections, double pilot_effort, double target_cv, double dispersion,
                        double effort_needed) {
  Json doc;
  doc["stipple_version"] = std::string(version());
  doc["command"] = "effort";
  doc["pilot_detections"] = pilot_detections;
  doc["pilot_effort"] = pilot_effort;
  doc["target_cv"] = target_cv;
  doc["dispersion"] = dispersion;
  doc["effort_needed"] = effort_needed;
  doc["detections_expected"] = effort_needed / pilot_effort * pilot_detections;
  doc["method"] = "L = (b / CV^2) (L0 / n0) (Buckland et al. 2001)";
  return json_text(doc);
}

std::string transect_csv(const TransectResult& result) {
  return csv_text(transect_rows(result));
}

std::vector<FigureFile> transect_figures(const TransectSurvey& survey, const TransectResult& result) {
  std::vector<FigureFile> files;
  std::set<std::string> done;
  FileNamer namer;
  std::string manifest = "file,species,figure\n";
  const bool lines = result.kind == TransectKind::line;
  for (const auto& e : result.results) {
    if (e.stratum) continue;
    const std::string name = e.species.value_or("all-species");
    if (!done.insert(name).second) continue;
    const DetectionFit& fit = e.fit;
    const GoodnessOfFit& gof = e.gof;
    const double n = std::accumulate(gof.observed.begin(), gof.observed.end(), 0.0);
    if (n <= 0.0) continue;
    const double effective = lines ? fit.effective_strip_width_m : fit.effective_area_m2;
    ChartSeries bars{ChartSeries::Kind::bars, {}, {}, {}, 3, "detections, scaled to g(x)"};
    for (std::size_t k = 0; k + 1 < gof.bin_edges.size(); ++k) {
      const double a = gof.bin_edges[k];
      const double b = gof.bin_edges[k + 1];
      const double density = gof.observed[k] / (n * (b - a));
      bars.x.push_back(a);
      bars.y_upper.push_back(b);
      bars.y.push_back(lines ? density * effective : density * effective / (2.0 * pi * std::max(1e-9, 0.5 * (a + b))));
    }
    ChartSeries curve{ChartSeries::Kind::line, {}, {}, {}, 0, "fitted g(x): " + model_text(fit.function.model())};
    const double top = gof.bin_edges.back();
    for (int k = 0; k <= 200; ++k) {
      const double x = top * k / 200.0;
      curve.x.push_back(x);
      curve.y.push_back(fit.function.g(x));
    }
    Chart detection;
    detection.title = "Detection function - " + name;
    detection.x_label = lines ? "perpendicular distance (m)" : "radial distance (m)";
    detection.y_label = "detection probability g(x)";
    detection.caption = "n = " + std::to_string(fit.n) + "; " + (lines ? "ESW " : "effective area ") +
                        format_significant(effective, 4) + (lines ? " m" : " m2") +
                        "; P_a = " + format_fixed(fit.detection_probability, 3) +
                        (gof.chi_square_p ? "; chi-square p = " + format_p_value(*gof.chi_square_p) : std::string());
    detection.series = {bars, curve};
    const std::string stem = namer.stem("detection", {name});
    manifest += csv_field(stem + ".svg") + "," + csv_field(name) + ",detection function\n" + csv_field(stem + ".png") +
                "," + csv_field(name) + ",detection function\n";
    const std::string shows = "detection function of " + name;
    files.push_back({stem + ".svg", chart_svg(detection), shows});
    files.push_back({stem + ".png", chart_png(detection), shows});

    // Q-Q plot of exact distances within the truncation distance.
    std::vector<double> x;
    for (const auto& o : survey.observations())
      if ((!e.species || o.species == *e.species) && o.distance_m <= result.truncation_m) x.push_back(o.distance_m);
    if (x.size() < 3) continue;
    std::sort(x.begin(), x.end());
    ChartSeries points{ChartSeries::Kind::points, {}, {}, {}, 0, "detections"};
    for (std::size_t i = 0; i < x.size(); ++i) {
      points.x.push_back(fitted_cdf(fit, result.kind, x[i]));
      points.y.push_back((static_cast<double>(i) + 0.5) / static_cast<double>(x.size()));
    }
    Chart qq;
    qq.title = "Q-Q plot - " + name;
    qq.x_label = "fitted cumulative distribution";
    qq.y_label = "empirical cumulative distribution";
    qq.caption = gof.ks_p ? "Kolmogorov-Smirnov p = " + format_p_value(*gof.ks_p) +
                                ", Cramer-von Mises p = " + format_p_value(gof.cvm_p.value_or(1.0))
                          : std::string();
    qq.series = {ChartSeries{ChartSeries::Kind::dashed_line, {0.0, 1.0}, {0.0, 1.0}, {}, 1, "1:1"}, points};
    const std::string qq_stem = namer.stem("qq", {name});
    files.push_back({qq_stem + ".svg", chart_svg(qq), "Q-Q plot of the distances of " + name});
    files.push_back({qq_stem + ".png", chart_png(qq), "Q-Q plot of the distances of " + name});
    manifest += csv_field(qq_stem + ".svg") + "," + csv_field(name) + ",Q-Q plot\n" + csv_field(qq_stem + ".png") +
                "," + csv_field(name) + ",Q-Q plot\n";
  }
  // Which file shows which species: names are shortened or hashed when needed.
  if (!files.empty()) files.push_back({"figures.csv", manifest, ""});
  return files;
}

}  // namespace stipple
