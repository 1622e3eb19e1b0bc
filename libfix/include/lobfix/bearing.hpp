// lobfix: one line of bearing as taken in the field.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

namespace lobfix {

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
  double sigma_deg = 0.0;         ///< 1-sigma bearing uncertainty (deg), > 0
  double pos_sigma_m = 0.0;       ///< 1-sigma horizontal station position uncertainty (m), >= 0
  SourceRef source;               ///< file and line it was read from
};

}  // namespace lobfix
