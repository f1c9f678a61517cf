#include "stipple/report/tables.hpp"

#include <cmath>
#include <optional>

#include "stipple/format.hpp"

namespace stipple {

namespace {

std::string v(double x) {
  return format_round_trip(x);
}
std::string v(const std::optional<double>& x) {
  return x ? format_round_trip(*x) : std::string();
}
// NaN marks "no value" in some results (e.g. the border Clark-Evans normal p).
std::string finite(double x) {
  return std::isfinite(x) ? format_round_trip(x) : std::string();
}

std::string csv_line(const std::vector<std::string>& cells, const std::string* file) {
  std::string line;
  if (file) line = csv_field(*file) + ",";
  for (std::size_t i = 0; i < cells.size(); ++i) {
    if (i > 0) line += ',';
    line += csv_field(cells[i]);
  }
  return line + "\n";
}

}  // namespace

std::string csv_text(const Table& table) {
  std::string out = csv_line(table.columns, nullptr);
  for (const auto& row : table.rows) out += csv_line(row, nullptr);
  return out;
}

std::string csv_rows_with_file(const Table& table, const std::string& file) {
  std::string out;
  for (const auto& row : table.rows) out += csv_line(row, &file);
  return out;
}

std::string csv_header_with_file(const Table& table) {
  std::vector<std::string> columns{"file"};
  columns.insert(columns.end(), table.columns.begin(), table.columns.end());
  return csv_line(columns, nullptr);
}

std::string departure_text(const std::vector<Departure>& departures, const char* above, const char* below) {
  std::string text;
  for (const auto& d : departures) {
    if (!text.empty()) text += "; ";
    text += format_significant(d.from_m, 3) +
            (d.to_m > d.from_m ? "-" + format_significant(d.to_m, 3) : std::string()) + " m " +
            (d.direction == "above" ? above : below);
  }
  return text;
}

namespace {

// The columns of an intensity with its interval and its detection-corrected twin, shared by
// the per-plot and pooled tables.
const std::vector<std::string> intensity_columns{
    "intensity",           "ci_low",           "ci_high",          "detection_probability",
    "corrected_intensity", "corrected_ci_low", "corrected_ci_high"};

void append_intensity(std::vector<std::string>& row, double intensity, const Interval& ci,
                      const CorrectedIntensity& corrected) {
  row.insert(row.end(), {v(intensity), v(ci.lower), v(ci.upper), v(corrected.detection_probability),
                         v(corrected.intensity), v(corrected.ci.lower), v(corrected.ci.upper)});
}

std::vector<std::string> joined(std::vector<std::string> first, const std::vector<std::string>& middle,
                                const std::vector<std::string>& last) {
  first.insert(first.end(), middle.begin(), middle.end());
  first.insert(first.end(), last.begin(), last.end());
  return first;
}

}  // namespace

Table density_rows(const DensityResult& result) {
  Table t;
  t.columns = joined({"scope", "plot", "species", "count", "area", "unit"}, intensity_columns,
                     {"correction_method", "homogeneity_statistic", "homogeneity_df", "homogeneity_p_value"});
  const std::string unit(unit_name(result.unit));
  for (const auto& e : result.estimates) {
    std::vector<std::string> row{"plot", e.plot, e.species.value_or(""), std::to_string(e.count), v(e.area_in_unit),
                                 unit};
    append_intensity(row, e.intensity, e.ci, e.corrected);
    row.insert(row.end(), {std::string(correction_method_name(e.corrected.method)), "", "", ""});
    t.rows.push_back(std::move(row));
  }
  for (const auto& p : result.pooled) {
    std::vector<std::string> row{"pooled",          "",  p.species.value_or(""), std::to_string(p.count),
                                 v(p.area_in_unit), unit};
    append_intensity(row, p.intensity, p.ci, p.corrected);
    row.push_back(std::string(correction_method_name(p.corrected.method)));
    if (p.homogeneity) {
      row.push_back(v(p.homogeneity->chi_square.statistic));
      row.push_back(v(p.homogeneity->chi_square.df));
      row.push_back(v(p.homogeneity->p_value));
    } else {
      row.insert(row.end(), {"", "", ""});
    }
    t.rows.push_back(std::move(row));
  }
  return t;
}

Table pooled_rows(const DensityResult& result) {
  Table t;
  t.columns = joined({"species", "plots", "count", "area", "unit"}, intensity_columns,
                     {"homogeneity_statistic", "homogeneity_df", "homogeneity_p", "homogeneity_p_method",
                      "dispersion_ratio", "between_plot_ci_low", "between_plot_ci_high",
                      "corrected_between_plot_ci_low", "corrected_between_plot_ci_high"});
  const std::string unit(unit_name(result.unit));
  for (const auto& p : result.pooled) {
    std::vector<std::string> row{p.species.value_or(""), std::to_string(p.plots), std::to_string(p.count),
                                 v(p.area_in_unit), unit};
    append_intensity(row, p.intensity, p.ci, p.corrected);
    if (p.homogeneity) {
      const HomogeneityTest& h = *p.homogeneity;
      row.insert(row.end(), {v(h.chi_square.statistic), v(h.chi_square.df), v(h.p_value),
                             h.monte_carlo ? "monte-carlo" : "chi-square", v(h.dispersion_ratio),
                             v(h.between_plot_ci.lower), v(h.between_plot_ci.upper),
                             v(h.corrected_between_plot_ci.lower), v(h.corrected_between_plot_ci.upper)});
    } else {
      row.insert(row.end(), 9, "");
    }
    t.rows.push_back(std::move(row));
  }
  return t;
}

Table randomness_rows(const RandomnessResult& result) {
  Table t;
  t.columns = {"plot",
               "species",
               "n",
               "quadrat_statistic",
               "quadrat_df",
               "quadrat_p",
               "quadrat_p_method",
               "clark_evans_ratio",
               "clark_evans_z",
               "clark_evans_p",
               "clark_evans_p_method",
               "clark_evans_edge_correction",
               "l_rmax",
               "l_mad_p",
               "l_dclf_p",
               "l_erl_p",
               "l_departures",
               "simulations",
               "verdict",
               "verdict_basis"};
  for (const auto& g : result.results) {
    std::vector<std::string> row{g.plot, g.species.value_or(""), std::to_string(g.n)};
    if (g.quadrat) {
      const QuadratResult& q = *g.quadrat;
      row.insert(row.end(), {v(q.chi_square.statistic), v(q.chi_square.df), v(q.p_value),
                             q.monte_carlo_p_value ? "monte-carlo" : "chi-square"});
    } else {
      row.insert(row.end(), 4, "");
    }
    if (g.clark_evans) {
      const ClarkEvansResult& c = *g.clark_evans;
      // The Monte Carlo p-value when simulations ran (as in the text table), else the normal one.
      const double p = c.monte_carlo_p_value.value_or(c.p_value);
      row.insert(row.end(), {v(c.ratio), v(c.z), finite(p), c.monte_carlo_p_value ? "monte-carlo" : c.p_value_method,
                             std::string(edge_correction_name(c.edge_correction))});
    } else {
      row.insert(row.end(), 5, "");
    }
    if (const EnvelopeResult* l = g.l_envelope()) {
      row.insert(row.end(), {v(g.rmax_m), v(l->mad_p_value), v(l->dclf_p_value), v(l->erl_p_value),
                             departure_text(l->departures, "clustered", "regular")});
    } else {
      row.insert(row.end(), 5, "");
    }
    row.insert(row.end(), {std::to_string(result.simulations), g.verdict, g.verdict_basis});
    t.rows.push_back(std::move(row));
  }
  return t;
}

Table interaction_rows(const RandomnessResult& result) {
  Table t;
  t.columns = {"plot",   "species_a", "species_b", "n_a",        "n_b",        "rmax",
               "dclf_p", "mad_p",     "direction", "departures", "simulations"};
  for (const auto& i : result.interactions) {
    t.rows.push_back({i.plot, i.species_a, i.species_b, std::to_string(i.n_a), std::to_string(i.n_b), v(i.rmax_m),
                      v(i.p_value), v(i.cross_l.mad_p_value), i.direction,
                      departure_text(i.cross_l.departures, "association", "segregation"),
                      std::to_string(i.cross_l.simulations)});
  }
  return t;
}

Table transect_rows(const TransectResult& result) {
  Table t;
  t.columns = {"species",
               "stratum",
               "model",
               "adjustment_terms",
               "n",
               "effort",
               "truncation",
               "esw",
               "effective_area",
               "detection_probability",
               "encounter_rate",
               "encounter_rate_cv",
               "mean_cluster_size",
               "density",
               "density_cv",
               "density_ci_low",
               "density_ci_high",
               "bootstrap_ci_low",
               "bootstrap_ci_high",
               "bootstrap_cv",
               "abundance",
               "abundance_ci_low",
               "abundance_ci_high",
               "confidence",
               "unit"};
  for (const auto& e : result.results) {
    const DetectionModel& m = e.fit.function.model();
    t.rows.push_back({e.species.value_or(""),
                      e.stratum.value_or(""),
                      std::string(key_function_name(m.key)),
                      m.adjustment == Adjustment::none
                          ? std::string()
                          : std::to_string(m.terms) + " " + std::string(adjustment_name(m.adjustment)),
                      std::to_string(e.n),
                      v(e.effort),
                      v(result.truncation_m),
                      result.kind == TransectKind::line ? v(e.fit.effective_strip_width_m) : std::string(),
                      result.kind == TransectKind::point ? v(e.fit.effective_area_m2) : std::string(),
                      v(e.fit.detection_probability),
                      v(e.encounter.rate),
                      finite(e.encounter.cv),
                      v(e.mean_size),
                      v(e.density),
                      finite(e.density_cv),
                      v(e.density_ci.lower),
                      v(e.density_ci.upper),
                      e.bootstrap_ci ? v(e.bootstrap_ci->lower) : std::string(),
                      e.bootstrap_ci ? v(e.bootstrap_ci->upper) : std::string(),
                      v(e.bootstrap_cv),
                      v(e.abundance),
                      e.abundance_ci ? v(e.abundance_ci->lower) : std::string(),
                      e.abundance_ci ? v(e.abundance_ci->upper) : std::string(),
                      v(result.confidence),
                      std::string(unit_name(result.unit))});
  }
  return t;
}

}  // namespace stipple
