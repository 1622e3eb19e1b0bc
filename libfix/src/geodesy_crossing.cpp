// Crossing of two geodesic rays (part of the geodesy module).
//
// Notation: station a, azimuth alpha_a; station b, alpha_b. On the unit sphere, a station's
// position vector is r, its direction of travel d = sin(alpha) e + cos(alpha) n (e, n the
// east and north unit vectors); the great circle's pole is r x d. The circles meet at
// +-X, X = (r_a x d_a) x (r_b x d_b) normalised; X lies ahead of station a when the angle
// atan2(X . d_a, X . r_a) is in (0, pi).
//
// Refinement (Karney 2013, "Algorithms for geodesics", section 8; the GeographicLib
// documentation's "intersection of geodesics" example): with the ellipsoidal gnomonic
// projection centred at the estimate z, each geodesic near z maps to a nearly straight
// line, exactly straight through z; intersecting the two lines and moving z there
// converges quadratically.
#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/Gnomonic.hpp>

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>

#include "detail/ray_crossing.hpp"

namespace lobfix::detail {

namespace {

constexpr double kDegToRad = M_PI / 180.0;
constexpr double kRadToDeg = 180.0 / M_PI;

Eigen::Vector3d unit_vector(const LatLon& p) {
  const double phi = p.lat_deg * kDegToRad;
  const double lam = p.lon_deg * kDegToRad;
  return {std::cos(phi) * std::cos(lam), std::cos(phi) * std::sin(lam), std::sin(phi)};
}

Eigen::Vector3d direction(const LatLon& p, double azimuth_deg) {
  const double phi = p.lat_deg * kDegToRad;
  const double lam = p.lon_deg * kDegToRad;
  const Eigen::Vector3d east(-std::sin(lam), std::cos(lam), 0.0);
  const Eigen::Vector3d north(-std::sin(phi) * std::cos(lam), -std::sin(phi) * std::sin(lam),
                              std::cos(phi));
  const double a = azimuth_deg * kDegToRad;
  return std::sin(a) * east + std::cos(a) * north;
}

// Angle travelled along the circle (r, d) to reach X, in (-pi, pi].
double along_angle(const Eigen::Vector3d& r, const Eigen::Vector3d& d, const Eigen::Vector3d& x) {
  return std::atan2(x.dot(d), x.dot(r));
}

}  // namespace

std::optional<RayCrossing> cross_rays(const LatLon& station_a, double azimuth_a_deg,
                                      const LatLon& station_b, double azimuth_b_deg,
                                      double max_range_m) {
  const Eigen::Vector3d ra = unit_vector(station_a);
  const Eigen::Vector3d rb = unit_vector(station_b);
  const Eigen::Vector3d da = direction(station_a, azimuth_a_deg);
  const Eigen::Vector3d db = direction(station_b, azimuth_b_deg);
  Eigen::Vector3d x = ra.cross(da).cross(rb.cross(db));
  const double norm = x.norm();
  if (!(norm > 1e-12))
    return std::nullopt;  // the same great circle: no single crossing
  x /= norm;
  if (along_angle(ra, da, x) <= 0.0)
    x = -x;  // the intersection ahead of station a
  const double ta = along_angle(ra, da, x);
  const double tb = along_angle(rb, db, x);
  if (!(ta > 0.0) || !(tb > 0.0))
    return std::nullopt;  // behind station b: the rays diverge

  const GeographicLib::Geodesic& geod = GeographicLib::Geodesic::WGS84();
  const GeographicLib::Gnomonic gnomonic(geod);
  LatLon z{std::asin(std::clamp(x.z(), -1.0, 1.0)) * kRadToDeg,
           std::atan2(x.y(), x.x()) * kRadToDeg};
  const double sa = ta * kMeanEarthRadiusM;
  const double sb = tb * kMeanEarthRadiusM;
  // Early exit for crossings far beyond the range: the spherical estimate is within a
  // fraction of a percent of the ellipsoidal distance.
  if (std::min(sa, sb) > 1.02 * max_range_m + 1000.0)
    return std::nullopt;

  bool settled = false;
  for (int iter = 0; iter < 30 && !settled; ++iter) {
    // Two points of each ray around the current estimate, projected about z.
    double xy[4][2];
    const double stations_lat[2] = {station_a.lat_deg, station_b.lat_deg};
    const double stations_lon[2] = {station_a.lon_deg, station_b.lon_deg};
    const double azimuths[2] = {azimuth_a_deg, azimuth_b_deg};
    double along[2];
    bool ok = true;
    for (int k = 0; k < 2 && ok; ++k) {
      double s12 = 0.0, azi1 = 0.0, azi2 = 0.0;
      geod.Inverse(stations_lat[k], stations_lon[k], z.lat_deg, z.lon_deg, s12, azi1, azi2);
      // Signed distance along the ray to the foot nearest z (small-angle: z lies on or
      // very near the ray once the spherical estimate is in).
      const double cosd = std::cos((azi1 - azimuths[k]) * kDegToRad);
      along[k] = s12 * cosd;
      const double half = std::max(1.0, std::min(0.25 * std::fabs(along[k]), 50000.0));
      for (int e = 0; e < 2; ++e) {
        double lat = 0.0, lon = 0.0;
        geod.Direct(stations_lat[k], stations_lon[k], azimuths[k],
                    along[k] + (e == 0 ? -half : half), lat, lon);
        double gx = 0.0, gy = 0.0, gazi = 0.0, grk = 0.0;
        gnomonic.Forward(z.lat_deg, z.lon_deg, lat, lon, gx, gy, gazi, grk);
        if (!std::isfinite(gx) || !std::isfinite(gy))
          ok = false;
        xy[2 * k + e][0] = gx;
        xy[2 * k + e][1] = gy;
      }
    }
    if (!ok)
      return std::nullopt;
    // Intersect line p0 + t (p1 - p0) with q0 + u (q1 - q0).
    const Eigen::Vector2d p0(xy[0][0], xy[0][1]), p1(xy[1][0], xy[1][1]);
    const Eigen::Vector2d q0(xy[2][0], xy[2][1]), q1(xy[3][0], xy[3][1]);
    const Eigen::Vector2d dp = p1 - p0, dq = q1 - q0;
    const double den = dp.x() * dq.y() - dp.y() * dq.x();
    if (!(std::fabs(den) > 1e-12 * dp.norm() * dq.norm()))
      return std::nullopt;
    const Eigen::Vector2d w = q0 - p0;
    const double t = (w.x() * dq.y() - w.y() * dq.x()) / den;
    const Eigen::Vector2d c = p0 + t * dp;
    double lat = 0.0, lon = 0.0, gazi = 0.0, grk = 0.0;
    gnomonic.Reverse(z.lat_deg, z.lon_deg, c.x(), c.y(), lat, lon, gazi, grk);
    if (!std::isfinite(lat) || !std::isfinite(lon))
      return std::nullopt;
    settled = c.norm() < 1e-6;
    z = {lat, lon};
  }
  if (!settled)
    return std::nullopt;

  // Rays, not lines: the crossing must lie ahead of both stations, within the range.
  RayCrossing out;
  out.point = z;
  double s12 = 0.0, azi1a = 0.0, azi2a = 0.0, azi1b = 0.0, azi2b = 0.0;
  geod.Inverse(station_a.lat_deg, station_a.lon_deg, z.lat_deg, z.lon_deg, s12, azi1a, azi2a);
  out.s_a_m = s12;
  geod.Inverse(station_b.lat_deg, station_b.lon_deg, z.lat_deg, z.lon_deg, s12, azi1b, azi2b);
  out.s_b_m = s12;
  const auto ahead = [](double azi, double ray) { return std::cos((azi - ray) * kDegToRad) > 0.0; };
  if (!ahead(azi1a, azimuth_a_deg) || !ahead(azi1b, azimuth_b_deg))
    return std::nullopt;
  if (out.s_a_m > max_range_m || out.s_b_m > max_range_m)
    return std::nullopt;
  if (!(out.s_a_m > 0.0) || !(out.s_b_m > 0.0))
    return std::nullopt;
  out.sin_angle = std::sin((azi2a - azi2b) * kDegToRad);
  return out;
}

}  // namespace lobfix::detail
