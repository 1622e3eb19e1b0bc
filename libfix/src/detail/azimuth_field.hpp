// lobfix (private): fast geodesic azimuths from one station to every point of a UTM map.
//
// Notation: (E, N) easting and northing in the map's zone (m); (E_s, N_s) the station's.
// The grid bearing of the chord, t = atan2(E - E_s, N - N_s), differs from the geodesic
// azimuth at the station, alpha, by the meridian convergence at the station and the
// arc-to-chord correction (t - T), both smooth over the map. So alpha = t + c(E, N) with c
// interpolated bilinearly from a lattice of exact values (GeographicLib Inverse at the
// lattice nodes), the lattice refined until the error at the lattice's cell centres is below
// the tolerance. A station the zone cannot project (far away) has no t: its azimuth itself
// is smooth over the map and is interpolated the same way.
#pragma once

#include <vector>

#include "lobfix/geodesy.hpp"
#include "lobfix/raster.hpp"

namespace lobfix::detail {

/// Node positions of square lattices spanning one map, shared by every station's field.
class LatticeNodes {
 public:
  /// Lattices over [west, east] x [south, north] of `grid`'s zone.
  explicit LatticeNodes(const UtmGrid& grid);
  /// Nodes of the lattice with n x n nodes (n >= 2), computed once. Row-major from the
  /// south-west corner: node (i, j) at easting west + i (east - west) / (n - 1), northing
  /// south + j (north - south) / (n - 1), index j n + i.
  const std::vector<LatLon>& nodes(int n);
  /// The geographic position of grid coordinates.
  LatLon geographic(double easting_m, double northing_m) const;
  double west() const { return west_; }
  double south() const { return south_; }
  double width() const { return width_; }
  double height() const { return height_; }
  const UtmZone& zone() const { return zone_; }

 private:
  UtmZone zone_;
  double west_ = 0.0;
  double south_ = 0.0;
  double width_ = 0.0;
  double height_ = 0.0;
  std::vector<std::vector<LatLon>> by_n_;  // index n
};

class AzimuthField {
 public:
  /// Build the field of `station` to the tolerance `tolerance_rad` (largest error allowed at
  /// the check points), refining the lattice up to 129 x 129 nodes.
  AzimuthField(const LatLon& station, LatticeNodes& lattice, double tolerance_rad);
  /// Azimuth (rad, not wrapped) of the geodesic from the station to grid point (E, N).
  double azimuth_rad(double easting_m, double northing_m) const;
  /// Grid distance from the station (m) when the station is projected, else its geodesic
  /// distance to the map's centre.
  double distance_m(double easting_m, double northing_m) const;
  /// The largest error found at the check points (rad).
  double max_error_rad() const { return max_error_rad_; }
  bool planar() const { return planar_; }
  int lattice_size() const { return n_; }

 private:
  double correction(double easting_m, double northing_m) const;
  bool planar_ = false;
  double station_e_ = 0.0;
  double station_n_ = 0.0;
  double far_distance_m_ = 0.0;
  int n_ = 0;
  double west_ = 0.0;
  double south_ = 0.0;
  double step_e_ = 1.0;
  double step_n_ = 1.0;
  std::vector<double> c_;  // correction at the nodes (rad)
  double max_error_rad_ = 0.0;
};

/// The far end of the geodesic from one station to every point of a map: the azimuth there
/// (azi2), the reduced length m12 and the distance s12, for Fisher information over a map.
/// Interpolated like AzimuthField: azi2 = t + c2 with c2 smooth (the convergence at the
/// point plus the arc-to-chord correction), m12 = d r_m and s12 = d r_s with d the grid
/// distance and the ratios smooth (about 1 / k, k the point scale). A station the zone cannot
/// project has azi2, m12 and s12 themselves interpolated.
class FarEndField {
 public:
  /// Refined until, at the check points, azi2 is within azimuth_tolerance_rad and m12 and
  /// s12 within relative_tolerance of GeographicLib's Inverse (up to 129 x 129 nodes).
  FarEndField(const LatLon& station, LatticeNodes& lattice, double azimuth_tolerance_rad,
              double relative_tolerance);
  struct Value {
    double azi2_rad = 0.0;  ///< not wrapped
    double m12_m = 0.0;
    double s12_m = 0.0;
  };
  Value at(double easting_m, double northing_m) const;
  double max_azimuth_error_rad() const { return max_azimuth_error_rad_; }
  double max_relative_error() const { return max_relative_error_; }
  int lattice_size() const { return n_; }

 private:
  double interpolate(const std::vector<double>& v, double easting_m, double northing_m) const;
  bool planar_ = false;
  double station_e_ = 0.0;
  double station_n_ = 0.0;
  int n_ = 0;
  double west_ = 0.0;
  double south_ = 0.0;
  double step_e_ = 1.0;
  double step_n_ = 1.0;
  std::vector<double> c2_;  // azimuth correction (planar) or azi2 itself (rad)
  std::vector<double> rm_;  // m12 / d (planar) or m12 (m)
  std::vector<double> rs_;  // s12 / d (planar) or s12 (m)
  double max_azimuth_error_rad_ = 0.0;
  double max_relative_error_ = 0.0;
};

}  // namespace lobfix::detail
