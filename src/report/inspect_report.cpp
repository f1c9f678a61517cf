#include "stipple/report/inspect_report.hpp"

#include <locale>
#include <sstream>

#include <nlohmann/json.hpp>

#include "json_text.hpp"
#include "stipple/format.hpp"

namespace stipple {

std::string inspect_table(const SourceSummary& source) {
  std::ostringstream out;
  out.imbue(std::locale::classic());  // numbers never follow a host's locale
  out << source.path << " (" << source.driver << "), " << source.layers.size() << " layer(s)\n";
  for (const auto& layer : source.layers) {
    out << "\nlayer '" << layer.name << "': " << layer.geometry_type << ", " << layer.feature_count
        << " feature(s), CRS " << layer.crs;
    if (!layer.crs_name.empty() && layer.crs_name != layer.crs) out << " (" << layer.crs_name << ")";
    if (layer.declared_count >= 0 && layer.declared_count != layer.feature_count)
      out << "\n  WARNING: the header declares " << layer.declared_count << " features but " << layer.feature_count
          << " could be read (truncated or damaged file?); analyses refuse it";
    if (!layer.read_error.empty()) out << "\n  WARNING: reading stopped on an error: " << layer.read_error;
    if (layer.undecodable_values > 0)
      out << "\n  WARNING: " << layer.undecodable_values
          << " text value(s) are not valid UTF-8 (shown with U+FFFD); name the source's encoding for the analysis";
    out << "\n  fields: ";
    for (std::size_t i = 0; i < layer.fields.size(); ++i)
      out << (i ? ", " : "") << layer.fields[i].name << " (" << layer.fields[i].type << ")";
    if (layer.fields.empty()) out << "none";
    out << "\n";
    if (layer.species_counts) {
      out << "  species:\n";
      TextTable table({"species", "count"});
      for (const auto& [name, count] : *layer.species_counts) table.add_row({name, std::to_string(count)});
      out << table.render("    ");
    }
    if (!layer.plots.empty()) {
      out << "  plots (areas in " << layer.area_crs << ", within "
          << format_significant(100.0 * layer.max_area_error, 2) << "% of geodesic areas):\n";
      TextTable table({"plot", "area_ha", "area_m2", "valid"});
      for (const auto& plot : layer.plots)
        table.add_row({plot.id, format_fixed(plot.area_m2 / 1e4, 4), format_fixed(plot.area_m2, 1),
                       plot.valid ? "yes" : "NO (self-intersecting?)"});
      out << table.render("    ");
    }
    if (layer.crs == "none") out << "  note: no CRS; the analysis needs an assumed CRS (EPSG:N) for this layer\n";
  }
  return out.str();
}

std::string inspect_json(const SourceSummary& source) {
  using Json = nlohmann::ordered_json;
  Json doc;
  doc["path"] = source.path;
  doc["driver"] = source.driver;
  Json layers = Json::array();
  for (const auto& layer : source.layers) {
    Json j;
    j["name"] = layer.name;
    j["geometry_type"] = layer.geometry_type;
    j["feature_count"] = layer.feature_count;
    j["declared_feature_count"] = layer.declared_count >= 0 ? Json(layer.declared_count) : Json(nullptr);
    j["read_error"] = layer.read_error.empty() ? Json(nullptr) : Json(layer.read_error);
    j["undecodable_values"] = layer.undecodable_values;
    j["crs"] = layer.crs;
    j["crs_name"] = layer.crs_name;
    Json fields = Json::array();
    for (const auto& f : layer.fields) fields.push_back({{"name", f.name}, {"type", f.type}});
    j["fields"] = std::move(fields);
    j["species_counts"] = layer.species_counts ? Json(*layer.species_counts) : Json(nullptr);
    Json plots = Json::array();
    for (const auto& p : layer.plots) plots.push_back({{"plot", p.id}, {"area_m2", p.area_m2}, {"valid", p.valid}});
    j["plots"] = std::move(plots);
    j["area_crs"] = layer.area_crs;
    j["crs_max_area_error"] = layer.plots.empty() ? Json(nullptr) : Json(layer.max_area_error);
    layers.push_back(std::move(j));
  }
  doc["layers"] = std::move(layers);
  return json_text(doc);
}

}  // namespace stipple
