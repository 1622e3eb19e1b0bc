// lobfix: the one place that calls GeographicLib (WGS 84 ellipsoid throughout).
//
// Notation (Karney 2013, "Algorithms for geodesics", J. Geodesy 87:43-55): point 1 is the
// start of a geodesic, point 2 its end; s12 distance (m); azi1, azi2 forward azimuths at
// points 1 and 2 (deg clockwise from north); m12 reduced length (m); M12, M21 geodesic
// scales (dimensionless).
#pragma once

#include <string>

namespace lobfix {

/// Wrap an angle to (-180, 180] degrees. wrap_deg180(-180) == 180; NaN stays NaN.
double wrap_deg180(double angle_deg);
/// Wrap an angle to [0, 360) degrees. wrap_deg360(360) == 0, wrap_deg360(-0.0) == 0.
double wrap_deg360(double angle_deg);
/// Signed smallest difference a - b in (-180, 180] degrees.
double angle_diff_deg(double a_deg, double b_deg);

struct LatLon {
  double lat_deg = 0.0;
  double lon_deg = 0.0;
};

/// The inverse geodesic problem between two points.
struct GeodesicLine12 {
  double s12_m = 0.0;
  double azi1_deg = 0.0;  ///< in (-180, 180]
  double azi2_deg = 0.0;  ///< in (-180, 180]
  double m12_m = 0.0;
  double M12 = 1.0;
  double M21 = 1.0;
};
GeodesicLine12 geodesic_inverse(const LatLon& p1, const LatLon& p2);
/// The same with only azi1_deg, azi2_deg and m12_m computed (the others are left at their
/// defaults): what the solver's inner loop needs, at less cost.
GeodesicLine12 geodesic_inverse_azimuths(const LatLon& p1, const LatLon& p2);

/// The direct problem: the point s12_m along the geodesic leaving p1 at azi1_deg, and the
/// forward azimuth there. Longitude of the result is in [-180, 180] unless
/// unroll is true, when it is continuous with p1's longitude (may pass +-180).
struct GeodesicEnd {
  LatLon point;
  double azi2_deg = 0.0;
};
GeodesicEnd geodesic_direct(const LatLon& p1, double azi1_deg, double s12_m, bool unroll = false);

/// Azimuthal equidistant frame centred at `centre`: x east, y north (m) at the centre;
/// hypot(x, y) is the geodesic distance and atan2(x, y) the azimuth at the centre, exactly.
struct LocalPoint {
  LatLon point;
  double azi_deg = 0.0;  ///< azimuth at the point of the geodesic from the centre
  double rk = 1.0;       ///< reciprocal of the azimuthal scale at the point (m12 / s12)
};
LocalPoint local_to_geo(const LatLon& centre, double x_m, double y_m);
void geo_to_local(const LatLon& centre, const LatLon& point, double& x_m, double& y_m);

/// Grid references of a point: UTM/UPS and MGRS.
struct GridReference {
  int zone = 0;        ///< UTM zone 1..60, 0 for UPS (polar)
  bool northp = true;  ///< northern hemisphere
  double easting_m = 0.0;
  double northing_m = 0.0;
  double convergence_deg = 0.0;  ///< meridian convergence (grid north vs true north)
  std::string utm;               ///< e.g. "33N 512345 6123456"
  std::string mgrs;              ///< 1 m precision, e.g. "33VWG1234523456" (truncated, per MGRS)
};
/// @throws InputError if the latitude is outside [-90, 90].
GridReference grid_reference(const LatLon& point);

/// A UTM zone (1..60) and hemisphere, or UPS (zone 0) for the polar caps.
struct UtmZone {
  int zone = 0;
  bool northp = true;
  /// EPSG code of WGS 84 / UTM in this zone: 326zz north, 327zz south; 32661 / 32761 for UPS
  /// north / south.
  int epsg() const noexcept;
};
/// The standard zone of a point (with the Norway and Svalbard exceptions, as MGRS uses).
/// @throws InputError if the latitude is outside [-90, 90].
UtmZone utm_zone_of(const LatLon& point);
/// Easting and northing (m) of `point` in `zone`, which need not be its standard one: the
/// zone's transverse Mercator projection is used up to 35 degrees of longitude from its
/// central meridian (eastings may then fall outside 0-1,000 km), accurate to nanometres
/// (Karney 2011). Also the meridian convergence (deg) and the point scale there. UPS (zone
/// 0) is limited to its own hemisphere.
struct UtmPoint {
  double easting_m = 0.0;
  double northing_m = 0.0;
  double convergence_deg = 0.0;
  double scale = 1.0;  ///< point scale k: grid distance = k x ground distance, locally
};
/// @throws InputError if the point is beyond the zone's reach.
UtmPoint utm_forward(const UtmZone& zone, const LatLon& point);
/// The point at easting_m, northing_m of `zone`. @throws InputError when out of reach.
LatLon utm_reverse(const UtmZone& zone, double easting_m, double northing_m);
/// MGRS reference of a point with `digits` digits per axis (0..5: 100 km down to 1 m),
/// truncated as the MGRS standard asks, e.g. "33UXP0412" for digits 2.
/// @throws InputError if the latitude is outside [-90, 90] or digits outside 0..5.
std::string mgrs_reference(const LatLon& point, int digits);
/// The same split for reading aloud: grid zone, 100 km square, easting, northing separated
/// by spaces, e.g. "33U XP 04 12".
std::string mgrs_spaced(const std::string& mgrs);

/// Decimal degrees to degrees-minutes-seconds, e.g. "51°28'38.12\"N".
std::string format_dms(double angle_deg, bool is_latitude, int second_decimals = 2);

/// Mean radius of the WGS 84 ellipsoid (m), for order-of-magnitude decisions only.
constexpr double kMeanEarthRadiusM = 6371008.8;

}  // namespace lobfix
