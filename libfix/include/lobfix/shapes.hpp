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

/// Vertices along the geodesic ray leaving `station` at `azimuth_deg` (deg clockwise from
/// true north), from the station itself (first vertex) to the point length_m along it (last
/// vertex), in equal steps of at most max_step_m (at least 2 vertices; a max_step_m <= 0
/// gives one step; at most 1e6 steps). Longitudes unrolled: continuous with the station's.
Path ray_path(const LatLon& station, double azimuth_deg, double length_m, double max_step_m);

/// Closed ring (first vertex repeated last) of `vertices` points of the ellipse around
/// `centre`: vertex i, at parameter t = 2 pi i / vertices, lies at the local east/north
/// offset a cos t u + b sin t v (a, b the semi-axes, u the unit vector along the major axis
/// at orientation_deg, v = u turned 90 deg clockwise), placed with geodesic_direct at the
/// offset's azimuth and length (an ellipse in the azimuthal equidistant frame of the
/// centre). The ring runs clockwise on a map. `vertices` below 3 counts as 3.
/// Longitudes unrolled around centre.lon_deg.
Path ellipse_ring(const LatLon& centre, const Ellipse& ellipse, int vertices = 180);

/// Cut an unrolled line at every crossing of the antimeridian: each piece has longitudes in
/// [-180, 180]; a piece ending on the antimeridian ends at exactly +-180. Consecutive
/// vertices are joined the short way round (less than 180 deg of longitude apart), so
/// lines given in plain [-180, 180] longitudes are cut too. The latitude at a cut is
/// interpolated linearly in longitude between its two vertices: meant for dense vertices
/// (rays, ellipses), where that is far below what a map shows. A line touching the
/// antimeridian without crossing it stays whole.
std::vector<Path> split_line_antimeridian(const Path& line);

/// Cut an unrolled closed ring at the antimeridian into closed rings, each within
/// [-180, 180]: the part in each 360-degree window of longitude, clipped there
/// (Sutherland-Hodgman against the window's two meridians, latitudes at the cuts as in
/// split_line_antimeridian) and shifted back. A ring that does not cross comes back whole,
/// wrapped. A ring crossing the same antimeridian more than twice gives one ring per
/// window, its pieces joined by zero-width edges along the cut. A ring enclosing a pole
/// comes back as one ring that follows it from -180 to 180 and closes along the pole
/// (lat +-90): a cap around a pole drawn in plain longitude/latitude.
std::vector<Path> split_ring_antimeridian(const Path& ring);

/// True when the closed ring winds once around a pole: its longitude steps, each taken the
/// short way round, add up to +-360 around the ring (0 for a ring beside the poles).
bool ring_encloses_pole(const Path& ring);

}  // namespace lobfix
