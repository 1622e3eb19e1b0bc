// lobfix: does one stationary transmitter explain the bearings? A test for motion
// (stage "uncertainty"). Method: docs/robust.md, "A moving transmitter".
#pragma once

#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/fix.hpp"

namespace lobfix {

/// The trend test: for each station with at least three trusted bearings at different times,
/// the least-squares slope of its normalised residuals against time, b_s, with its standard
/// error 1 / sqrt(sum (t - mean t)^2) (the residuals have unit variance when the model
/// holds). T = sum_s b_s^2 sum (t - mean t)^2 is then chi-square with one degree of freedom
/// per station: a transmitter that moves makes every station's bearings drift.
struct MotionTest {
  int stations_tested = 0;        ///< the degrees of freedom of T; 0 means no test was possible
  double statistic = 0.0;         ///< T
  double p_value = 1.0;           ///< upper tail of chi-square(stations_tested) at T
  bool moving_suspected = false;  ///< p_value < alpha
  /// The station whose drift contributes most to T ("" when none tested).
  std::string strongest_station;
  double strongest_drift_deg_per_min = 0.0;  ///< its residual drift, degrees per minute
};

/// @param bearings the bearings the fix was solved from (BearingFit::index refers to them)
MotionTest test_for_motion(const Fix& fix, const std::vector<Bearing>& bearings, double alpha);

}  // namespace lobfix
