// lobfix: highest-posterior-density regions of a probability map, and how they compare with
// the fix's ellipses (stage "products"). docs/search-area.md.
#pragma once

#include <string>
#include <vector>

#include "lobfix/fix.hpp"
#include "lobfix/posterior.hpp"
#include "lobfix/shapes.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

/// A polygon on the ground: outer ring and holes, closed, WGS 84 (longitudes continuous
/// with the map's centre, to be cut at the antimeridian by the exporters).
struct GeoPolygon {
  Path outer;
  std::vector<Path> holes;
};

/// The smallest set of map cells holding at least `probability`: the cells of highest
/// probability, down to the first that brings the total to the target.
struct HpdRegion {
  double probability = 0.0;  ///< asked for, in (0, 1)
  double mass = 0.0;         ///< what the cells hold (>= probability, up to one cell more)
  double area_m2 = 0.0;      ///< ground area of the cells
  double threshold = 0.0;    ///< probability of the last cell taken in
  long cells = 0;
  std::vector<GeoPolygon> parts;  ///< the outline of the cells, one polygon per part
};

/// Which cells of `map` belong to the region of `probability` (grid order); `mass` and
/// `cells` receive what they hold. @throws InputError unless 0 < probability < 1.
std::vector<char> hpd_cells(const PosteriorMap& map, double probability, double& mass, long& cells);

/// The regions at each probability, with outlines traced along the cell edges (their area
/// is exactly the cells' area). @throws InputError unless each probability is in (0, 1).
std::vector<HpdRegion> hpd_regions(const PosteriorMap& map,
                                   const std::vector<double>& probabilities);

/// The map's verdict on an ellipse of the same probability.
struct RegionComparison {
  double probability = 0.0;
  double ellipse_area_m2 = 0.0;
  double region_area_m2 = 0.0;
  /// Probability the map puts inside the ellipse (the ellipse's claim is `probability`).
  double map_mass_in_ellipse = 0.0;
  /// Both agree: the map holds probability within 0.03 of the claim inside the ellipse and
  /// the areas are within 25% of each other.
  bool agree = false;
  std::string advice;  ///< one sentence for the summary
};

/// Compare the ellipse with the region of the same probability.
RegionComparison compare_with_ellipse(const PosteriorMap& map, const Fix& fix,
                                      const Ellipse& ellipse, const HpdRegion& region);

/// Probability `map` puts inside `ellipse` centred on the fix (cells whose centre lies
/// inside, in the azimuthal equidistant frame of the fix).
double map_mass_in_ellipse(const PosteriorMap& map, const Fix& fix, const Ellipse& ellipse);

/// The outline of grid cells flagged in `inside` (grid order) as ground polygons.
std::vector<GeoPolygon> outline_cells(const UtmGrid& grid, const std::vector<char>& inside);

}  // namespace lobfix
