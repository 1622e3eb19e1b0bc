// lobfix: a bearing row exactly as read from a file, before normalisation (stage "read").
// The "normalise" stage (normalise.hpp) turns each Observation into a true-azimuth Bearing.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "lobfix/bearing.hpp"

namespace lobfix {

/// 1-based column (CSV) of each field in its file, 0 when absent (and always 0 for JSON
/// Lines, where the field name identifies it), for diagnostics raised after reading.
struct FieldColumns {
  int time = 0, station = 0, lat = 0, lon = 0, bearing = 0, bearing_alt = 0, sigma = 0,
      reference = 0, heading = 0, heading_sigma = 0, phase = 0, spacing = 0, frequency = 0,
      axis = 0, phase_sigma = 0;
};

/// One row of a bearing file. The readers check every value's range and type; what needs
/// outside data (tracks, the magnetic model, the other bearings) is checked in normalise.
struct Observation {
  std::string station;            ///< non-empty
  std::string signal;             ///< "" when not given
  std::string time_text;          ///< as written
  std::int64_t time_unix_ns = 0;  ///< UTC
  std::optional<double> lat_deg;  ///< absent: taken from the station's track
  std::optional<double> lon_deg;
  std::optional<double> alt_m;
  BearingReference reference = BearingReference::true_north;
  /// The bearing in `reference`, degrees in [0, 360) (relative bearings: [0, 360) clockwise
  /// from the nose). Absent when the row gives interferometer readings instead.
  std::optional<double> bearing_deg;
  /// A second, mirror-image candidate in the same reference (two-antenna arrays).
  std::optional<double> bearing_alt_deg;
  std::optional<double> sigma_deg;    ///< 1-sigma of the bearing (deg), > 0
  double pos_sigma_m = 0.0;           ///< station position 1-sigma (m), >= 0
  std::optional<double> heading_deg;  ///< platform heading, true, for relative bearings
  std::optional<double> heading_sigma_deg;
  // Two-element interferometer readings (interferometer.hpp), all or none.
  std::optional<double> phase_deg;        ///< phase difference, element 2 minus element 1
  std::optional<double> phase_sigma_deg;  ///< its 1-sigma (deg)
  std::optional<double> spacing_m;        ///< element spacing (m), > 0
  std::optional<double> frequency_hz;     ///< signal frequency (Hz), > 0
  std::optional<double>
      axis_deg;  ///< azimuth of the array axis, element 1 -> 2, in the row's north
  SourceRef source;
  FieldColumns columns;
};

}  // namespace lobfix
