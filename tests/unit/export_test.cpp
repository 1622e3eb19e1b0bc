// Tests of lobfix/export.hpp: GeoJSON and KML files written through GDAL, read back.
//
// References: RFC 7946 (GeoJSON: [lon, lat] order, FeatureCollection, outer rings
// counter-clockwise, longitudes within [-180, 180] with shapes cut at the antimeridian);
// OGC 07-147r2 (KML 2.2: Style in the Document, colours as aabbggrr, tessellate and
// altitudeMode); GDAL 3.6 reading the files back (an independent parser of both formats);
// nlohmann::json parsing the GeoJSON text without GDAL; GeographicLib (Karney 2013) for
// distances along the rays. Scenarios, stations and signals are invented.
#include "lobfix/export.hpp"

#include <cpl_string.h>
#include <cpl_vsi.h>
#include <gdal_priv.h>
#include <ogr_geometry.h>
#include <ogrsf_frmts.h>
#include <GeographicLib/Geodesic.hpp>
#include <nlohmann/json.hpp>

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <filesystem>
#include <fstream>
#include <functional>
#include <map>
#include <memory>
#include <sstream>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"
#include "test_support.hpp"

namespace {

namespace fs = std::filesystem;
using lobfix::Bearing;
using lobfix::BearingFit;
using lobfix::Ellipse;
using lobfix::FixResult;
using lobfix::LatLon;

double distance_m(const LatLon& a, const LatLon& b) {
  double s12 = 0.0;
  GeographicLib::Geodesic::WGS84().Inverse(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg, s12);
  return s12;
}
double azimuth_deg(const LatLon& a, const LatLon& b) {
  double s12 = 0.0;
  double azi1 = 0.0;
  double azi2 = 0.0;
  GeographicLib::Geodesic::WGS84().Inverse(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg, s12, azi1,
                                           azi2);
  return lobfix::wrap_deg360(azi1);
}

Bearing make_bearing(const std::string& station, const std::string& signal, const LatLon& at,
                     double azimuth, int line) {
  Bearing b;
  b.station = station;
  b.signal = signal;
  b.time_text = "2031-04-0" + std::to_string(line % 9 + 1) + "T10:15:00Z";
  b.lat_deg = at.lat_deg;
  b.lon_deg = at.lon_deg;
  b.azimuth_deg = azimuth;
  b.sigma_deg = 2.5;
  b.source = {"field.csv", line};
  return b;
}

/// A scenario: bearings of signal `signal` from `stations` toward `fix` (with small
/// made-up misses), the FixResult built by hand with 50% and 95% ellipses, plus bearings
/// of a second signal "quiet" that has no fix.
struct Scenario {
  std::vector<Bearing> bearings;
  std::vector<FixResult> results;
};

Scenario make_scenario(const LatLon& fix, const std::vector<LatLon>& stations, const Ellipse& e50,
                       const Ellipse& e95, bool scaled) {
  Scenario s;
  FixResult r;
  r.fix.signal = "ch7";
  r.fix.status = lobfix::FixStatus::ok;
  r.fix.position = fix;
  const double misses_deg[] = {0.8, -1.1, 0.4, 1.6, -0.3};
  double chi2 = 0.0;
  for (std::size_t i = 0; i < stations.size(); ++i) {
    const double predicted = azimuth_deg(stations[i], fix);
    const double miss = misses_deg[i % 5];
    s.bearings.push_back(make_bearing("walker-" + std::to_string(i % 2 + 1), "ch7", stations[i],
                                      lobfix::wrap_deg360(predicted + miss),
                                      static_cast<int>(i) + 2));
    BearingFit f;
    f.index = i;
    f.predicted_azimuth_deg = predicted;
    f.residual_deg = miss;
    f.effective_sigma_deg = 2.5;
    f.normalized_residual = miss / 2.5;
    f.range_m = distance_m(stations[i], fix);
    chi2 += f.normalized_residual * f.normalized_residual;
    r.fix.bearings.push_back(f);
  }
  r.fix.chi2 = chi2;
  r.fix.dof = static_cast<int>(stations.size()) - 2;
  r.uncertainty.ellipses = {e50, e95};
  r.uncertainty.cep_m = 0.9 * e50.semi_major_m;
  r.uncertainty.p_value = 0.42;
  if (scaled) {
    r.uncertainty.sigmas_too_small = true;
    Ellipse s50 = e50;
    Ellipse s95 = e95;
    s50.semi_major_m *= 2;
    s50.semi_minor_m *= 2;
    s95.semi_major_m *= 2;
    s95.semi_minor_m *= 2;
    r.uncertainty.scaled_ellipses = {s50, s95};
  }
  s.results.push_back(r);
  // A signal heard once: no fix.
  FixResult none;
  none.fix.signal = "quiet";
  none.fix.status = lobfix::FixStatus::too_few_bearings;
  s.results.push_back(none);
  s.bearings.push_back(make_bearing("walker-1", "quiet", stations[0], 200.0, 40));
  return s;
}

// Scenario A: three positions of two walkers (walker-1 twice at one spot), fix between.
Scenario scenario_a() {
  const LatLon fix{46.4021, 7.3135};
  const std::vector<LatLon> stations{
      {46.3800, 7.2800}, {46.4300, 7.2950}, {46.3800, 7.2800}, {46.3900, 7.3600}};
  return make_scenario(fix, stations, {0.5, 420.0, 160.0, 35.0}, {0.95, 1050.0, 400.0, 35.0}, true);
}

// Scenario B: the fix at lon 179.99 with stations on both sides of the antimeridian.
Scenario scenario_b() {
  const LatLon fix{-17.25, 179.99};
  const std::vector<LatLon> stations{{-17.40, 179.80}, {-17.05, -179.85}, {-17.45, -179.90}};
  return make_scenario(fix, stations, {0.5, 3000.0, 1500.0, 80.0}, {0.95, 7500.0, 3700.0, 80.0},
                       false);
}

std::string slurp(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::string fresh_dir(const std::string& name) {
  const std::string dir = lobfix_test::tmp_path(name);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

std::vector<std::string> listing(const std::string& dir) {
  std::vector<std::string> names;
  for (const auto& entry : fs::directory_iterator(dir)) {
    names.push_back(entry.path().filename().string());
  }
  return names;
}

struct GdalDatasetCloser {
  void operator()(GDALDataset* ds) const { GDALClose(ds); }
};
using Dataset = std::unique_ptr<GDALDataset, GdalDatasetCloser>;

Dataset open_vector(const std::string& path, const char* driver) {
  GDALAllRegister();
  const char* const drivers[] = {driver, nullptr};
  // Times are read back as the text written, not parsed into GDAL's date type.
  const char* const geojson_options[] = {"DATE_AS_STRING=YES", nullptr};
  const bool geojson = std::string(driver) == "GeoJSON";
  return Dataset(
      GDALDataset::FromHandle(GDALOpenEx(path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY, drivers,
                                         geojson ? geojson_options : nullptr, nullptr)));
}

/// Every ring of a (multi)polygon, every line of a (multi)line string, and every point.
void for_each_vertex(const OGRGeometry* g, const std::function<void(double, double)>& visit) {
  const OGRwkbGeometryType type = wkbFlatten(g->getGeometryType());
  if (type == wkbPoint) {
    const auto* p = g->toPoint();
    visit(p->getX(), p->getY());
  } else if (type == wkbLineString || type == wkbLinearRing) {
    const auto* l = g->toSimpleCurve();
    for (int i = 0; i < l->getNumPoints(); ++i)
      visit(l->getX(i), l->getY(i));
  } else if (type == wkbPolygon) {
    for (const auto* ring : *g->toPolygon())
      for_each_vertex(ring, visit);
  } else {
    for (const auto* part : *g->toGeometryCollection())
      for_each_vertex(part, visit);
  }
}

/// Signed area in the lon/lat plane (shoelace): positive when counter-clockwise.
double signed_area(const OGRLinearRing* ring) {
  double sum = 0.0;
  for (int i = 0; i + 1 < ring->getNumPoints(); ++i) {
    sum += ring->getX(i) * ring->getY(i + 1) - ring->getX(i + 1) * ring->getY(i);
  }
  return 0.5 * sum;
}

std::vector<const OGRPolygon*> polygons_of(const OGRGeometry* g) {
  std::vector<const OGRPolygon*> out;
  if (wkbFlatten(g->getGeometryType()) == wkbPolygon) {
    out.push_back(g->toPolygon());
  } else if (wkbFlatten(g->getGeometryType()) == wkbMultiPolygon) {
    for (const auto* p : *g->toMultiPolygon())
      out.push_back(p);
  }
  return out;
}

/// Last vertex of a ray (of the last part when cut).
LatLon ray_end(const OGRGeometry* g) {
  LatLon end;
  for_each_vertex(g, [&](double x, double y) { end = {y, x}; });
  return end;
}

}  // namespace

TEST_CASE("write_geojson: features, fields and coordinates read back by GDAL") {
  const Scenario s = scenario_a();
  const std::string dir = fresh_dir("export_geojson_a");
  const std::string path = dir + "/search.geojson";
  lobfix::write_geojson(path, s.bearings, s.results);
  // No temporary left beside the file.
  CHECK(listing(dir) == std::vector<std::string>{"search.geojson"});

  const Dataset ds = open_vector(path, "GeoJSON");
  REQUIRE(ds);
  REQUIRE(ds->GetLayerCount() == 1);
  OGRLayer* layer = ds->GetLayer(0);
  CHECK(std::string(layer->GetName()) == "lobfix");
  std::map<std::string, int> count;
  const FixResult& fix = s.results[0];
  for (const auto& feature : *layer) {
    const std::string kind = feature->GetFieldAsString("kind");
    ++count[kind];
    const OGRGeometry* g = feature->GetGeometryRef();
    REQUIRE(g != nullptr);
    for_each_vertex(g, [](double lon, double lat) {
      CHECK(lon >= -180.0);
      CHECK(lon <= 180.0);
      CHECK(lat >= -90.0);
      CHECK(lat <= 90.0);
    });
    if (kind == "fix") {
      // x is longitude, y latitude; COORDINATE_PRECISION 7 rounds to 5e-8 deg.
      REQUIRE(wkbFlatten(g->getGeometryType()) == wkbPoint);
      CHECK_ABS(g->toPoint()->getX(), fix.fix.position.lon_deg, 6e-8);
      CHECK_ABS(g->toPoint()->getY(), fix.fix.position.lat_deg, 6e-8);
      CHECK(std::string(feature->GetFieldAsString("signal")) == "ch7");
      CHECK_ABS(feature->GetFieldAsDouble("lat"), fix.fix.position.lat_deg, 1e-12);
      CHECK_ABS(feature->GetFieldAsDouble("lon"), fix.fix.position.lon_deg, 1e-12);
      CHECK_ABS(feature->GetFieldAsDouble("cep_m"), fix.uncertainty.cep_m, 1e-9);
      CHECK_ABS(feature->GetFieldAsDouble("chi2"), fix.fix.chi2, 1e-12);
      CHECK(feature->GetFieldAsInteger("dof") == 2);
      CHECK_ABS(feature->GetFieldAsDouble("p_value"), 0.42, 1e-12);
    } else if (kind == "ray") {
      REQUIRE(wkbFlatten(g->getGeometryType()) == wkbLineString);
      const int row = feature->GetFieldAsInteger("row");
      const Bearing* b = nullptr;
      std::size_t index = 0;
      for (std::size_t i = 0; i < s.bearings.size(); ++i) {
        if (s.bearings[i].source.line == row) {
          b = &s.bearings[i];
          index = i;
        }
      }
      REQUIRE(b != nullptr);
      CHECK(std::string(feature->GetFieldAsString("station")) == b->station);
      CHECK(std::string(feature->GetFieldAsString("time")) == b->time_text);
      CHECK_ABS(feature->GetFieldAsDouble("bearing_deg"), b->azimuth_deg, 1e-12);
      CHECK_ABS(feature->GetFieldAsDouble("sigma_deg"), 2.5, 1e-12);
      const LatLon station{b->lat_deg, b->lon_deg};
      const LatLon end = ray_end(g);
      const int i_res = feature->GetFieldIndex("normalized_residual");
      if (b->signal == "ch7") {
        CHECK_ABS(feature->GetFieldAsDouble(i_res), fix.fix.bearings[index].normalized_residual,
                  1e-12);
        CHECK_ABS(feature->GetFieldAsDouble("residual_deg"), fix.fix.bearings[index].residual_deg,
                  1e-12);
        // Automatic length: 1.2 x the distance to the fix (GeographicLib distance; the
        // written coordinates are rounded to about 1 cm).
        CHECK_ABS(distance_m(station, end), 1.2 * distance_m(station, fix.fix.position), 0.05);
      } else {
        CHECK(feature->IsFieldNull(i_res));
        // No fix for this signal: the default length.
        CHECK_ABS(distance_m(station, end), 10000.0, 0.05);
      }
      // The ray points along its bearing, to within what 1e-7 deg of rounding of its end
      // (at most 1.2 cm) allows at its length.
      const double tolerance_deg = 0.012 / distance_m(station, end) * 180.0 / 3.14159265358979;
      CHECK_ABS(lobfix::angle_diff_deg(azimuth_deg(station, end), b->azimuth_deg), 0.0,
                tolerance_deg);
    } else if (kind == "ellipse" || kind == "ellipse_scaled") {
      const double p = feature->GetFieldAsDouble("probability");
      CHECK((p == 0.5 || p == 0.95));
      CHECK_ABS(feature->GetFieldAsDouble("orientation_deg"), 35.0, 1e-12);
      const double a = feature->GetFieldAsDouble("semi_major_m");
      const double expected = (p == 0.5 ? 420.0 : 1050.0) * (kind == "ellipse" ? 1.0 : 2.0);
      CHECK_ABS(a, expected, 1e-9);
      const auto polys = polygons_of(g);
      REQUIRE(polys.size() == 1);
      // RFC 7946 section 3.1.6: exterior rings counter-clockwise.
      CHECK(signed_area(polys[0]->getExteriorRing()) > 0.0);
      CHECK(polys[0]->getExteriorRing()->getNumPoints() == 181);
      // The farthest vertex is one semi-major axis from the fix (GeographicLib distance).
      double far_m = 0.0;
      for_each_vertex(g, [&](double lon, double lat) {
        far_m = std::max(far_m, distance_m(fix.fix.position, {lat, lon}));
      });
      CHECK_ABS(far_m, a, 0.05);
    } else {
      CHECK(kind == "station");
      CHECK(wkbFlatten(g->getGeometryType()) == wkbPoint);
    }
  }
  // 5 bearings from 4 places, one place used twice by walker-1 (ch7) and once more by
  // walker-1 for "quiet": 3 distinct station positions.
  CHECK(count["station"] == 3);
  CHECK(count["ray"] == 5);
  CHECK(count["fix"] == 1);  // "quiet" has no fix: no point, no ellipse
  CHECK(count["ellipse"] == 2);
  CHECK(count["ellipse_scaled"] == 2);
}

TEST_CASE("write_geojson: the text is an RFC 7946 FeatureCollection in [lon, lat] order") {
  // Parsed with nlohmann::json, independently of GDAL.
  const Scenario s = scenario_a();
  const std::string path = fresh_dir("export_geojson_json") + "/map.geojson";
  lobfix::write_geojson(path, s.bearings, s.results);
  const nlohmann::json doc = nlohmann::json::parse(slurp(path));
  CHECK(doc.at("type") == "FeatureCollection");
  CHECK_FALSE(doc.contains("crs"));  // RFC 7946 section 4: no crs member
  int fixes = 0;
  for (const auto& feature : doc.at("features")) {
    CHECK(feature.at("type") == "Feature");
    if (feature.at("properties").at("kind") != "fix")
      continue;
    ++fixes;
    CHECK(feature.at("geometry").at("type") == "Point");
    const auto& c = feature.at("geometry").at("coordinates");
    REQUIRE(c.size() == 2);
    // Longitude 7.31 first, latitude 46.40 second.
    CHECK_ABS(c[0].get<double>(), 7.3135, 6e-8);
    CHECK_ABS(c[1].get<double>(), 46.4021, 6e-8);
  }
  CHECK(fixes == 1);
  // A ray of the signal without a fix carries an explicit null residual.
  bool null_seen = false;
  for (const auto& feature : doc.at("features")) {
    const auto& p = feature.at("properties");
    if (p.at("kind") == "ray" && p.at("signal") == "quiet") {
      null_seen = p.at("normalized_residual").is_null();
    }
  }
  CHECK(null_seen);
}

TEST_CASE("write_geojson: shapes across the antimeridian become Multi* geometries") {
  const Scenario s = scenario_b();
  const std::string path = fresh_dir("export_geojson_b") + "/dateline.geojson";
  lobfix::write_geojson(path, s.bearings, s.results);
  const Dataset ds = open_vector(path, "GeoJSON");
  REQUIRE(ds);
  OGRLayer* layer = ds->GetLayer(0);
  int multi_lines = 0;
  int multi_polygons = 0;
  for (const auto& feature : *layer) {
    const std::string kind = feature->GetFieldAsString("kind");
    const OGRGeometry* g = feature->GetGeometryRef();
    REQUIRE(g != nullptr);
    for_each_vertex(g, [](double lon, double) {
      CHECK(lon >= -180.0);
      CHECK(lon <= 180.0);
    });
    const OGRwkbGeometryType type = wkbFlatten(g->getGeometryType());
    if (kind == "ray" && type == wkbMultiLineString)
      ++multi_lines;
    if (kind == "ellipse") {
      // Both ellipses (3 and 7.5 km around lon 179.99) straddle the antimeridian.
      CHECK(type == wkbMultiPolygon);
      const auto polys = polygons_of(g);
      CHECK(polys.size() == 2);
      for (const OGRPolygon* p : polys)
        CHECK(signed_area(p->getExteriorRing()) > 0.0);
      if (type == wkbMultiPolygon)
        ++multi_polygons;
    }
  }
  // Every ch7 ray reaches across 180 to 1.2 x the distance to the fix at 179.99, which lies
  // 1 to 20 km from the antimeridian; the station at 179.80 looks east, the two at -179.9
  // and -179.85 look west: all three cross.
  CHECK(multi_lines == 3);
  CHECK(multi_polygons == 2);
}

TEST_CASE("write_geojson: an ellipse around the north pole closes over the pole") {
  // A 30 km ellipse centred 0.05 deg from the pole. RFC 7946 (section 3.1.9) wants
  // longitudes within [-180, 180]: the cap is closed along the pole, counter-clockwise
  // (section 3.1.6) in the lon/lat plane.
  const LatLon fix{89.95, 40.0};
  const std::vector<LatLon> stations{{89.7, 10.0}, {89.8, 120.0}};
  const Scenario s = make_scenario(fix, stations, {0.5, 12000.0, 8000.0, 0.0},
                                   {0.95, 30000.0, 20000.0, 0.0}, false);
  const std::string path = fresh_dir("export_geojson_pole") + "/pole.geojson";
  lobfix::write_geojson(path, s.bearings, s.results);
  const Dataset ds = open_vector(path, "GeoJSON");
  REQUIRE(ds);
  int ellipses = 0;
  for (const auto& feature : *ds->GetLayer(0)) {
    if (std::string(feature->GetFieldAsString("kind")) != "ellipse")
      continue;
    ++ellipses;
    const OGRGeometry* g = feature->GetGeometryRef();
    REQUIRE(wkbFlatten(g->getGeometryType()) == wkbPolygon);
    const OGRLinearRing* ring = g->toPolygon()->getExteriorRing();
    bool at_pole = false;
    double lon_min = 0.0;
    double lon_max = 0.0;
    for (int i = 0; i < ring->getNumPoints(); ++i) {
      if (ring->getY(i) == 90.0)
        at_pole = true;
      lon_min = std::min(lon_min, ring->getX(i));
      lon_max = std::max(lon_max, ring->getX(i));
    }
    CHECK(at_pole);
    CHECK(lon_min == -180.0);
    CHECK(lon_max == 180.0);
    CHECK(signed_area(ring) > 0.0);
  }
  CHECK(ellipses == 2);
}

TEST_CASE("write_geojson: ray lengths follow ExportOptions") {
  const Scenario s = scenario_a();
  const std::string path = fresh_dir("export_geojson_len") + "/len.geojson";
  lobfix::ExportOptions options;
  options.ray_length_m = 2500.0;
  options.ellipse_vertices = 36;
  lobfix::write_geojson(path, s.bearings, s.results, options);
  const Dataset ds = open_vector(path, "GeoJSON");
  REQUIRE(ds);
  int rays = 0;
  for (const auto& feature : *ds->GetLayer(0)) {
    const std::string kind = feature->GetFieldAsString("kind");
    const OGRGeometry* g = feature->GetGeometryRef();
    if (kind == "ray") {
      ++rays;
      const int row = feature->GetFieldAsInteger("row");
      for (const Bearing& b : s.bearings) {
        if (b.source.line == row)
          CHECK_ABS(distance_m({b.lat_deg, b.lon_deg}, ray_end(g)), 2500.0, 0.05);
      }
      // length / 64 is under 10 km: 64 steps, 65 vertices.
      CHECK(g->toLineString()->getNumPoints() == 65);
    } else if (kind == "ellipse") {
      CHECK(g->toPolygon()->getExteriorRing()->getNumPoints() == 37);
    }
  }
  CHECK(rays == 5);

  lobfix::ExportOptions bad;
  bad.ray_length_m = -1.0;
  CHECK_THROWS_AS(lobfix::write_geojson(path, s.bearings, s.results, bad), lobfix::InputError);
  bad = {};
  bad.ellipse_vertices = 2;
  CHECK_THROWS_AS(lobfix::write_geojson(path, s.bearings, s.results, bad), lobfix::InputError);
}

TEST_CASE("write_kml: folders, styles and tessellated rays read back by LIBKML") {
  const Scenario s = scenario_a();
  const std::string dir = fresh_dir("export_kml_a");
  const std::string path = dir + "/search.kml";
  lobfix::write_kml(path, s.bearings, s.results);
  CHECK(listing(dir) == std::vector<std::string>{"search.kml"});

  {
    const Dataset ds = open_vector(path, "LIBKML");
    REQUIRE(ds);
    std::map<std::string, GIntBig> count;
    for (int i = 0; i < ds->GetLayerCount(); ++i) {
      OGRLayer* layer = ds->GetLayer(i);
      count[layer->GetName()] = layer->GetFeatureCount();
    }
    CHECK(count.size() == 4);
    CHECK(count["stations"] == 3);
    CHECK(count["rays"] == 5);
    CHECK(count["fixes"] == 1);
    CHECK(count["ellipses"] == 4);  // 50% and 95%, stated and scaled
    OGRLayer* fixes = ds->GetLayerByName("fixes");
    REQUIRE(fixes != nullptr);
    fixes->ResetReading();
    const OGRFeatureUniquePtr f(fixes->GetNextFeature());
    REQUIRE(f);
    CHECK(std::string(f->GetFieldAsString("Name")) == "fix ch7");
    const OGRPoint* p = f->GetGeometryRef()->toPoint();
    CHECK_ABS(p->getX(), 7.3135, 1e-9);
    CHECK_ABS(p->getY(), 46.4021, 1e-9);
    // The attribute fields come back from ExtendedData.
    OGRLayer* rays = ds->GetLayerByName("rays");
    REQUIRE(rays != nullptr);
    int checked = 0;
    for (const auto& ray : *rays) {
      const int row = ray->GetFieldAsInteger("row");
      for (std::size_t i = 0; i < s.bearings.size(); ++i) {
        if (s.bearings[i].source.line != row || s.bearings[i].signal != "ch7")
          continue;
        ++checked;
        CHECK_ABS(ray->GetFieldAsDouble("bearing_deg"), s.bearings[i].azimuth_deg, 1e-9);
        CHECK_ABS(ray->GetFieldAsDouble("normalized_residual"),
                  s.results[0].fix.bearings[i].normalized_residual, 1e-9);
      }
    }
    CHECK(checked == 4);
  }

  const std::string text = slurp(path);
  CHECK(text.find("<Style") != std::string::npos);
  CHECK(text.find("<styleUrl>") != std::string::npos);
  CHECK(text.find("<tessellate>1</tessellate>") != std::string::npos);
  CHECK(text.find("<altitudeMode>clampToGround</altitudeMode>") != std::string::npos);
  CHECK(text.find("<Folder") != std::string::npos);
  // KML 2.2 colours are aabbggrr: the first signal's line colour #0072B2 (opaque) is
  // ffb27200.
  CHECK(text.find("<color>ffb27200</color>") != std::string::npos);
  CHECK(text.find("95% ellipse ch7") != std::string::npos);
}

TEST_CASE("write_kml: a KMZ target and the antimeridian case") {
  const Scenario s = scenario_b();
  const std::string dir = fresh_dir("export_kml_b");
  const std::string path = dir + "/dateline.kmz";
  lobfix::write_kml(path, s.bearings, s.results);
  CHECK(listing(dir) == std::vector<std::string>{"dateline.kmz"});
  CHECK(fs::is_regular_file(path));
  CHECK(slurp(path).rfind("PK", 0) == 0);  // a zip archive
  // One KML file, doc.kml, at the root of the archive (common practice for KMZ), listed
  // through GDAL's zip reader.
  char** entries = VSIReadDir(("/vsizip/" + path).c_str());
  std::vector<std::string> names;
  for (char** e = entries; e != nullptr && *e != nullptr; ++e)
    names.emplace_back(*e);
  CSLDestroy(entries);
  CHECK(names == std::vector<std::string>{"doc.kml"});
  const Dataset ds = open_vector(path, "LIBKML");
  REQUIRE(ds);
  OGRLayer* ellipses = ds->GetLayerByName("ellipses");
  REQUIRE(ellipses != nullptr);
  int multi = 0;
  for (const auto& feature : *ellipses) {
    const OGRGeometry* g = feature->GetGeometryRef();
    for_each_vertex(g, [](double lon, double) {
      CHECK(lon >= -180.0);
      CHECK(lon <= 180.0);
    });
    if (wkbFlatten(g->getGeometryType()) == wkbMultiPolygon)
      ++multi;
  }
  CHECK(multi == 2);
}

TEST_CASE("atomic write: a failure leaves nothing, a success leaves only the target") {
  const Scenario s = scenario_a();
  const std::string dir = fresh_dir("export_atomic");
  const std::string missing = dir + "/no-such-dir/map.geojson";
  try {
    lobfix::write_geojson(missing, s.bearings, s.results);
    FAIL("no OutputError");
  } catch (const lobfix::OutputError& e) {
    CHECK(std::string(e.what()).find(missing) != std::string::npos);
  }
  CHECK_THROWS_AS(lobfix::write_kml(dir + "/no-such-dir/map.kml", s.bearings, s.results),
                  lobfix::OutputError);
  CHECK(listing(dir).empty());
  CHECK_FALSE(fs::exists(dir + "/no-such-dir"));

  // A target that is a directory cannot be replaced: OutputError, no temporary left.
  fs::create_directories(dir + "/taken.geojson");
  CHECK_THROWS_AS(lobfix::write_geojson(dir + "/taken.geojson", s.bearings, s.results),
                  lobfix::OutputError);
  CHECK(listing(dir) == std::vector<std::string>{"taken.geojson"});
  fs::remove(dir + "/taken.geojson");

  // An existing file is replaced whole.
  const std::string path = dir + "/map.geojson";
  {
    std::ofstream old(path);
    old << "not a map";
  }
  lobfix::write_geojson(path, s.bearings, s.results);
  CHECK(nlohmann::json::parse(slurp(path)).at("type") == "FeatureCollection");
  lobfix::write_kml(dir + "/map.kml", s.bearings, s.results);
  lobfix::write_kml(dir + "/map.kml", s.bearings, s.results);
  std::vector<std::string> names = listing(dir);
  std::sort(names.begin(), names.end());
  CHECK(names == std::vector<std::string>{"map.geojson", "map.kml"});
}
