// lobfix: magnetic declination from the World Magnetic Model 2025 (stage "normalise").
// Coefficients: data/wmm/ (public domain, NOAA NCEI / BGS), compiled into the library at build
// time (cmake/lobfixData.cmake) and evaluated with GeographicLib. See docs/magnetic.md.
#pragma once

#include <cstdint>
#include <string>

namespace lobfix {

/// The geomagnetic field's direction at a place and time.
struct MagneticDeclination {
  double declination_deg = 0.0;  ///< east positive: true = magnetic + declination
  double inclination_deg = 0.0;  ///< dip, down positive
  double total_intensity_nt = 0.0;
  double decimal_year = 0.0;    ///< the time the model was evaluated at
  bool within_validity = true;  ///< false outside the model's years (2025.0 to 2030.0)
  std::string model;            ///< e.g. "WMM2025"
};

/// Decimal year of a UTC time, as the WMM defines it: year + (day of year - 1 + fraction of
/// the day) / (365 or 366). 2025-01-01T00:00Z is 2025.0, 2025-07-02T12:00Z is 2025.5. Leap
/// seconds are not counted (POSIX time).
double decimal_year(std::int64_t time_unix_ns);

/// Declination (and the rest) of WMM2025 at latitude/longitude (WGS 84 degrees), height
/// above the ellipsoid (m) and time. Outside the validity years the model is still
/// evaluated (secular variation extrapolated) and within_validity is false: the caller
/// warns. The model is built once, at the first call, and is read-only afterwards: safe to
/// call from several threads.
/// @throws std::invalid_argument if lat_deg is outside [-90, 90] or any input is not finite.
MagneticDeclination wmm_declination(double lat_deg, double lon_deg, double height_m,
                                    std::int64_t time_unix_ns);
/// The same at a decimal year.
MagneticDeclination wmm_declination_at_year(double lat_deg, double lon_deg, double height_m,
                                            double decimal_year);

}  // namespace lobfix
