#include "stipple/io/transect_reader.hpp"

#include <charconv>
#include <cmath>
#include <map>
#include <set>

#include <boost/geometry.hpp>
#include <boost/geometry/geometries/linestring.hpp>
#include <boost/geometry/geometries/multi_linestring.hpp>
#include <boost/math/constants/constants.hpp>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace bg = boost::geometry;

namespace stipple {

using namespace io_detail;

namespace {

using BgLine = bg::model::linestring<BgPoint>;
using BgMultiLine = bg::model::multi_linestring<BgLine>;

std::string where(const std::string& label, GIntBig fid) {
  return label + ": feature " + std::to_string(fid);
}

int field_index(OGRLayer& layer, const std::string& name) {
  return layer.GetLayerDefn()->GetFieldIndex(name.c_str());
}

int required_field(OGRLayer& layer, const std::string& label, const std::string& name, const std::string& option) {
  const int index = field_index(layer, name);
  if (index < 0)
    throw InputError(label + ": no field '" + name + "' (fields: " + field_list(layer) + "); name it with " + option,
                     {option});
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
  BgMultiLine line;       // lines
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
    if (const auto* s = dynamic_cast<const OGRSurface*>(copy.get()))
      area = s->get_Area();
    else if (const auto* m = dynamic_cast<const OGRMultiSurface*>(copy.get()))
      area = m->get_Area();
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
                       ", ...): assign by location (nearest transect) with assignment location, or name the "
                       "sightings' field with sighting_transect_field",
                   {"assignment", "sighting_transect_field"});
}

// The opened transect and sighting layers and the analysis CRS chosen for them.
struct OpenedSources {
  DatasetPtr transects_ds;
  DatasetPtr sightings_ds;
  OGRLayer* transect_layer = nullptr;
  OGRLayer* sightings_layer = nullptr;
  OGRSpatialReference transect_crs;
  std::optional<OGRSpatialReference> sightings_crs;
  bool sightings_have_geometry = false;
  OGRSpatialReference target;
};

OpenedSources open_sources(const TransectReadOptions& options, bool is_line, LoadedTransects& loaded) {
  const SourceSpec& spec = is_line ? *options.lines : *options.stations;
  OpenedSources s;
  s.transects_ds = open_vector(spec.path, {}, options.encoding);
  s.transect_layer = &pick_layer(*s.transects_ds, spec.path, spec.layer, is_line ? LayerKind::lines : LayerKind::points,
                                 is_line ? "lines.layer" : "stations.layer");
  loaded.transects_label = layer_label(spec.path, *s.transect_layer);
  s.transect_crs = layer_crs(*s.transect_layer, loaded.transects_label, options.assume_crs);

  s.sightings_ds = open_vector(options.sightings.path, CsvColumns{options.x_field, options.y_field}, options.encoding);
  s.sightings_layer = &pick_layer(*s.sightings_ds, options.sightings.path, options.sightings.layer, LayerKind::points,
                                  "sightings.layer");
  loaded.sightings_label = layer_label(options.sightings.path, *s.sightings_layer);
  s.sightings_have_geometry = wkbFlatten(s.sightings_layer->GetGeomType()) != wkbNone;
  if (s.sightings_have_geometry)
    s.sightings_crs = layer_crs(*s.sightings_layer, loaded.sightings_label, options.assume_crs);

  OGREnvelope extent;
  if (s.transect_layer->GetExtent(&extent, TRUE) != OGRERR_NONE)
    throw InputError(spec.path + ": the transect layer has no extent (no geometries?)");
  const ChosenCrs chosen = choose_analysis_crs(
      options.target_crs,
      {{&s.transect_crs, is_line ? "transect lines" : "point stations"},
       {s.sightings_crs ? &*s.sightings_crs : nullptr, "sightings"}},
      {CentreSample{&s.transect_crs, transect_vertices(*s.transect_layer, s.transect_crs, loaded.transects_label)}},
      nullptr, loaded.transects_label);
  loaded.crs = AnalysisCrs{chosen.code, chosen.name, chosen.reason, chosen.wkt, 0.0};
  s.target = chosen.srs;
  return s;
}

// Transects as read: geometry in the analysis CRS, merged by id.
struct TransectTable {
  std::vector<TransectGeometry> geometries;
  std::map<std::string, std::size_t> by_id;
};

// Adds one transect feature's geometry (reprojected) to its transect.
void add_transect_geometry(const OGRGeometry& g, const OGRSpatialReference& crs, OGRCoordinateTransformation* to_target,
                           bool is_line, const std::string& context, TransectGeometry& t) {
  check_envelope(g, crs, context);
  std::unique_ptr<OGRGeometry> copy(g.clone());
  if (to_target != nullptr && copy->transform(to_target) != OGRERR_NONE)
    throw InputError(context + ": cannot be reprojected to the analysis CRS");
  const auto type = wkbFlatten(copy->getGeometryType());
  if (is_line) {
    if (type != wkbLineString && type != wkbMultiLineString)
      throw InputError(context + ": geometry is " + OGRGeometryTypeToName(copy->getGeometryType()) +
                       "; transects must be lines");
    BgMultiLine part;
    collect_lines(*copy, part);
    t.length_m += static_cast<double>(bg::length(part));
    for (auto& l : part) t.line.push_back(std::move(l));
  } else {
    if (type != wkbPoint)
      throw InputError(context + ": geometry is " + OGRGeometryTypeToName(copy->getGeometryType()) +
                       "; stations must be points");
    t.station = BgPoint(copy->toPoint()->getX(), copy->toPoint()->getY());
  }
}

TransectTable read_transects(const TransectReadOptions& options, bool is_line, const OpenedSources& sources,
                             const std::string& tl, TextDecoder& decode) {
  OGRLayer& layer = *sources.transect_layer;
  const SourceSpec& spec = is_line ? *options.lines : *options.stations;
  const int id_index = required_field(layer, tl, options.transect_field, "transect_field");
  const int effort_index = options.effort_field ? required_field(layer, tl, *options.effort_field, "effort_field") : -1;
  const int visits_index = options.visits_field ? required_field(layer, tl, *options.visits_field, "visits_field")
                                                : field_index(layer, "visits");
  const int stratum_index =
      options.stratum_field ? required_field(layer, tl, *options.stratum_field, "stratum_field") : -1;
  const TransformPtr to_target = make_transform(sources.transect_crs, sources.target, tl);
  TransectTable table;
  scan_layer(layer, tl, is_csv_path(spec.path), [&](OGRFeature& feature) {
    const std::string context = where(tl, feature.GetFID());
    const auto id = text(feature, id_index, decode);
    if (!id) throw InputError(context + ": transect field '" + options.transect_field + "' is empty");
    const OGRGeometry* g = feature.GetGeometryRef();
    const bool has_geometry = g != nullptr && !g->IsEmpty();
    if (!has_geometry && (effort_index < 0 || !is_line))
      throw InputError(context + " (transect '" + *id + "'): has no geometry");
    auto [it, inserted] = table.by_id.emplace(*id, table.geometries.size());
    if (inserted)
      table.geometries.push_back(TransectGeometry{*id, std::nullopt, {}, BgPoint(0, 0), 0.0, std::nullopt, 1.0});
    TransectGeometry& t = table.geometries[it->second];
    if (stratum_index >= 0) t.stratum = text(feature, stratum_index, decode);
    if (const auto v = visits_index >= 0 ? number(feature, visits_index, context, "visits") : std::nullopt) {
      if (!(*v > 0.0)) throw InputError(context + " (transect '" + *id + "'): visits must be positive");
      t.visits = *v;
    }
    if (has_geometry) add_transect_geometry(*g, sources.transect_crs, to_target.get(), is_line, context, t);
    if (effort_index >= 0 && is_line) {
      const auto e = number(feature, effort_index, context, "effort");
      if (!e)
        throw InputError(context + " (transect '" + *id + "'): effort field '" + *options.effort_field + "' is empty");
      t.effort_km = t.effort_km.value_or(0.0) + *e;
    }
  });
  if (table.geometries.empty()) throw InputError(tl + ": holds no transects");
  return table;
}

// Effort of each transect: km of line times visits, or visits of a station.
std::vector<TransectUnit> transect_units(const TransectTable& table, bool is_line, const std::string& tl) {
  std::vector<TransectUnit> units;
  for (const auto& t : table.geometries) {
    TransectUnit unit{t.id, t.stratum, 0.0};
    if (is_line) {
      const double km = t.effort_km.value_or(t.length_m / 1000.0);
      if (!(km > 0.0)) throw InputError(tl + ": transect '" + t.id + "' has zero length");
      unit.effort = km * t.visits;
    } else {
      unit.effort = t.visits;
    }
    units.push_back(unit);
  }
  return units;
}

// Field indexes of the sightings layer, checked against the options.
struct SightingFields {
  int species = -1;
  int transect = -1;
  int distance = -1;
  int angle = -1;
  int size = -1;
  std::string transect_name;
};

SightingFields sighting_fields(const TransectReadOptions& options, const OpenedSources& sources,
                               const TransectTable& table, const std::string& sl) {
  OGRLayer& layer = *sources.sightings_layer;
  SightingFields f;
  f.species = required_field(layer, sl, options.species_field, "species_field");
  f.transect_name = options.sighting_transect_field.value_or(options.transect_field);
  f.transect = options.assignment == Assignment::location ? -1 : field_index(layer, f.transect_name);
  if (f.transect < 0 && options.assignment == Assignment::attribute)
    throw InputError(sl + ": no transect field '" + f.transect_name + "' (fields: " + field_list(layer) +
                         "); name it with sighting_transect_field, or assign by location with assignment location",
                     {"sighting_transect_field", "assignment"});
  if (f.transect >= 0)
    check_some_ids_match(layer, sl, f.transect, table.by_id, f.transect_name, options.transect_field);
  f.distance = options.distance_field ? required_field(layer, sl, *options.distance_field, "distance_field") : -1;
  f.angle = options.angle_field ? required_field(layer, sl, *options.angle_field, "angle_field") : -1;
  f.size = options.size_field ? required_field(layer, sl, *options.size_field, "size_field") : -1;
  if (f.distance < 0 && !sources.sightings_have_geometry)
    throw InputError(sl + ": has neither locations nor a distance field; name the distances with distance_field",
                     {"distance_field"});
  if (f.distance >= 0 && f.transect < 0 && !sources.sightings_have_geometry)
    throw InputError(sl + ": recorded distances need the transect of each sighting: no field '" + f.transect_name +
                         "' (fields: " + field_list(layer) + "); name it with sighting_transect_field",
                     {"sighting_transect_field"});
  return f;
}

// Reads one sighting at a time into an observation on its transect.
class SightingReader {
 public:
  SightingReader(const TransectReadOptions& options, bool is_line, const OpenedSources& sources,
                 const TransectTable& table, SightingFields fields, std::string tl, const std::string& sl,
                 TextDecoder& decode)
      : options_(options),
        is_line_(is_line),
        sources_(sources),
        table_(table),
        fields_(std::move(fields)),
        tl_(std::move(tl)),
        decode_(decode) {
    if (sources.sightings_crs) to_target_ = make_transform(*sources.sightings_crs, sources.target, sl);
  }

  TransectObservation read(OGRFeature& feature, const std::string& context) const {
    TransectObservation o;
    const auto species = text(feature, fields_.species, decode_);
    if (!species) throw InputError(context + ": species field '" + options_.species_field + "' is empty");
    o.species = *species;
    const std::optional<std::size_t> named = named_transect(feature, context);
    const std::optional<BgPoint> location = sighting_location(feature, context);
    if (fields_.distance >= 0) {
      o.distance_m = recorded_distance(feature, context);
      o.transect = recorded_transect(named, location, context);
    } else {
      if (!location) throw InputError(context + ": has no location and no recorded distance");
      const auto [transect, distance] = measured_distance(*location, named, context);
      o.transect = transect;
      o.distance_m = distance;
    }
    check_in_bins(o.distance_m, context);
    if (fields_.size >= 0) o.size = cluster_size(feature, context);
    return o;
  }

 private:
  std::optional<std::size_t> named_transect(OGRFeature& feature, const std::string& context) const {
    const auto id = text(feature, fields_.transect, decode_);
    if (!id) return std::nullopt;
    const auto found = table_.by_id.find(*id);
    if (found == table_.by_id.end()) throw InputError(context + ": transect '" + *id + "' is not in " + tl_);
    return found->second;
  }

  std::optional<BgPoint> sighting_location(OGRFeature& feature, const std::string& context) const {
    const OGRGeometry* g = feature.GetGeometryRef();
    if (g == nullptr || g->IsEmpty()) return std::nullopt;
    if (wkbFlatten(g->getGeometryType()) != wkbPoint)
      throw InputError(context + ": geometry is " + OGRGeometryTypeToName(g->getGeometryType()) +
                       "; sightings must be points");
    double x = g->toPoint()->getX();
    double y = g->toPoint()->getY();
    if (!std::isfinite(x) || !std::isfinite(y)) throw InputError(context + ": coordinate is NaN or infinite");
    check_coordinate(x, y, *sources_.sightings_crs, context);
    if (to_target_ && !to_target_->Transform(1, &x, &y))
      throw InputError(context + ": cannot be reprojected to the analysis CRS");
    return BgPoint(x, y);
  }

  // The perpendicular (line) or radial (point) distance recorded in the field, in metres.
  double recorded_distance(OGRFeature& feature, const std::string& context) const {
    const auto d = number(feature, fields_.distance, context, "distance");
    if (!d) throw InputError(context + ": distance field '" + *options_.distance_field + "' is empty");
    if (*d < 0.0) throw InputError(context + ": distance " + format_general(*d) + " is negative");
    if (*d > options_.max_offset_m)
      throw InputError(context + ": distance " + format_general(*d) + " m is more than max_offset_m " +
                           format_general(options_.max_offset_m) + " m (wrong unit or a typing error?)",
                       {"max_offset_m"});
    if (fields_.angle < 0) return *d;
    const auto a = number(feature, fields_.angle, context, "angle");
    if (!a) throw InputError(context + ": angle field '" + *options_.angle_field + "' is empty");
    // Perpendicular distance x = r |sin θ| from the sighting distance r and angle θ.
    return is_line_ ? *d * std::abs(std::sin(*a * boost::math::double_constants::degree)) : *d;
  }

  double distance_to(const BgPoint& location, std::size_t t) const {
    return is_line_ ? static_cast<double>(bg::distance(location, table_.geometries[t].line))
                    : static_cast<double>(bg::distance(location, table_.geometries[t].station));
  }

  std::pair<std::size_t, double> nearest(const BgPoint& location) const {
    double best = std::numeric_limits<double>::infinity();
    std::size_t which = 0;
    for (std::size_t t = 0; t < table_.geometries.size(); ++t) {
      const double dist = distance_to(location, t);
      if (dist < best) {
        best = dist;
        which = t;
      }
    }
    return {which, best};
  }

  // With a recorded distance: the named transect, else the one nearest the location.
  std::size_t recorded_transect(std::optional<std::size_t> named, const std::optional<BgPoint>& location,
                                const std::string& context) const {
    if (named) return *named;
    if (!location)
      throw InputError(context + ": has neither a transect id ('" + fields_.transect_name +
                       "') nor a location, so its transect is unknown");
    const auto [which, best] = nearest(*location);
    if (best > options_.max_offset_m)
      throw InputError(context + ": lies " + format_fixed(best, 0) +
                           " m from the nearest transect, more than max_offset_m " +
                           format_general(options_.max_offset_m) + " m (wrong CRS or wrong transect file?)",
                       {"max_offset_m"});
    return which;
  }

  // Without a recorded distance: the distance from the location to its named or nearest transect.
  std::pair<std::size_t, double> measured_distance(const BgPoint& location, std::optional<std::size_t> named,
                                                   const std::string& context) const {
    const auto [which, best] = named ? std::pair{*named, distance_to(location, *named)} : nearest(location);
    if (best > options_.max_offset_m)
      throw InputError(
          context + ": lies " + format_fixed(best, 0) + " m from " +
              (named ? "its transect '" + table_.geometries[*named].id + "'" : std::string("the nearest transect")) +
              ", more than max_offset_m " + format_general(options_.max_offset_m) +
              " m (wrong CRS or wrong transect file?)",
          {"max_offset_m"});
    return {which, best};
  }

  void check_in_bins(double distance_m, const std::string& context) const {
    const auto& edges = options_.bin_edges;
    if (!edges.empty() && (distance_m < edges.front() || distance_m > edges.back()))
      throw InputError(context + ": distance " + format_general(distance_m) + " m lies beyond all bins (" +
                       format_general(edges.front()) + " to " + format_general(edges.back()) + " m)");
  }

  double cluster_size(OGRFeature& feature, const std::string& context) const {
    const auto s = number(feature, fields_.size, context, "cluster size");
    if (!s) throw InputError(context + ": cluster size field '" + *options_.size_field + "' is empty");
    if (!(*s > 0.0)) throw InputError(context + ": cluster size " + format_general(*s) + " must be positive");
    return *s;
  }

  const TransectReadOptions& options_;
  bool is_line_;
  const OpenedSources& sources_;
  const TransectTable& table_;
  SightingFields fields_;
  std::string tl_;
  TextDecoder& decode_;
  TransformPtr to_target_;
};

void read_study_area(const TransectReadOptions& options, const OGRSpatialReference& target, LoadedTransects& loaded) {
  DatasetPtr area_ds = open_vector(options.study_area->path, {}, options.encoding);
  OGRLayer& area_layer = pick_layer(*area_ds, options.study_area->path, options.study_area->layer, LayerKind::polygons,
                                    "study_area.layer");
  const std::string al = layer_label(options.study_area->path, area_layer);
  loaded.study_area_m2 = polygon_area(area_layer, layer_crs(area_layer, al, options.assume_crs), target, al,
                                      options.stratum_field, loaded.stratum_area_m2, loaded.crs.max_area_error);
  if (loaded.crs.max_area_error > max_crs_area_error)
    loaded.warnings.push_back(
        "study-area polygons in " + loaded.crs.code + " differ from their geodesic areas by up to " +
        format_significant(100.0 * loaded.crs.max_area_error, 2) + "% (choose an equal-area analysis CRS)");
}

}  // namespace

LoadedTransects load_transects(const TransectReadOptions& options) {
  const GdalScope gdal;
  if (!options.lines == !options.stations)
    throw InputError("give the transects with exactly one of lines PATH or stations PATH", {"lines", "stations"});
  const bool is_line = options.lines.has_value();
  LoadedTransects loaded;
  const OpenedSources sources = open_sources(options, is_line, loaded);

  TextDecoder decode(options.encoding);
  const TransectTable table = read_transects(options, is_line, sources, loaded.transects_label, decode);
  std::vector<TransectUnit> units = transect_units(table, is_line, loaded.transects_label);
  std::vector<TransectObservation> observations;

  const std::string& sl = loaded.sightings_label;
  const SightingReader reader(options, is_line, sources, table, sighting_fields(options, sources, table, sl),
                              loaded.transects_label, sl, decode);
  const LayerScan scan = scan_layer(
      *sources.sightings_layer, sl, is_csv_path(options.sightings.path),
      [&](OGRFeature& feature) { observations.push_back(reader.read(feature, where(sl, feature.GetFID()))); });
  loaded.survey =
      TransectSurvey(is_line ? TransectKind::line : TransectKind::point, std::move(units), std::move(observations));
  if (scan.blank_rows > 0)
    loaded.notes.push_back(sl + ": " + std::to_string(scan.blank_rows) + " blank row(s) (every field empty) skipped");
  if (const std::string w = decode.warning(sl); !w.empty()) loaded.warnings.push_back(w);
  if (!options.distance_field)
    loaded.notes.push_back("distances computed from sighting locations to the " +
                           std::string(is_line ? "nearest (or named) transect line" : "nearest (or named) station"));
  if (options.study_area) read_study_area(options, sources.target, loaded);
  return loaded;
}

}  // namespace stipple
