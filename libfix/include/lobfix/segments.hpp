// lobfix: search segments cut from the probability map, ranked by their probability of area
// (POA), and their update after an unsuccessful search (stage "products").
// docs/search-area.md.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "lobfix/posterior.hpp"
#include "lobfix/regions.hpp"

namespace lobfix {

struct SegmentOptions {
  /// Probability of the highest-density region the segments cover, in (0, 1).
  double region_probability = 0.95;
  /// A square holding less than this POA joins the neighbouring segment (sharing an edge)
  /// of highest POA; one with no such neighbour stays a segment of its own. In [0, 1).
  double merge_below_poa = 0.002;
  /// Digits per axis of the MGRS labels, 1..5 (4: 10 m).
  int mgrs_digits = 4;
};

/// One piece of ground for a team: one square of the UTM/MGRS-aligned segment lattice, or
/// several when tiny squares were merged into it.
struct SearchSegment {
  std::string id;               ///< "S01", "S02", ...: its rank before any search; stable
  int rank = 0;                 ///< 1 = highest POA now
  double poa = 0.0;             ///< probability of area now (after the searches given)
  double initial_poa = 0.0;     ///< from the bearings alone
  double cumulative_poa = 0.0;  ///< this segment's POA plus those ranked above it
  double area_m2 = 0.0;         ///< ground area
  int squares = 1;              ///< lattice squares in it
  LatLon centre;                ///< centre of its square of highest POA
  std::string mgrs;             ///< MGRS of that centre, mgrs_digits per axis
  std::vector<GeoPolygon> outline;
  /// Searches applied to it (in order): PODs, and the combined POD 1 - prod(1 - POD).
  std::vector<double> pods;
  double combined_pod = 0.0;
};

/// The segments of one signal's map, ranked.
struct SearchPlan {
  std::string signal;
  double side_m = 0.0;                  ///< side of a lattice square (m, UTM grid)
  double region_probability = 0.0;      ///< the region they cover
  std::vector<SearchSegment> segments;  ///< by rank
  /// Probability outside every segment ("rest of the world", within the mapped square; the
  /// prior gives nothing beyond it), now and before the searches.
  double rest_poa = 0.0;
  double initial_rest_poa = 0.0;
};

/// Cut the map's region of `region_probability` into squares of the map's segment lattice
/// (squares of `side_m`, which must be a multiple of the map's cell and on whose multiples
/// the map's edges lie, as PosteriorOptions::align_m makes them), merge tiny squares and rank
/// the segments by POA. A map that is not ok gives an empty plan with rest_poa 1.
/// @throws InputError for invalid options or a side that does not fit the map (field names
/// the option).
SearchPlan make_search_plan(const PosteriorMap& map, double side_m,
                            const SegmentOptions& options = {});

/// An unsuccessful search of one segment: its id ("S03") or the MGRS label of its centre,
/// and the probability of detection had the transmitter been there.
struct SearchReport {
  std::string segment;
  double pod = 0.0;
};

/// Parse "S03:0.7", "S03:70%" or "<MGRS>:0.7". @returns nothing when malformed.
std::optional<SearchReport> parse_search_report(std::string_view text);

/// Update the POAs by Bayes' rule for unsuccessful searches, one after another: the searched
/// segment's POA becomes POA (1 - POD) / (1 - POA POD), every other POA (and the rest's)
/// POA / (1 - POA POD); then the segments are ranked again.
/// @throws InputError (field "searched") for an unknown segment or a POD outside [0, 1].
void apply_searches(SearchPlan& plan, const std::vector<SearchReport>& searches);

}  // namespace lobfix
