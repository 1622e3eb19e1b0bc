// lobfix: everything handed to the search teams for one signal (stage "products"): the
// probability map, its highest-density regions compared with the ellipses, and the ranked
// search segments, updated for the searches already made. docs/search-area.md.
#pragma once

#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/posterior.hpp"
#include "lobfix/regions.hpp"
#include "lobfix/segments.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

struct SearchAreaOptions {
  PosteriorOptions map;  ///< map.align_m is the segment side
  /// Probabilities of the highest-density regions, each in (0, 1); the segments cover the
  /// region of segments.region_probability, which is added when missing.
  std::vector<double> region_probabilities{0.5, 0.95};
  SegmentOptions segments;
  std::vector<SearchReport> searched;  ///< unsuccessful searches to apply
};

struct SearchArea {
  std::string signal;
  PosteriorMap map;
  std::vector<HpdRegion> regions;  ///< one per probability, ascending
  /// For each region with an ellipse of the same probability: the two compared.
  std::vector<RegionComparison> comparisons;
  SearchPlan plan;
  /// Plain-words cautions about this map (e.g. probability running off its edge).
  std::vector<std::string> notes;
};

/// The search area of one solved signal; a result without a fix gives an area whose map is
/// not ok (with the reason), no regions and no segments.
/// @throws InputError for invalid options, an unknown searched segment or a bad POD.
SearchArea make_search_area(const std::vector<Bearing>& bearings, const FixResult& result,
                            const SearchAreaOptions& options = {});

}  // namespace lobfix
