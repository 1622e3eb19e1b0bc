// Map geometry on the WGS 84 ellipsoid: rays, error ellipses, cutting at the antimeridian.
//
// Notation: a longitude is "unrolled" when it runs continuously past +-180 (e.g. 179.9,
// 180.1); "window k" is the longitude band [-180 + 360 k, 180 + 360 k], whose vertices are
// brought to [-180, 180] by subtracting 360 k. Every geodesic goes through geodesy.hpp
// (GeographicLib, Karney 2013). RFC 7946 section 3.1.9 asks for shapes crossing the
// antimeridian to be cut into Multi* parts; that is what the split functions are for.
#include "lobfix/shapes.hpp"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>

#include "detail/export_geometry.hpp"

namespace lobfix {

namespace {

constexpr double kPi = 3.14159265358979323846;

/// Index k of the window holding longitude lon_deg: [-180 + 360 k, 180 + 360 k).
double window_of(double lon_deg) {
  return std::floor((lon_deg + 180.0) / 360.0);
}

bool is_boundary(double lon_deg) {
  return std::remainder(lon_deg - 180.0, 360.0) == 0.0;
}

LatLon shifted(const LatLon& p, double k) {
  return {p.lat_deg, p.lon_deg - 360.0 * k};
}

/// The point on segment a-b at longitude lon_deg. The latitude is interpolated linearly in
/// longitude: the segment is really a short geodesic, but the vertices of rays and ellipses
/// are dense (a few hundred metres to a few km apart), so the error is far below what a map
/// shows. The longitude is set exactly, so a cut lies exactly on the boundary.
LatLon at_longitude(const LatLon& a, const LatLon& b, double lon_deg) {
  const double dlon = b.lon_deg - a.lon_deg;
  const double t = dlon == 0.0 ? 0.0 : (lon_deg - a.lon_deg) / dlon;
  return {a.lat_deg + t * (b.lat_deg - a.lat_deg), lon_deg};
}

bool same_point(const LatLon& a, const LatLon& b) {
  return a.lat_deg == b.lat_deg && a.lon_deg == b.lon_deg;
}

void push_distinct(Path& path, const LatLon& p) {
  if (path.empty() || !same_point(path.back(), p))
    path.push_back(p);
}

/// True when the first and last vertices are the same place (longitudes equal mod 360).
bool is_closed(const Path& ring) {
  if (ring.size() < 2)
    return false;
  return ring.front().lat_deg == ring.back().lat_deg &&
         std::fabs(angle_diff_deg(ring.front().lon_deg, ring.back().lon_deg)) < 1e-9;
}

/// One Sutherland-Hodgman pass: keep the part of the open polygon `poly` with
/// lon >= bound (keep_east) or lon <= bound (!keep_east).
Path clip_at(const Path& poly, double bound_deg, bool keep_east) {
  Path out;
  if (poly.empty())
    return out;
  const auto inside = [&](const LatLon& p) {
    return keep_east ? p.lon_deg >= bound_deg : p.lon_deg <= bound_deg;
  };
  const LatLon* s = &poly.back();
  for (const LatLon& e : poly) {
    if (inside(e)) {
      if (!inside(*s))
        push_distinct(out, at_longitude(*s, e, bound_deg));
      push_distinct(out, e);
    } else if (inside(*s)) {
      push_distinct(out, at_longitude(*s, e, bound_deg));
    }
    s = &e;
  }
  if (out.size() > 1 && same_point(out.front(), out.back()))
    out.pop_back();
  return out;
}

/// Twice the signed area of an open polygon in the lon/lat plane (shoelace formula).
double shoelace2(const Path& poly) {
  double sum = 0.0;
  for (std::size_t i = 0; i < poly.size(); ++i) {
    const LatLon& a = poly[i];
    const LatLon& b = poly[(i + 1) % poly.size()];
    sum += a.lon_deg * b.lat_deg - b.lon_deg * a.lat_deg;
  }
  return sum;
}

Path closed_in_window(const Path& open_poly, double k) {
  Path ring;
  ring.reserve(open_poly.size() + 1);
  for (const LatLon& p : open_poly)
    ring.push_back(shifted(p, k));
  if (!ring.empty())
    ring.push_back(ring.front());
  return ring;
}

}  // namespace

namespace detail {

Path unroll_short_way(const Path& path) {
  Path out;
  out.reserve(path.size());
  for (const LatLon& p : path) {
    if (out.empty()) {
      out.push_back(p);
      continue;
    }
    // Shift by a whole number of turns only, so that already continuous input is unchanged
    // bit for bit (a vertex on 180 stays exactly on 180).
    const double turns = std::round((p.lon_deg - out.back().lon_deg) / 360.0);
    out.push_back({p.lat_deg, p.lon_deg - 360.0 * turns});
  }
  return out;
}

Path pole_closed_ring(const Path& ring) {
  Path q = unroll_short_way(ring);
  if (q.size() < 3)
    return q;
  if (!is_closed(ring))
    q.push_back(unroll_short_way({q.back(), q.front()}).back());
  double mean_lat_deg = 0.0;
  for (std::size_t i = 0; i + 1 < q.size(); ++i)
    mean_lat_deg += q[i].lat_deg;
  const double pole_lat_deg = mean_lat_deg >= 0.0 ? 90.0 : -90.0;
  // Traverse eastward: the last vertex is then the first one plus one turn.
  if (q.back().lon_deg < q.front().lon_deg) {
    std::reverse(q.begin(), q.end());
  }
  const std::size_t n = q.size() - 1;  // segments; q[n] is q[0] one turn on
  const double k = std::ceil((q[0].lon_deg + 180.0) / 360.0);
  const double boundary_deg = -180.0 + 360.0 * k;  // first antimeridian at or east of q[0]
  std::size_t i = 0;
  while (i + 1 < n && q[i + 1].lon_deg < boundary_deg)
    ++i;
  const LatLon cut = at_longitude(q[i], q[i + 1], boundary_deg);

  Path out;
  out.reserve(q.size() + 4);
  push_distinct(out, cut);
  for (std::size_t j = i + 1; j <= n; ++j)
    push_distinct(out, q[j]);
  for (std::size_t j = 1; j <= i; ++j)
    push_distinct(out, shifted(q[j], -1.0));
  push_distinct(out, shifted(cut, -1.0));
  for (LatLon& p : out) {
    p = shifted(p, k);
    p.lon_deg = std::clamp(p.lon_deg, -180.0, 180.0);
  }
  out.front().lon_deg = -180.0;
  out.back().lon_deg = 180.0;
  out.push_back({pole_lat_deg, 180.0});
  out.push_back({pole_lat_deg, -180.0});
  out.push_back(out.front());
  return out;
}

}  // namespace detail

Path ray_path(const LatLon& station, double azimuth_deg, double length_m, double max_step_m) {
  double segments = 1.0;
  if (max_step_m > 0.0 && std::isfinite(length_m) && length_m > 0.0) {
    segments = std::max(1.0, std::ceil(length_m / max_step_m));
  }
  // Guard against absurd requests (sub-metre steps over a continent): cap at 1e6 vertices.
  segments = std::min(segments, 1e6);
  const auto count = static_cast<std::size_t>(segments);
  Path path;
  path.reserve(count + 1);
  path.push_back(station);
  for (std::size_t i = 1; i <= count; ++i) {
    // The last vertex at exactly length_m (no accumulated rounding).
    const double s12_m = i == count ? length_m : length_m * static_cast<double>(i) / segments;
    path.push_back(geodesic_direct(station, azimuth_deg, s12_m, true).point);
  }
  return path;
}

Path ellipse_ring(const LatLon& centre, const Ellipse& ellipse, int vertices) {
  const int n = std::max(vertices, 3);
  const double theta = ellipse.orientation_deg * kPi / 180.0;
  // Unit vectors (east, north): u along the major axis, v = u turned 90 deg clockwise.
  const double ue = std::sin(theta);
  const double un = std::cos(theta);
  const double ve = un;
  const double vn = -ue;
  Path ring;
  ring.reserve(static_cast<std::size_t>(n) + 1);
  for (int i = 0; i < n; ++i) {
    const double t = 2.0 * kPi * i / n;
    const double a = ellipse.semi_major_m * std::cos(t);
    const double b = ellipse.semi_minor_m * std::sin(t);
    const double east_m = a * ue + b * ve;
    const double north_m = a * un + b * vn;
    const double s12_m = std::hypot(east_m, north_m);
    const double azi1_deg = std::atan2(east_m, north_m) * 180.0 / kPi;
    ring.push_back(geodesic_direct(centre, azi1_deg, s12_m, true).point);
  }
  ring.push_back(ring.front());
  return ring;
}

std::vector<Path> split_line_antimeridian(const Path& line) {
  std::vector<Path> pieces;
  if (line.empty())
    return pieces;
  const Path q = detail::unroll_short_way(line);
  if (q.size() == 1) {
    pieces.push_back({shifted(q[0], window_of(q[0].lon_deg))});
    return pieces;
  }
  Path current;
  double current_k = std::numeric_limits<double>::quiet_NaN();
  // Append the sub-segment s-e, which lies within one window (ends may be on its edges).
  const auto append = [&](const LatLon& s, const LatLon& e) {
    double k = window_of(0.5 * (s.lon_deg + e.lon_deg));
    // A stretch running along a boundary stays with the piece it continues.
    if (s.lon_deg == e.lon_deg && is_boundary(s.lon_deg) && !std::isnan(current_k) &&
        std::fabs(s.lon_deg - 360.0 * current_k) == 180.0) {
      k = current_k;
    }
    if (k != current_k) {
      if (current.size() > 1)
        pieces.push_back(current);
      current.clear();
      current.push_back(shifted(s, k));
      current_k = k;
    }
    push_distinct(current, shifted(e, k));
  };
  for (std::size_t i = 0; i + 1 < q.size(); ++i) {
    const LatLon& a = q[i];
    const LatLon& b = q[i + 1];
    const double lo = std::min(a.lon_deg, b.lon_deg);
    const double hi = std::max(a.lon_deg, b.lon_deg);
    // Segments span less than 180 deg, so at most one boundary lies strictly inside.
    const double boundary_deg = 180.0 + 360.0 * std::floor((lo - 180.0) / 360.0 + 1.0);
    if (boundary_deg > lo && boundary_deg < hi) {
      const LatLon cut = at_longitude(a, b, boundary_deg);
      append(a, cut);
      append(cut, b);
    } else {
      append(a, b);
    }
  }
  if (current.size() > 1)
    pieces.push_back(current);
  if (pieces.empty())
    pieces.push_back({shifted(q[0], window_of(q[0].lon_deg))});
  return pieces;
}

std::vector<Path> split_ring_antimeridian(const Path& ring) {
  std::vector<Path> rings;
  if (ring.empty())
    return rings;
  if (ring_encloses_pole(ring)) {
    rings.push_back(detail::pole_closed_ring(ring));
    return rings;
  }
  Path poly = detail::unroll_short_way(ring);
  if (is_closed(ring))
    poly.pop_back();
  double lo = poly.front().lon_deg;
  double hi = lo;
  for (const LatLon& p : poly) {
    lo = std::min(lo, p.lon_deg);
    hi = std::max(hi, p.lon_deg);
  }
  const double k_first = window_of(lo);
  const double k_last = std::max(k_first, std::ceil((hi + 180.0) / 360.0) - 1.0);
  if (k_first == k_last) {
    rings.push_back(closed_in_window(poly, k_first));
    return rings;
  }
  // k_first and k_last are whole numbers of turns: count the windows between them.
  const int windows = static_cast<int>(k_last - k_first) + 1;
  for (int i = 0; i < windows; ++i) {
    const double k = k_first + i;
    Path part = clip_at(poly, -180.0 + 360.0 * k, true);
    part = clip_at(part, 180.0 + 360.0 * k, false);
    // A window the ring only touches leaves a zero-area sliver: drop it.
    if (part.size() < 3 || shoelace2(part) == 0.0)
      continue;
    rings.push_back(closed_in_window(part, k));
  }
  return rings;
}

bool ring_encloses_pole(const Path& ring) {
  if (ring.size() < 3)
    return false;
  double turn_deg = 0.0;
  for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
    turn_deg += angle_diff_deg(ring[i + 1].lon_deg, ring[i].lon_deg);
  }
  if (!is_closed(ring))
    turn_deg += angle_diff_deg(ring.front().lon_deg, ring.back().lon_deg);
  return std::fabs(turn_deg) > 180.0;
}

}  // namespace lobfix
