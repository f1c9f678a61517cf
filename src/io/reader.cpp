#include "stipple/io/reader.hpp"

#include <charconv>
#include <cmath>
#include <map>
#include <set>
#include <sstream>

#include <cpl_error.h>
#include <cpl_string.h>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"

namespace stipple {

using namespace io_detail;

namespace {

std::string trim(std::string s) {
  const auto first = s.find_first_not_of(" \t\r\n");
  if (first == std::string::npos) return {};
  const auto last = s.find_last_not_of(" \t\r\n");
  return s.substr(first, last - first + 1);
}

std::string feature_label(const std::string& layer, GIntBig fid) {
  return layer + ": feature " + std::to_string(fid);
}

std::string id_list(const std::vector<std::int64_t>& ids) {
  std::ostringstream out;
  const std::size_t shown = std::min<std::size_t>(ids.size(), 20);
  for (std::size_t i = 0; i < shown; ++i) out << (i ? ", " : "") << ids[i];
  if (ids.size() > shown) out << ", ... (" << ids.size() - shown << " more)";
  return out.str();
}

std::optional<std::string> field_text(OGRFeature& feature, int index) {
  if (index < 0 || !feature.IsFieldSetAndNotNull(index)) return std::nullopt;
  std::string value = trim(feature.GetFieldAsString(index));
  if (value.empty()) return std::nullopt;
  return value;
}

bool listed(const std::string& name, const std::string& candidates) {
  std::stringstream list(candidates);
  std::string item;
  while (std::getline(list, item, ','))
    if (EQUAL(item.c_str(), name.c_str())) return true;
  return false;
}

// For a CSV row without geometry: the raw coordinate texts, so the user sees the bad value.
std::string csv_coordinate_text(OGRFeature& feature, const SurveyReadOptions& options) {
  if (!is_csv_path(options.sightings.path)) return " (empty coordinates?)";
  const std::string xs = options.x_field.value_or(default_x_columns);
  const std::string ys = options.y_field.value_or(default_y_columns);
  std::string text;
  for (int i = 0; i < feature.GetFieldCount(); ++i) {
    const std::string name = feature.GetFieldDefnRef(i)->GetNameRef();
    if (!listed(name, xs) && !listed(name, ys)) continue;
    text += (text.empty() ? "" : ", ") + name +
            (feature.IsFieldSetAndNotNull(i)
                 ? " = " + std::string(feature.GetFieldAsString(i))
                 : std::string(": empty or not a number"));
  }
  if (text.empty()) return " (empty coordinates?)";
  return ": coordinates must be finite numbers (" + text + ")";
}

struct RawSighting {
  double x = 0.0;
  double y = 0.0;
  GIntBig fid = 0;
  std::string species;
  std::optional<std::string> plot;
};

struct SightingLayer {
  std::string label;
  OGRSpatialReference crs;
  std::vector<RawSighting> rows;
};

SightingLayer read_sightings(const SurveyReadOptions& options, std::vector<std::string>& notes) {
  const auto& spec = options.sightings;
  DatasetPtr dataset = open_vector(spec.path, CsvColumns{options.x_field, options.y_field});
  OGRLayer& layer = pick_layer(*dataset, spec.path, spec.layer, LayerKind::points, "--layer");
  SightingLayer out;
  out.label = layer_label(spec.path, layer);
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  if (is_csv_path(spec.path) && wkbFlatten(layer.GetGeomType()) == wkbNone &&
      defn->GetGeomFieldCount() == 0) {
    throw InputError(out.label + ": no coordinate columns found (fields: " + field_list(layer) +
                     "); name them with --x-field and --y-field");
  }
  const int species_index = defn->GetFieldIndex(options.species_field.c_str());
  if (species_index < 0)
    throw InputError(out.label + ": no species field '" + options.species_field +
                     "' (fields: " + field_list(layer) + "); name it with --species-field");
  const int plot_index = defn->GetFieldIndex(options.plot_field.c_str());
  if (plot_index < 0 && options.plot_field_given && options.window == WindowMode::plots) {
    notes.push_back(out.label + " has no field '" + options.plot_field +
                    "': sightings are assigned to plots by point-in-polygon");
  }
  out.crs = layer_crs(layer, out.label, options.assume_crs);
  if (layer.GetSpatialRef() == nullptr)
    notes.push_back(out.label + ": CRS assumed to be " + *options.assume_crs + " (--assume-crs)");

  layer.ResetReading();
  for (auto& feature : layer) {
    const GIntBig fid = feature->GetFID();
    const OGRGeometry* geometry = feature->GetGeometryRef();
    if (geometry == nullptr || geometry->IsEmpty())
      throw InputError(feature_label(out.label, fid) + ": has no point geometry" +
                       csv_coordinate_text(*feature, options));
    const auto type = wkbFlatten(geometry->getGeometryType());
    const OGRPoint* point = nullptr;
    if (type == wkbPoint) {
      point = geometry->toPoint();
    } else if (type == wkbMultiPoint && geometry->toMultiPoint()->getNumGeometries() == 1) {
      point = geometry->toMultiPoint()->getGeometryRef(0);
    } else {
      throw InputError(feature_label(out.label, fid) + ": geometry is " +
                       OGRGeometryTypeToName(geometry->getGeometryType()) +
                       "; sightings must be single points");
    }
    RawSighting row;
    row.x = point->getX();
    row.y = point->getY();
    row.fid = fid;
    if (!std::isfinite(row.x) || !std::isfinite(row.y))
      throw InputError(feature_label(out.label, fid) + ": coordinate is NaN or infinite");
    auto species = field_text(*feature, species_index);
    if (!species)
      throw InputError(feature_label(out.label, fid) + ": species field '" +
                       options.species_field + "' is empty");
    row.species = std::move(*species);
    row.plot = field_text(*feature, plot_index);
    out.rows.push_back(std::move(row));
  }
  return out;
}

void append_polygon(const OGRPolygon& polygon, BgMultiPolygon& out) {
  BgPolygon bg_polygon;
  const auto copy_ring = [](const OGRLinearRing& ring, BgPolygon::ring_type& target) {
    for (int i = 0; i < ring.getNumPoints(); ++i) target.emplace_back(ring.getX(i), ring.getY(i));
  };
  if (polygon.getExteriorRing() == nullptr) return;
  copy_ring(*polygon.getExteriorRing(), bg_polygon.outer());
  for (int i = 0; i < polygon.getNumInteriorRings(); ++i) {
    bg_polygon.inners().emplace_back();
    copy_ring(*polygon.getInteriorRing(i), bg_polygon.inners().back());
  }
  out.push_back(std::move(bg_polygon));
}

void collect_polygons(const OGRGeometry& geometry, BgMultiPolygon& out) {
  const auto type = wkbFlatten(geometry.getGeometryType());
  if (type == wkbPolygon) {
    append_polygon(*geometry.toPolygon(), out);
  } else if (type == wkbMultiPolygon || type == wkbGeometryCollection) {
    for (const auto* part : *geometry.toGeometryCollection()) collect_polygons(*part, out);
  }
  // Points and lines left over from MakeValid carry no area and are dropped.
}

// Area of the polygonal parts of a geometry (MakeValid may add points or lines).
double polygonal_area(const OGRGeometry& geometry) {
  const auto type = wkbFlatten(geometry.getGeometryType());
  if (type == wkbPolygon || type == wkbCurvePolygon)
    return dynamic_cast<const OGRSurface&>(geometry).get_Area();
  if (type == wkbMultiPolygon || type == wkbGeometryCollection || type == wkbMultiSurface) {
    double area = 0.0;
    for (const auto* part : *geometry.toGeometryCollection()) area += polygonal_area(*part);
    return area;
  }
  return 0.0;
}

struct PlotLayer {
  std::string label;
  std::vector<Plot> plots;
};

PlotLayer read_plots(OGRLayer& layer, const std::string& label,
                     const OGRSpatialReference& source, const SurveyReadOptions& options,
                     const OGRSpatialReference& target, std::vector<std::string>& notes) {
  PlotLayer out;
  out.label = label;
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  const int id_index = defn->GetFieldIndex(options.plot_field.c_str());
  const bool id_from_layer_name =
      id_index < 0 && !options.plot_field_given && layer.GetFeatureCount() == 1;
  if (id_index < 0 && !id_from_layer_name)
    throw InputError(out.label + ": no plot field '" + options.plot_field + "' (fields: " +
                     field_list(layer) + "); name it with --plot-field");
  if (id_from_layer_name)
    notes.push_back(out.label + ": one polygon and no field '" + options.plot_field +
                    "': the plot id is the layer name");
  const TransformPtr transform = make_transform(source, target, out.label);

  std::vector<std::string> order;
  std::map<std::string, BgMultiPolygon> shapes;
  std::map<std::string, std::string> first_feature;
  std::size_t repaired = 0;
  layer.ResetReading();
  for (auto& feature : layer) {
    const std::string where = feature_label(out.label, feature->GetFID());
    const OGRGeometry* geometry = feature->GetGeometryRef();
    if (geometry == nullptr || geometry->IsEmpty())
      throw InputError(where + ": plot polygon is empty");
    const auto type = wkbFlatten(geometry->getGeometryType());
    if (type != wkbPolygon && type != wkbMultiPolygon && type != wkbCurvePolygon &&
        type != wkbMultiSurface)
      throw InputError(where + ": geometry is " +
                       OGRGeometryTypeToName(geometry->getGeometryType()) +
                       "; plots must be polygons");
    std::unique_ptr<OGRGeometry> shape(geometry->hasCurveGeometry()
                                           ? geometry->getLinearGeometry()
                                           : geometry->clone());
    if (!shape->IsValid()) {
      // A collinear ring is invalid too; tell it apart from a self-intersecting outline by
      // what GDAL's MakeValid (GEOS) leaves of it.
      std::unique_ptr<OGRGeometry> valid(shape->MakeValid());
      if (!valid || valid->IsEmpty() || !(polygonal_area(*valid) > 0.0))
        throw InputError(where + ": plot polygon has zero area");
      if (!options.repair_geometry)
        throw InputError(where + ": plot polygon is not valid (self-intersecting or with "
                                 "crossing rings); fix it in a GIS or pass --repair-geometry");
      shape = std::move(valid);
      ++repaired;
    }
    if (!(polygonal_area(*shape) > 0.0)) throw InputError(where + ": plot polygon has zero area");
    std::string id = id_from_layer_name ? std::string(layer.GetName()) : std::string();
    if (!id_from_layer_name) {
      auto value = field_text(*feature, id_index);
      if (!value)
        throw InputError(where + ": plot field '" + options.plot_field + "' is empty");
      id = *value;
    }
    if (transform && shape->transform(transform.get()) != OGRERR_NONE)
      throw InputError(where + ": cannot be reprojected to the analysis CRS");
    if (!shapes.count(id)) {
      order.push_back(id);
      first_feature[id] = where;
    }
    collect_polygons(*shape, shapes[id]);
  }
  if (order.empty()) throw InputError(out.label + ": holds no plot polygons");
  if (repaired > 0)
    notes.push_back(out.label + ": " + std::to_string(repaired) +
                    " invalid polygon(s) repaired with GDAL MakeValid (--repair-geometry)");
  for (const auto& id : order) {
    // Several features with one id form one plot in several parts.
    out.plots.push_back(
        Plot{id, Window::from_polygons(shapes[id], first_feature[id] + " (plot '" + id + "')")});
  }
  return out;
}

AnalysisCrs choose_crs(const SurveyReadOptions& options, const SightingLayer& sightings,
                       const std::optional<OGRSpatialReference>& plots_crs,
                       OGRSpatialReference& target) {
  double mx = 0.0;
  double my = 0.0;
  for (const auto& row : sightings.rows) {
    mx += row.x;
    my += row.y;
  }
  const double n = static_cast<double>(std::max<std::size_t>(1, sightings.rows.size()));
  ChosenCrs chosen = choose_analysis_crs(
      options.target_crs,
      {{&sightings.crs, "sightings"},
       {plots_crs ? &*plots_crs : nullptr, "plots (sightings reprojected to it)"}},
      sightings.crs, mx / n, my / n, sightings.label);
  target = chosen.srs;
  return AnalysisCrs{chosen.code, chosen.name, chosen.reason, chosen.wkt};
}

std::vector<Sighting> to_analysis_crs(const SightingLayer& layer,
                                      const OGRSpatialReference& target) {
  const TransformPtr transform = make_transform(layer.crs, target, layer.label);
  std::vector<Sighting> out;
  out.reserve(layer.rows.size());
  for (const auto& row : layer.rows) {
    double x = row.x;
    double y = row.y;
    if (transform && (!transform->Transform(1, &x, &y) || !std::isfinite(x) || !std::isfinite(y)))
      throw InputError(feature_label(layer.label, row.fid) +
                       ": cannot be reprojected to the analysis CRS (coordinates outside its "
                       "area of use?)");
    out.push_back(Sighting{Point{x, y}, static_cast<std::int64_t>(row.fid), row.species, row.plot});
  }
  return out;
}

std::vector<Plot> hull_plots(const std::vector<Sighting>& sightings) {
  std::vector<std::string> order;
  std::map<std::string, std::vector<Point>> groups;
  for (const auto& s : sightings) {
    const std::string key = s.plot.value_or("hull");
    if (!groups.count(key)) order.push_back(key);
    groups[key].push_back(s.location);
  }
  std::vector<Plot> plots;
  for (const auto& key : order)
    plots.push_back(Plot{key, ripley_rasson_hull(groups[key], "plot '" + key + "'")});
  return plots;
}

}  // namespace

LoadedSurvey load_survey(const SurveyReadOptions& options) {
  if (options.window == WindowMode::plots && !options.plots) {
    throw InputError("the analysis needs the surveyed area: give the plot polygons with --plots PATH "
                     "(or --window convex-hull for a model-based window estimated from the "
                     "points)");
  }
  LoadedSurvey loaded;
  loaded.window = options.window;
  SightingLayer sightings = read_sightings(options, loaded.notes);
  loaded.sightings_label = sightings.label;

  DatasetPtr plots_dataset;
  OGRLayer* plots_layer = nullptr;
  std::optional<OGRSpatialReference> plots_crs;
  if (options.window == WindowMode::plots) {
    plots_dataset = open_vector(options.plots->path);
    plots_layer = &pick_layer(*plots_dataset, options.plots->path, options.plots->layer,
                              LayerKind::polygons, "--plots-layer");
    loaded.plots_label = layer_label(options.plots->path, *plots_layer);
    plots_crs = layer_crs(*plots_layer, loaded.plots_label, options.assume_crs);
  }
  OGRSpatialReference target;
  loaded.crs = choose_crs(options, sightings, plots_crs, target);
  const std::vector<Sighting> located = to_analysis_crs(sightings, target);

  std::vector<Plot> plots;
  if (options.window == WindowMode::plots) {
    plots = read_plots(*plots_layer, loaded.plots_label, *plots_crs, options, target,
                       loaded.notes)
                .plots;
  } else {
    plots = hull_plots(located);
    loaded.warnings.push_back(
        "windows are Ripley-Rasson enlarged convex hulls of the sightings: the area is "
        "estimated from the points themselves, so densities are model-based (they assume a "
        "homogeneous Poisson pattern in a convex window), not design-based");
  }
  loaded.survey = assign_to_plots(located, std::move(plots));
  const Survey& s = loaded.survey;
  if (!s.outside_feature_ids.empty())
    loaded.warnings.push_back(std::to_string(s.outside_feature_ids.size()) +
                              " sighting(s) lie outside every plot and were excluded "
                              "(feature ids: " + id_list(s.outside_feature_ids) + ")");
  if (!s.unknown_plot_feature_ids.empty())
    loaded.warnings.push_back(std::to_string(s.unknown_plot_feature_ids.size()) +
                              " sighting(s) name a plot that is not among the plots and were "
                              "excluded (feature ids: " + id_list(s.unknown_plot_feature_ids) + ")");
  if (!s.off_window_feature_ids.empty())
    loaded.warnings.push_back(std::to_string(s.off_window_feature_ids.size()) +
                              " sighting(s) lie outside the polygon of the plot their '" +
                              options.plot_field + "' attribute names; kept by attribute "
                              "(feature ids: " + id_list(s.off_window_feature_ids) + ")");
  return loaded;
}

DetectionTable read_detection_table(const std::string& path, std::optional<Detection> fallback) {
  DatasetPtr dataset = open_vector(path);
  OGRLayer& layer = pick_layer(*dataset, path, std::nullopt, LayerKind::points, "a single table");
  const std::string label = path;
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  const auto find = [&](std::initializer_list<const char*> names) {
    for (const char* name : names) {
      const int index = defn->GetFieldIndex(name);
      if (index >= 0) return index;
    }
    return -1;
  };
  const int species_index = find({"species"});
  const int p_index = find({"p", "detection_probability", "probability"});
  const int se_index = find({"se", "standard_error", "p_se"});
  if (species_index < 0 || p_index < 0)
    throw InputError(label + ": needs columns 'species' and 'p' (optional 'se'); found: " +
                     field_list(layer));
  const auto parse = [&](OGRFeature& feature, int index, const std::string& where,
                         const char* what) -> double {
    const auto text = field_text(feature, index);
    if (!text) throw InputError(where + ": " + what + " is empty");
    double value = 0.0;
    const char* begin = text->data();
    const char* end = begin + text->size();
    const auto result = std::from_chars(begin, end, value);
    if (result.ec != std::errc() || result.ptr != end)
      throw InputError(where + ": " + what + " '" + *text + "' is not a number");
    return value;
  };
  std::map<std::string, Detection> rows;
  int line = 1;  // the header
  layer.ResetReading();
  for (auto& feature : layer) {
    ++line;
    const std::string where = label + ": line " + std::to_string(line);
    const auto species = field_text(*feature, species_index);
    if (!species) throw InputError(where + ": species is empty");
    const double p = parse(*feature, p_index, where, "p");
    const double se = se_index >= 0 && field_text(*feature, se_index)
                          ? parse(*feature, se_index, where, "se")
                          : 0.0;
    const Detection detection = make_detection(p, se, where + " (species '" + *species + "')");
    if (!rows.emplace(*species, detection).second)
      throw InputError(where + ": species '" + *species + "' is listed twice");
  }
  return DetectionTable::by_species(std::move(rows), fallback, label);
}

}  // namespace stipple
