// lobfix: turn rows as read into true-azimuth bearings with a sigma budget and a record of
// how each was derived (stage "normalise"). Models: docs/normalise.md.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/error.hpp"
#include "lobfix/observation.hpp"
#include "lobfix/track.hpp"

namespace lobfix {

class ProjectedCrs;

struct NormaliseOptions {
  /// Replaces the magnetic model for every magnetic bearing (deg, east positive).
  std::optional<double> declination_deg;
  /// Grid bearings refer to this CRS's grid; null: the UTM/UPS zone of each station.
  const ProjectedCrs* grid_crs = nullptr;
  /// 1-sigma of the declination (deg) added to magnetic bearings. WMM's global error budget
  /// is about 0.4-0.5 deg away from the poles [memory: WMM2025 technical report]; a local
  /// value given by the user keeps this too.
  double declination_sigma_deg = 0.5;
  TrackOptions track;
};

struct NormaliseResult {
  std::vector<Bearing> bearings;     ///< one per good observation, in input order
  std::vector<Diagnostic> errors;    ///< observations that could not be converted
  std::vector<Diagnostic> warnings;  ///< e.g. a date outside the magnetic model's years
};

/// Convert every observation. An observation that cannot be converted (no position and no
/// track, time outside its track, a standing platform without a heading, ...) is one entry of
/// `errors` naming its file, line and field; nothing is dropped silently.
NormaliseResult normalise(const std::vector<Observation>& observations,
                          const std::vector<Track>& tracks, const NormaliseOptions& options);

}  // namespace lobfix
