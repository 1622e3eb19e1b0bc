// Tests of the search-area files (lobfix/export.hpp, lobfix/raster.hpp) read back with GDAL,
// an independent reader of GeoTIFF (OGC 19-008r4), GeoPackage (OGC 12-128r18), GPX 1.1 and
// GeoJSON (RFC 7946). Scenario invented.
#include <gdal_priv.h>
#include <ogrsf_frmts.h>
#include <GeographicLib/Geodesic.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <string>
#include <vector>

#include "lobfix/export.hpp"
#include "lobfix/raster.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/solver.hpp"
#include "lobfix/summary.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

struct Scenario {
  std::vector<Bearing> bearings;
  std::vector<FixResult> results;
  std::vector<SearchArea> areas;
};

Scenario make_scenario() {
  const GeographicLib::Geodesic& g = GeographicLib::Geodesic::WGS84();
  const LatLon t{-41.25, 172.61};
  Scenario s;
  const double az[] = {15, 130, 250};
  const double noise[] = {1.0, -0.6, 0.9};
  for (int i = 0; i < 3; ++i) {
    double lat = 0, lon = 0, s12 = 0, a1 = 0, a2 = 0;
    g.Direct(t.lat_deg, t.lon_deg, az[i], 3000.0 + 700 * i, lat, lon);
    g.Inverse(lat, lon, t.lat_deg, t.lon_deg, s12, a1, a2);
    Bearing b;
    b.station = "T" + std::to_string(i);
    b.signal = "tag7";
    b.lat_deg = lat;
    b.lon_deg = lon;
    b.azimuth_deg = wrap_deg360(a1 + noise[i]);
    b.sigma_deg = 2.5;
    b.source = {"invented.csv", i + 2};
    s.bearings.push_back(b);
  }
  FixResult r;
  r.fix = solve_fix(s.bearings);
  r.fix.signal = "tag7";
  r.uncertainty = describe_uncertainty(r.fix, {});
  s.results.push_back(r);
  SearchAreaOptions o;
  o.map.cell_m = 25;
  o.searched = {{"S01", 0.5}};
  s.areas.push_back(make_search_area(s.bearings, r, o));
  return s;
}

}  // namespace

TEST_CASE("the probability GeoTIFF reads back georeferenced in the fix's UTM zone, summing to 1") {
  GDALAllRegister();
  const Scenario s = make_scenario();
  const SearchArea& a = s.areas.at(0);
  REQUIRE(a.map.ok);
  const std::vector<float> cells(a.map.mass.begin(), a.map.mass.end());
  const std::string path = lobfix_test::tmp_path("area.tif");
  write_geotiff(path, a.map.grid, cells);
  GDALDataset* ds = static_cast<GDALDataset*>(GDALOpen(path.c_str(), GA_ReadOnly));
  REQUIRE(ds != nullptr);
  // Zone 59 south holds 172.61 E, 41.25 S (zones are 6 deg wide from 180 W; EPSG 32759 is
  // WGS 84 / UTM zone 59S).
  CHECK(std::string(ds->GetSpatialRef()->GetAuthorityCode(nullptr)) == "32759");
  double t[6] = {};
  REQUIRE(ds->GetGeoTransform(t) == CE_None);
  CHECK(t[1] == 25.0);
  CHECK(std::fmod(t[0], 250.0) == 0.0);  // edges on the segment lattice
  std::vector<float> back(a.map.grid.size());
  REQUIRE(ds->GetRasterBand(1)->RasterIO(GF_Read, 0, 0, a.map.grid.columns, a.map.grid.rows,
                                         back.data(), a.map.grid.columns, a.map.grid.rows,
                                         GDT_Float32, 0, 0) == CE_None);
  double sum = 0.0;
  for (const float v : back)
    sum += v;
  CHECK_ABS(sum, 1.0, 1e-4);  // float32 cells
  GDALClose(ds);
}

TEST_CASE("GeoPackage, GPX and GeoJSON carry the regions and the segments") {
  GDALAllRegister();
  const Scenario s = make_scenario();
  REQUIRE(s.areas.at(0).map.ok);
  const std::size_t segments = s.areas[0].plan.segments.size();
  REQUIRE(segments > 0);
  const std::string gpkg = lobfix_test::tmp_path("area.gpkg");
  write_geopackage(gpkg, s.bearings, s.results, s.areas);
  GDALDataset* ds = static_cast<GDALDataset*>(
      GDALOpenEx(gpkg.c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr));
  REQUIRE(ds != nullptr);
  std::map<std::string, long long> counts;
  for (int i = 0; i < ds->GetLayerCount(); ++i)
    counts[ds->GetLayer(i)->GetName()] = ds->GetLayer(i)->GetFeatureCount();
  CHECK(counts["stations"] == 3);
  CHECK(counts["rays"] == 3);
  CHECK(counts["fixes"] == 1);
  CHECK(counts["ellipses"] == 2);
  CHECK(counts["regions"] == 2);
  CHECK(counts["segments"] == static_cast<long long>(segments));
  OGRLayer* seg = ds->GetLayerByName("segments");
  double poa = 0.0;
  for (auto& f : *seg)
    poa += f->GetFieldAsDouble("poa");
  CHECK_ABS(poa + s.areas[0].plan.rest_poa, 1.0, 1e-9);
  GDALClose(ds);

  const std::string gpx = lobfix_test::tmp_path("area.gpx");
  write_gpx_waypoints(gpx, s.results, s.areas);
  ds =
      static_cast<GDALDataset*>(GDALOpenEx(gpx.c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr));
  REQUIRE(ds != nullptr);
  OGRLayer* wpt = ds->GetLayerByName("waypoints");
  REQUIRE(wpt != nullptr);
  CHECK(wpt->GetFeatureCount() == static_cast<long long>(segments + 1));
  int fixes = 0;
  for (auto& f : *wpt) {
    const std::string name = f->GetFieldAsString("name");
    CHECK(name.size() <= 10);
    fixes += name == "FIX" ? 1 : 0;
  }
  CHECK(fixes == 1);
  GDALClose(ds);

  const std::string geojson = lobfix_test::tmp_path("area.geojson");
  write_geojson(geojson, s.bearings, s.results, s.areas);
  ds = static_cast<GDALDataset*>(
      GDALOpenEx(geojson.c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr));
  REQUIRE(ds != nullptr);
  std::map<std::string, int> kinds;
  for (auto& f : *ds->GetLayer(0))
    ++kinds[f->GetFieldAsString("kind")];
  CHECK(kinds["region"] == 2);
  CHECK(kinds["segment"] == static_cast<int>(segments));
  GDALClose(ds);

  // The CSV team list: a header, one row per segment, and the rest.
  const std::string csv = segments_csv(s.areas);
  CHECK(std::count(csv.begin(), csv.end(), '\n') == static_cast<long>(segments + 2));
  CHECK(csv.find("tag7,,rest,") != std::string::npos);
}
