#include "stipple/io/inspect.hpp"

#include "detail/gdal_util.hpp"
#include "stipple/error.hpp"

namespace stipple {

using namespace io_detail;

namespace {

bool is_polygonal(OGRwkbGeometryType type) {
  const auto flat = wkbFlatten(type);
  return flat == wkbPolygon || flat == wkbMultiPolygon || flat == wkbCurvePolygon ||
         flat == wkbMultiSurface;
}

void summarise_plots(OGRLayer& layer, const std::optional<OGRSpatialReference>& crs,
                     const InspectOptions& options, LayerSummary& summary) {
  TransformPtr transform;
  if (crs && !is_projected_metres(*crs)) {
    OGREnvelope extent;
    if (layer.GetExtent(&extent, TRUE) == OGRERR_NONE) {
      double x = (extent.MinX + extent.MaxX) / 2.0;
      double y = (extent.MinY + extent.MaxY) / 2.0;
      const OGRSpatialReference wgs84 = parse_crs("EPSG:4326", "WGS 84");
      const TransformPtr to_wgs84 = make_transform(*crs, wgs84, summary.name);
      if (!to_wgs84 || to_wgs84->Transform(1, &x, &y)) {
        std::string code;
        const OGRSpatialReference utm = utm_for(x, y, code);
        transform = make_transform(*crs, utm, summary.name);
        summary.area_crs = code;
      }
    }
  } else if (crs) {
    summary.area_crs = crs_code(*crs);
  } else {
    summary.area_crs = "layer units (no CRS)";
  }
  const int id_index = layer.GetLayerDefn()->GetFieldIndex(options.plot_field.c_str());
  layer.ResetReading();
  for (auto& feature : layer) {
    PlotAreaSummary plot;
    plot.id = id_index >= 0 && feature->IsFieldSetAndNotNull(id_index)
                  ? std::string(feature->GetFieldAsString(id_index))
                  : "feature " + std::to_string(feature->GetFID());
    const OGRGeometry* geometry = feature->GetGeometryRef();
    if (geometry != nullptr && is_polygonal(geometry->getGeometryType())) {
      std::unique_ptr<OGRGeometry> copy(geometry->clone());
      plot.valid = copy->IsValid();
      if (transform) copy->transform(transform.get());
      if (const auto* surface = dynamic_cast<const OGRSurface*>(copy.get()))
        plot.area_m2 = surface->get_Area();
      else if (const auto* multi = dynamic_cast<const OGRMultiSurface*>(copy.get()))
        plot.area_m2 = multi->get_Area();
    }
    summary.plots.push_back(std::move(plot));
  }
}

}  // namespace

SourceSummary inspect_source(const std::string& path, const InspectOptions& options) {
  DatasetPtr dataset = open_vector(path, CsvColumns{options.x_field, options.y_field});
  SourceSummary source;
  source.path = path;
  source.driver = dataset->GetDriver() ? dataset->GetDriver()->GetDescription() : "unknown";
  for (int i = 0; i < dataset->GetLayerCount(); ++i) {
    OGRLayer& layer = *dataset->GetLayer(i);
    LayerSummary summary;
    summary.name = layer.GetName();
    summary.geometry_type = OGRGeometryTypeToName(layer.GetGeomType());
    summary.feature_count = layer.GetFeatureCount();
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
    const int species_index = defn->GetFieldIndex(options.species_field.c_str());
    if (species_index >= 0) {
      std::map<std::string, std::int64_t> counts;
      layer.ResetReading();
      for (auto& feature : layer) {
        const std::string value = feature->IsFieldSetAndNotNull(species_index)
                                      ? feature->GetFieldAsString(species_index)
                                      : "(empty)";
        ++counts[value];
      }
      summary.species_counts = std::move(counts);
    }
    if (is_polygonal(layer.GetGeomType())) summarise_plots(layer, crs, options, summary);
    source.layers.push_back(std::move(summary));
  }
  return source;
}

}  // namespace stipple
