// lobfix: maximum-likelihood fix from lines of bearing on the ellipsoid (stage "solve").
// Method: docs/method.md.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/fix.hpp"
#include "lobfix/robust.hpp"

namespace lobfix {

struct SolveOptions {
  /// No fix farther than this from any station is accepted (m). Covers long-range HF;
  /// geodesic rays from nearby stations meet again near their antipode, and this bound
  /// refuses that spurious solution.
  double max_range_m = 5.0e6;
  /// Two stations closer than this count as one spot (m).
  double same_spot_m = 1.0;
  /// A fix closer than this to a station is refused: that station's azimuth is undefined.
  double at_station_m = 1.0;
  /// Stop re-centring when the step is below this (m).
  double convergence_m = 1.0e-4;
  int max_iterations = 50;
  /// At most this many pairs of rays are crossed for the start point; above it, pairs are
  /// drawn with `seed` (deterministic).
  int max_start_pairs = 400;
  std::uint64_t seed = 1;
  /// Threads used to evaluate the bearings (each bearing's residual is computed on its own
  /// and sums are taken in a fixed order, so the result does not depend on the count);
  /// 0 means one per hardware thread. Inputs under 2,000 bearings use one thread.
  int num_threads = 0;

  /// Loss for wild bearings (robust.hpp); with any loss but none the start is a consensus
  /// crossing and every bearing gets a weight and a verdict.
  RobustLoss loss = RobustLoss::none;
  /// Tuning constant of the loss in sigmas; 0 means default_tuning(loss).
  double loss_tuning = 0.0;
  /// A bearing whose residual exceeds this many sigmas at the robust fix is an outlier.
  double outlier_z = 3.0;
  /// After a robust fit, solve again by least squares without the outliers.
  bool exclude_outliers = false;
  /// Estimate a constant bearing offset per station, with a Gaussian prior of this 1-sigma
  /// (deg), where the geometry makes it identifiable; 0 means no offsets.
  double station_bias_prior_deg = 0.0;

  /// Empty when valid, else the reason.
  std::string validate() const;
};

/// Solve one transmitter's position from `bearings` (all of one signal).
/// Never throws for numerical outcomes: degenerate geometry gives a status and message.
/// @throws InputError if the options are invalid.
Fix solve_fix(const std::vector<Bearing>& bearings, const SolveOptions& options = {});

/// The start point: the robust centre of the pairwise crossings of the rays (each pair
/// crossed on the ellipsoid via the gnomonic projection, keeping only crossings ahead of
/// both stations and within the maximum range). std::nullopt when no pair crosses.
std::optional<LatLon> start_point(const std::vector<Bearing>& bearings,
                                  const SolveOptions& options);

/// Where two rays cross on the ellipsoid, if they do ahead of both stations and within
/// max_range_m of both.
std::optional<LatLon> cross_rays(const LatLon& station_a, double azimuth_a_deg,
                                 const LatLon& station_b, double azimuth_b_deg, double max_range_m);

/// Effective bearing sigma (deg) of a bearing seen from a point at the far end of the
/// geodesic `line` (station = point 1): sqrt(sigma^2 + (pos_sigma |M21| / m12)^2).
double effective_sigma_deg(const Bearing& bearing, const GeodesicLine12& line);

/// Bearings grouped by signal label, groups in order of first appearance.
struct SignalGroup {
  std::string signal;
  std::vector<std::size_t> indices;  ///< into the original bearing vector
};
std::vector<SignalGroup> group_by_signal(const std::vector<Bearing>& bearings);

/// Solve each signal separately (groups as group_by_signal). In every returned Fix,
/// BearingFit::index refers to `bearings` as passed here.
std::vector<Fix> solve_by_signal(const std::vector<Bearing>& bearings,
                                 const SolveOptions& options = {});

}  // namespace lobfix
