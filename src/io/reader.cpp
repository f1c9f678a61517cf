#include "stipple/io/reader.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstring>
#include <functional>
#include <limits>
#include <locale>
#include <map>
#include <numeric>
#include <set>
#include <sstream>
#include <tuple>
#include <unordered_map>

#include <cpl_error.h>
#include <cpl_string.h>
#include <gdal_version.h>
#include <ogr_recordbatch.h>

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"

namespace stipple {

using namespace io_detail;

namespace {

std::string trim(const std::string& s) {
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
  out.imbue(std::locale::classic());  // numbers never follow a host's locale
  const std::size_t shown = std::min<std::size_t>(ids.size(), 20);
  for (std::size_t i = 0; i < shown; ++i) out << (i ? ", " : "") << ids[i];
  if (ids.size() > shown) out << ", ... (" << ids.size() - shown << " more)";
  return out.str();
}

std::string lower_ascii(std::string s) {
  for (char& c : s)
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  return s;
}

std::optional<std::string> field_text(OGRFeature& feature, int index, TextDecoder& decode) {
  if (index < 0 || !feature.IsFieldSetAndNotNull(index)) return std::nullopt;
  std::string value = trim(decode(feature.GetFieldAsString(index)));
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
            (feature.IsFieldSetAndNotNull(i) ? " = " + repair_utf8(feature.GetFieldAsString(i))
                                             : std::string(": empty or not a number"));
  }
  if (text.empty()) return " (empty coordinates?)";
  return ": coordinates must be finite numbers (" + text + ")";
}

// The sightings as read: columns in the layer's own CRS until projected in place.
struct SightingLayer {
  std::string label;
  OGRSpatialReference crs;
  SightingTable table;
  std::string plot_attribute;  // the sightings' plot field, when assignment may use it
};

// Codes names in order of first appearance.
class NameCoder {
 public:
  explicit NameCoder(std::vector<std::string>& names) : names_(names) {}
  std::uint32_t operator()(const std::string& name) {
    const auto [where, added] = codes_.try_emplace(name, static_cast<std::uint32_t>(names_.size()));
    if (added) names_.push_back(name);
    return where->second;
  }

 private:
  std::vector<std::string>& names_;
  std::unordered_map<std::string, std::uint32_t> codes_;
};

std::string quoted_list(const std::set<std::string>& names, std::size_t shown = 5) {
  std::string text;
  std::size_t i = 0;
  for (const auto& name : names) {
    if (i == shown) return text + ", ... (" + std::to_string(names.size() - shown) + " more)";
    text += (i++ ? ", '" : "'") + name + "'";
  }
  return text;
}

// Species names that differ only in case or surrounding spaces, as a warning (or empty).
std::string species_variant_warning(const std::map<std::string, std::set<std::string>>& forms) {
  std::string groups;
  std::size_t count = 0;
  for (const auto& [key, raw] : forms) {
    if (raw.size() < 2) continue;
    if (count++ < 10) groups += (groups.empty() ? "" : "; ") + quoted_list(raw, 6);
  }
  if (count == 0) return {};
  return std::to_string(count) + " species name(s) differ only in case or surrounding spaces: " + groups +
         (count > 10 ? "; ..." : "") +
         ". Surrounding spaces are removed (names equal after that are one species); names that "
         "differ in case are kept apart - correct the data if they are one species";
}

// Checks and codes each sighting read, by either reading path. Attribute values are decoded
// once per distinct raw value (a season has few species and plots, and many rows).
class RowSink {
 public:
  RowSink(SightingLayer& out, const SurveyReadOptions& options, TextDecoder& decode)
      : out_(out),
        options_(options),
        decode_(decode),
        species_code_(out.table.species_names),
        plot_code_(out.table.plot_names) {}

  void reserve(std::size_t n) {
    out_.table.locations.reserve(n);
    out_.table.feature_ids.reserve(n);
    out_.table.species.reserve(n);
  }

  // `species` and `plot`: the raw attribute text, or null when the field is unset or null.
  void add(GIntBig fid, double x, double y, const char* species, const char* plot) {
    if (!std::isfinite(x) || !std::isfinite(y))
      throw InputError(feature_label(out_.label, fid) + ": coordinate is NaN or infinite");
    check_coordinate(x, y, out_.crs, feature_label(out_.label, fid));
    const std::uint32_t species_code = species == nullptr ? no_value : code_species(species);
    if (species_code == no_value)
      throw InputError(feature_label(out_.label, fid) + ": species field '" + options_.species_field + "' is empty");
    SightingTable& table = out_.table;
    table.locations.push_back({x, y});
    table.feature_ids.push_back(static_cast<std::int64_t>(fid));
    table.species.push_back(species_code);
    const std::uint32_t plot_code = plot == nullptr ? no_value : code_plot(plot);
    if (plot_code != no_value) {
      if (table.plots.size() + 1 < table.locations.size()) table.plots.resize(table.locations.size() - 1, 0);
      table.plots.push_back(plot_code + 1);
    } else if (!table.plots.empty()) {
      table.plots.push_back(0);
    }
  }

  [[nodiscard]] const std::map<std::string, std::set<std::string>>& species_forms() const { return species_forms_; }

 private:
  static constexpr std::uint32_t no_value = std::numeric_limits<std::uint32_t>::max();
  struct Decoded {
    std::uint32_t code;
    std::int64_t replaced;  // values the decoder replaced on the way (0 or 1)
  };

  std::uint32_t code_species(const char* raw) {
    const auto [entry, added] = species_cache_.try_emplace(raw);
    if (added) {
      const std::int64_t before = decode_.replaced();
      const std::string written = decode_(raw);
      if (seen_forms_.insert(written).second) species_forms_[lower_ascii(trim(written))].insert(written);
      const std::string name = trim(written);
      entry->second = {name.empty() ? no_value : species_code_(name), decode_.replaced() - before};
    } else {
      decode_.count_replaced(entry->second.replaced);
    }
    return entry->second.code;
  }

  std::uint32_t code_plot(const char* raw) {
    const auto [entry, added] = plot_cache_.try_emplace(raw);
    if (added) {
      const std::int64_t before = decode_.replaced();
      const std::string name = trim(decode_(raw));
      entry->second = {name.empty() ? no_value : plot_code_(name), decode_.replaced() - before};
    } else {
      decode_.count_replaced(entry->second.replaced);
    }
    return entry->second.code;
  }

  SightingLayer& out_;
  const SurveyReadOptions& options_;
  TextDecoder& decode_;
  NameCoder species_code_;
  NameCoder plot_code_;
  std::unordered_map<std::string, Decoded> species_cache_;
  std::unordered_map<std::string, Decoded> plot_cache_;
  std::map<std::string, std::set<std::string>> species_forms_;  // lower-case trimmed -> as written
  std::set<std::string> seen_forms_;
};

// Releases an Arrow C structure when it goes out of scope.
template <typename T>
struct ArrowReleaser {
  T value{};
  ArrowReleaser() = default;
  ArrowReleaser(const ArrowReleaser&) = delete;
  ArrowReleaser& operator=(const ArrowReleaser&) = delete;
  ~ArrowReleaser() {
    if (value.release != nullptr) value.release(&value);
  }
};

bool arrow_valid(const ArrowArray& a, std::int64_t row) {
  if (a.null_count == 0 || a.buffers[0] == nullptr) return true;
  const std::int64_t i = a.offset + row;
  return (static_cast<const std::uint8_t*>(a.buffers[0])[i / 8] >> (i % 8)) & 1U;
}

// A point from WKB (ISO or extended, with Z/M dimensions), or false when it is none.
bool point_from_wkb(const std::uint8_t* wkb, std::size_t size, double& x, double& y, std::string& type_name) {
  const auto read_u32 = [](const std::uint8_t* p, bool little) {
    std::uint32_t v = 0;
    std::memcpy(&v, p, 4);
    if (little != (CPL_IS_LSB != 0)) v = __builtin_bswap32(v);
    return v;
  };
  const auto read_f64 = [](const std::uint8_t* p, bool little) {
    std::uint64_t v = 0;
    std::memcpy(&v, p, 8);
    if (little != (CPL_IS_LSB != 0)) v = __builtin_bswap64(v);
    double d = 0.0;
    std::memcpy(&d, &v, 8);
    return d;
  };
  if (size < 5) return false;
  bool little = wkb[0] == 1;
  std::uint32_t type = read_u32(wkb + 1, little);
  std::uint32_t base = (type & 0x0FFFFFFFU) % 1000U;
  if (base == 4U) {  // MultiPoint with exactly one point
    if (size < 9 + 5 || read_u32(wkb + 5, little) != 1U) {
      type_name = "MultiPoint of several points";
      return false;
    }
    wkb += 9;
    size -= 9;
    little = wkb[0] == 1;
    type = read_u32(wkb + 1, little);
    base = (type & 0x0FFFFFFFU) % 1000U;
  }
  if (base != 1U) {
    type_name = OGRGeometryTypeToName(static_cast<OGRwkbGeometryType>(base));
    return false;
  }
  if (size < 21) return false;
  x = read_f64(wkb + 5, little);
  y = read_f64(wkb + 13, little);
  return true;
}

// Reads the layer through OGR's columnar (Arrow) stream when the driver offers a fast one
// (GeoPackage, FlatGeobuf, ...; GDAL >= 3.6): no feature objects are made. Returns false,
// having read nothing, when the stream is not offered or the fields are not text, so the
// caller reads feature by feature. Checks what scan_layer checks: stream errors and the
// declared feature count.
bool read_through_arrow(OGRLayer& layer, const std::string& label, bool csv, int species_index, int plot_index,
                        RowSink& sink, const CancelToken& cancel, LayerScan& scan) {
#if GDAL_VERSION_NUM >= 3060000
  if (csv || !layer.TestCapability(OLCFastGetArrowStream)) return false;
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  if (defn->GetGeomFieldCount() != 1) return false;
  for (const int index : {species_index, plot_index})
    if (index >= 0 && defn->GetFieldDefn(index)->GetType() != OFTString) return false;
  // Only the fields needed: the others are ignored while streaming, and restored after.
  CPLStringList ignored;
  for (int i = 0; i < defn->GetFieldCount(); ++i)
    if (i != species_index && i != plot_index) ignored.AddString(defn->GetFieldDefn(i)->GetNameRef());
  ignored.AddString("OGR_STYLE");
  struct Restore {
    OGRLayer& layer;
    ~Restore() { layer.SetIgnoredFields(nullptr); }
  } restore{layer};
  if (layer.SetIgnoredFields(const_cast<const char**>(ignored.List())) != OGRERR_NONE) return false;
  const std::int64_t declared = declared_feature_count(layer);
  if (declared > 0) sink.reserve(static_cast<std::size_t>(declared));
  layer.ResetReading();
  CPLStringList stream_options;
  stream_options.SetNameValue("INCLUDE_FID", "YES");
  stream_options.SetNameValue("MAX_FEATURES_IN_BATCH", "8192");
  ArrowReleaser<ArrowArrayStream> stream;
  if (!layer.GetArrowStream(&stream.value, stream_options.List())) return false;
  ArrowReleaser<ArrowSchema> schema;
  if (stream.value.get_schema(&stream.value, &schema.value) != 0) return false;
  // Columns: the FID, then the fields not ignored in layer order, then the geometry.
  std::int64_t fid_column = -1;
  std::int64_t species_column = -1;
  std::int64_t plot_column = -1;
  std::int64_t geometry_column = -1;
  const std::string species_name = species_index >= 0 ? defn->GetFieldDefn(species_index)->GetNameRef() : "";
  const std::string plot_name = plot_index >= 0 ? defn->GetFieldDefn(plot_index)->GetNameRef() : "";
  const std::string geometry_name = defn->GetGeomFieldDefn(0)->GetNameRef();
  const std::string fid_name = layer.GetFIDColumn()[0] != '\0' ? layer.GetFIDColumn() : "OGC_FID";
  for (std::int64_t c = 0; c < schema.value.n_children; ++c) {
    const ArrowSchema& child = *schema.value.children[c];
    const std::string name = child.name != nullptr ? child.name : "";
    const std::string format = child.format != nullptr ? child.format : "";
    if (name == fid_name && format == "l")
      fid_column = c;
    else if (!species_name.empty() && name == species_name && format == "u")
      species_column = c;
    else if (!plot_name.empty() && name == plot_name && format == "u")
      plot_column = c;
    else if ((name == geometry_name || (geometry_name.empty() && name == "wkb_geometry")) && format == "z")
      geometry_column = c;
  }
  if (fid_column < 0 || geometry_column < 0 || (species_index >= 0 && species_column < 0) ||
      (plot_index >= 0 && plot_column < 0))
    return false;
  const auto text = [](const ArrowArray& a, std::int64_t row, std::string& buffer) -> const char* {
    if (!arrow_valid(a, row)) return nullptr;
    const auto* offsets = static_cast<const std::int32_t*>(a.buffers[1]);
    const auto* data = static_cast<const char*>(a.buffers[2]);
    const std::int64_t i = a.offset + row;
    buffer.assign(data + offsets[i], static_cast<std::size_t>(offsets[i + 1] - offsets[i]));
    return buffer.c_str();
  };
  std::string species_text;
  std::string plot_text;
  std::string type_name;
  std::int64_t read = 0;
  CPLErrorReset();
  while (true) {
    cancel.check();
    ArrowReleaser<ArrowArray> batch;
    if (stream.value.get_next(&stream.value, &batch.value) != 0) {
      const char* why = stream.value.get_last_error(&stream.value);
      throw InputError(label + ": read failed after " + std::to_string(read) + " features" +
                       (why != nullptr ? std::string(" (") + why + ")" : std::string()) + ": damaged file?");
    }
    if (batch.value.release == nullptr) break;  // end of stream
    const ArrowArray& fids = *batch.value.children[fid_column];
    const ArrowArray& geometries = *batch.value.children[geometry_column];
    const ArrowArray* species = species_column >= 0 ? batch.value.children[species_column] : nullptr;
    const ArrowArray* plots = plot_column >= 0 ? batch.value.children[plot_column] : nullptr;
    const auto* fid_values = static_cast<const std::int64_t*>(fids.buffers[1]);
    const auto* wkb_offsets = static_cast<const std::int32_t*>(geometries.buffers[1]);
    const auto* wkb_data = static_cast<const std::uint8_t*>(geometries.buffers[2]);
    for (std::int64_t row = 0; row < batch.value.length; ++row) {
      const GIntBig fid = fid_values[fids.offset + row];
      double x = 0.0;
      double y = 0.0;
      type_name.clear();
      const std::int64_t g = geometries.offset + row;
      const bool point = arrow_valid(geometries, row) &&
                         point_from_wkb(wkb_data + wkb_offsets[g],
                                        static_cast<std::size_t>(wkb_offsets[g + 1] - wkb_offsets[g]), x, y, type_name);
      if (!point && !type_name.empty())
        throw InputError(feature_label(label, fid) + ": geometry is " + type_name +
                         "; sightings must be single points");
      if (!point || (std::isnan(x) && std::isnan(y)))  // no geometry, or POINT EMPTY
        throw InputError(feature_label(label, fid) + ": has no point geometry");
      sink.add(fid, x, y, species ? text(*species, row, species_text) : nullptr,
               plots ? text(*plots, row, plot_text) : nullptr);
    }
    read += batch.value.length;
  }
  if (CPLGetLastErrorType() >= CE_Failure || (declared >= 0 && read != declared))
    throw InputError(label +
                     (declared >= 0 ? ": declares " + std::to_string(declared) + " features but only " : ": only ") +
                     std::to_string(read) + " could be read" +
                     (last_gdal_message().empty() ? std::string() : " (" + last_gdal_message() + ")") +
                     ": the file is truncated or damaged");
  scan.features = read;
  return true;
#else
  (void)layer, (void)label, (void)csv, (void)species_index, (void)plot_index, (void)sink, (void)cancel, (void)scan;
  return false;
#endif
}

SightingLayer read_sightings(const SurveyReadOptions& options, LoadedSurvey& loaded) {
  const auto& spec = options.sightings;
  DatasetPtr dataset = open_vector(spec.path, CsvColumns{options.x_field, options.y_field}, options.encoding);
  OGRLayer& layer = pick_layer(*dataset, spec.path, spec.layer, LayerKind::points, "sightings.layer");
  SightingLayer out;
  out.label = layer_label(spec.path, layer);
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  const bool csv = is_csv_path(spec.path);
  if (csv && wkbFlatten(layer.GetGeomType()) == wkbNone && defn->GetGeomFieldCount() == 0) {
    throw InputError(out.label + ": no coordinate columns found (fields: " + field_list(layer) +
                         "); name them with x_field and y_field",
                     {"x_field", "y_field"});
  }
  const int species_index = defn->GetFieldIndex(options.species_field.c_str());
  if (species_index < 0)
    throw InputError(out.label + ": no species field '" + options.species_field + "' (fields: " + field_list(layer) +
                         "); name it with species_field",
                     {"species_field"});
  const std::string plot_attribute = options.sighting_plot_field.value_or(options.plot_field);
  const int plot_index = options.assignment == Assignment::location ? -1 : defn->GetFieldIndex(plot_attribute.c_str());
  if (plot_index < 0 && options.assignment == Assignment::attribute)
    throw InputError(out.label + ": no plot field '" + plot_attribute + "' (fields: " + field_list(layer) +
                         "); name it with sighting_plot_field, or assign "
                         "by location with assignment location",
                     {"sighting_plot_field", "assignment"});
  if (plot_index >= 0) out.plot_attribute = plot_attribute;
  if (plot_index < 0 && options.assignment == Assignment::automatic &&
      (options.plot_field_given || options.sighting_plot_field) && options.window == WindowMode::plots) {
    loaded.notes.push_back(out.label + " has no field '" + plot_attribute +
                           "': sightings are assigned to plots by point-in-polygon");
  }
  out.crs = layer_crs(layer, out.label, options.assume_crs);
  if (layer.GetSpatialRef() == nullptr)
    loaded.notes.push_back(out.label + ": CRS assumed to be " + *options.assume_crs + " (as given)");

  TextDecoder decode(options.encoding);
  RowSink sink(out, options, decode);
  LayerScan scan;
  if (!read_through_arrow(layer, out.label, csv, species_index, plot_index, sink, options.cancel, scan)) {
    scan = scan_layer(
        layer, out.label, csv,
        [&](OGRFeature& feature) {
          const GIntBig fid = feature.GetFID();
          const OGRGeometry* geometry = feature.GetGeometryRef();
          if (geometry == nullptr || geometry->IsEmpty())
            throw InputError(feature_label(out.label, fid) + ": has no point geometry" +
                             csv_coordinate_text(feature, options));
          const auto type = wkbFlatten(geometry->getGeometryType());
          const OGRPoint* point = nullptr;
          if (type == wkbPoint) {
            point = geometry->toPoint();
          } else if (type == wkbMultiPoint && geometry->toMultiPoint()->getNumGeometries() == 1) {
            point = geometry->toMultiPoint()->getGeometryRef(0);
          } else {
            throw InputError(feature_label(out.label, fid) + ": geometry is " +
                             OGRGeometryTypeToName(geometry->getGeometryType()) + "; sightings must be single points");
          }
          const bool has_species = species_index >= 0 && feature.IsFieldSetAndNotNull(species_index);
          const bool has_plot = plot_index >= 0 && feature.IsFieldSetAndNotNull(plot_index);
          sink.add(fid, point->getX(), point->getY(), has_species ? feature.GetFieldAsString(species_index) : nullptr,
                   has_plot ? feature.GetFieldAsString(plot_index) : nullptr);
        },
        options.cancel);
  }
  if (scan.blank_rows > 0)
    loaded.notes.push_back(out.label + ": " + std::to_string(scan.blank_rows) +
                           " blank row(s) (every field empty) skipped");
  if (const std::string w = decode.warning(out.label); !w.empty()) loaded.warnings.push_back(w);
  if (const std::string w = species_variant_warning(sink.species_forms()); !w.empty())
    loaded.warnings.push_back(out.label + ": " + w);
  return out;
}

// One plot polygon as read, in the plots layer's own CRS.
struct RawPlot {
  std::string id;
  std::string where;
  std::unique_ptr<OGRGeometry> shape;
};

struct PlotLayer {
  std::string label;
  OGRSpatialReference crs;
  std::vector<RawPlot> features;
};

PlotLayer read_plots(OGRLayer& layer, const std::string& label, const OGRSpatialReference& crs,
                     const SurveyReadOptions& options, std::vector<std::string>& notes,
                     std::vector<std::string>& warnings) {
  PlotLayer out;
  out.label = label;
  out.crs = crs;
  OGRFeatureDefn* defn = layer.GetLayerDefn();
  const int id_index = defn->GetFieldIndex(options.plot_field.c_str());
  const bool id_from_layer_name = id_index < 0 && !options.plot_field_given && layer.GetFeatureCount() == 1;
  if (id_index < 0 && !id_from_layer_name)
    throw InputError(out.label + ": no plot field '" + options.plot_field + "' (fields: " + field_list(layer) +
                         "); name it with plot_field",
                     {"plot_field"});
  if (id_from_layer_name)
    notes.push_back(out.label + ": one polygon and no field '" + options.plot_field +
                    "': the plot id is the layer name");
  TextDecoder decode(options.encoding);
  std::size_t repaired = 0;
  const bool csv = options.plots && is_csv_path(options.plots->path);
  scan_layer(layer, out.label, csv, [&](OGRFeature& feature) {
    const std::string where = feature_label(out.label, feature.GetFID());
    const OGRGeometry* geometry = feature.GetGeometryRef();
    if (geometry == nullptr || geometry->IsEmpty()) throw InputError(where + ": plot polygon is empty");
    const auto type = wkbFlatten(geometry->getGeometryType());
    if (type != wkbPolygon && type != wkbMultiPolygon && type != wkbCurvePolygon && type != wkbMultiSurface)
      throw InputError(where + ": geometry is " + OGRGeometryTypeToName(geometry->getGeometryType()) +
                       "; plots must be polygons");
    check_envelope(*geometry, crs, where);
    std::unique_ptr<OGRGeometry> shape(geometry->hasCurveGeometry() ? geometry->getLinearGeometry()
                                                                    : geometry->clone());
    if (!shape->IsValid()) {
      // A collinear ring is invalid too; tell it apart from a self-intersecting outline by
      // what GDAL's MakeValid (GEOS) leaves of it.
      std::unique_ptr<OGRGeometry> valid(shape->MakeValid());
      if (!valid || valid->IsEmpty() || !(polygonal_area(*valid) > 0.0))
        throw InputError(where + ": plot polygon has zero area");
      if (!options.repair_geometry)
        throw InputError(where +
                             ": plot polygon is not valid (self-intersecting or with "
                             "crossing rings); fix it in a GIS or set repair_geometry",
                         {"repair_geometry"});
      shape = std::move(valid);
      ++repaired;
    }
    if (!(polygonal_area(*shape) > 0.0)) throw InputError(where + ": plot polygon has zero area");
    std::string id = id_from_layer_name ? decode(layer.GetName()) : std::string();
    if (!id_from_layer_name) {
      auto value = field_text(feature, id_index, decode);
      if (!value) throw InputError(where + ": plot field '" + options.plot_field + "' is empty");
      id = *value;
    }
    out.features.push_back(RawPlot{std::move(id), where, std::move(shape)});
  });
  if (out.features.empty()) throw InputError(out.label + ": holds no plot polygons");
  if (repaired > 0)
    notes.push_back(out.label + ": " + std::to_string(repaired) +
                    " invalid polygon(s) repaired with GDAL MakeValid, as asked");
  if (const std::string w = decode.warning(out.label); !w.empty()) warnings.push_back(w);
  return out;
}

// The plots in the analysis CRS; several features with one id form one plot in parts.
std::vector<Plot> project_plots(const PlotLayer& layer, const OGRSpatialReference& target) {
  const TransformPtr transform = make_transform(layer.crs, target, layer.label);
  std::vector<std::string> order;
  std::map<std::string, BgMultiPolygon> shapes;
  std::map<std::string, std::string> first_feature;
  for (const auto& raw : layer.features) {
    std::unique_ptr<OGRGeometry> shape(raw.shape->clone());
    CPLErrorReset();
    if (transform && (shape->transform(transform.get()) != OGRERR_NONE || !shape->IsValid()))
      throw InputError(raw.where + ": cannot be reprojected to the analysis CRS" +
                       (last_gdal_message().empty() ? std::string() : " (" + last_gdal_message() + ")"));
    if (!shapes.count(raw.id)) {
      order.push_back(raw.id);
      first_feature[raw.id] = raw.where;
    }
    collect_polygons(*shape, shapes[raw.id]);
  }
  std::vector<Plot> plots;
  plots.reserve(order.size());
  for (const auto& id : order)
    plots.push_back(Plot{id, Window::from_polygons(shapes[id], first_feature[id] + " (plot '" + id + "')")});
  return plots;
}

// Largest |planar / geodesic - 1| of the raw plots when measured in `candidate`.
double plot_area_error(const PlotLayer& layer, const std::vector<double>& geodesic,
                       const OGRSpatialReference& candidate) {
  const TransformPtr transform = make_transform(layer.crs, candidate, layer.label);
  double worst = 0.0;
  for (std::size_t i = 0; i < layer.features.size(); ++i) {
    std::unique_ptr<OGRGeometry> shape(layer.features[i].shape->clone());
    if (transform && shape->transform(transform.get()) != OGRERR_NONE) return 1.0;
    worst = std::max(worst, std::abs(polygonal_area(*shape) / geodesic[i] - 1.0));
  }
  return worst;
}

std::vector<std::pair<double, double>> thinned(std::vector<std::pair<double, double>> points) {
  constexpr std::size_t most = 4096;
  if (points.size() <= most) return points;
  std::vector<std::pair<double, double>> kept;
  const std::size_t step = points.size() / most + 1;
  for (std::size_t i = 0; i < points.size(); i += step) kept.push_back(points[i]);
  return kept;
}

AnalysisCrs choose_crs(const SurveyReadOptions& options, const SightingLayer& sightings, const PlotLayer* plots,
                       OGRSpatialReference& target) {
  std::vector<CentreSample> samples;
  std::vector<std::pair<double, double>> points;
  const auto& locations = sightings.table.locations;
  const std::size_t step = locations.size() <= 4096 ? 1 : locations.size() / 4096 + 1;  // as thinned()
  for (std::size_t i = 0; i < locations.size(); i += step) points.emplace_back(locations[i].x, locations[i].y);
  samples.push_back(CentreSample{&sightings.crs, std::move(points)});
  std::vector<double> geodesic;
  if (plots) {
    std::vector<std::pair<double, double>> vertices;
    for (const auto& raw : plots->features) {
      BgMultiPolygon shape;
      collect_polygons(*raw.shape, shape);
      for (const auto& polygon : shape)
        for (const auto& v : polygon.outer()) vertices.emplace_back(v.x(), v.y());
      geodesic.push_back(geodesic_area(shape, plots->crs, raw.where));
    }
    samples.push_back(CentreSample{&plots->crs, thinned(std::move(vertices))});
  }
  std::function<double(const OGRSpatialReference&)> area_error;
  if (plots)
    area_error = [&](const OGRSpatialReference& candidate) { return plot_area_error(*plots, geodesic, candidate); };
  ChosenCrs chosen = choose_analysis_crs(
      options.target_crs,
      {{&sightings.crs, "sightings"}, {plots ? &plots->crs : nullptr, "plots (sightings reprojected to it)"}}, samples,
      area_error, sightings.label);
  target = chosen.srs;
  return AnalysisCrs{chosen.code, chosen.name, chosen.reason, chosen.wkt, 0.0};
}

// Reprojects the sightings to the analysis CRS in place, in blocks.
void to_analysis_crs(SightingLayer& layer, const OGRSpatialReference& target) {
  const TransformPtr transform = make_transform(layer.crs, target, layer.label);
  if (!transform) return;
  auto& locations = layer.table.locations;
  constexpr std::size_t block = 4096;
  std::vector<double> x(block);
  std::vector<double> y(block);
  std::vector<int> ok(block);
  for (std::size_t first = 0; first < locations.size(); first += block) {
    const std::size_t m = std::min(block, locations.size() - first);
    for (std::size_t k = 0; k < m; ++k) {
      x[k] = locations[first + k].x;
      y[k] = locations[first + k].y;
    }
    transform->Transform(static_cast<int>(m), x.data(), y.data(), nullptr, ok.data());
    for (std::size_t k = 0; k < m; ++k) {
      if (!ok[k] || !std::isfinite(x[k]) || !std::isfinite(y[k]))
        throw InputError(feature_label(layer.label, layer.table.feature_ids[first + k]) +
                         ": cannot be reprojected to the analysis CRS (coordinates outside its "
                         "area of use?)");
      locations[first + k] = {x[k], y[k]};
    }
  }
}

std::vector<Plot> hull_plots(const SightingTable& table) {
  std::vector<std::string> order;
  std::map<std::string, std::vector<Point>> groups;
  for (std::size_t i = 0; i < table.size(); ++i) {
    const std::uint32_t code = table.plots.empty() ? 0 : table.plots[i];
    const std::string key = code == 0 ? std::string("hull") : table.plot_names[code - 1];
    if (!groups.count(key)) order.push_back(key);
    groups[key].push_back(table.locations[i]);
  }
  std::vector<Plot> plots;
  plots.reserve(order.size());
  for (const auto& key : order) plots.push_back(Plot{key, ripley_rasson_hull(groups[key], "plot '" + key + "'")});
  return plots;
}

// Groups of rows at exactly the same coordinates as read (before reprojection), each group's
// rows in (x, y, feature id) order.
std::vector<std::vector<std::uint32_t>> duplicate_rows(const SightingTable& raw) {
  std::vector<std::uint32_t> order(raw.size());
  std::iota(order.begin(), order.end(), 0U);
  std::sort(order.begin(), order.end(), [&](std::uint32_t a, std::uint32_t b) {
    const Point& p = raw.locations[a];
    const Point& q = raw.locations[b];
    return std::tie(p.x, p.y, raw.feature_ids[a]) < std::tie(q.x, q.y, raw.feature_ids[b]);
  });
  std::vector<std::vector<std::uint32_t>> out;
  for (std::size_t i = 0; i < order.size();) {
    std::size_t j = i + 1;
    const Point& p = raw.locations[order[i]];
    while (j < order.size() && raw.locations[order[j]].x == p.x && raw.locations[order[j]].y == p.y) ++j;
    if (j - i > 1)
      out.emplace_back(order.begin() + static_cast<std::ptrdiff_t>(i), order.begin() + static_cast<std::ptrdiff_t>(j));
    i = j;
  }
  return out;
}

// The duplicate groups with their location in the analysis CRS.
std::vector<DuplicateLocation> duplicate_locations(const std::vector<std::vector<std::uint32_t>>& groups,
                                                   const SightingTable& located) {
  std::vector<DuplicateLocation> out;
  for (const auto& rows : groups) {
    DuplicateLocation d{located.locations[rows.front()], {}};
    for (const auto row : rows) d.feature_ids.push_back(located.feature_ids[row]);
    out.push_back(std::move(d));
  }
  return out;
}

std::string duplicate_warning(const std::vector<DuplicateLocation>& duplicates) {
  std::size_t sightings = 0;
  std::string groups;
  for (std::size_t g = 0; g < duplicates.size(); ++g) {
    sightings += duplicates[g].feature_ids.size();
    if (g < 10) {
      std::string ids;
      for (const auto id : duplicates[g].feature_ids) ids += (ids.empty() ? "" : "=") + std::to_string(id);
      groups += (groups.empty() ? "" : ", ") + ids;
    }
  }
  return std::to_string(sightings) + " sightings share " + std::to_string(duplicates.size()) +
         " location(s) exactly (feature ids " + groups + (duplicates.size() > 10 ? ", ..." : "") +
         "): zero nearest-neighbour distances make a pattern look clustered; check for "
         "repeated records or coordinates rounded to a grid";
}

// Refuses a run in which no sighting, or fewer than half of them, fall in a plot.
void check_assignment(const Survey& survey, std::size_t total, const std::vector<std::string>& plot_values,
                      const SightingLayer& sightings, const std::string& plots_label,
                      const SurveyReadOptions& options) {
  const std::size_t assigned = survey.sighting_count();
  if (total == 0 || 2 * assigned >= total) return;
  const std::size_t unknown = survey.exclusions().unknown_plot_feature_ids.size();
  const std::size_t outside = survey.exclusions().outside_feature_ids.size();
  std::string message = sightings.label + ": only " + std::to_string(assigned) + " of " + std::to_string(total) +
                        " sightings fall in a plot of " + plots_label + " (" + std::to_string(outside) +
                        " outside every plot, " + std::to_string(unknown) + " naming a plot id that is not there)";
  if (unknown > 0) {
    std::set<std::string> ids;
    for (const auto& plot : survey.plots()) ids.insert(plot.id);
    std::set<std::string> values;
    for (const auto& name : plot_values)
      if (!ids.count(name)) values.insert(name);
    message += "; the sightings' field '" + sightings.plot_attribute + "' holds " + quoted_list(values, 3) +
               ", the plots' field '" + options.plot_field + "' holds " + quoted_list(ids, 3) +
               ": assign by location with assignment location, or name the sightings' plot "
               "field with sighting_plot_field";
    throw InputError(message, {"assignment", "sighting_plot_field"});
  }
  message += "; wrong CRS (see assume_crs) or the wrong plots file?";
  throw InputError(message, {"assume_crs"});
}

double window_area_error(const std::vector<Plot>& plots, const OGRSpatialReference& target) {
  double worst = 0.0;
  for (const auto& plot : plots) {
    const double geodesic = geodesic_area(plot.window.shape(), target, "plot '" + plot.id + "'");
    if (geodesic > 0.0) worst = std::max(worst, std::abs(plot.window.area_m2() / geodesic - 1.0));
  }
  return worst;
}

}  // namespace

LoadedSurvey load_survey(const SurveyReadOptions& options) {
  const GdalScope gdal;
  if (options.window == WindowMode::plots && !options.plots) {
    throw InputError(
        "the analysis needs the surveyed area: give the plot polygons with plots PATH "
        "(or window convex-hull for a model-based window estimated from the "
        "points)",
        {"plots", "window"});
  }
  LoadedSurvey loaded;
  loaded.window = options.window;
  loaded.model_based_window = options.window == WindowMode::convex_hull;
  SightingLayer sightings = read_sightings(options, loaded);
  loaded.sightings_label = sightings.label;

  DatasetPtr plots_dataset;
  std::optional<PlotLayer> plot_layer;
  if (options.window == WindowMode::plots) {
    plots_dataset = open_vector(options.plots->path, {}, options.encoding);
    OGRLayer& layer =
        pick_layer(*plots_dataset, options.plots->path, options.plots->layer, LayerKind::polygons, "plots.layer");
    loaded.plots_label = layer_label(options.plots->path, layer);
    const OGRSpatialReference crs = layer_crs(layer, loaded.plots_label, options.assume_crs);
    plot_layer = read_plots(layer, loaded.plots_label, crs, options, loaded.notes, loaded.warnings);
  }
  OGRSpatialReference target;
  loaded.crs = choose_crs(options, sightings, plot_layer ? &*plot_layer : nullptr, target);
  const auto duplicates = duplicate_rows(sightings.table);
  to_analysis_crs(sightings, target);
  const SightingTable& located = sightings.table;

  std::vector<Plot> plots;
  if (options.window == WindowMode::plots) {
    plots = project_plots(*plot_layer, target);
  } else {
    plots = hull_plots(located);
    loaded.warnings.push_back(
        "windows are Ripley-Rasson enlarged convex hulls of the sightings: the area is "
        "estimated from the points themselves, so densities are model-based (they assume a "
        "homogeneous Poisson pattern in a convex window), not design-based");
  }
  loaded.crs.max_area_error = window_area_error(plots, target);
  if (loaded.crs.max_area_error > max_crs_area_error)
    loaded.warnings.push_back("plot areas in " + loaded.crs.code +
                              " differ from their geodesic "
                              "(ellipsoidal) areas by up to " +
                              format_significant(100.0 * loaded.crs.max_area_error, 2) +
                              "%; densities carry that error (choose an equal-area analysis CRS)");
  loaded.duplicate_locations = duplicate_locations(duplicates, located);
  const std::size_t read_count = located.size();
  const std::vector<std::string> plot_values = located.plot_names;  // the table is released below
  loaded.survey = assign_to_plots(std::move(sightings.table), std::move(plots));
  if (options.window == WindowMode::plots)
    check_assignment(loaded.survey, read_count, plot_values, sightings, loaded.plots_label, options);
  if (!loaded.duplicate_locations.empty()) loaded.warnings.push_back(duplicate_warning(loaded.duplicate_locations));
  const Survey& s = loaded.survey;
  if (!s.exclusions().outside_feature_ids.empty())
    loaded.warnings.push_back(std::to_string(s.exclusions().outside_feature_ids.size()) +
                              " sighting(s) lie outside every plot and were excluded "
                              "(feature ids: " +
                              id_list(s.exclusions().outside_feature_ids) + ")");
  if (!s.exclusions().unknown_plot_feature_ids.empty())
    loaded.warnings.push_back(std::to_string(s.exclusions().unknown_plot_feature_ids.size()) +
                              " sighting(s) name a plot that is not among the plots and were "
                              "excluded (feature ids: " +
                              id_list(s.exclusions().unknown_plot_feature_ids) + ")");
  if (!s.exclusions().off_window_feature_ids.empty())
    loaded.warnings.push_back(std::to_string(s.exclusions().off_window_feature_ids.size()) +
                              " sighting(s) lie outside the polygon of the plot their '" + sightings.plot_attribute +
                              "' attribute names; kept by attribute "
                              "(feature ids: " +
                              id_list(s.exclusions().off_window_feature_ids) + ")");
  return loaded;
}

DetectionTable read_detection_table(const std::string& path, std::optional<Detection> fallback) {
  const GdalScope gdal;
  DatasetPtr dataset = open_vector(path);
  OGRLayer& layer = pick_layer(*dataset, path, std::nullopt, LayerKind::points, "");
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
    throw InputError(label + ": needs columns 'species' and 'p' (optional 'se'); found: " + field_list(layer));
  TextDecoder decode;
  const auto parse = [&](OGRFeature& feature, int index, const std::string& where, const char* what) -> double {
    const auto text = field_text(feature, index, decode);
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
  const bool csv = is_csv_path(path);
  scan_layer(layer, label, csv, [&](OGRFeature& feature) {
    // CSV feature ids count data rows from 1; the header is line 1.
    const std::string where = label + (csv ? ": line " + std::to_string(feature.GetFID() + 1)
                                           : ": feature " + std::to_string(feature.GetFID()));
    const auto species = field_text(feature, species_index, decode);
    if (!species) throw InputError(where + ": species is empty");
    const double p = parse(feature, p_index, where, "p");
    const double se =
        se_index >= 0 && field_text(feature, se_index, decode) ? parse(feature, se_index, where, "se") : 0.0;
    const Detection detection = make_detection(p, se, where + " (species '" + *species + "')");
    if (!rows.emplace(*species, detection).second)
      throw InputError(where + ": species '" + *species + "' is listed twice");
  });
  return DetectionTable::by_species(std::move(rows), fallback, label);
}

}  // namespace stipple
