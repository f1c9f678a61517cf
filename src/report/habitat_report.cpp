#include "stipple/report/habitat_report.hpp"

#include <cmath>
#include <locale>
#include <sstream>

#include <nlohmann/json.hpp>

#include "json_text.hpp"
#include "report/input_summary.hpp"
#include "stipple/format.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/randomness/envelope.hpp"
#include "stipple/report/figure.hpp"
#include "stipple/report/tables.hpp"
#include "stipple/version.hpp"

namespace stipple {

namespace {

using Json = nlohmann::ordered_json;

Json number_or_null(double v) {
  return std::isfinite(v) ? Json(v) : Json(nullptr);
}

Json species_json(const Survey& survey, const std::optional<std::size_t>& s) {
  return s ? Json(survey.species()[*s]) : Json(nullptr);
}

std::string species_text(const Survey& survey, const std::optional<std::size_t>& s) {
  return s ? survey.species()[*s] : "(all)";
}

const char* slopes_name(SlopeMode m) {
  return m == SlopeMode::shared ? "shared" : "separate";
}

double unit_m2(const std::string& unit) {
  return square_metres_per(parse_area_unit(unit));
}

Json coefficient_json(const Survey& survey, const HabitatCoefficient& c) {
  Json j;
  j["term"] = c.term;
  if (c.species) j["species"] = survey.species()[*c.species];
  j["estimate"] = c.estimate;
  j["se"] = c.se;
  j["ci"] = {c.ci_low, c.ci_high};
  j["z"] = number_or_null(c.z);
  j["p_value"] = c.p_value;
  if (!c.covariate.empty()) {
    j["covariate"] = c.covariate;
    j["rate_ratio"] = number_or_null(c.rate_ratio);
    j["rate_ratio_ci"] = {number_or_null(std::exp(c.ci_low)), number_or_null(std::exp(c.ci_high))};
    j["bias"] = c.bias;
    if (c.bias_reference) j["bias_reference"] = *c.bias_reference;
  }
  if (c.detection_probability) j["detection_probability"] = *c.detection_probability;
  return j;
}

}  // namespace

const std::vector<std::string>& habitat_cautions() {
  static const std::vector<std::string> cautions{
      "A habitat model is correlative: a covariate that predicts where a species was seen need not be what "
      "it responds to.",
      "Covariates measured at another scale or date than the survey can misplace the response; the value at a "
      "sighting is that of the raster cell holding it.",
      "The Wald intervals and p-values assume a Poisson process given the covariates; clustering that habitat "
      "does not explain makes them too narrow (check with the inhomogeneous K and cluster fits).",
      "Predicted densities and abundances that feed quotas or protection decisions need qualified review "
      "under the local agency's protocol.",
  };
  return cautions;
}

std::string habitat_json(const InputFacts& input, const Survey& survey, const HabitatRunFacts& run,
                         const HabitatResult& result) {
  Json doc;
  doc["stipple_version"] = std::string(version());
  doc["command"] = "habitat";
  doc["crs"] = input.crs.code;
  doc["unit"] = run.unit;
  doc["confidence"] = run.confidence;
  doc["slopes"] = slopes_name(run.slopes);
  doc["sightings"] = input.sightings_label;
  doc["plots"] = input.plots_label.empty() ? Json(nullptr) : Json(input.plots_label);
  const double per_unit = unit_m2(run.unit);
  doc["window_area"] = result.window_area_m2 / per_unit;
  doc["dropped_area"] = result.dropped_area_m2 / per_unit;
  doc["pieces"] = result.pieces;
  Json covariates = Json::array();
  for (const auto& c : run.covariates) {
    Json j{{"name", c.name}, {"source", c.source}, {"kind", c.factor ? "factor" : "numeric"}, {"bias", c.bias}};
    for (const auto& f : result.factors)
      if (f.covariate == c.name) {
        j["reference_class"] = f.reference;
        j["classes"] = f.classes;
      }
    covariates.push_back(std::move(j));
  }
  doc["covariates"] = std::move(covariates);
  Json models = Json::array();
  for (const auto& m : result.models) {
    Json j;
    j["species"] = species_json(survey, m.species);
    j["n"] = m.n;
    j["log_likelihood"] = m.log_likelihood;
    j["aic"] = m.aic;
    Json coefficients = Json::array();
    for (const auto& c : m.coefficients) coefficients.push_back(coefficient_json(survey, c));
    j["coefficients"] = std::move(coefficients);
    Json tests = Json::array();
    for (const auto& t : m.term_tests)
      tests.push_back({{"term", t.term}, {"statistic", t.statistic}, {"df", t.df}, {"p_value", t.p_value}});
    j["term_tests"] = std::move(tests);
    j["iterations"] = m.iterations;
    j["detection_probability"] = m.detection_probability;
    models.push_back(std::move(j));
  }
  doc["models"] = std::move(models);
  if (result.slope_test) {
    const SlopeTest& t = *result.slope_test;
    doc["slope_test"] = {{"statistic", t.statistic},
                         {"df", t.df},
                         {"p_value", t.p_value},
                         {"shared_log_likelihood", t.shared_log_likelihood},
                         {"separate_log_likelihood", t.separate_log_likelihood}};
  } else {
    doc["slope_test"] = nullptr;
  }
  if (result.quadrature) {
    const QuadratureCheck& q = *result.quadrature;
    Json changes = Json::array();
    for (const auto& c : q.changes)
      changes.push_back({{"species", species_json(survey, c.species)},
                         {"term", c.term},
                         {"estimate", c.estimate},
                         {"halved_spacing_estimate", c.halved_estimate},
                         {"change_in_se", (c.halved_estimate - c.estimate) / c.se}});
    doc["quadrature"] = {{"covariates", q.covariates},
                         {"method", "midpoint: square cells, each at the distance of its centre"},
                         {"spacing_m", q.spacing_m},
                         {"halved_spacing_m", 0.5 * q.spacing_m},
                         {"largest_change_in_se", q.largest_change_in_se},
                         {"changes", std::move(changes)}};
  } else {
    doc["quadrature"] = {{"method", "exact: raster cells clipped to the windows"}};
  }
  Json tests = Json::array();
  for (const auto& t : result.covariate_tests)
    tests.push_back({{"species", species_json(survey, t.species)},
                     {"covariate", t.covariate},
                     {"z1", t.z1.statistic},
                     {"z1_p_value", t.z1.p_two_sided},
                     {"ks_statistic", t.ks.d},
                     {"ks_p_value", t.ks.p}});
  doc["covariate_tests"] = std::move(tests);
  Json clustering = Json::array();
  const auto test_json = [](const EnvelopeResult& e) {
    Json departures = Json::array();
    for (const auto& d : e.departures)
      departures.push_back(
          {{"from", d.from_m}, {"to", d.to_m}, {"direction", d.direction == "above" ? "clustered" : "regular"}});
    return Json{{"simulations", e.simulations},
                {"dclf_p_value", e.dclf_p_value},
                {"mad_p_value", e.mad_p_value},
                {"erl_p_value", e.erl_p_value},
                {"departures", std::move(departures)}};
  };
  const auto fit_json = [&](const ClusterFit& f, const std::optional<EnvelopeResult>& test, const char* scale) {
    Json j{{"kappa", f.kappa_per_m2 * per_unit}, {scale, f.scale_m},
           {"mean_offspring", f.mean_offspring}, {"contrast", f.contrast},
           {"converged", f.converged},           {"poisson_limit", f.poisson_limit}};
    j["fit_test"] = test ? test_json(*test) : Json(nullptr);
    return j;
  };
  for (const auto& c : run.clustering) {
    Json j{{"species", species_json(survey, c.species)},
           {"n", c.n},
           {"rmax_m", c.rmax_m},
           {"verdict", c.verdict},
           {"inhomogeneous_l_test", test_json(c.l_envelope)}};
    j["thomas"] = c.thomas ? fit_json(*c.thomas, c.thomas_test, "sigma_m") : Json(nullptr);
    j["matern"] = c.matern ? fit_json(*c.matern, c.matern_test, "radius_m") : Json(nullptr);
    clustering.push_back(std::move(j));
  }
  doc["simulations"] = run.simulations;
  doc["seed"] = run.seed;
  doc["clustering"] = std::move(clustering);
  Json abundance = Json::array();
  for (const auto& a : run.abundance)
    abundance.push_back({{"unit", a.unit},
                         {"species", species_json(survey, a.species)},
                         {"area", a.area_m2 / per_unit},
                         {"expected", a.expected},
                         {"se", a.se},
                         {"ci", {a.ci_low, a.ci_high}},
                         {"method", a.method},
                         {"extrapolated_share", a.extrapolated_share}});
  doc["abundance"] = std::move(abundance);
  doc["surfaces"] = run.surfaces;
  Json dropped = Json::array();
  for (const auto& d : result.dropped_sightings)
    dropped.push_back({{"feature_id", d.feature_id}, {"plot", d.plot}, {"covariate", d.covariate}});
  doc["dropped_sightings"] = std::move(dropped);
  std::vector<std::string> notes = input.notes;
  notes.insert(notes.end(), result.notes.begin(), result.notes.end());
  std::vector<std::string> warnings = input.warnings;
  warnings.insert(warnings.end(), result.warnings.begin(), result.warnings.end());
  doc["notes"] = notes;
  doc["warnings"] = warnings;
  doc["cautions"] = habitat_cautions();
  return json_text(doc);
}

std::string habitat_table(const InputFacts& input, const Survey& survey, const HabitatRunFacts& run,
                          const HabitatResult& result) {
  std::ostringstream out;
  out.imbue(std::locale::classic());
  const double per_unit = unit_m2(run.unit);
  out << "stipple habitat\n";
  out << "  sightings: " << input.sightings_label << "\n";
  if (!input.plots_label.empty()) out << "  plots:     " << input.plots_label << "\n";
  out << "  CRS:       " << input.crs.code << " (" << input.crs.name << "); " << report_detail::crs_area_note(input.crs)
      << "\n";
  for (const auto& c : run.covariates)
    out << "  "
        << (c.bias     ? "bias:      "
            : c.factor ? "factor:    "
                       : "covariate: ")
        << c.name << " = " << c.source << "\n";
  out << "  model:     log intensity per " << run.unit << " = intercept + slopes x covariates; Poisson maximum "
      << "likelihood over " << result.pieces << " window pieces ("
      << format_significant(result.window_area_m2 / per_unit, 4) << " " << run.unit << "); slopes "
      << slopes_name(run.slopes) << "; " << format_general(100.0 * run.confidence) << "% Wald intervals\n\n";
  for (const auto& m : result.models) {
    out << (m.species                         ? "Species " + survey.species()[*m.species]
            : run.slopes == SlopeMode::shared ? std::string("All species, shared slopes")
                                              : std::string("All species together"))
        << " (n = " << m.n << ", log-likelihood " << format_fixed(m.log_likelihood, 2) << ", AIC "
        << format_fixed(m.aic, 2) << ")\n";
    TextTable table({"term", "estimate", "se", "ci_low", "ci_high", "z", "p", "rate ratio"}, 1);
    for (const auto& c : m.coefficients) {
      std::string term = c.term;
      if (c.species && !m.species) term += " " + survey.species()[*c.species];
      if (c.bias) term += " [bias]";
      table.add_row({term, format_significant(c.estimate, 4), format_significant(c.se, 3),
                     format_significant(c.ci_low, 4), format_significant(c.ci_high, 4), format_fixed(c.z, 2),
                     format_p_value(c.p_value), c.covariate.empty() ? "-" : format_significant(c.rate_ratio, 4)});
    }
    out << table.render();
    for (const auto& t : m.term_tests)
      out << "  drop " << t.term << ": likelihood ratio " << format_fixed(t.statistic, 2) << " on " << t.df << " df, p "
          << format_p_value(t.p_value) << "\n";
    for (const auto& c : m.coefficients)
      if (c.detection_probability && *c.detection_probability < 1.0)
        out << "  " << c.term << (c.species && !m.species ? " " + survey.species()[*c.species] : std::string())
            << " is corrected for detection: intensity divided by p = " << format_general(*c.detection_probability)
            << "\n";
    for (const auto& c : m.coefficients)
      if (c.bias_reference)
        out << "  " << c.term << " is observer effort: predictions set it to " << format_general(*c.bias_reference)
            << "\n";
    out << "\n";
  }
  out << "  intercept: log intensity per " << run.unit
      << " where every covariate is 0 (a factor at its reference class); rate ratio: exp(slope), the change in "
         "intensity per unit of the covariate\n\n";
  if (result.slope_test) {
    const SlopeTest& t = *result.slope_test;
    out << "Do the species respond to habitat the same way? Separate against shared slopes: likelihood ratio "
        << format_fixed(t.statistic, 2) << " on " << t.df << " df, p " << format_p_value(t.p_value) << "\n\n";
  }
  if (!result.covariate_tests.empty()) {
    out << "Covariates without a model (Berman 1986: Z1 and Kolmogorov-Smirnov against the window under CSR)\n";
    TextTable table({"species", "covariate", "Z1", "Z1 p", "KS D", "KS p"}, 2);
    for (const auto& t : result.covariate_tests)
      table.add_row({species_text(survey, t.species), t.covariate, format_fixed(t.z1.statistic, 2),
                     format_p_value(t.z1.p_two_sided), format_fixed(t.ks.d, 3), format_p_value(t.ks.p)});
    out << table.render();
    out << "  Z1 > 0: sightings at higher values than chance; KS p is conservative for a raster's tied values\n\n";
  }
  if (!run.clustering.empty()) {
    out << "What habitat leaves unexplained: inhomogeneous L with the fitted intensity against " << run.simulations
        << " simulations of the fitted model (seed " << run.seed << ")\n";
    TextTable table({"species", "n", "rmax_m", "DCLF p", "verdict", "Thomas kappa/" + run.unit, "sigma_m", "offspring",
                     "fit p", "Matern kappa/" + run.unit, "R_m", "fit p"},
                    1);
    const auto fit_cells = [&](const std::optional<ClusterFit>& f, const std::optional<EnvelopeResult>& test,
                               std::vector<std::string>& row) {
      if (!f || f->poisson_limit) {
        row.insert(row.end(), {"-", "-", "-", "-"});
        return;
      }
      row.push_back(format_significant(f->kappa_per_m2 * per_unit, 3));
      row.push_back(format_significant(f->scale_m, 3));
      row.push_back(format_significant(f->mean_offspring, 3));
      row.push_back(test ? format_p_value(test->dclf_p_value) : "-");
    };
    for (const auto& c : run.clustering) {
      std::vector<std::string> row{species_text(survey, c.species), std::to_string(c.n),
                                   format_significant(c.rmax_m, 3), format_p_value(c.l_envelope.dclf_p_value),
                                   c.verdict};
      fit_cells(c.thomas, c.thomas_test, row);
      std::vector<std::string> matern;
      fit_cells(c.matern, c.matern_test, matern);
      row.push_back(matern[0]);
      row.push_back(matern[1]);
      row.push_back(matern[3]);
      table.add_row(row);
    }
    out << table.render();
    out << "  Cluster fits by minimum contrast on the inhomogeneous K (Diggle 1983; Waagepetersen 2007); fit p: DCLF "
           "test of L against simulations of the fitted cluster process (a small p: the model does not fit); kappa: "
           "parent intensity; offspring: mean per parent at the mean intensity\n\n";
  }
  if (!run.abundance.empty()) {
    out << "Expected numbers in the management units (bias terms at their reference; interval for the expected "
           "number, not for a realised count: "
        << run.abundance.front().method << ")\n";
    TextTable table({"unit", "species", "area_" + run.unit, "expected", "se", "ci_low", "ci_high", "extrapolated"}, 2);
    for (const auto& a : run.abundance)
      table.add_row({a.unit, species_text(survey, a.species), format_significant(a.area_m2 / per_unit, 4),
                     format_significant(a.expected, 4), format_significant(a.se, 3), format_significant(a.ci_low, 4),
                     format_significant(a.ci_high, 4),
                     a.extrapolated_share > 0.0 ? format_significant(100.0 * a.extrapolated_share, 3) + "%" : "-"});
    out << table.render();
    out << "  extrapolated: share of the unit whose covariates lie outside their range over the surveyed plots\n\n";
  }
  if (!run.surfaces.empty()) {
    out << "Intensity surfaces (band 1: intensity per " << run.unit << ", band 2: its standard error)\n";
    for (const auto& f : run.surfaces) out << "  " << f << "\n";
    out << "\n";
  }
  std::vector<std::string> notes = input.notes;
  notes.insert(notes.end(), result.notes.begin(), result.notes.end());
  if (!notes.empty()) {
    out << "Notes\n";
    for (const auto& n : notes) out << "  - " << n << "\n";
  }
  std::vector<std::string> warnings = input.warnings;
  warnings.insert(warnings.end(), result.warnings.begin(), result.warnings.end());
  if (!warnings.empty()) {
    out << "\nWarnings\n";
    for (const auto& w : warnings) out << "  - " << w << "\n";
  }
  out << "\nCautions\n";
  for (const auto& c : habitat_cautions()) out << "  - " << c << "\n";
  return out.str();
}

std::vector<FigureFile> habitat_figures(const Survey& survey, const HabitatRunFacts& run, const HabitatResult& result,
                                        const std::vector<ResidualField>& residuals,
                                        const std::vector<PartialEffect>& effects) {
  using Kind = ChartSeries::Kind;
  std::vector<FigureFile> files;
  FileNamer namer;
  std::string manifest = "file,species,covariate,figure\n";
  const auto add = [&](const std::string& stem, std::string content, const std::optional<std::size_t>& species,
                       const std::string& covariate, const std::string& figure, const std::string& shows) {
    manifest += csv_field(stem + ".svg") + "," + csv_field(species ? survey.species()[*species] : "") + "," +
                csv_field(covariate) + "," + figure + "\n";
    files.push_back({stem + ".svg", std::move(content), shows});
  };
  const auto name_of = [&](const std::optional<std::size_t>& s) {
    return s ? survey.species()[*s] : std::string("all-species");
  };
  for (const auto& t : result.covariate_tests) {
    // Step functions: each value's share at or below it, drawn as steps.
    ChartSeries window{Kind::dashed_line, {}, {}, {}, 2, "window (CSR)"};
    ChartSeries seen{Kind::line, {}, {}, {}, 0, "sightings"};
    double previous_window = 0.0;
    double previous_seen = 0.0;
    for (std::size_t i = 0; i < t.ks.values.size(); ++i) {
      const double v = t.ks.values[i];
      window.x.insert(window.x.end(), {v, v});
      window.y.insert(window.y.end(), {previous_window, t.ks.window_cdf[i]});
      seen.x.insert(seen.x.end(), {v, v});
      seen.y.insert(seen.y.end(), {previous_seen, t.ks.sighting_cdf[i]});
      previous_window = t.ks.window_cdf[i];
      previous_seen = t.ks.sighting_cdf[i];
    }
    Chart c;
    c.title = species_text(survey, t.species) + ": " + t.covariate + " at the sightings and over the window";
    c.x_label = t.covariate;
    c.y_label = "share at or below";
    c.caption = "Berman (1986): Z1 = " + format_fixed(t.z1.statistic, 2) + " (p " + format_p_value(t.z1.p_two_sided) +
                "), KS D = " + format_fixed(t.ks.d, 3) + " (p " + format_p_value(t.ks.p) + ")";
    c.series = {window, seen};
    add(namer.stem("ks", {name_of(t.species), t.covariate}), chart_svg(c), t.species, t.covariate,
        "covariate distribution functions", c.title);
  }
  for (const auto& e : effects) {
    Chart c;
    c.title = species_text(survey, e.species) + ": fitted intensity against " + e.covariate;
    c.x_label = e.factor ? e.covariate + " class" : e.covariate;
    c.y_label = "intensity per " + run.unit;
    c.caption =
        "other covariates at their mean over the windows (factors at their reference class, bias terms at "
        "their reference); band: " +
        format_general(100.0 * run.confidence) + "% Wald interval";
    if (e.factor) {
      for (std::size_t i = 0; i < e.x.size(); ++i)
        c.series.push_back({Kind::line, {e.x[i], e.x[i]}, {e.low[i], e.high[i]}, {}, 2, i == 0 ? "interval" : ""});
      c.series.push_back({Kind::points, e.x, e.fit, {}, 0, "fitted"});
    } else {
      c.series.push_back({Kind::band, e.x, e.low, e.high, 3, "interval"});
      c.series.push_back({Kind::line, e.x, e.fit, {}, 0, "fitted"});
    }
    add(namer.stem("effect", {name_of(e.species), e.covariate}), chart_svg(c), e.species, e.covariate, "partial effect",
        c.title);
  }
  for (const auto& r : residuals) {
    const std::string title = species_text(survey, r.species) + ": smoothed raw residuals (Gaussian, sigma " +
                              format_significant(r.bandwidth_m, 3) + " m)";
    add(namer.stem("residuals", {name_of(r.species)}),
        field_map_svg(r.field, survey.plots(), title, "per-" + run.unit + " observed-fitted", true), r.species, "",
        "residual map", title);
  }
  for (const auto& c : run.clustering) {
    const EnvelopeResult& e = c.l_envelope;
    EnvelopeFigure f{species_text(survey, c.species) + ": inhomogeneous L with the fitted intensity",
                     "L_inhom(r) (m)",
                     e.r,
                     e.observed,
                     e.theoretical,
                     e.pointwise_low,
                     e.pointwise_high,
                     e.global_low,
                     e.global_high,
                     std::to_string(e.simulations) + " simulations of the fitted model; DCLF p = " +
                         format_p_value(e.dclf_p_value) + "; " + c.verdict};
    Chart chart = envelope_chart(f);
    for (auto& s : chart.series)
      if (s.label == "CSR (theoretical)") s.label = "inhomogeneous Poisson (theoretical)";
    add(namer.stem("L", {name_of(c.species)}), chart_svg(chart), c.species, "", "inhomogeneous L envelope", f.title);
  }
  files.push_back({"figures.csv", manifest, ""});
  return files;
}

std::string habitat_csv(const Survey& survey, const HabitatRunFacts& run, const HabitatResult& result) {
  Table t;
  t.columns = {"kind", "species", "term",       "covariate", "estimate",  "se", "ci_low", "ci_high",
               "z",    "p_value", "rate_ratio", "bias",      "statistic", "df", "unit"};
  const auto num = [](double v) { return std::isfinite(v) ? format_round_trip(v) : std::string(); };
  for (const auto& m : result.models) {
    const std::string model_species = m.species ? survey.species()[*m.species] : "";
    for (const auto& c : m.coefficients) {
      const std::string species = c.species ? survey.species()[*c.species] : model_species;
      t.rows.push_back({"coefficient", species, c.term, c.covariate, num(c.estimate), num(c.se), num(c.ci_low),
                        num(c.ci_high), num(c.z), num(c.p_value), c.covariate.empty() ? "" : num(c.rate_ratio),
                        c.covariate.empty() ? "" : (c.bias ? "true" : "false"), "", "", run.unit});
    }
    for (const auto& tt : m.term_tests)
      t.rows.push_back({"term_test", model_species, tt.term, tt.term, "", "", "", "", "", num(tt.p_value), "", "",
                        num(tt.statistic), std::to_string(tt.df), ""});
  }
  for (const auto& a : run.abundance)
    t.rows.push_back({"abundance", a.species ? survey.species()[*a.species] : "", a.unit, "", num(a.expected),
                      num(a.se), num(a.ci_low), num(a.ci_high), "", "", "", "", "", "", run.unit});
  for (const auto& c : result.covariate_tests) {
    const std::string species = c.species ? survey.species()[*c.species] : "";
    t.rows.push_back({"covariate_test_z1", species, "z1", c.covariate, "", "", "", "", num(c.z1.statistic),
                      num(c.z1.p_two_sided), "", "", num(c.z1.statistic), "", ""});
    t.rows.push_back({"covariate_test_ks", species, "ks", c.covariate, "", "", "", "", "", num(c.ks.p), "", "",
                      num(c.ks.d), "", ""});
  }
  return csv_text(t);
}

}  // namespace stipple
