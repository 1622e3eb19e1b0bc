// lobfix: planning before the bearings are taken (stage "uncertainty", predicted): the
// Fisher information of bearings at a point on the ellipsoid, the Cramer-Rao bound and its
// CEP, the accuracy map of a planned network, and the ranking of spots for the next bearing.
// Method and references: docs/planning.md.
//
// Notation (Karney 2013, "Algorithms for geodesics", J. Geodesy 87:43-55): the geodesic from a
// station (point 1) to the transmitter (point 2) has reduced length m12 and azimuth azi2 at
// the transmitter. Moving the transmitter by dE east, dN north turns the station's azimuth by
// (dE cos azi2 - dN sin azi2) / m12 radians, so one bearing of 1-sigma s (rad) adds
// g g^T / s^2 to the Fisher information, g = (cos azi2, -sin azi2) / m12.
#pragma once

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/error.hpp"
#include "lobfix/fix.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/raster.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

/// A station of a planned network: where it stands, how good its bearings are, how far it
/// hears.
struct PlannedStation {
  std::string name;
  LatLon position;
  double sigma_deg = 2.0;             ///< 1-sigma of one bearing (deg), > 0
  std::optional<double> max_range_m;  ///< no bearing of transmitters farther than this (m)
};

/// Called now and then during long computations with the work done and the work in all; it
/// must not throw. Empty: not called.
using ProgressFn = std::function<void(std::size_t done, std::size_t total)>;

/// The Fisher information (1/m^2, east/north) of one bearing from `station` on a transmitter
/// at `transmitter`, of 1-sigma sigma_deg, and whether it is usable (the transmitter is not
/// on the station, within range).
struct BearingInformation {
  Covariance2 information{};                ///< g g^T / sigma^2 (1/m^2)
  double azimuth_at_transmitter_deg = 0.0;  ///< azi2 of the station -> transmitter geodesic
  double range_m = 0.0;                     ///< geodesic distance, when it was computed, else 0
  bool usable = false;
};
BearingInformation bearing_information(const LatLon& station, double sigma_deg,
                                       const LatLon& transmitter,
                                       std::optional<double> max_range_m = std::nullopt);

/// The inverse of a 2x2 symmetric matrix, or std::nullopt when it is singular (determinant
/// not above 1e-12 of the squared largest entry) or not finite.
std::optional<Covariance2> invert2(const Covariance2& m);

/// What the Cramer-Rao bound says about a transmitter at one point.
struct CramerRao {
  bool usable = false;  ///< at least two stations in range and not all nearly collinear
  int stations_in_range = 0;
  double max_crossing_deg = 0.0;  ///< largest angle between two lines of sight there, [0, 90]
  Covariance2 information{};      ///< Fisher information J (1/m^2)
  Covariance2 covariance{};       ///< J^-1 (m^2), when usable
  double cep_m = 0.0;             ///< radius holding 50% of N(0, J^-1), when usable
  double rms_m = 0.0;             ///< sqrt(trace J^-1): the bound on the RMS miss distance
};

struct PlanningOptions {
  /// A point whose lines of sight all cross at less than this (deg, in [0, 90)) has no
  /// usable geometry.
  double min_crossing_deg = 10.0;
  /// Threads for the coverage map; 0 means one per hardware thread. Cells are independent,
  /// so the map does not depend on the count.
  int num_threads = 0;
  ProgressFn progress;

  /// Empty when valid, else the reason.
  std::string validate() const;
};

/// The bound at `transmitter` for one bearing from each station.
CramerRao cramer_rao(const std::vector<PlannedStation>& stations, const LatLon& transmitter,
                     const PlanningOptions& options = {});

/// CEP of N(0, cov): circular_radius(cov, 0.5) by interpolation in a table of that function
/// over the ratio of the standard deviations (cubic through 257 ratios; relative error below 1e-7).
/// NaN when cov is not a covariance.
double fast_cep_m(const Covariance2& cov);

/// A grid covering the stations with `margin_m` on every side, cells of cell_m, in the UTM
/// zone of the stations' mean position. @throws InputError (field "grid") when there is no
/// station, margin or cell is not positive, or the grid would have more than max_cells
/// cells.
UtmGrid grid_around(const std::vector<PlannedStation>& stations, double margin_m, double cell_m,
                    std::size_t max_cells = 25000000);

/// The accuracy map of a planned network: the CEP (m) of the Cramer-Rao bound for a
/// transmitter at the centre of each cell; NaN where the geometry is not usable.
struct CoverageMap {
  UtmGrid grid;
  std::vector<float> cep_m;  ///< grid.size() values, rows from the top; NaN: no data
  std::size_t usable_cells = 0;
  /// Largest error of the interpolated geodesics found by their check against GeographicLib
  /// (docs/planning.md): azimuth at the cell (deg) and relative error of m12 and s12. Both 0
  /// when the map was computed with exact geodesics throughout (a map beyond its zone's reach).
  double max_azimuth_error_deg = 0.0;
  double max_relative_error = 0.0;
};
/// @throws InputError (field "stations", "grid" or the option) for no station, a bad sigma or
/// range, an empty grid or invalid options.
CoverageMap coverage_map(const std::vector<PlannedStation>& stations, const UtmGrid& grid,
                         const PlanningOptions& options = {});

/// A place from which the next bearing could be taken.
struct CandidateSpot {
  std::string name;
  LatLon position;
  std::string team;         ///< the team it is reached from ("" when no team is known)
  double distance_m = 0.0;  ///< geodesic distance from that team's last position
  SourceRef source;         ///< file and line it was read from (generated spots: empty)
};

/// Where a team stands now: the position of its last bearing (latest time; the last row on
/// a tie), one per station label, in order of first appearance.
struct TeamPosition {
  std::string team;
  LatLon position;
};
std::vector<TeamPosition> last_positions(const std::vector<Bearing>& bearings);

/// Spots on `rings` rings around each team, at travel_m * k / rings (k = 1..rings), with
/// points_per_ring spots each starting due north, plus the team's own position.
/// @throws InputError (field "travel") unless travel_m > 0, 1 <= rings <= 100 and
/// 1 <= points_per_ring <= 3600.
std::vector<CandidateSpot> ring_candidates(const std::vector<TeamPosition>& teams, double travel_m,
                                           int rings, int points_per_ring);

/// What reading a spot file found: the spots, and every bad cell.
struct SpotReadResult {
  std::vector<CandidateSpot> spots;
  std::vector<Diagnostic> errors;    ///< file:line:column: reason, all of them
  std::vector<Diagnostic> warnings;  ///< unknown columns, ignored
};
/// Read a spot CSV (docs/planning.md, "Spot file"): a header naming lat and lon (required)
/// and name, team (optional). A spot without a name is called after its line ("line 7").
/// @throws InputError for whole-file problems (cannot open, no header, missing or duplicate
/// column).
SpotReadResult read_spots_csv(const std::string& path);

/// Sets each spot's distance from its team: the one it names when that is among `teams`,
/// else the nearest of them (then also its team). No change when `teams` is empty.
void assign_nearest_team(std::vector<CandidateSpot>& spots, const std::vector<TeamPosition>& teams);

struct NextBearingOptions {
  double sigma_deg = 2.0;     ///< 1-sigma of the next bearing (deg), > 0
  double probability = 0.95;  ///< of the predicted ellipse whose area is ranked, (0, 1)
  /// Spots closer than this to the fix are not ranked (their bearing is undefined there).
  double min_range_m = 10.0;
  std::string validate() const;
};

/// One spot and what a bearing from it is expected to give.
struct RankedSpot {
  CandidateSpot spot;
  int rank = 0;  ///< 1 = best
  /// Area (m^2) of the predicted ellipse after one more bearing from the spot:
  /// pi k^2 sqrt(det C'), C' = (C^-1 + E[J_new])^-1, k^2 = -2 ln(1 - p).
  double predicted_area_m2 = 0.0;
  double predicted_cep_m = 0.0;  ///< CEP of C'
  double range_m = 0.0;          ///< distance from the spot to the fix
  double azimuth_deg = 0.0;      ///< bearing from the spot to the fix, [0, 360)
  /// Largest crossing angle (deg, [0, 90]) of the new line with the lines of the existing
  /// bearings, at the fix.
  double crossing_deg = 0.0;
  std::string mgrs;  ///< 10 m MGRS reference of the spot
};

struct NextBearingPlan {
  double current_area_m2 = 0.0;  ///< area of the current fix's ellipse of that probability
  double current_cep_m = 0.0;
  std::vector<RankedSpot> ranked;  ///< best first; ties by distance, then input order
  /// Spots not ranked and why (one line each: too near the fix).
  std::vector<std::string> refused;
};

/// Rank spots for the next bearing on the transmitter of `fix` (which must be ok()). The
/// information a bearing from a spot adds is averaged over the fix's uncertainty with the
/// five sigma points of its covariance (unscented transform, kappa = 1: the mean with weight
/// 1/3 and mean +- sqrt(3) times each column of the Cholesky factor with 1/6 each), so a
/// spot is judged by where the transmitter may be, not only where the fix puts it.
/// `bearings` are the ones the fix was solved from (BearingFit::index into them).
/// @throws InputError if the fix has no position or covariance, or the options are invalid.
NextBearingPlan rank_next_bearings(const Fix& fix, const std::vector<Bearing>& bearings,
                                   const std::vector<CandidateSpot>& spots,
                                   const NextBearingOptions& options = {});

}  // namespace lobfix
