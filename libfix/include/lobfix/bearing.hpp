// lobfix: one line of bearing as taken in the field.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

namespace lobfix {

/// What north a bearing is measured from.
enum class BearingReference {
  true_north,  ///< true azimuth (the default)
  magnetic,    ///< magnetic compass: true = magnetic + declination
  grid,        ///< map grid north: true = grid + meridian convergence (see crs.hpp)
  relative,    ///< relative to the platform's nose: true = heading + relative
};
/// "true", "magnetic", "grid", "relative".
const char* to_string(BearingReference reference);

/// How a bearing's true azimuth and sigma were derived (stage "normalise"), for the
/// per-bearing tables. Plain true bearings read with a position have only `reference`,
/// `measured_deg` and `receiver_sigma_deg` set.
struct BearingDerivation {
  BearingReference reference = BearingReference::true_north;
  double measured_deg = 0.0;              ///< the bearing as given, in its reference
  std::optional<double> declination_deg;  ///< magnetic: added to make it true
  std::string declination_source;         ///< "WMM2025", "--declination-deg"
  std::optional<double> convergence_deg;  ///< grid: added to make it true
  std::string convergence_source;         ///< "UTM 33N", "EPSG:nnnn"
  std::optional<double> heading_deg;      ///< relative: added to make it true
  std::string heading_source;             ///< "heading_deg column", "track course"
  std::string position_source;            ///< "file", or the track file it came from
  double receiver_sigma_deg = 0.0;        ///< the bearing's own sigma
  double heading_sigma_deg = 0.0;         ///< relative bearings: the heading's sigma
  double declination_sigma_deg = 0.0;     ///< magnetic bearings: the model's sigma
  bool from_interferometer = false;       ///< computed from phase readings
};

/// Where a bearing came from, for messages and for the per-bearing tables.
struct SourceRef {
  std::string file;  ///< input file name as given
  int line = 0;      ///< 1-based physical line of the row
};

/// One line of bearing: taken at a station (lat/lon on WGS 84) at a time, pointing from the
/// station toward the transmitter.
///
/// Conventions: azimuth_deg is the true azimuth of the geodesic leaving the station,
/// degrees clockwise from true north, in [0, 360). A bearing is a ray, never a line: a point
/// behind the station is not on it.
struct Bearing {
  std::string station;            ///< station (walker, vehicle, fixed site) label, non-empty
  std::string signal;             ///< transmitter or channel label; "" when not given
  std::string time_text;          ///< the time exactly as written in the input
  std::int64_t time_unix_ns = 0;  ///< the same time as nanoseconds since 1970-01-01T00:00Z
  double lat_deg = 0.0;           ///< station latitude, WGS 84, [-90, 90]
  double lon_deg = 0.0;           ///< station longitude, WGS 84, [-180, 180]
  std::optional<double> alt_m;    ///< station height above the ellipsoid or MSL as given (m)
  double azimuth_deg = 0.0;       ///< true azimuth toward the transmitter, [0, 360)
  /// 1-sigma bearing uncertainty (deg), > 0: the receiver's, with the heading's and the
  /// declination's added in quadrature when they apply. The station-position term is added
  /// by the solver, which knows the range.
  double sigma_deg = 0.0;
  double pos_sigma_m = 0.0;  ///< 1-sigma horizontal station position uncertainty (m), >= 0
  /// A mirror-image candidate (two-antenna arrays), true azimuth and its sigma: the solver
  /// picks one of the two.
  std::optional<double> alt_azimuth_deg;
  std::optional<double> alt_sigma_deg;
  SourceRef source;  ///< file and line it was read from
  BearingDerivation derivation;
};

}  // namespace lobfix
