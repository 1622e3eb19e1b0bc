// GeoJSON layers of the planning products through GDAL/OGR (detail/gdal_output), and the CEP
// contours by GDALContourGenerate on an in-memory raster in the map's UTM metres, each vertex
// then taken to WGS 84 by geodesy's utm_reverse.
#include "lobfix/planning_export.hpp"

#include <cpl_string.h>
#include <gdal_alg.h>

#include <cmath>
#include <memory>

#include "detail/gdal_output.hpp"
#include "lobfix/error.hpp"

namespace lobfix {

namespace {

using detail::check_ogr;
using detail::fail_output;

OGRLayer* create_layer(GDALDataset& ds, const std::string& path, OGRwkbGeometryType type) {
  CPLStringList layer_options;
  layer_options.SetNameValue("RFC7946", "YES");
  layer_options.SetNameValue("COORDINATE_PRECISION", "7");
  layer_options.SetNameValue("WRAPDATELINE", "NO");
  OGRSpatialReference srs = detail::wgs84_lon_lat();
  OGRLayer* layer = ds.CreateLayer("lobfix", &srs, type, layer_options.List());
  if (layer == nullptr)
    fail_output(path, "cannot create the layer");
  return layer;
}

void add_field(OGRLayer& layer, const std::string& path, const char* name, OGRFieldType type) {
  OGRFieldDefn defn(name, type);
  check_ogr(layer.CreateField(&defn), path, std::string("cannot create field ") + name);
}

std::string extension_of(const std::string& path) {
  const std::string e = detail::lower_extension(path);
  return e.empty() ? ".geojson" : e;
}

// Sentinel for no-data cells in the contouring raster (CEPs are positive).
constexpr double kNoData = -1.0;

}  // namespace

void write_next_geojson(const std::string& path, const Fix& fix, const NextBearingPlan& plan,
                        std::size_t top) {
  const std::size_t n = top == 0 ? plan.ranked.size() : std::min(top, plan.ranked.size());
  detail::write_atomically(path, "GeoJSON", extension_of(path), nullptr, [&](GDALDataset& ds) {
    OGRLayer* layer = create_layer(ds, path, wkbPoint);
    add_field(*layer, path, "kind", OFTString);
    add_field(*layer, path, "name", OFTString);
    add_field(*layer, path, "rank", OFTInteger);
    add_field(*layer, path, "team", OFTString);
    add_field(*layer, path, "distance_m", OFTReal);
    add_field(*layer, path, "predicted_area_m2", OFTReal);
    add_field(*layer, path, "predicted_cep_m", OFTReal);
    add_field(*layer, path, "crossing_deg", OFTReal);
    add_field(*layer, path, "mgrs", OFTString);
    add_field(*layer, path, "cep_m", OFTReal);
    add_field(*layer, path, "area_m2", OFTReal);
    const auto add_point = [&](const LatLon& p, const std::function<void(OGRFeature&)>& set) {
      OGRFeature feature(layer->GetLayerDefn());
      OGRPoint point(p.lon_deg, p.lat_deg);
      check_ogr(feature.SetGeometry(&point), path, "cannot set a point");
      set(feature);
      check_ogr(layer->CreateFeature(&feature), path, "cannot write a feature");
    };
    add_point(fix.position, [&](OGRFeature& f) {
      f.SetField("kind", "fix");
      f.SetField("name", fix.signal.c_str());
      f.SetField("cep_m", plan.current_cep_m);
      f.SetField("area_m2", plan.current_area_m2);
    });
    for (std::size_t i = 0; i < n; ++i) {
      const RankedSpot& r = plan.ranked[i];
      add_point(r.spot.position, [&](OGRFeature& f) {
        f.SetField("kind", "candidate");
        f.SetField("name", r.spot.name.c_str());
        f.SetField("rank", r.rank);
        f.SetField("team", r.spot.team.c_str());
        f.SetField("distance_m", r.spot.distance_m);
        f.SetField("predicted_area_m2", r.predicted_area_m2);
        f.SetField("predicted_cep_m", r.predicted_cep_m);
        f.SetField("crossing_deg", r.crossing_deg);
        f.SetField("mgrs", r.mgrs.c_str());
      });
    }
  });
}

void write_cep_contours_geojson(const std::string& path, const CoverageMap& map,
                                const std::vector<double>& levels_m) {
  for (const double level : levels_m) {
    if (!(level > 0.0 && std::isfinite(level)))
      throw InputError({path, 0, 0, "contours", "a contour level must be a CEP above 0 m"});
  }
  const UtmGrid& grid = map.grid;
  if (grid.size() == 0 || map.cep_m.size() != grid.size())
    throw InputError({path, 0, 0, "grid", "the map has no cells"});
  detail::register_gdal();

  // Contours in UTM metres into an in-memory layer.
  detail::QuietGdal quiet;
  GDALDriver* mem = GetGDALDriverManager()->GetDriverByName("MEM");
  GDALDriver* memory_vector = GetGDALDriverManager()->GetDriverByName("Memory");
  if (mem == nullptr || memory_vector == nullptr)
    fail_output(path, "GDAL has no in-memory driver");
  const std::unique_ptr<GDALDataset> raster(
      mem->Create("", grid.columns, grid.rows, 1, GDT_Float64, nullptr));
  const std::unique_ptr<GDALDataset> lines(
      memory_vector->Create("", 0, 0, 0, GDT_Unknown, nullptr));
  if (!raster || !lines)
    fail_output(path, "cannot make the in-memory contour data");
  double transform[6] = {grid.west_m, grid.cell_m, 0.0, grid.north_m, 0.0, -grid.cell_m};
  raster->SetGeoTransform(transform);
  std::vector<double> cells(map.cep_m.size());
  for (std::size_t i = 0; i < cells.size(); ++i)
    cells[i] = std::isfinite(map.cep_m[i]) ? map.cep_m[i] : kNoData;
  GDALRasterBand* band = raster->GetRasterBand(1);
  if (band->RasterIO(GF_Write, 0, 0, grid.columns, grid.rows, cells.data(), grid.columns, grid.rows,
                     GDT_Float64, 0, 0) != CE_None)
    fail_output(path, "cannot fill the in-memory raster");
  OGRLayer* utm = lines->CreateLayer("contours", nullptr, wkbLineString, nullptr);
  if (utm == nullptr)
    fail_output(path, "cannot make the in-memory contour layer");
  add_field(*utm, path, "id", OFTInteger);
  add_field(*utm, path, "cep_m", OFTReal);
  std::vector<double> levels = levels_m;
  if (!levels.empty() &&
      GDALContourGenerate(band, 0.0, 0.0, static_cast<int>(levels.size()), levels.data(), TRUE,
                          kNoData, utm, 0, 1, nullptr, nullptr) != CE_None) {
    fail_output(path, "contouring failed");
  }

  detail::write_atomically(path, "GeoJSON", extension_of(path), nullptr, [&](GDALDataset& ds) {
    OGRLayer* layer = create_layer(ds, path, wkbLineString);
    add_field(*layer, path, "kind", OFTString);
    add_field(*layer, path, "cep_m", OFTReal);
    utm->ResetReading();
    for (std::unique_ptr<OGRFeature> in(utm->GetNextFeature()); in;
         in.reset(utm->GetNextFeature())) {
      const OGRGeometry* g = in->GetGeometryRef();
      if (g == nullptr || wkbFlatten(g->getGeometryType()) != wkbLineString)
        continue;
      const auto* ls = g->toLineString();
      OGRLineString out;
      for (int i = 0; i < ls->getNumPoints(); ++i) {
        const LatLon p = utm_reverse(grid.zone, ls->getX(i), ls->getY(i));
        out.addPoint(p.lon_deg, p.lat_deg);
      }
      OGRFeature feature(layer->GetLayerDefn());
      feature.SetField("kind", "cep_contour");
      feature.SetField("cep_m", in->GetFieldAsDouble("cep_m"));
      check_ogr(feature.SetGeometry(&out), path, "cannot set a contour");
      check_ogr(layer->CreateFeature(&feature), path, "cannot write a contour");
    }
  });
}

}  // namespace lobfix
