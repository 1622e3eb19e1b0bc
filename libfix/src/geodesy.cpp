// Notation (Karney 2013): point 1 start, point 2 end of a geodesic; s12 length (m); azi1,
// azi2 forward azimuths (deg); m12 reduced length (m); M12, M21 geodesic scales.
#include "lobfix/geodesy.hpp"

#include <GeographicLib/AzimuthalEquidistant.hpp>
#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/MGRS.hpp>
#include <GeographicLib/TransverseMercator.hpp>
#include <GeographicLib/UTMUPS.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

#include "lobfix/error.hpp"

namespace lobfix {

namespace {
const GeographicLib::Geodesic& wgs84() {
  return GeographicLib::Geodesic::WGS84();
}
}  // namespace

double wrap_deg180(double angle_deg) {
  if (!std::isfinite(angle_deg))
    return std::nan("");
  double r = std::remainder(angle_deg, 360.0);  // [-180, 180]
  if (r <= -180.0)
    r += 360.0;
  return r == 0.0 ? 0.0 : r;  // no -0
}

double wrap_deg360(double angle_deg) {
  if (!std::isfinite(angle_deg))
    return std::nan("");
  double r = std::fmod(angle_deg, 360.0);
  if (r < 0.0)
    r += 360.0;
  if (r >= 360.0)
    r -= 360.0;  // fmod of a tiny negative plus 360 can round to 360
  return r == 0.0 ? 0.0 : r;
}

double angle_diff_deg(double a_deg, double b_deg) {
  return wrap_deg180(a_deg - b_deg);
}

GeodesicLine12 geodesic_inverse(const LatLon& p1, const LatLon& p2) {
  GeodesicLine12 g;
  wgs84().Inverse(p1.lat_deg, p1.lon_deg, p2.lat_deg, p2.lon_deg, g.s12_m, g.azi1_deg, g.azi2_deg,
                  g.m12_m, g.M12, g.M21);
  return g;
}

GeodesicLine12 geodesic_inverse_azimuths(const LatLon& p1, const LatLon& p2) {
  GeodesicLine12 g;
  double unused = 0.0;
  using GeographicLib::Geodesic;
  wgs84().GenInverse(p1.lat_deg, p1.lon_deg, p2.lat_deg, p2.lon_deg,
                     Geodesic::AZIMUTH | Geodesic::REDUCEDLENGTH, unused, g.azi1_deg, g.azi2_deg,
                     g.m12_m, unused, unused, unused);
  return g;
}

GeodesicEnd geodesic_direct(const LatLon& p1, double azi1_deg, double s12_m, bool unroll) {
  GeodesicEnd e;
  double t = 0.0;
  unsigned mask = GeographicLib::Geodesic::LATITUDE | GeographicLib::Geodesic::LONGITUDE |
                  GeographicLib::Geodesic::AZIMUTH;
  if (unroll)
    mask |= GeographicLib::Geodesic::LONG_UNROLL;
  wgs84().GenDirect(p1.lat_deg, p1.lon_deg, azi1_deg, false, s12_m, mask, e.point.lat_deg,
                    e.point.lon_deg, e.azi2_deg, t, t, t, t, t);
  return e;
}

LocalPoint local_to_geo(const LatLon& centre, double x_m, double y_m) {
  const GeographicLib::AzimuthalEquidistant proj(wgs84());
  LocalPoint p;
  proj.Reverse(centre.lat_deg, centre.lon_deg, x_m, y_m, p.point.lat_deg, p.point.lon_deg,
               p.azi_deg, p.rk);
  return p;
}

void geo_to_local(const LatLon& centre, const LatLon& point, double& x_m, double& y_m) {
  const GeographicLib::AzimuthalEquidistant proj(wgs84());
  double azi = 0.0;
  double rk = 0.0;
  proj.Forward(centre.lat_deg, centre.lon_deg, point.lat_deg, point.lon_deg, x_m, y_m, azi, rk);
}

GridReference grid_reference(const LatLon& point) {
  if (!(point.lat_deg >= -90.0 && point.lat_deg <= 90.0)) {
    throw InputError({"", 0, 0, "lat", "latitude outside [-90, 90]"});
  }
  GridReference g;
  double k = 0.0;
  GeographicLib::UTMUPS::Forward(point.lat_deg, point.lon_deg, g.zone, g.northp, g.easting_m,
                                 g.northing_m, g.convergence_deg, k);
  // 5 digits per coordinate: 1 m. MGRS::Forward truncates, as the MGRS standard asks.
  GeographicLib::MGRS::Forward(g.zone, g.northp, g.easting_m, g.northing_m, point.lat_deg, 5,
                               g.mgrs);
  char buf[96];
  if (g.zone > 0) {
    std::snprintf(buf, sizeof buf, "%d%c %.0f %.0f", g.zone, g.northp ? 'N' : 'S', g.easting_m,
                  g.northing_m);
  } else {
    std::snprintf(buf, sizeof buf, "UPS %c %.0f %.0f", g.northp ? 'N' : 'S', g.easting_m,
                  g.northing_m);
  }
  g.utm = buf;
  return g;
}

int UtmZone::epsg() const noexcept {
  if (zone == 0)
    return northp ? 32661 : 32761;
  return (northp ? 32600 : 32700) + zone;
}

UtmZone utm_zone_of(const LatLon& point) {
  if (!(point.lat_deg >= -90.0 && point.lat_deg <= 90.0)) {
    throw InputError({"", 0, 0, "lat", "latitude outside [-90, 90]"});
  }
  UtmZone z;
  z.zone = GeographicLib::UTMUPS::StandardZone(point.lat_deg, point.lon_deg);
  z.northp = point.lat_deg >= 0.0;
  return z;
}

namespace {

// UTM zones are used beyond their 6 degrees for maps that straddle a zone edge or are large:
// the Krueger series of GeographicLib's TransverseMercator stays accurate to 5 nm within
// 3,900 km of the central meridian (Karney 2011, "Transverse Mercator with an accuracy of a
// few nanometers", J. Geodesy 85:475-485). UTMUPS refuses eastings outside 0-1,000 km, so
// the zone's projection is called directly, up to 35 degrees of longitude from its meridian.
constexpr double kMaxZoneLongitudeDeg = 35.0;
constexpr double kFalseEastingM = 500000.0;
constexpr double kFalseNorthingSouthM = 10000000.0;

double central_meridian_deg(int zone) {
  return 6.0 * zone - 183.0;
}

[[noreturn]] void beyond_zone(const UtmZone& zone) {
  throw InputError(
      {"", 0, 0, "position",
       "beyond the reach of UTM zone " + std::to_string(zone.zone) + (zone.northp ? "N" : "S")});
}

}  // namespace

UtmPoint utm_forward(const UtmZone& zone, const LatLon& point) {
  UtmPoint u;
  if (!(point.lat_deg >= -90.0 && point.lat_deg <= 90.0))
    beyond_zone(zone);
  if (zone.zone == 0) {
    try {
      int z = 0;
      bool northp = true;
      GeographicLib::UTMUPS::Forward(point.lat_deg, point.lon_deg, z, northp, u.easting_m,
                                     u.northing_m, u.convergence_deg, u.scale, 0);
      if (northp != zone.northp)
        beyond_zone(zone);
    } catch (const GeographicLib::GeographicErr&) {
      beyond_zone(zone);
    }
    return u;
  }
  const double lon0 = central_meridian_deg(zone.zone);
  if (!(std::fabs(wrap_deg180(point.lon_deg - lon0)) <= kMaxZoneLongitudeDeg))
    beyond_zone(zone);
  GeographicLib::TransverseMercator::UTM().Forward(lon0, point.lat_deg, point.lon_deg, u.easting_m,
                                                   u.northing_m, u.convergence_deg, u.scale);
  u.easting_m += kFalseEastingM;
  if (!zone.northp)
    u.northing_m += kFalseNorthingSouthM;
  return u;
}

LatLon utm_reverse(const UtmZone& zone, double easting_m, double northing_m) {
  LatLon p;
  if (zone.zone == 0) {
    try {
      GeographicLib::UTMUPS::Reverse(0, zone.northp, easting_m, northing_m, p.lat_deg, p.lon_deg,
                                     /*mgrslimits=*/false);
    } catch (const GeographicLib::GeographicErr&) {
      beyond_zone(zone);
    }
    return p;
  }
  const double lon0 = central_meridian_deg(zone.zone);
  double gamma = 0.0;
  double k = 0.0;
  GeographicLib::TransverseMercator::UTM().Reverse(
      lon0, easting_m - kFalseEastingM, northing_m - (zone.northp ? 0.0 : kFalseNorthingSouthM),
      p.lat_deg, p.lon_deg, gamma, k);
  if (!std::isfinite(p.lat_deg) || !std::isfinite(p.lon_deg) ||
      !(std::fabs(wrap_deg180(p.lon_deg - lon0)) <= kMaxZoneLongitudeDeg)) {
    beyond_zone(zone);
  }
  return p;
}

std::string mgrs_reference(const LatLon& point, int digits) {
  if (!(point.lat_deg >= -90.0 && point.lat_deg <= 90.0)) {
    throw InputError({"", 0, 0, "lat", "latitude outside [-90, 90]"});
  }
  if (digits < 0 || digits > 5) {
    throw InputError({"", 0, 0, "digits", "MGRS digits must be 0 to 5"});
  }
  int zone = 0;
  bool northp = true;
  double x = 0.0;
  double y = 0.0;
  GeographicLib::UTMUPS::Forward(point.lat_deg, point.lon_deg, zone, northp, x, y);
  std::string mgrs;
  GeographicLib::MGRS::Forward(zone, northp, x, y, point.lat_deg, digits, mgrs);
  return mgrs;
}

std::string mgrs_spaced(const std::string& mgrs) {
  // Grid zone designator: 1-2 digits and a band letter (UTM) or one letter (UPS); then two
  // letters of the 100 km square; then the digits, half easting, half northing.
  std::size_t i = 0;
  while (i < mgrs.size() && mgrs[i] >= '0' && mgrs[i] <= '9')
    ++i;
  const std::size_t gzd = std::min(mgrs.size(), i + 1);
  const std::size_t square = std::min(mgrs.size(), gzd + 2);
  const std::string digits = mgrs.substr(square);
  std::string out = mgrs.substr(0, gzd);
  if (square > gzd)
    out += " " + mgrs.substr(gzd, square - gzd);
  if (!digits.empty()) {
    const std::size_t half = digits.size() / 2;
    out += " " + digits.substr(0, half) + " " + digits.substr(half);
  }
  return out;
}

std::string format_dms(double angle_deg, bool is_latitude, int second_decimals) {
  const char hemi = is_latitude ? (angle_deg < 0 ? 'S' : 'N') : (angle_deg < 0 ? 'W' : 'E');
  const double scale = std::pow(10.0, second_decimals);
  // Round once in units of the last printed digit so that 59.999" never prints as 60".
  const double total = std::round(std::fabs(angle_deg) * 3600.0 * scale);
  const double units_per_degree = 3600.0 * scale;
  const double units_per_minute = 60.0 * scale;
  const double d = std::floor(total / units_per_degree);
  const double m = std::floor((total - d * units_per_degree) / units_per_minute);
  const double s = (total - d * units_per_degree - m * units_per_minute) / scale;
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.0f\xC2\xB0%02.0f'%0*.*f\"%c", d, m,
                second_decimals > 0 ? second_decimals + 3 : 2, second_decimals, s, hemi);
  return buf;
}

}  // namespace lobfix
