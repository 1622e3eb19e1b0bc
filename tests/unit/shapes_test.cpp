// Tests of lobfix/shapes.hpp: rays and ellipses on the ellipsoid, antimeridian cutting.
//
// Reference: GeographicLib 2.1 (C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
// 87:43-55, 2013), called directly here, independently of lobfix's geodesy wrapper:
// Geodesic::Inverse for distances and azimuths, GeodesicLine for points along a geodesic,
// PolygonArea for areas of geodesic polygons (including polygons around a pole).
// All coordinates are invented.
#include "lobfix/shapes.hpp"

#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/GeodesicLine.hpp>
#include <GeographicLib/PolygonArea.hpp>

#include <cmath>
#include <cstddef>
#include <vector>

#include "detail/export_geometry.hpp"
#include "test_support.hpp"

namespace {

using lobfix::Ellipse;
using lobfix::LatLon;
using lobfix::Path;

constexpr double kPi = 3.14159265358979323846;

const GeographicLib::Geodesic& wgs84() {
  return GeographicLib::Geodesic::WGS84();
}

struct Inverse {
  double s12_m = 0.0;
  double azi1_deg = 0.0;
};
Inverse inverse(const LatLon& a, const LatLon& b) {
  Inverse r;
  double azi2 = 0.0;
  wgs84().Inverse(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg, r.s12_m, r.azi1_deg, azi2);
  return r;
}

/// |area| of the geodesic polygon of a closed ring (the repeated last vertex left out), by
/// GeographicLib::PolygonArea.
double geodesic_area_m2(const Path& ring) {
  GeographicLib::PolygonArea poly(wgs84());
  for (std::size_t i = 0; i + 1 < ring.size(); ++i)
    poly.AddPoint(ring[i].lat_deg, ring[i].lon_deg);
  double perimeter_m = 0.0;
  double area_m2 = 0.0;
  poly.Compute(false, true, perimeter_m, area_m2);
  return std::fabs(area_m2);
}

bool closed(const Path& ring) {
  return ring.size() >= 4 && ring.front().lat_deg == ring.back().lat_deg &&
         ring.front().lon_deg == ring.back().lon_deg;
}

void check_plain_longitudes(const Path& path) {
  for (const LatLon& p : path) {
    INFO("lon " << p.lon_deg);
    CHECK(p.lon_deg >= -180.0);
    CHECK(p.lon_deg <= 180.0);
  }
}

/// Latitude where the geodesic leaving `start` at azi1 reaches longitude lon_deg (unrolled),
/// by bisection on the distance along a GeographicLib::GeodesicLine.
double geodesic_lat_at_lon(const LatLon& start, double azi1_deg, double lon_deg, double lo_m,
                           double hi_m) {
  const GeographicLib::GeodesicLine line(wgs84(), start.lat_deg, start.lon_deg, azi1_deg);
  const auto lon_at = [&](double s_m) {
    double lat = 0.0;
    double lon = 0.0;
    double azi = 0.0;
    double t = 0.0;
    line.GenPosition(false, s_m,
                     GeographicLib::GeodesicLine::LATITUDE |
                         GeographicLib::GeodesicLine::LONGITUDE |
                         GeographicLib::GeodesicLine::LONG_UNROLL,
                     lat, lon, azi, t, t, t, t, t);
    return LatLon{lat, lon};
  };
  const bool east = lon_at(hi_m).lon_deg > lon_at(lo_m).lon_deg;
  for (int i = 0; i < 200; ++i) {
    const double mid = 0.5 * (lo_m + hi_m);
    if ((lon_at(mid).lon_deg < lon_deg) == east) {
      lo_m = mid;
    } else {
      hi_m = mid;
    }
  }
  return lon_at(0.5 * (lo_m + hi_m)).lat_deg;
}

}  // namespace

TEST_CASE("ray_path: every vertex lies on the geodesic from the station") {
  // Reference: GeographicLib Geodesic::Inverse (Karney 2013). The azimuth at the station to
  // each vertex must be the ray's azimuth, the distances must grow in steps <= max_step,
  // and the last vertex must be at the full length.
  struct Case {
    LatLon station;
    double azimuth_deg;
    double length_m;
    double max_step_m;
  };
  const Case cases[] = {
      {{47.213, 9.481}, 57.25, 25000.0, 400.0}, {{-33.02, -70.61}, 301.7, 12345.6, 1000.0},
      {{64.9, 179.75}, 80.0, 60000.0, 937.5},    // runs past +180: longitudes unrolled
      {{-12.4, -179.9}, 260.0, 40000.0, 625.0},  // runs past -180
      {{10.0, 20.0}, 0.0, 50.0, 1000.0},         // shorter than one step: 2 vertices
  };
  for (const Case& c : cases) {
    CAPTURE(c.azimuth_deg);
    const Path ray = lobfix::ray_path(c.station, c.azimuth_deg, c.length_m, c.max_step_m);
    REQUIRE(ray.size() >= 2);
    CHECK(ray.size() == static_cast<std::size_t>(std::ceil(c.length_m / c.max_step_m)) + 1);
    CHECK(ray.front().lat_deg == c.station.lat_deg);
    CHECK(ray.front().lon_deg == c.station.lon_deg);
    double previous_m = 0.0;
    for (std::size_t i = 1; i < ray.size(); ++i) {
      CAPTURE(i);
      const Inverse g = inverse(c.station, ray[i]);
      CHECK_ABS(lobfix::angle_diff_deg(g.azi1_deg, c.azimuth_deg), 0.0, 1e-9);
      CHECK(g.s12_m > previous_m);
      CHECK(g.s12_m - previous_m <= c.max_step_m + 1e-6);
      // Unrolled: consecutive longitudes never jump by a turn.
      CHECK(std::fabs(ray[i].lon_deg - ray[i - 1].lon_deg) < 10.0);
      previous_m = g.s12_m;
    }
    CHECK_ABS(previous_m, c.length_m, 1e-3);
  }
  // The eastward ray from 179.75 goes on past 180 without wrapping.
  const Path east = lobfix::ray_path({64.9, 179.75}, 80.0, 60000.0, 937.5);
  CHECK(east.back().lon_deg > 180.0);
}

TEST_CASE("ellipse_ring: vertices at the parametric offsets from the centre") {
  // Definition (shapes.hpp): vertex i at t = 2 pi i / n lies at the local east/north offset
  // a cos t u + b sin t v, at the offset's azimuth and length from the centre. Reference:
  // GeographicLib Geodesic::Inverse from the centre gives that azimuth and length back.
  struct Case {
    LatLon centre;
    Ellipse ellipse;
    int vertices;
  };
  const Case cases[] = {
      {{51.7, -2.9}, {0.95, 1200.0, 400.0, 35.0}, 180},
      {{-41.3, 146.2}, {0.5, 8000.0, 7999.0, 170.0}, 64},
      {{12.5, 179.9}, {0.95, 30000.0, 12000.0, 95.0}, 120},  // straddles the antimeridian
  };
  for (const Case& c : cases) {
    CAPTURE(c.ellipse.semi_major_m);
    const Path ring = lobfix::ellipse_ring(c.centre, c.ellipse, c.vertices);
    REQUIRE(ring.size() == static_cast<std::size_t>(c.vertices) + 1);
    CHECK(closed(ring));
    const double th = c.ellipse.orientation_deg * kPi / 180.0;
    for (int i = 0; i < c.vertices; ++i) {
      CAPTURE(i);
      const double t = 2.0 * kPi * i / c.vertices;
      // u = (sin th, cos th) east/north along the major axis; v perpendicular to it.
      const double e_m = c.ellipse.semi_major_m * std::cos(t) * std::sin(th) +
                         c.ellipse.semi_minor_m * std::sin(t) * std::cos(th);
      const double n_m = c.ellipse.semi_major_m * std::cos(t) * std::cos(th) -
                         c.ellipse.semi_minor_m * std::sin(t) * std::sin(th);
      const Inverse g = inverse(c.centre, ring[static_cast<std::size_t>(i)]);
      const double azi = g.azi1_deg * kPi / 180.0;
      CHECK_ABS(g.s12_m * std::sin(azi), e_m, 1e-6);
      CHECK_ABS(g.s12_m * std::cos(azi), n_m, 1e-6);
      // Unrolled around the centre's longitude.
      CHECK(std::fabs(ring[static_cast<std::size_t>(i)].lon_deg - c.centre.lon_deg) < 1.0);
    }
  }
}

TEST_CASE(
    "split_ring_antimeridian: a ring around lon 179.9 becomes two rings of equal total area") {
  // Reference: GeographicLib PolygonArea of the unsplit (unrolled) ring against the sum over
  // the two cut rings. The cut adds vertices on the meridian 180, itself a geodesic, with
  // latitudes interpolated linearly between vertices about 1 km apart: the area changes by
  // far less than 1e-7 of the total. Also within 1e-4 of (n/2) a b sin(2 pi / n), the area
  // of the n-gon inscribed at equal parameter steps in a plane ellipse (an affine image of
  // the regular n-gon in a circle, [derived]); on the ellipsoid the azimuthal-equidistant
  // ellipse differs by order (a/R)^2 ~ 2e-5.
  const LatLon centre{-16.5, 179.9};
  const Ellipse ellipse{0.95, 30000.0, 12000.0, 70.0};
  const Path ring = lobfix::ellipse_ring(centre, ellipse, 180);
  const std::vector<Path> parts = lobfix::split_ring_antimeridian(ring);
  REQUIRE(parts.size() == 2);
  double sum_m2 = 0.0;
  bool east_part = false;
  bool west_part = false;
  for (const Path& part : parts) {
    CHECK(closed(part));
    check_plain_longitudes(part);
    bool on_cut = false;
    for (const LatLon& p : part) {
      if (std::fabs(p.lon_deg) == 180.0)
        on_cut = true;
    }
    CHECK(on_cut);
    if (part[1].lon_deg > 0)
      east_part = true;
    if (part[1].lon_deg < 0)
      west_part = true;
    sum_m2 += geodesic_area_m2(part);
  }
  CHECK(east_part);
  CHECK(west_part);
  const double whole_m2 = geodesic_area_m2(ring);
  CHECK_ABS(sum_m2 / whole_m2, 1.0, 1e-7);
  const double n = 180.0;
  const double plane_m2 =
      0.5 * n * ellipse.semi_major_m * ellipse.semi_minor_m * std::sin(2 * kPi / n);
  CHECK_ABS(whole_m2 / plane_m2, 1.0, 1e-4);
}

TEST_CASE("split_ring_antimeridian: a ring that does not cross comes back whole") {
  const Path ring = lobfix::ellipse_ring({-3.2, 36.8}, {0.5, 900.0, 300.0, 120.0}, 90);
  const std::vector<Path> parts = lobfix::split_ring_antimeridian(ring);
  REQUIRE(parts.size() == 1);
  REQUIRE(parts[0].size() == ring.size());
  for (std::size_t i = 0; i < ring.size(); ++i) {
    CHECK(parts[0][i].lat_deg == ring[i].lat_deg);
    CHECK(parts[0][i].lon_deg == ring[i].lon_deg);
  }
  // An unrolled ring wholly east of 180 is wrapped back by one turn (area kept).
  const Path east = lobfix::ellipse_ring({20.0, 180.4}, {0.5, 5000.0, 3000.0, 10.0}, 60);
  const std::vector<Path> wrapped = lobfix::split_ring_antimeridian(east);
  REQUIRE(wrapped.size() == 1);
  check_plain_longitudes(wrapped[0]);
  CHECK_ABS(wrapped[0][3].lon_deg, east[3].lon_deg - 360.0, 1e-12);
  CHECK_ABS(geodesic_area_m2(wrapped[0]) / geodesic_area_m2(east), 1.0, 1e-12);
}

TEST_CASE("split_line_antimeridian: a ray crossing 180 becomes two lines cut on the geodesic") {
  // Reference for the cut latitude: the point of the geodesic at longitude 180, found by
  // bisection along a GeographicLib GeodesicLine. With vertices 1 km apart the linear
  // interpolation is within 1e-7 deg (1 cm) of it.
  const LatLon station{10.0, 179.5};
  const double azimuth_deg = 80.0;
  const Path ray = lobfix::ray_path(station, azimuth_deg, 150000.0, 1000.0);
  const std::vector<Path> pieces = lobfix::split_line_antimeridian(ray);
  REQUIRE(pieces.size() == 2);
  check_plain_longitudes(pieces[0]);
  check_plain_longitudes(pieces[1]);
  CHECK(pieces[0].front().lon_deg == station.lon_deg);
  CHECK(pieces[0].back().lon_deg == 180.0);
  CHECK(pieces[1].front().lon_deg == -180.0);
  CHECK(pieces[0].back().lat_deg == pieces[1].front().lat_deg);
  CHECK(pieces[0].size() + pieces[1].size() == ray.size() + 2);
  const double lat_cut = geodesic_lat_at_lon(station, azimuth_deg, 180.0, 0.0, 150000.0);
  CHECK_ABS(pieces[0].back().lat_deg, lat_cut, 1e-7);
  CHECK_ABS(pieces[1].back().lon_deg, ray.back().lon_deg - 360.0, 1e-12);

  // A westward line given in plain longitudes, joined the short way round.
  const Path west{{5.0, -179.8}, {5.1, -179.95}, {5.2, 179.9}, {5.3, 179.7}};
  const std::vector<Path> w = lobfix::split_line_antimeridian(west);
  REQUIRE(w.size() == 2);
  CHECK(w[0].back().lon_deg == -180.0);
  CHECK(w[1].front().lon_deg == 180.0);
  // Linear in longitude between (5.1, -179.95) and (5.2, 179.9): 0.05 of 0.15 deg.
  CHECK_ABS(w[0].back().lat_deg, 5.1 + 0.1 * (0.05 / 0.15), 1e-12);
  CHECK(w[1].back().lon_deg == 179.7);

  // Crossing and crossing back: three pieces.
  const Path zigzag{{0.0, 179.9}, {0.1, 180.1}, {0.2, 179.8}};
  CHECK(lobfix::split_line_antimeridian(zigzag).size() == 3);
}

TEST_CASE("split_line_antimeridian: a line that does not cross is returned as it is") {
  const Path ray = lobfix::ray_path({-45.0, 170.0}, 100.0, 80000.0, 2000.0);
  const std::vector<Path> pieces = lobfix::split_line_antimeridian(ray);
  REQUIRE(pieces.size() == 1);
  REQUIRE(pieces[0].size() == ray.size());
  for (std::size_t i = 0; i < ray.size(); ++i) {
    CHECK(pieces[0][i].lat_deg == ray[i].lat_deg);
    CHECK(pieces[0][i].lon_deg == ray[i].lon_deg);
  }
  // Ending exactly on the antimeridian is not a crossing: one piece ending at +180.
  const Path to_180{{1.0, 179.0}, {1.5, 180.0}};
  const std::vector<Path> one = lobfix::split_line_antimeridian(to_180);
  REQUIRE(one.size() == 1);
  CHECK(one[0].back().lon_deg == 180.0);
}

TEST_CASE("ring_encloses_pole and the ring closed over the pole") {
  // A 30 km ellipse centred 0.1 deg (about 11 km) from the north pole winds around it; one
  // centred 1 deg (111 km) away does not.
  const Ellipse big{0.95, 30000.0, 20000.0, 40.0};
  const Path around = lobfix::ellipse_ring({89.9, 25.0}, big, 180);
  const Path beside = lobfix::ellipse_ring({89.0, 25.0}, big, 180);
  CHECK(lobfix::ring_encloses_pole(around));
  CHECK_FALSE(lobfix::ring_encloses_pole(beside));
  const Path south = lobfix::ellipse_ring({-89.95, -140.0}, big, 180);
  CHECK(lobfix::ring_encloses_pole(south));

  // Reference: GeographicLib PolygonArea, which handles polygons around a pole, gives the
  // ring's area; the pole-closed polygon (the ring from -180 to 180, then along the pole)
  // must have the same area, since its added edges run along the meridian 180 up and back.
  // Only the cut vertex differs: its latitude is interpolated linearly over about 2 deg of
  // longitude, where so close to the pole the lat/lon chord strays a few metres from the
  // geodesic; that moves the area by about 1e-6 of it, hence the tolerance 5e-6.
  for (const Path* ring : {&around, &south}) {
    const Path cap = lobfix::detail::pole_closed_ring(*ring);
    CHECK(closed(cap));
    check_plain_longitudes(cap);
    const double pole_lat = ring == &around ? 90.0 : -90.0;
    CHECK(cap.front().lon_deg == -180.0);
    const std::size_t n = cap.size();
    CHECK(cap[n - 4].lon_deg == 180.0);
    CHECK(cap[n - 4].lat_deg == cap[0].lat_deg);
    CHECK(cap[n - 3].lat_deg == pole_lat);
    CHECK(cap[n - 3].lon_deg == 180.0);
    CHECK(cap[n - 2].lat_deg == pole_lat);
    CHECK(cap[n - 2].lon_deg == -180.0);
    // Longitudes increase along the ring part (eastward, monotonic around the pole).
    for (std::size_t i = 1; i + 3 < n; ++i)
      CHECK(cap[i].lon_deg >= cap[i - 1].lon_deg);
    CHECK_ABS(geodesic_area_m2(cap) / geodesic_area_m2(*ring), 1.0, 5e-6);
    // split_ring_antimeridian hands a pole ring to the same construction.
    const std::vector<Path> parts = lobfix::split_ring_antimeridian(*ring);
    REQUIRE(parts.size() == 1);
    CHECK(parts[0].size() == cap.size());
  }
}
