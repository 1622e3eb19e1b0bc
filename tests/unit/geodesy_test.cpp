// Tests of lobfix/geodesy.hpp: angle wrapping and grid references.
#include "lobfix/geodesy.hpp"

#include <GeographicLib/Geodesic.hpp>

#include <cmath>

#include "lobfix/error.hpp"
#include "test_support.hpp"

using namespace lobfix;

TEST_CASE("wrap_deg180 maps into -180 exclusive to 180 inclusive, signs handled at the edges") {
  // Convention of docs/architecture.md: (-180, 180], no negative zero (common practice).
  CHECK(wrap_deg180(0.0) == 0.0);
  CHECK_FALSE(std::signbit(wrap_deg180(-0.0)));
  CHECK(wrap_deg180(180.0) == 180.0);
  CHECK(wrap_deg180(-180.0) == 180.0);
  CHECK(wrap_deg180(360.0) == 0.0);
  CHECK(wrap_deg180(-360.0) == 0.0);
  CHECK(wrap_deg180(540.0) == 180.0);
  CHECK(wrap_deg180(190.0) == doctest::Approx(-170.0));
  CHECK(wrap_deg180(-190.0) == doctest::Approx(170.0));
  CHECK(std::isnan(wrap_deg180(std::nan(""))));
}

TEST_CASE("wrap_deg360 maps into 0 inclusive to 360 exclusive") {
  CHECK(wrap_deg360(360.0) == 0.0);
  CHECK(wrap_deg360(0.0) == 0.0);
  CHECK_FALSE(std::signbit(wrap_deg360(-0.0)));
  CHECK(wrap_deg360(-1e-18) < 360.0);
  CHECK(wrap_deg360(-90.0) == 270.0);
  CHECK(wrap_deg360(720.5) == doctest::Approx(0.5));
}

TEST_CASE("angle_diff_deg is the short way round, across north") {
  CHECK(angle_diff_deg(1.0, 359.0) == doctest::Approx(2.0));
  CHECK(angle_diff_deg(359.0, 1.0) == doctest::Approx(-2.0));
  CHECK(angle_diff_deg(179.0, -179.0) == doctest::Approx(-2.0));
  CHECK(angle_diff_deg(0.0, 180.0) == 180.0);
}

TEST_CASE("geodesic_inverse and geodesic_direct agree with GeographicLib") {
  // Reference: GeographicLib's Geodesic::WGS84 (Karney 2013) called directly.
  const LatLon p1{-12.5, 130.25};
  const LatLon p2{-15.75, 133.0};
  const GeodesicLine12 g = geodesic_inverse(p1, p2);
  double s12 = 0, azi1 = 0, azi2 = 0, m12 = 0;
  GeographicLib::Geodesic::WGS84().Inverse(p1.lat_deg, p1.lon_deg, p2.lat_deg, p2.lon_deg, s12,
                                           azi1, azi2, m12);
  CHECK(g.s12_m == s12);
  CHECK(g.azi1_deg == azi1);
  CHECK(g.m12_m == m12);
  const GeodesicEnd e = geodesic_direct(p1, g.azi1_deg, g.s12_m);
  CHECK_ABS(e.point.lat_deg, p2.lat_deg, 1e-12);
  CHECK_ABS(e.point.lon_deg, p2.lon_deg, 1e-12);
  CHECK_ABS(e.azi2_deg, g.azi2_deg, 1e-10);
  // Unrolled longitudes run continuously past the antimeridian.
  const GeodesicEnd east = geodesic_direct({0.0, 179.5}, 90.0, 111320.0, true);
  CHECK(east.point.lon_deg > 180.0);
  const GeodesicEnd wrapped = geodesic_direct({0.0, 179.5}, 90.0, 111320.0, false);
  CHECK(wrapped.point.lon_deg < 0.0);
}

TEST_CASE("the local azimuthal equidistant frame keeps distance and azimuth from the centre") {
  // Property of the azimuthal equidistant projection (GeographicLib documentation).
  const LatLon c{60.0, 25.0};
  const LocalPoint p = local_to_geo(c, 3000.0, -4000.0);
  const GeodesicLine12 g = geodesic_inverse(c, p.point);
  CHECK_ABS(g.s12_m, 5000.0, 1e-6);
  CHECK_ABS(g.azi1_deg, std::atan2(3000.0, -4000.0) * 180.0 / M_PI, 1e-9);
  double x = 0, y = 0;
  geo_to_local(c, p.point, x, y);
  CHECK_ABS(x, 3000.0, 1e-6);
  CHECK_ABS(y, -4000.0, 1e-6);
}

TEST_CASE("grid references agree with GeographicLib's GeoConvert tool") {
  // Expected strings from `echo "LAT LON" | GeoConvert -m -p 0` (MGRS, 1 m, truncated) and
  // `GeoConvert -u -p 0` (UTM, rounded), geographiclib-tools 2.1.2, run when writing this test.
  struct Case {
    double lat, lon;
    const char* mgrs;
    const char* utm;
  };
  const Case cases[] = {
      {47.12345, -101.45678, "14TLT1365621811", "14N 313657 5221811"},
      {-38.5, 146.25, "55HDT3460138440", "55S 434601 5738440"},
      {84.2, -20.5, "YXA7430396346", "UPS N 1774303 1396346"},
      {-62.1, 179.9999, "60EXS5657111056", "60S 656571 3111056"},
  };
  for (const Case& c : cases) {
    const GridReference g = grid_reference({c.lat, c.lon});
    CHECK(g.mgrs == c.mgrs);
    CHECK(g.utm == c.utm);
  }
  // Meridian convergence, from `echo "47.12345 -101.45678" | GeoConvert -c`: -1.80090 deg.
  CHECK_ABS(grid_reference({47.12345, -101.45678}).convergence_deg, -1.80090, 1e-5);
  CHECK_THROWS_AS(grid_reference({91.0, 0.0}), InputError);
}

TEST_CASE("degrees, minutes and seconds never show 60 seconds") {
  CHECK(format_dms(47.12345, true) ==
        "47\xC2\xB0"
        "07'24.42\"N");
  CHECK(format_dms(-101.45678, false) ==
        "101\xC2\xB0"
        "27'24.41\"W");
  CHECK(format_dms(10.9999999, true, 2) ==
        "11\xC2\xB0"
        "00'00.00\"N");
}

TEST_CASE("UTM in a chosen zone and MGRS at a chosen precision agree with GeoConvert") {
  // `echo "40.51234 -105.08321" | GeoConvert -u -p 3` gives 13n 492950.587 4484627.797 and
  // `GeoConvert -m -p -1` / `-p -3` give 13TDE92958462 / 13TDE9284 (geographiclib-tools
  // 2.1.2, run when writing this test).
  const lobfix::LatLon p{40.51234, -105.08321};
  const lobfix::UtmZone zone = lobfix::utm_zone_of(p);
  CHECK(zone.zone == 13);
  CHECK(zone.northp);
  CHECK(zone.epsg() == 32613);  // EPSG: WGS 84 / UTM zone 13N
  const lobfix::UtmPoint u = lobfix::utm_forward(zone, p);
  CHECK_ABS(u.easting_m, 492950.587, 0.0011);
  CHECK_ABS(u.northing_m, 4484627.797, 0.0011);
  const lobfix::LatLon back = lobfix::utm_reverse(zone, u.easting_m, u.northing_m);
  CHECK_ABS(back.lat_deg, p.lat_deg, 1e-9);
  CHECK_ABS(back.lon_deg, p.lon_deg, 1e-9);
  CHECK(lobfix::mgrs_reference(p, 4) == "13TDE92958462");
  CHECK(lobfix::mgrs_reference(p, 2) == "13TDE9284");
  CHECK(lobfix::mgrs_spaced("13TDE92958462") == "13T DE 9295 8462");
  CHECK(lobfix::mgrs_spaced("ZGC1234") == "Z GC 12 34");
  // Just south of the equator in the north zone: the northing runs on below 0, continuous
  // with the northern half (`GeoConvert -u -p 3` of "-0.001 12.0" gives the south zone's
  // 33s 166021.443 9999889.317; minus 10,000 km).
  const lobfix::UtmPoint s = lobfix::utm_forward({33, true}, {-0.001, 12.0});
  CHECK_ABS(s.easting_m, 166021.443, 0.0011);
  CHECK_ABS(s.northing_m, 9999889.317 - 10000000.0, 0.0011);
  CHECK(lobfix::UtmZone{0, false}.epsg() == 32761);  // EPSG: WGS 84 / UPS South
  CHECK_THROWS_AS(lobfix::mgrs_reference(p, 6), lobfix::InputError);
}
