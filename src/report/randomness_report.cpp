#include "stipple/report/randomness_report.hpp"

#include <algorithm>
#include <cmath>
#include <locale>
#include <sstream>

#include <boost/math/constants/constants.hpp>

#include <nlohmann/json.hpp>

#include "json_text.hpp"
#include "report/input_summary.hpp"
#include "report/records.hpp"
#include "stipple/format.hpp"
#include "stipple/report/figure.hpp"
#include "stipple/report/tables.hpp"
#include "stipple/version.hpp"

namespace stipple {

namespace {

using Json = nlohmann::ordered_json;
using report_detail::crs_area_note;
using report_detail::duplicate_locations_json;

Json number_or_null(double v) {
  return std::isfinite(v) ? Json(v) : Json(nullptr);
}
Json optional_json(const std::optional<double>& v) {
  return v ? number_or_null(*v) : Json(nullptr);
}

std::string species_text(const std::optional<std::string>& species) {
  return species ? *species : "(all)";
}

Json quadrat_json(const QuadratResult& q) {
  Json j;
  j["nx"] = q.nx;
  j["ny"] = q.ny;
  j["cells"] = q.cells_used;
  j["statistic"] = q.chi_square.statistic;
  j["df"] = q.chi_square.df;
  j["p_upper"] = q.chi_square.p_upper;
  j["p_lower"] = q.chi_square.p_lower;
  j["p_value"] = q.chi_square.p_two_sided;
  j["monte_carlo_p_value"] = optional_json(q.monte_carlo_p_value);
  j["dispersion_index"] = optional_json(q.dispersion_index);
  j["min_expected"] = q.chi_square.min_expected;
  j["cells_too_small"] = q.cells_too_small;
  return j;
}

Json clark_evans_json(const ClarkEvansResult& c) {
  Json j;
  j["mean_distance"] = c.mean_distance;
  j["expected_distance"] = c.expected_distance;
  j["ratio"] = c.ratio;
  j["z"] = c.z;
  j["p_value"] = std::isnan(c.p_value) ? Json(nullptr) : Json(c.p_value);
  j["p_value_method"] = c.p_value_method;
  j["normal_p_value"] = c.normal_p_value;
  j["edge_correction"] = std::string(edge_correction_name(c.edge_correction));
  j["monte_carlo_p_value"] = optional_json(c.monte_carlo_p_value);
  j["standard_error"] = c.standard_error;
  j["reference_points"] = c.reference_points;
  return j;
}

Json departures_json(const EnvelopeResult& e, const char* above, const char* below) {
  Json list = Json::array();
  for (const auto& d : e.departures)
    list.push_back({{"from", d.from_m}, {"to", d.to_m}, {"direction", d.direction == "above" ? above : below}});
  return list;
}

std::string ranges_text(const EnvelopeResult& e, const char* above, const char* below) {
  const std::string text = departure_text(e.departures, above, below);
  return text.empty() ? "none" : text;
}

}  // namespace

namespace report_detail {

Json randomness_group_record(const GroupResult& g) {
  Json j;
  j["plot"] = g.plot;
  j["species"] = g.species ? Json(*g.species) : Json(nullptr);
  j["n"] = g.n;
  j["quadrat"] = g.quadrat ? quadrat_json(*g.quadrat) : Json(nullptr);
  j["clark_evans"] = g.clark_evans ? clark_evans_json(*g.clark_evans) : Json(nullptr);
  if (const EnvelopeResult* l = g.l_envelope()) {
    Json e;
    e["function"] = "L";
    e["rmax"] = *g.rmax_m;
    e["simulations"] = l->simulations;
    e["mad_p_value"] = l->mad_p_value;
    e["dclf_p_value"] = l->dclf_p_value;
    e["erl_p_value"] = l->erl_p_value;
    e["mad_statistic"] = l->mad_statistic;
    e["dclf_statistic"] = l->dclf_statistic;
    e["edge_correction"] = std::string(pair_correction_name(g.pair_correction));
    e["distance_edge_correction"] = std::string(distance_correction_name(g.distance_correction));
    e["departures"] = departures_json(*l, "clustered", "regular");
    j["envelope"] = std::move(e);
  } else {
    j["envelope"] = nullptr;
  }
  j["simulations_run"] = g.simulations_run;
  j["verdict"] = g.verdict;
  j["verdict_basis"] = g.verdict_basis;
  j["notes"] = g.notes;
  return j;
}

Json interaction_record(const InteractionResult& i) {
  Json j;
  j["plot"] = i.plot;
  j["species_a"] = i.species_a;
  j["species_b"] = i.species_b;
  j["n_a"] = i.n_a;
  j["n_b"] = i.n_b;
  j["test"] = "random-labelling";
  j["function"] = "cross-L";
  j["rmax"] = i.rmax_m;
  j["p_value"] = i.p_value;
  j["mad_p_value"] = i.cross_l.mad_p_value;
  j["direction"] = i.direction;
  j["departures"] = departures_json(i.cross_l, "association", "segregation");
  j["note"] = i.note.empty() ? Json(nullptr) : Json(i.note);
  return j;
}

}  // namespace report_detail

const std::vector<std::string>& randomness_cautions() {
  static const std::vector<std::string> cautions{
      "CSR tests assume the window is the area actually searched and that detection is "
      "uniform across it: a pattern of where observers looked hardest looks clustered.",
      "Departures are relative to a homogeneous Poisson pattern; habitat gradients produce "
      "apparent clustering (inhomogeneity) as well as true aggregation.",
      "With many plots and species, some tests reject by chance at alpha; read the global "
      "envelope ranges, not single p-values.",
      "Spatial results that feed management or protection decisions need qualified review "
      "under the local agency's protocol.",
  };
  return cautions;
}

std::string randomness_json(const InputFacts& input, const RandomnessResult& result) {
  Json doc;
  doc["stipple_version"] = std::string(version());
  doc["command"] = "randomness";
  doc["crs"] = input.crs.code;
  doc["crs_max_area_error"] = input.crs.max_area_error;
  doc["simulations"] = result.simulations;
  doc["seed"] = result.seed;
  doc["alpha"] = result.alpha;
  doc["sightings"] = input.sightings_label;
  doc["plots"] = input.plots_label.empty() ? Json(nullptr) : Json(input.plots_label);
  Json results = Json::array();
  for (const auto& g : result.results) results.push_back(report_detail::randomness_group_record(g));
  doc["results"] = std::move(results);
  Json interactions = Json::array();
  for (const auto& i : result.interactions) interactions.push_back(report_detail::interaction_record(i));
  doc["interactions"] = std::move(interactions);
  Json skipped = Json::array();
  for (const auto& s : result.skipped)
    skipped.push_back({{"plot", s.plot},
                       {"species", s.species ? Json(*s.species) : Json(nullptr)},
                       {"n", s.n},
                       {"reason", s.reason}});
  doc["skipped"] = std::move(skipped);
  doc["duplicate_locations"] = duplicate_locations_json(input);
  doc["notes"] = input.notes;
  doc["warnings"] = input.warnings;
  doc["cautions"] = randomness_cautions();
  return json_text(doc);
}

namespace {

std::vector<std::string> group_row(const GroupResult& g) {
  std::vector<std::string> row{g.plot, species_text(g.species), std::to_string(g.n)};
  row.push_back(g.quadrat ? format_p_value(g.quadrat->p_value) + (g.quadrat->monte_carlo_p_value ? " (MC)" : "") : "-");
  if (g.clark_evans) {
    row.push_back(format_fixed(g.clark_evans->ratio, 3));
    const double ce_p = g.clark_evans->monte_carlo_p_value.value_or(g.clark_evans->p_value);
    row.push_back(std::isnan(ce_p) ? "-" : format_p_value(ce_p));
    row.push_back(std::string(edge_correction_name(g.clark_evans->edge_correction)));
  } else {
    row.insert(row.end(), {"-", "-", "-"});
  }
  if (const EnvelopeResult* l = g.l_envelope()) {
    row.push_back(format_significant(*g.rmax_m, 3));
    row.push_back(format_p_value(l->mad_p_value));
    row.push_back(format_p_value(l->dclf_p_value));
  } else {
    row.insert(row.end(), {"-", "-", "-"});
  }
  row.push_back(g.verdict);
  return row;
}

void write_groups_table(std::ostream& out, const RandomnessResult& result) {
  TextTable table(
      {"plot", "species", "n", "quadrat p", "CE ratio", "CE p", "edge", "L rmax_m", "MAD p", "DCLF p", "verdict"}, 2);
  for (const auto& g : result.results) table.add_row(group_row(g));
  out << table.render();
  out << "  CE = Clark-Evans nearest-neighbour test (ratio R < 1 clustered, > 1 regular); CE p is the Monte Carlo\n"
         "  p-value when simulations ran; (MC) quadrat p: Monte Carlo; L rmax_m: largest distance of L (m);\n"
         "  MAD = maximum absolute deviation test, DCLF = Diggle-Cressie-Loosmore-Ford test, both global tests\n"
         "  of L against its CSR simulations; ERL = extreme rank length global envelope\n\n";
}

void write_departures(std::ostream& out, const RandomnessResult& result) {
  bool any_departure = false;
  for (const auto& g : result.results) {
    const EnvelopeResult* l = g.l_envelope();
    if (!l || l->departures.empty()) continue;
    if (!any_departure)
      out << "Distances where L leaves the global envelope (extreme rank length: L leaves it exactly when the\n"
             "ERL test rejects at alpha; the verdict follows the DCLF test, so the two can differ near alpha)\n";
    any_departure = true;
    out << "  " << g.plot << " " << species_text(g.species) << ": " << ranges_text(*l, "clustered", "regular") << "\n";
  }
  if (any_departure) out << "\n";
}

void write_interactions(std::ostream& out, const RandomnessResult& result) {
  out << "Between species (random labelling, cross-L)\n";
  TextTable pairs({"plot", "species a", "species b", "p", "direction", "distances"}, 3);
  for (const auto& i : result.interactions)
    pairs.add_row({i.plot, i.species_a, i.species_b, format_p_value(i.p_value), i.direction,
                   ranges_text(i.cross_l, "association", "segregation")});
  out << pairs.render();
  out << "  p: DCLF test on cross-L; distances: where cross-L leaves its global (ERL) envelope\n\n";
}

// The notes of every group, each note shared by several groups (e.g. too few simulations)
// once with a count; small quadrat cells, common in small plots, in one line for all.
std::vector<std::string> table_notes(const InputFacts& input, const RandomnessResult& result) {
  std::size_t small_cells = 0;
  std::vector<std::pair<std::string, std::vector<std::string>>> shared;  // note, groups
  for (const auto& g : result.results) {
    if (g.quadrat && g.quadrat->cells_too_small) ++small_cells;
    for (const auto& n : g.notes) {
      if (g.quadrat && g.quadrat->cells_too_small && n.rfind("quadrat cells are small", 0) == 0) continue;
      const std::string group = g.plot + " " + species_text(g.species);
      auto it = std::find_if(shared.begin(), shared.end(), [&](const auto& e) { return e.first == n; });
      if (it == shared.end())
        shared.push_back({n, {group}});
      else
        it->second.push_back(group);
    }
  }
  std::vector<std::string> notes;
  notes.reserve(shared.size() + 2 + input.notes.size());
  for (const auto& [note, groups] : shared)
    notes.push_back(groups.size() == 1 ? groups.front() + ": " + note
                                       : std::to_string(groups.size()) + " groups: " + note);
  const auto undetermined = std::find_if(result.interactions.begin(), result.interactions.end(),
                                         [](const auto& i) { return !i.note.empty(); });
  if (undetermined != result.interactions.end()) notes.push_back("between species: " + undetermined->note);
  if (small_cells > 0)
    notes.push_back(std::to_string(small_cells) + " of " + std::to_string(result.results.size()) +
                    " groups have quadrat cells with expected counts below 5: their quadrat p-value "
                    "is the Monte Carlo one (consider fewer quadrats; per-group details in the JSON)");
  notes.insert(notes.end(), input.notes.begin(), input.notes.end());
  return notes;
}

}  // namespace

std::string randomness_table(const InputFacts& input, const RandomnessResult& result) {
  std::ostringstream out;
  out.imbue(std::locale::classic());  // numbers never follow a host's locale
  out << "stipple randomness\n";
  out << "  sightings: " << input.sightings_label << "\n";
  if (!input.plots_label.empty()) out << "  plots:     " << input.plots_label << "\n";
  out << "  CRS:       " << input.crs.code << " (" << input.crs.name << "); " << crs_area_note(input.crs) << "\n";
  const bool simulated =
      !result.interactions.empty() || std::any_of(result.results.begin(), result.results.end(),
                                                  [](const GroupResult& g) { return g.simulations_run > 0; });
  if (simulated)
    out << "  " << result.simulations << " CSR simulations (binomial process, same n and window), seed " << result.seed
        << ", alpha " << format_general(result.alpha) << "\n\n";
  else
    out << "  no CSR simulations were needed (the tests run used their normal or chi-square laws; see notes), alpha "
        << format_general(result.alpha) << "\n\n";
  write_groups_table(out, result);
  write_departures(out, result);
  if (!result.interactions.empty()) write_interactions(out, result);
  if (!result.skipped.empty()) {
    out << "Skipped\n";
    for (const auto& s : result.skipped)
      out << "  - " << s.plot << " " << species_text(s.species) << " (n = " << s.n << "): " << s.reason << "\n";
    out << "\n";
  }
  if (const auto notes = table_notes(input, result); !notes.empty()) {
    out << "Notes\n";
    for (const auto& n : notes) out << "  - " << n << "\n";
  }
  if (!input.warnings.empty()) {
    out << "\nWarnings\n";
    for (const auto& w : input.warnings) out << "  - " << w << "\n";
  }
  out << "\nCautions\n";
  for (const auto& c : randomness_cautions()) out << "  - " << c << "\n";
  return out.str();
}

std::string randomness_csv(const RandomnessResult& result) {
  return csv_text(randomness_rows(result));
}

std::string randomness_curves_csv(const RandomnessResult& result) {
  std::ostringstream out;
  out.imbue(std::locale::classic());
  out << "plot,species,species_b,function,r,observed,theoretical,low,high,global_low,global_high\n";
  const auto value = [](double v) { return format_round_trip(v); };
  const auto emit = [&](const std::string& plot, const std::string& species, const std::string& species_b,
                        const std::string& function, const EnvelopeResult& e) {
    for (std::size_t k = 0; k < e.r.size(); ++k) {
      out << csv_field(plot) << "," << csv_field(species) << "," << csv_field(species_b) << "," << function << ","
          << value(e.r[k]) << "," << value(e.observed[k]) << "," << value(e.theoretical[k]) << ","
          << value(e.pointwise_low[k]) << "," << value(e.pointwise_high[k]) << "," << value(e.global_low[k]) << ","
          << value(e.global_high[k]) << "\n";
    }
  };
  for (const auto& g : result.results)
    for (const auto& f : g.functions) emit(g.plot, g.species.value_or(""), "", f.function, f.envelope);
  for (const auto& i : result.interactions) {
    emit(i.plot, i.species_a, i.species_b, "cross-L", i.cross_l);
    // K = pi L^2 is monotone in L, so every envelope quantile maps exactly.
    EnvelopeResult k = i.cross_l;
    for (auto* series : {&k.observed, &k.theoretical, &k.simulation_mean, &k.pointwise_low, &k.pointwise_high,
                         &k.global_low, &k.global_high})
      for (double& v : *series) v = boost::math::double_constants::pi * v * v;
    emit(i.plot, i.species_a, i.species_b, "cross-K", k);
  }
  return out.str();
}

std::vector<FigureFile> randomness_figures(const RandomnessResult& result) {
  std::vector<FigureFile> files;
  FileNamer namer;
  std::string manifest = "file,plot,species,figure\n";
  const auto add = [&](const std::string& stem, const std::string& title, const std::string& y_label,
                       const EnvelopeResult& e, const std::string& caption, const std::string& shows) {
    EnvelopeFigure f{title,           y_label,          e.r,          e.observed,    e.theoretical,
                     e.pointwise_low, e.pointwise_high, e.global_low, e.global_high, caption};
    const Chart chart = envelope_chart(f);
    files.push_back({stem + ".svg", chart_svg(chart), shows});
    files.push_back({stem + ".png", chart_png(chart), shows});
  };
  const auto list = [&](const std::string& stem, const std::string& plot, const std::string& species,
                        const std::string& figure) {
    for (const char* extension : {".svg", ".png"})
      manifest += csv_field(stem + extension) + "," + csv_field(plot) + "," + csv_field(species) + "," + figure + "\n";
  };
  for (const auto& g : result.results) {
    const EnvelopeResult* l = g.l_envelope();
    if (!l) continue;
    const std::string species = g.species.value_or("all-species");
    const std::string stem = namer.stem("L", {g.plot, species});
    list(stem, g.plot, g.species.value_or(""), "L envelope");
    add(stem, g.plot + " - " + species_text(g.species), "L(r) (m)", *l,
        std::to_string(l->simulations) + " CSR simulations; MAD p = " + format_p_value(l->mad_p_value) +
            ", DCLF p = " + format_p_value(l->dclf_p_value) + "; verdict: " + g.verdict,
        "L-function of " + species_text(g.species) + " in plot " + g.plot);
  }
  for (const auto& i : result.interactions) {
    const std::string stem = namer.stem("cross-L", {i.plot, i.species_a, i.species_b});
    list(stem, i.plot, i.species_a + " x " + i.species_b, "cross-L random labelling");
    add(stem, i.plot + " - " + i.species_b + " around " + i.species_a, "cross-L(r) (m)", i.cross_l,
        std::to_string(i.cross_l.simulations) + " random labellings; p = " + format_p_value(i.p_value) + "; " +
            i.direction,
        "cross-L of " + i.species_b + " around " + i.species_a + " in plot " + i.plot);
  }
  // Which file shows which plot and species: names are shortened or hashed when needed.
  if (!files.empty()) files.push_back({"figures.csv", manifest, ""});
  return files;
}

}  // namespace stipple
