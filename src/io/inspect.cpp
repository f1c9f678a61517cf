#include "stipple/io/inspect.hpp"

#include <algorithm>
#include <cmath>
#include "detail/gdal_util.hpp"

#include <cpl_error.h>

#include "stipple/error.hpp"

namespace stipple {

using namespace io_detail;

namespace {

bool is_polygonal(OGRwkbGeometryType type) {
  const auto flat = wkbFlatten(type);
  return flat == wkbPolygon || flat == wkbMultiPolygon || flat == wkbCurvePolygon || flat == wkbMultiSurface;
}

void summarise_plots(OGRLayer& layer, const std::optional<OGRSpatialReference>& crs, const InspectOptions& options,
                     LayerSummary& summary) {
  const int id_index = layer.GetLayerDefn()->GetFieldIndex(options.plot_field.c_str());
  TextDecoder decode(options.encoding);
  std::vector<std::unique_ptr<OGRGeometry>> shapes;
  layer.ResetReading();
  for (auto& feature : layer) {
    PlotAreaSummary plot;
    plot.id = id_index >= 0 && feature->IsFieldSetAndNotNull(id_index) ? decode(feature->GetFieldAsString(id_index))
                                                                       : "feature " + std::to_string(feature->GetFID());
    const OGRGeometry* geometry = feature->GetGeometryRef();
    std::unique_ptr<OGRGeometry> copy;
    if (geometry != nullptr && is_polygonal(geometry->getGeometryType())) {
      copy.reset(geometry->hasCurveGeometry() ? geometry->getLinearGeometry() : geometry->clone());
      plot.valid = copy->IsValid();
      plot.area_m2 = polygonal_area(*copy);
    }
    shapes.push_back(std::move(copy));
    summary.plots.push_back(std::move(plot));
  }
  if (!crs) {
    summary.area_crs = "layer units (no CRS)";
    return;
  }
  // The analysis rule: the layer's CRS when projected in metres with areas within 0.1% of
  // the geodesic ones, else the local equal-area CRS of the layer.
  std::vector<double> geodesic(shapes.size(), 0.0);
  std::vector<std::pair<double, double>> vertices;
  for (std::size_t i = 0; i < shapes.size(); ++i) {
    if (!shapes[i]) continue;
    BgMultiPolygon shape;
    collect_polygons(*shapes[i], shape);
    for (const auto& polygon : shape)
      for (const auto& v : polygon.outer())
        if (vertices.size() < 8192) vertices.emplace_back(v.x(), v.y());
    geodesic[i] = geodesic_area(shape, *crs, summary.name);
  }
  const auto error_in = [&](const OGRSpatialReference& candidate) {
    const TransformPtr transform = make_transform(*crs, candidate, summary.name);
    double worst = 0.0;
    for (std::size_t i = 0; i < shapes.size(); ++i) {
      if (!shapes[i] || !(geodesic[i] > 0.0)) continue;
      std::unique_ptr<OGRGeometry> copy(shapes[i]->clone());
      if (transform && copy->transform(transform.get()) != OGRERR_NONE) return 1.0;
      worst = std::max(worst, std::abs(polygonal_area(*copy) / geodesic[i] - 1.0));
    }
    return worst;
  };
  if (vertices.empty()) {
    summary.area_crs = crs_code(*crs);
    return;
  }
  const ChosenCrs chosen =
      choose_analysis_crs(std::nullopt, {{&*crs, "layer"}}, {CentreSample{&*crs, vertices}}, error_in, summary.name);
  summary.area_crs = chosen.code;
  summary.max_area_error = error_in(chosen.srs);
  const TransformPtr transform = make_transform(*crs, chosen.srs, summary.name);
  for (std::size_t i = 0; i < shapes.size(); ++i) {
    if (!shapes[i]) continue;
    CPLErrorReset();
    if (transform && shapes[i]->transform(transform.get()) != OGRERR_NONE)
      throw InputError(summary.name + ": " + summary.plots[i].id + " cannot be reprojected to measure its area (" +
                       last_gdal_message() + ")");
    summary.plots[i].area_m2 = polygonal_area(*shapes[i]);
  }
}

}  // namespace

SourceSummary inspect_source(const std::string& path, const InspectOptions& options) {
  const GdalScope gdal;
  DatasetPtr dataset = open_vector(path, CsvColumns{options.x_field, options.y_field}, options.encoding);
  SourceSummary source;
  source.path = path;
  source.driver = dataset->GetDriver() ? dataset->GetDriver()->GetDescription() : "unknown";
  for (int i = 0; i < dataset->GetLayerCount(); ++i) {
    OGRLayer& layer = *dataset->GetLayer(i);
    LayerSummary summary;
    summary.name = layer.GetName();
    summary.geometry_type = OGRGeometryTypeToName(layer.GetGeomType());
    summary.declared_count = declared_feature_count(layer);
    summary.feature_count = 0;
    std::optional<OGRSpatialReference> crs;
    if (layer.GetSpatialRef() != nullptr || options.assume_crs) {
      crs = layer_crs(layer, layer_label(path, layer), options.assume_crs);
      summary.crs = crs_code(*crs);
      summary.crs_name = crs_name(*crs);
      if (layer.GetSpatialRef() == nullptr) summary.crs += " (assumed)";
    } else {
      summary.crs = "none";
    }
    OGRFeatureDefn* defn = layer.GetLayerDefn();
    for (int f = 0; f < defn->GetFieldCount(); ++f) {
      const OGRFieldDefn* field = defn->GetFieldDefn(f);
      summary.fields.push_back({field->GetNameRef(), OGRFieldDefn::GetFieldTypeName(field->GetType())});
    }
    // Count by reading, as the analysis does, so a truncated file shows here too.
    const int species_index = defn->GetFieldIndex(options.species_field.c_str());
    std::map<std::string, std::int64_t> counts;
    TextDecoder decode(options.encoding);
    layer.ResetReading();
    CPLErrorReset();
    for (auto& feature : layer) {
      ++summary.feature_count;
      if (species_index < 0) continue;
      const std::string value =
          feature->IsFieldSetAndNotNull(species_index) ? decode(feature->GetFieldAsString(species_index)) : "(empty)";
      ++counts[value];
    }
    if (CPLGetLastErrorType() >= CE_Failure) summary.read_error = last_gdal_message();
    if (species_index >= 0) summary.species_counts = std::move(counts);
    if (decode.replaced() > 0) summary.undecodable_values = decode.replaced();
    if (is_polygonal(layer.GetGeomType())) summarise_plots(layer, crs, options, summary);
    source.layers.push_back(std::move(summary));
  }
  return source;
}

std::vector<LayerShape> layer_shapes(const std::string& path) {
  const GdalScope gdal;
  DatasetPtr dataset = open_vector(path);
  std::vector<LayerShape> shapes;
  for (int i = 0; i < dataset->GetLayerCount(); ++i) {
    OGRLayer* layer = dataset->GetLayer(i);
    if (layer == nullptr) continue;
    LayerShape shape;
    shape.name = layer->GetName();
    switch (wkbFlatten(layer->GetGeomType())) {
      case wkbPoint:
      case wkbMultiPoint: shape.family = GeometryFamily::point; break;
      case wkbLineString:
      case wkbMultiLineString:
      case wkbCircularString:
      case wkbCompoundCurve:
      case wkbMultiCurve: shape.family = GeometryFamily::line; break;
      case wkbPolygon:
      case wkbMultiPolygon:
      case wkbCurvePolygon:
      case wkbMultiSurface: shape.family = GeometryFamily::polygon; break;
      case wkbNone: shape.family = GeometryFamily::none; break;
      default: shape.family = GeometryFamily::mixed; break;
    }
    shapes.push_back(std::move(shape));
  }
  return shapes;
}

}  // namespace stipple
