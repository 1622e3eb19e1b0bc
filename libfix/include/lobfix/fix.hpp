// lobfix: the result of solving one signal's bearings (stage "solve").
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "lobfix/geodesy.hpp"

namespace lobfix {

/// Why there is, or is not, a fix. Anything but `ok` means no position is reported.
enum class FixStatus {
  ok,
  too_few_bearings,  ///< fewer than two usable bearings
  single_spot,       ///< every bearing was taken from (nearly) the same place
  no_crossing,       ///< parallel or diverging rays: no crossing ahead of the stations
  out_of_range,      ///< the only solution lies beyond the maximum range
  at_station,        ///< the solution falls on a station, where its own azimuth is undefined
  not_converged,     ///< the estimator did not converge
};
/// Short machine name, e.g. "no_crossing".
const char* to_string(FixStatus status);

/// How one bearing fits the fix.
struct BearingFit {
  std::size_t index = 0;             ///< index into the bearings passed to the solver
  double predicted_azimuth_deg = 0;  ///< geodesic azimuth from the station to the fix, [0,360)
  double residual_deg = 0;           ///< measured - predicted, wrapped to (-180, 180]
  double effective_sigma_deg = 0;    ///< sqrt(sigma^2 + position term^2), see docs/method.md
  double normalized_residual = 0;    ///< residual / effective sigma
  double range_m = 0;                ///< geodesic distance station -> fix
  /// The bearing came with a mirror-image candidate (Bearing::alt_azimuth_deg).
  bool ambiguous = false;
  /// The solver used the alternative candidate rather than Bearing::azimuth_deg.
  bool used_alt = false;
  /// The candidate not used (true azimuth), when ambiguous.
  double rejected_azimuth_deg = 0;
  /// The station offset removed from this bearing before its residual (deg), 0 if none.
  double bias_deg = 0;
  /// Weight rho'(z^2) the robust loss gave the bearing at the fix, in [0, 1]; 1 for least
  /// squares, 0 for a bearing excluded as an outlier.
  double weight = 1;
  /// The robust fit distrusts this bearing (|normalised residual| > outlier_z).
  bool outlier = false;
};

/// A constant bearing offset estimated for one station (a misaligned mount or compass):
/// its bearings read `bias_deg` clockwise of the truth.
struct StationBias {
  std::string station;
  double bias_deg = 0.0;
  double sigma_deg = 0.0;  ///< 1-sigma, prior included
};

/// A position estimate with its covariance, or a status saying why there is none.
struct Fix {
  std::string signal;
  FixStatus status = FixStatus::not_converged;
  std::string message;  ///< human explanation when status != ok (and notes when ok)
  LatLon position;
  /// Covariance of the east/north error at the fix (m^2), row-major [[ee, en], [ne, nn]].
  std::array<std::array<double, 2>, 2> covariance_en_m2{};
  double chi2 = 0.0;  ///< sum of squared normalised residuals
  int dof = 0;        ///< degrees of freedom, n - 2 (with a robust loss: inliers - 2)
  int outliers = 0;   ///< bearings the robust fit flagged (chi2 and dof leave them out)
  /// Station offsets, when they were asked for and the geometry can tell them apart from the
  /// position (the position's covariance then includes their uncertainty).
  std::vector<StationBias> station_biases;
  /// Why an offset was not estimated for a station (one line each), when asked for.
  std::vector<std::string> bias_refusals;
  std::vector<BearingFit> bearings;  ///< one per bearing used, in input order
  int iterations = 0;                ///< solver iterations (all re-centrings together)
  /// When solved per time window (windows.hpp): the window [start, end), else both 0.
  std::int64_t window_start_unix_ns = 0;
  std::int64_t window_end_unix_ns = 0;
  bool has_window() const noexcept { return window_end_unix_ns > window_start_unix_ns; }
  double start_distance_m = 0.0;  ///< distance from the start point to the fix

  bool ok() const noexcept { return status == FixStatus::ok; }
};

}  // namespace lobfix
