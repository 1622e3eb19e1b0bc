// Tests of lobfix/crs.hpp: projected CRSs through PROJ, and grid convergence.
// References, each named beside its check:
//  - GeographicLib 2.1 (UTMUPS, TransverseMercator) called directly;
//  - PROJ's own command-line tools cs2cs and GeoConvert (GeographicLib's), run at test time
//    (Debian packages proj-bin and geographiclib-tools, installed by scripts/setup);
//  - a finite-difference grid north written here: project a point half a metre south and
//    one half a metre north along the WGS 84 meridian; atan2 of the grid step.
// Points are invented, in open country away from any place of note.
#include "lobfix/crs.hpp"

#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/TransverseMercator.hpp>
#include <GeographicLib/UTMUPS.hpp>

#include <cmath>
#include <cstdio>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "lobfix/error.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

constexpr double kPi = 3.14159265358979323846;

// Runs a shell command and returns its standard output.
std::string run(const std::string& command) {
  std::string out;
  FILE* pipe = popen(command.c_str(), "r");
  REQUIRE_MESSAGE(pipe != nullptr, "cannot run: " << command);
  char buf[512];
  while (std::fgets(buf, sizeof buf, pipe) != nullptr)
    out += buf;
  const int status = pclose(pipe);
  REQUIRE_MESSAGE(status == 0, "failed (" << status << "): " << command);
  return out;
}

// The first n numbers of a line of text.
std::vector<double> numbers(const std::string& text, std::size_t n) {
  std::istringstream in(text);
  std::vector<double> v;
  double x = 0.0;
  while (v.size() < n && in >> x)
    v.push_back(x);
  REQUIRE_MESSAGE(v.size() == n, "expected " << n << " numbers in: " << text);
  return v;
}

// cs2cs from WGS 84 (EPSG:4326: input latitude, longitude) to a CRS; the two output
// coordinates in the CRS's own axis order.
std::pair<double, double> cs2cs(const LatLon& p, const std::string& code) {
  char cmd[256];
  std::snprintf(cmd, sizeof cmd, "echo '%.10f %.10f' | cs2cs -f %%.5f EPSG:4326 %s", p.lat_deg,
                p.lon_deg, code.c_str());
  const std::vector<double> v = numbers(run(cmd), 2);
  return {v[0], v[1]};
}

// Grid north by finite differences through forward(): the true azimuth of grid north is minus
// the grid azimuth of the true-north step (true = grid + gamma, with true = 0).
double finite_difference_convergence_deg(const ProjectedCrs& crs, const LatLon& p) {
  const GeographicLib::Geodesic& g = GeographicLib::Geodesic::WGS84();
  LatLon south, north;
  g.Direct(p.lat_deg, p.lon_deg, 0.0, -0.5, south.lat_deg, south.lon_deg);
  g.Direct(p.lat_deg, p.lon_deg, 0.0, 0.5, north.lat_deg, north.lon_deg);
  double e1 = 0, n1 = 0, e2 = 0, n2 = 0;
  crs.forward(south, e1, n1);
  crs.forward(north, e2, n2);
  return -std::atan2(e2 - e1, n2 - n1) * 180.0 / kPi;
}

// The reason and field of the InputError that constructing a CRS throws.
std::pair<std::string, std::string> construction_error(const std::string& code) {
  try {
    ProjectedCrs crs(code);
  } catch (const InputError& e) {
    return {e.diagnostic().field, e.diagnostic().reason};
  }
  return {"(no error)", ""};
}

// Invented points in open country within UTM zone 33N.
const std::vector<LatLon> kUtm33Points = {
    {47.8312, 13.4187}, {52.1764, 16.9021}, {61.3855, 12.0563}, {45.6120, 17.7734}};

}  // namespace

TEST_CASE("UTM zone 33N: forward agrees with GeographicLib UTMUPS and with cs2cs to 1 mm") {
  const ProjectedCrs crs("EPSG:32633");
  CHECK(crs.code() == "EPSG:32633");
  CHECK(crs.name() == "WGS 84 / UTM zone 33N");  // PROJ's name for EPSG:32633 (EPSG registry)
  for (const LatLon& p : kUtm33Points) {
    CAPTURE(p.lat_deg);
    CAPTURE(p.lon_deg);
    double e = 0, n = 0;
    crs.forward(p, e, n);
    // GeographicLib UTMUPS::Forward with the zone forced to 33 (Karney 2011, Kruger series).
    int zone = 0;
    bool northp = false;
    double x = 0, y = 0, gamma = 0, k = 0;
    GeographicLib::UTMUPS::Forward(p.lat_deg, p.lon_deg, zone, northp, x, y, gamma, k, 33);
    CHECK(zone == 33);
    CHECK_ABS(e, x, 1e-3);
    CHECK_ABS(n, y, 1e-3);
    // cs2cs (PROJ 9.1 tool): EPSG:32633 lists easting first.
    const auto [c1, c2] = cs2cs(p, "EPSG:32633");
    CHECK_ABS(e, c1, 1e-3);
    CHECK_ABS(n, c2, 1e-3);
  }
}

TEST_CASE("UTM convergence agrees with GeographicLib's gamma and GeoConvert -c to 1e-6 deg") {
  const ProjectedCrs crs("EPSG:32633");
  for (const LatLon& p : kUtm33Points) {
    CAPTURE(p.lat_deg);
    CAPTURE(p.lon_deg);
    const double gamma_deg = crs.convergence_deg(p);
    // GeographicLib UTMUPS::Forward's gamma, the bearing of grid north clockwise from true
    // north (its documented convention, which crs.hpp adopts).
    int zone = 0;
    bool northp = false;
    double x = 0, y = 0, gamma = 0, k = 0;
    GeographicLib::UTMUPS::Forward(p.lat_deg, p.lon_deg, zone, northp, x, y, gamma, k, 33);
    CHECK_ABS(gamma_deg, gamma, 1e-6);
    // GeoConvert -c -z 33 prints "gamma k" for zone 33 (GeographicLib's tool).
    char cmd[160];
    std::snprintf(cmd, sizeof cmd, "echo '%.10f %.10f' | GeoConvert -c -z 33 -p 9", p.lat_deg,
                  p.lon_deg);
    const std::vector<double> v = numbers(run(cmd), 2);
    CHECK_ABS(gamma_deg, v[0], 1e-6);
    // The definition, checked independently: grid north by finite differences.
    CHECK_ABS(gamma_deg, finite_difference_convergence_deg(crs, p), 1e-6);
  }
  // The sign, by the geometry of the Transverse Mercator [derived]: east of the central
  // meridian (15 E) in the north, meridians lean towards the pole above the central
  // meridian, so grid north lies clockwise of true north (gamma > 0); west of it, gamma < 0.
  CHECK(crs.convergence_deg({52.0, 17.5}) > 0.0);
  CHECK(crs.convergence_deg({52.0, 12.5}) < 0.0);
  CHECK_ABS(crs.convergence_deg({52.0, 15.0}), 0.0, 1e-9);
}

TEST_CASE("utm_convergence_deg is GeographicLib's gamma in the point's own zone") {
  // GeographicLib UTMUPS::Forward with the standard zone; south of the equator too.
  for (const LatLon& p :
       {LatLon{-23.4127, 131.6035}, LatLon{58.0081, -101.2276}, LatLon{4.9311, 38.1449}}) {
    int zone = 0;
    bool northp = false;
    double x = 0, y = 0, gamma = 0, k = 0;
    GeographicLib::UTMUPS::Forward(p.lat_deg, p.lon_deg, zone, northp, x, y, gamma, k);
    CHECK_ABS(utm_convergence_deg(p), gamma, 1e-12);
  }
}

TEST_CASE("Swiss LV95 (EPSG:2056), a national grid: forward agrees with cs2cs to 1 mm") {
  // CH1903+ / LV95: oblique Mercator on the Bessel ellipsoid; PROJ's datum shift from WGS 84
  // is the same in cs2cs and in the library (one candidate operation, see projinfo).
  const ProjectedCrs crs("EPSG:2056");
  CHECK(crs.name() == "CH1903+ / LV95");
  for (const LatLon& p :
       {LatLon{46.6133, 8.9164}, LatLon{46.2471, 7.3318}, LatLon{47.0296, 9.6542}}) {
    CAPTURE(p.lat_deg);
    CAPTURE(p.lon_deg);
    double e = 0, n = 0;
    crs.forward(p, e, n);
    // LV95 coordinates run E 2 4xx xxx to 2 8xx xxx, N 1 0xx xxx to 1 3xx xxx.
    CHECK(e > 2.4e6);
    CHECK(n < 1.4e6);
    const auto [c1, c2] = cs2cs(p, "EPSG:2056");  // easting first in EPSG:2056
    CHECK_ABS(e, c1, 1e-3);
    CHECK_ABS(n, c2, 1e-3);
  }
}

TEST_CASE("Swiss LV95 convergence: grid north by finite differences, on WGS 84") {
  // Independent check: the finite-difference grid north above, through the whole WGS 84 to
  // LV95 operation. The library's value is PROJ's proj_factors on the Bessel datum plus the
  // turn between the two datums' meridians; without that turn the two would differ by about
  // 8e-4 deg here.
  const ProjectedCrs crs("EPSG:2056");
  for (const LatLon& p :
       {LatLon{46.6133, 8.9164}, LatLon{46.2471, 7.3318}, LatLon{47.0296, 9.6542}}) {
    CAPTURE(p.lat_deg);
    CAPTURE(p.lon_deg);
    CHECK_ABS(crs.convergence_deg(p), finite_difference_convergence_deg(crs, p), 1e-6);
  }
  // East of the projection centre (7.4396 E) grid north is clockwise of true north.
  CHECK(crs.convergence_deg({46.6133, 8.9164}) > 0.0);
  CHECK(crs.convergence_deg({46.2471, 6.1000}) < 0.0);
}

TEST_CASE("SWEREF99 TM (EPSG:3006) lists northing first: forward still gives east, north") {
  // projinfo EPSG:3006 shows AXIS["northing (N)",north], then AXIS["easting (E)",east]; cs2cs
  // prints in that order, so its first number is the northing.
  const ProjectedCrs crs("EPSG:3006");
  // SWEREF99 TM is Transverse Mercator on GRS 1980 (a = 6378137 m, 1/f = 298.257222101),
  // central meridian 15 E, k0 = 0.9996, false easting 500 000 m (the EPSG:3006 definition as
  // `projinfo EPSG:3006` prints it): GeographicLib's TransverseMercator with those constants
  // is an independent reference.
  const GeographicLib::TransverseMercator tm(6378137.0, 1.0 / 298.257222101, 0.9996);
  for (const LatLon& p :
       {LatLon{63.2519, 16.7043}, LatLon{57.4127, 14.1178}, LatLon{66.8905, 19.3320}}) {
    CAPTURE(p.lat_deg);
    CAPTURE(p.lon_deg);
    double e = 0, n = 0;
    crs.forward(p, e, n);
    const auto [c_north, c_east] = cs2cs(p, "EPSG:3006");
    CHECK_ABS(e, c_east, 1e-3);
    CHECK_ABS(n, c_north, 1e-3);
    double x = 0, y = 0, gamma = 0, k = 0;
    tm.Forward(15.0, p.lat_deg, p.lon_deg, x, y, gamma, k);
    CHECK_ABS(e, x + 500000.0, 1e-3);
    CHECK_ABS(n, y, 1e-3);
    // Convergence: GeographicLib's TM gamma (same convention), and the finite differences.
    // (PROJ 9.1's proj_factors called on this CRS directly is off by 90 deg here, because of
    // the northing-first axes; the library calls it on a normalised operation.)
    CHECK_ABS(crs.convergence_deg(p), gamma, 1e-6);
    CHECK_ABS(crs.convergence_deg(p), finite_difference_convergence_deg(crs, p), 1e-6);
  }
}

TEST_CASE("unknown and non-projected codes are refused with the field 'crs'") {
  // An unused EPSG code: PROJ's message is carried ("crs not found" in PROJ 9.1).
  const auto [field, reason] = construction_error("EPSG:99999");
  CHECK(field == "crs");
  CHECK(reason.find("unknown CRS 'EPSG:99999': ") == 0);
  CHECK(reason.find("not found") != std::string::npos);
  // EPSG:4326 is WGS 84 geographic (latitude, longitude): no grid.
  const auto [field2, reason2] = construction_error("EPSG:4326");
  CHECK(field2 == "crs");
  CHECK(reason2.find("'EPSG:4326' (WGS 84) is a geographic CRS") != std::string::npos);
  CHECK(reason2.find("projected CRS") != std::string::npos);
  // EPSG:5555, ETRS89 / UTM zone 32N + DHHN92 height, is compound: refused for now.
  const auto [field3, reason3] = construction_error("EPSG:5555");
  CHECK(field3 == "crs");
  CHECK(reason3.find("compound CRS") != std::string::npos);
  const auto [field4, reason4] = construction_error("not a crs at all");
  CHECK(field4 == "crs");
  CHECK(reason4.find("unknown CRS") == 0);
}

TEST_CASE("points PROJ cannot transform give InputError, not HUGE_VAL") {
  const ProjectedCrs crs("EPSG:32633");
  double e = 0, n = 0;
  CHECK_THROWS_AS(crs.forward({91.0, 15.0}, e, n), InputError);
  CHECK_THROWS_AS(crs.forward({45.0, std::nan("")}, e, n), InputError);
  CHECK_THROWS_AS(crs.convergence_deg({-95.0, 15.0}), InputError);
  // On the equator 90 deg from the central meridian (15 E + 90 = 105 E) the Transverse
  // Mercator is singular (the image of that point is at infinity [derived; Karney 2011,
  // "Transverse Mercator with an accuracy of a few nanometers", J. Geodesy 85:475-485]):
  // PROJ's error becomes an InputError on "crs".
  CHECK_THROWS_AS(crs.convergence_deg({0.0, 105.0}), InputError);
  try {
    crs.forward({0.0, 105.0}, e, n);
    FAIL("expected InputError");
  } catch (const InputError& err) {
    CHECK(err.diagnostic().field == "crs");
    CHECK(err.diagnostic().reason.find("cannot be put in CRS 'EPSG:32633'") != std::string::npos);
  }
  // The object stays usable after a failure.
  crs.forward(kUtm33Points[0], e, n);
  CHECK(std::isfinite(e));
}

TEST_CASE("a ProjectedCrs can be moved") {
  ProjectedCrs a("EPSG:32633");
  ProjectedCrs b(std::move(a));
  double e = 0, n = 0;
  b.forward(kUtm33Points[1], e, n);
  double e2 = 0, n2 = 0;
  ProjectedCrs c("EPSG:3006");
  c = std::move(b);
  c.forward(kUtm33Points[1], e2, n2);
  CHECK(c.code() == "EPSG:32633");
  CHECK(e2 == e);
  CHECK(n2 == n);
}
