#include "stipple/io/transect_reader.hpp"

#include <charconv>
#include <cmath>
#include <map>
#include <set>

#include <boost/geometry.hpp>
#include <boost/geometry/geometries/linestring.hpp>
#include <boost/geometry/geometries/multi_linestring.hpp>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace bg = boost::geometry;

namespace stipple {

using namespace io_detail;

namespace {

using BgLine = bg::model::linestring<BgPoint>;
using BgMultiLine = bg::model::multi_linestring<BgLine>;

std::string where(const std::string& label, GIntBig fid) { return label + ": feature " + std::to_string(fid); }

int field_index(OGRLayer& layer, const std::string& name) {
  return layer.GetLayerDefn()->GetFieldIndex(name.c_str());
}

int required_field(OGRLayer& layer, const std::string& label, const std::string& name, const std::string& option) {
  const int index = field_index(layer, name);
  if (index < 0)
    throw InputError(label + ": no field '" + name + "' (fields: " + field_list(layer) + "); name it with " + option);
  return index;
}

std::optional<std::string> text(OGRFeature& feature, int index, TextDecoder& decode) {
  if (index < 0 || !feature.IsFieldSetAndNotNull(index)) return std::nullopt;
  std::string value = decode(feature.GetFieldAsString(index));
  const auto first = value.find_first_not_of(" \t\r\n");
  if (first == std::string::npos) return std::nullopt;
  const auto last = value.find_last_not_of(" \t\r\n");
  return value.substr(first, last - first + 1);
}

std::optional<double> number(OGRFeature& feature, int index, const std::string& context, const std::string& name) {
  TextDecoder decode;
  const auto value = text(feature, index, decode);
  if (!value) return std::nullopt;
  double parsed = 0.0;
  const char* begin = value->data();
  const char* end = begin + value->size();
  const auto r = std::from_chars(begin, end, parsed);
  if (r.ec != std::errc() || r.ptr != end || !std::isfinite(parsed))
    throw InputError(context + ": " + name + " '" + *value + "' is not a finite number");
  return parsed;
}

void collect_lines(const OGRGeometry& geometry, BgMultiLine& out) {
  const auto type = wkbFlatten(geometry.getGeometryType());
  if (type == wkbLineString) {
    const auto* line = geometry.toLineString();
    BgLine l;
    for (int i = 0; i < line->getNumPoints(); ++i) l.emplace_back(line->getX(i), line->getY(i));
    out.push_back(std::move(l));
  } else if (type == wkbMultiLineString || type == wkbGeometryCollection) {
    for (const auto* part : *geometry.toGeometryCollection()) collect_lines(*part, out);
  }
}

struct TransectGeometry {
  std::string id;
  std::optional<std::string> stratum;
  BgMultiLine line;     // lines
  BgPoint station{0, 0};  // stations
  double length_m = 0.0;
  std::optional<double> effort_km;
  double visits = 1.0;
};

double polygon_area(OGRLayer& layer, const OGRSpatialReference& source, const OGRSpatialReference& target,
                    const std::string& label, const std::optional<std::string>& stratum_field,
                    std::map<std::string, double>& by_stratum, double& worst_error) {
  const TransformPtr transform = make_transform(source, target, label);
  const int stratum_index = stratum_field ? field_index(layer, *stratum_field) : -1;
  double total = 0.0;
  TextDecoder decode;
  scan_layer(layer, label, false, [&](OGRFeature& feature) {
    const std::string context = where(label, feature.GetFID());
    const OGRGeometry* g = feature.GetGeometryRef();
    if (g == nullptr || g->IsEmpty()) throw InputError(context + ": study-area polygon is empty");
    std::unique_ptr<OGRGeometry> copy(g->clone());
    CPLErrorReset();
    if (transform && copy->transform(transform.get()) != OGRERR_NONE)
      throw InputError(context + ": cannot be reprojected to the analysis CRS (" + last_gdal_message() + ")");
    double area = 0.0;
    if (const auto* s = dynamic_cast<const OGRSurface*>(copy.get())) area = s->get_Area();
    else if (const auto* m = dynamic_cast<const OGRMultiSurface*>(copy.get())) area = m->get_Area();
    if (!(area > 0.0) || !std::isfinite(area)) throw InputError(context + ": study-area polygon has zero area");
    BgMultiPolygon shape;
    std::unique_ptr<OGRGeometry> linear(copy->getLinearGeometry());
    collect_polygons(*linear, shape);
    const double geodesic = geodesic_area(shape, target, context);
    if (geodesic > 0.0) worst_error = std::max(worst_error, std::abs(area / geodesic - 1.0));
    total += area;
    if (const auto s = text(feature, stratum_index, decode)) by_stratum[*s] += area;
  });
  return total;
}


std::vector<std::pair<double, double>> transect_vertices(OGRLayer& layer, const OGRSpatialReference& crs,
                                                         const std::string& label) {
  std::vector<std::pair<double, double>> points;
  layer.ResetReading();
  for (auto& feature : layer) {
    const OGRGeometry* g = feature->GetGeometryRef();
    if (g == nullptr || g->IsEmpty()) continue;
    check_envelope(*g, crs, where(label, feature->GetFID()));
    OGREnvelope e;
    g->getEnvelope(&e);
    points.emplace_back(e.MinX, e.MinY);
    points.emplace_back(e.MaxX, e.MaxY);
    if (points.size() > 8192) break;
  }
  return points;
}

// Refuses sightings whose transect ids match none of the transects' ids.
void check_some_ids_match(OGRLayer& layer, const std::string& label, int index,
                          const std::map<std::string, std::size_t>& ids, const std::string& sighting_field,
                          const std::string& transect_field) {
  std::set<std::string> values;
  TextDecoder decode;
  layer.ResetReading();
  for (auto& feature : layer) {
    const auto value = text(*feature, index, decode);
    if (!value) continue;
    if (ids.count(*value)) return;
    if (values.size() < 4) values.insert(*value);
  }
  if (values.empty()) return;
  std::string shown;
  for (const auto& v : values) shown += (shown.empty() ? "'" : ", '") + v + "'";
  std::string known;
  std::size_t n = 0;
  for (const auto& [id, index_unused] : ids) {
    if (n++ == 3) break;
    known += (known.empty() ? "'" : ", '") + id + "'";
  }
  throw InputError(label + ": none of the sightings' '" + sighting_field + "' values (" + shown +
                   ", ...) is a transect id in field '" + transect_field + "' (" + known +
                   ", ...): assign by location (nearest transect) with --assign location, or name the "
                   "sightings' field with --sightings-transect-field");
}

}  // namespace

LoadedTransects load_transects(const TransectReadOptions& options) {
  if (!options.lines == !options.stations)
    throw InputError("give the transects with exactly one of --lines PATH or --stations PATH");
  const bool is_line = options.lines.has_value();
  const SourceSpec& spec = is_line ? *options.lines : *options.stations;
  LoadedTransects loaded;
  loaded.survey.kind = is_line ? TransectKind::line : TransectKind::point;

  DatasetPtr transects_ds = open_vector(spec.path, {}, options.encoding);
  OGRLayer& transect_layer = pick_layer(*transects_ds, spec.path, spec.layer,
                                        is_line ? LayerKind::lines : LayerKind::points,
                                        is_line ? "--transects-layer" : "--transects-layer");
  loaded.transects_label = layer_label(spec.path, transect_layer);
  const OGRSpatialReference transect_crs = layer_crs(transect_layer, loaded.transects_label, options.assume_crs);

  DatasetPtr sightings_ds = open_vector(options.sightings.path, CsvColumns{options.x_field, options.y_field},
                                        options.encoding);
  OGRLayer& sightings_layer = pick_layer(*sightings_ds, options.sightings.path, options.sightings.layer,
                                         LayerKind::points, "--layer");
  loaded.sightings_label = layer_label(options.sightings.path, sightings_layer);
  const bool sightings_have_geometry = wkbFlatten(sightings_layer.GetGeomType()) != wkbNone;
  std::optional<OGRSpatialReference> sightings_crs;
  if (sightings_have_geometry)
    sightings_crs = layer_crs(sightings_layer, loaded.sightings_label, options.assume_crs);

  OGREnvelope extent;
  if (transect_layer.GetExtent(&extent, TRUE) != OGRERR_NONE) throw InputError(spec.path + ": the transect layer has no extent (no geometries?)");
  const ChosenCrs chosen = choose_analysis_crs(
      options.target_crs,
      {{&transect_crs, is_line ? "transect lines" : "point stations"},
       {sightings_crs ? &*sightings_crs : nullptr, "sightings"}},
      {CentreSample{&transect_crs, transect_vertices(transect_layer, transect_crs, loaded.transects_label)}},
      nullptr, loaded.transects_label);
  loaded.crs = AnalysisCrs{chosen.code, chosen.name, chosen.reason, chosen.wkt, 0.0};
  const OGRSpatialReference& target = chosen.srs;

  // Transects.
  const std::string& tl = loaded.transects_label;
  const int id_index = required_field(transect_layer, tl, options.transect_field, "--transect-field");
  const int effort_index = options.effort_field ? required_field(transect_layer, tl, *options.effort_field, "--effort-field") : -1;
  const int visits_index = options.visits_field ? required_field(transect_layer, tl, *options.visits_field, "--visits-field")
                                                : field_index(transect_layer, "visits");
  const int stratum_index = options.stratum_field ? required_field(transect_layer, tl, *options.stratum_field, "--stratum-field") : -1;
  const TransformPtr to_target = make_transform(transect_crs, target, tl);
  std::vector<TransectGeometry> geometries;
  std::map<std::string, std::size_t> by_id;
  TextDecoder decode(options.encoding);
  scan_layer(transect_layer, tl, is_csv_path(spec.path), [&](OGRFeature& f) {
    OGRFeature* feature = &f;
    const std::string context = where(tl, feature->GetFID());
    const auto id = text(*feature, id_index, decode);
    if (!id) throw InputError(context + ": transect field '" + options.transect_field + "' is empty");
    const OGRGeometry* g = feature->GetGeometryRef();
    if (effort_index < 0 || !is_line) {
      if (g == nullptr || g->IsEmpty()) throw InputError(context + " (transect '" + *id + "'): has no geometry");
    }
    auto [it, inserted] = by_id.emplace(*id, geometries.size());
    if (inserted) geometries.push_back(TransectGeometry{*id, std::nullopt, {}, BgPoint(0, 0), 0.0, std::nullopt, 1.0});
    TransectGeometry& t = geometries[it->second];
    if (stratum_index >= 0) t.stratum = text(*feature, stratum_index, decode);
    if (visits_index >= 0) {
      const auto v = number(*feature, visits_index, context, "visits");
      if (v) {
        if (!(*v > 0.0)) throw InputError(context + " (transect '" + *id + "'): visits must be positive");
        t.visits = *v;
      }
    }
    if (g != nullptr && !g->IsEmpty()) {
      check_envelope(*g, transect_crs, context);
      std::unique_ptr<OGRGeometry> copy(g->clone());
      if (to_target && copy->transform(to_target.get()) != OGRERR_NONE)
        throw InputError(context + ": cannot be reprojected to the analysis CRS");
      if (is_line) {
        const auto type = wkbFlatten(copy->getGeometryType());
        if (type != wkbLineString && type != wkbMultiLineString)
          throw InputError(context + ": geometry is " + OGRGeometryTypeToName(copy->getGeometryType()) +
                           "; transects must be lines");
        BgMultiLine part;
        collect_lines(*copy, part);
        t.length_m += static_cast<double>(bg::length(part));
        for (auto& l : part) t.line.push_back(std::move(l));
      } else {
        if (wkbFlatten(copy->getGeometryType()) != wkbPoint)
          throw InputError(context + ": geometry is " + OGRGeometryTypeToName(copy->getGeometryType()) +
                           "; stations must be points");
        t.station = BgPoint(copy->toPoint()->getX(), copy->toPoint()->getY());
      }
    }
    if (effort_index >= 0 && is_line) {
      const auto e = number(*feature, effort_index, context, "effort");
      if (!e) throw InputError(context + " (transect '" + *id + "'): effort field '" + *options.effort_field + "' is empty");
      t.effort_km = t.effort_km.value_or(0.0) + *e;
    }
  });
  if (geometries.empty()) throw InputError(tl + ": holds no transects");
  for (const auto& t : geometries) {
    TransectUnit unit{t.id, t.stratum, 0.0};
    if (is_line) {
      const double km = t.effort_km.value_or(t.length_m / 1000.0);
      if (!(km > 0.0)) throw InputError(tl + ": transect '" + t.id + "' has zero length");
      unit.effort = km * t.visits;
    } else {
      unit.effort = t.visits;
    }
    loaded.survey.transects.push_back(unit);
  }

  // Sightings.
  const std::string& sl = loaded.sightings_label;
  const int species_index = required_field(sightings_layer, sl, options.species_field, "--species-field");
  const std::string sighting_transect_field = options.sighting_transect_field.value_or(options.transect_field);
  const int sighting_transect_index =
      options.assignment == Assignment::location ? -1 : field_index(sightings_layer, sighting_transect_field);
  if (sighting_transect_index < 0 && options.assignment == Assignment::attribute)
    throw InputError(sl + ": no transect field '" + sighting_transect_field + "' (fields: " + field_list(sightings_layer) +
                     "); name it with --sightings-transect-field, or assign by location with --assign location");
  if (sighting_transect_index >= 0)
    check_some_ids_match(sightings_layer, sl, sighting_transect_index, by_id, sighting_transect_field, options.transect_field);
  const int distance_index = options.distance_field ? required_field(sightings_layer, sl, *options.distance_field, "--distance-field") : -1;
  const int angle_index = options.angle_field ? required_field(sightings_layer, sl, *options.angle_field, "--angle-field") : -1;
  const int size_index = options.size_field ? required_field(sightings_layer, sl, *options.size_field, "--size-field") : -1;
  if (distance_index < 0 && !sightings_have_geometry)
    throw InputError(sl + ": has neither locations nor a distance field; name the distances with --distance-field");
  if (distance_index >= 0 && sighting_transect_index < 0 && !sightings_have_geometry)
    throw InputError(sl + ": recorded distances need the transect of each sighting: no field '" +
                     sighting_transect_field + "' (fields: " + field_list(sightings_layer) +
                     "); name it with --sightings-transect-field");
  TransformPtr sightings_to_target;
  if (sightings_crs) sightings_to_target = make_transform(*sightings_crs, target, sl);

  const LayerScan scan = scan_layer(sightings_layer, sl, is_csv_path(options.sightings.path), [&](OGRFeature& f) {
    OGRFeature* feature = &f;
    const std::string context = where(sl, feature->GetFID());
    TransectObservation o;
    const auto species = text(*feature, species_index, decode);
    if (!species) throw InputError(context + ": species field '" + options.species_field + "' is empty");
    o.species = *species;
    std::optional<std::size_t> named;
    if (const auto id = text(*feature, sighting_transect_index, decode)) {
      const auto found = by_id.find(*id);
      if (found == by_id.end())
        throw InputError(context + ": transect '" + *id + "' is not in " + tl);
      named = found->second;
    }
    std::optional<BgPoint> location;
    if (const OGRGeometry* g = feature->GetGeometryRef(); g != nullptr && !g->IsEmpty()) {
      if (wkbFlatten(g->getGeometryType()) != wkbPoint)
        throw InputError(context + ": geometry is " + OGRGeometryTypeToName(g->getGeometryType()) +
                         "; sightings must be points");
      double x = g->toPoint()->getX();
      double y = g->toPoint()->getY();
      if (!std::isfinite(x) || !std::isfinite(y)) throw InputError(context + ": coordinate is NaN or infinite");
      check_coordinate(x, y, *sightings_crs, context);
      if (sightings_to_target && !sightings_to_target->Transform(1, &x, &y))
        throw InputError(context + ": cannot be reprojected to the analysis CRS");
      location = BgPoint(x, y);
    }
    if (distance_index >= 0) {
      const auto d = number(*feature, distance_index, context, "distance");
      if (!d) throw InputError(context + ": distance field '" + *options.distance_field + "' is empty");
      if (!std::isfinite(*d)) throw InputError(context + ": distance is not a finite number");
      if (*d < 0.0) throw InputError(context + ": distance " + format_general(*d) + " is negative");
      if (*d > options.max_offset_m)
        throw InputError(context + ": distance " + format_general(*d) + " m is more than --max-offset " +
                         format_general(options.max_offset_m) + " m (wrong unit or a typing error?)");
      o.distance_m = *d;
      if (angle_index >= 0) {
        const auto a = number(*feature, angle_index, context, "angle");
        if (!a) throw InputError(context + ": angle field '" + *options.angle_field + "' is empty");
        if (is_line) o.distance_m = *d * std::abs(std::sin(*a * 3.14159265358979323846 / 180.0));
      }
      if (named) {
        o.transect = *named;
      } else if (location) {
        // Nearest transect to the recorded location carries the sighting.
        double best = std::numeric_limits<double>::infinity();
        for (std::size_t t = 0; t < geometries.size(); ++t) {
          const double dist = is_line ? static_cast<double>(bg::distance(*location, geometries[t].line))
                                      : static_cast<double>(bg::distance(*location, geometries[t].station));
          if (dist < best) {
            best = dist;
            o.transect = t;
          }
        }
        if (best > options.max_offset_m)
          throw InputError(context + ": lies " + format_fixed(best, 0) +
                           " m from the nearest transect, more than --max-offset " +
                           format_general(options.max_offset_m) + " m (wrong CRS or wrong transect file?)");
      } else {
        throw InputError(context + ": has neither a transect id ('" + sighting_transect_field +
                         "') nor a location, so its transect is unknown");
      }
    } else {
      if (!location) throw InputError(context + ": has no location and no recorded distance");
      double best = std::numeric_limits<double>::infinity();
      const auto distance_to = [&](std::size_t t) {
        return is_line ? static_cast<double>(bg::distance(*location, geometries[t].line))
                       : static_cast<double>(bg::distance(*location, geometries[t].station));
      };
      if (named) {
        best = distance_to(*named);
        o.transect = *named;
      } else {
        for (std::size_t t = 0; t < geometries.size(); ++t) {
          const double dist = distance_to(t);
          if (dist < best) {
            best = dist;
            o.transect = t;
          }
        }
      }
      if (best > options.max_offset_m)
        throw InputError(context + ": lies " + format_fixed(best, 0) + " m from " +
                         (named ? "its transect '" + geometries[*named].id + "'" : std::string("the nearest transect")) +
                         ", more than --max-offset " + format_general(options.max_offset_m) +
                         " m (wrong CRS or wrong transect file?)");
      o.distance_m = best;
    }
    if (!options.bin_edges.empty() &&
        (o.distance_m < options.bin_edges.front() || o.distance_m > options.bin_edges.back()))
      throw InputError(context + ": distance " + format_general(o.distance_m) + " m lies beyond all bins (" +
                       format_general(options.bin_edges.front()) + " to " +
                       format_general(options.bin_edges.back()) + " m)");
    if (size_index >= 0) {
      const auto s = number(*feature, size_index, context, "cluster size");
      if (!s) throw InputError(context + ": cluster size field '" + *options.size_field + "' is empty");
      if (!(*s > 0.0)) throw InputError(context + ": cluster size " + format_general(*s) + " must be positive");
      o.size = *s;
    }
    loaded.survey.observations.push_back(o);
  });
  if (scan.blank_rows > 0)
    loaded.notes.push_back(sl + ": " + std::to_string(scan.blank_rows) + " blank row(s) (every field empty) skipped");
  if (const std::string w = decode.warning(sl); !w.empty()) loaded.warnings.push_back(w);
  if (distance_index < 0)
    loaded.notes.push_back("distances computed from sighting locations to the " +
                           std::string(is_line ? "nearest (or named) transect line" : "nearest (or named) station"));

  if (options.study_area) {
    DatasetPtr area_ds = open_vector(options.study_area->path, {}, options.encoding);
    OGRLayer& area_layer = pick_layer(*area_ds, options.study_area->path, options.study_area->layer,
                                      LayerKind::polygons, "--study-area-layer");
    const std::string al = layer_label(options.study_area->path, area_layer);
    loaded.study_area_m2 = polygon_area(area_layer, layer_crs(area_layer, al, options.assume_crs), target, al,
                                        options.stratum_field, loaded.stratum_area_m2, loaded.crs.max_area_error);
    if (loaded.crs.max_area_error > max_crs_area_error)
      loaded.warnings.push_back("study-area polygons in " + loaded.crs.code + " differ from their geodesic areas by up to " +
                                format_significant(100.0 * loaded.crs.max_area_error, 2) + "% (choose an equal-area CRS with --crs)");
  }
  return loaded;
}

}  // namespace stipple
