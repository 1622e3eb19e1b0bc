// lobfix: geometry of the map products on the ellipsoid (rays, ellipses) and the cutting of
// lines and rings at the antimeridian (RFC 7946 section 3.1.9).
#pragma once

#include <vector>

#include "lobfix/geodesy.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

/// A chain of vertices; longitudes may run continuously past +-180 ("unrolled") before
/// cutting, and lie in [-180, 180] after.
using Path = std::vector<LatLon>;

/// Vertices along the geodesic ray leaving `station` at `azimuth_deg`, from the station to
/// length_m, spaced at most max_step_m apart (at least 2 vertices). Longitudes unrolled.
Path ray_path(const LatLon& station, double azimuth_deg, double length_m, double max_step_m);

/// Closed ring (first vertex repeated last) of `vertices` points of the ellipse around
/// `centre`: the point at parameter t lies at local east/north offset
/// a cos t u + b sin t v (u the major axis, v the minor), placed with geodesic_direct at the
/// offset's azimuth and length. Longitudes unrolled around centre.lon_deg.
Path ellipse_ring(const LatLon& centre, const Ellipse& ellipse, int vertices = 180);

/// Cut an unrolled line at every crossing of the antimeridian: each piece has longitudes in
/// [-180, 180]; a piece ending on the antimeridian ends at exactly +-180.
std::vector<Path> split_line_antimeridian(const Path& line);

/// Cut an unrolled closed ring (not enclosing a pole) at the antimeridian into closed rings,
/// each within [-180, 180]. A ring that does not cross comes back whole, wrapped.
std::vector<Path> split_ring_antimeridian(const Path& ring);

/// True when the unrolled closed ring winds once around a pole (its longitudes change by
/// +-360 around the ring).
bool ring_encloses_pole(const Path& ring);

}  // namespace lobfix
