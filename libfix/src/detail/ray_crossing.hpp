// lobfix (geodesy, private): where two geodesic rays cross on the ellipsoid.
#pragma once

#include <optional>

#include "lobfix/geodesy.hpp"

namespace lobfix::detail {

struct RayCrossing {
  LatLon point;
  double s_a_m = 0.0;      ///< distance along ray a from its station
  double s_b_m = 0.0;      ///< distance along ray b from its station
  double sin_angle = 0.0;  ///< sine of the angle between the rays at the crossing
};

/// The crossing of two rays ahead of both stations and within max_range_m of both, if any.
/// A spherical estimate picks the crossing (rays, not lines: of the two intersections of
/// the great circles only the one ahead of both stations counts), then the ellipsoidal
/// gnomonic projection refines it (Karney 2013, section 8: geodesics through the centre of
/// the projection are straight lines).
std::optional<RayCrossing> cross_rays(const LatLon& station_a, double azimuth_a_deg,
                                      const LatLon& station_b, double azimuth_b_deg,
                                      double max_range_m);

}  // namespace lobfix::detail
