// lobfix: the probability map of the transmitter's position (stage "products"): the posterior
// over a UTM-aligned grid of the product of the bearing likelihoods, with a uniform prior over
// the mapped square. Unlike the ellipse it keeps the true shape of the region (wedges, bananas
// of shallow crossings and long ranges). Model, approximation and its measured accuracy:
// docs/search-area.md.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/fix.hpp"
#include "lobfix/raster.hpp"

namespace lobfix {

struct PosteriorOptions {
  /// Side of a map cell (m, on the UTM grid), > 0; 0 picks one: about a sixteenth of the
  /// width of the fix's 99% ellipse, a divisor of align_m, and at most 1,000 cells (and
  /// max_cells in all) across the map.
  double cell_m = 0.0;
  /// Half the side of the mapped square around the fix (m); 0 picks one: four times the
  /// semi-major axis of the 99% ellipse (at least 2 align_m, at most 500 align_m), doubled
  /// (up to twice, within the same limit)
  /// while more than 1e-3 of the probability lies in the square's outer ring (judged
  /// without the wild floor, see PosteriorMap::border_mass). The prior is uniform over the
  /// mapped square and zero outside it.
  double half_side_m = 0.0;
  /// The map's edges lie on multiples of this (m) in easting and northing, so that search
  /// segments of this side are whole blocks of cells; cell_m must divide it.
  double align_m = 250.0;
  /// Probability that a bearing is wild (a reflection, a wrong signal): each bearing's
  /// likelihood is (1 - wild_fraction) x a normal core + wild_fraction x uniform over the
  /// circle. In [0, 0.5).
  double wild_fraction = 0.01;
  /// The azimuths are computed by an interpolated correction to the UTM grid bearing (see
  /// docs/search-area.md); its measured error is kept below this fraction of each bearing's
  /// sigma. In (0, 0.01].
  double azimuth_tolerance = 0.002;
  std::size_t max_cells = 16'000'000;  ///< refuse maps larger than this
  int num_threads = 0;                 ///< 0: one per hardware thread
};

/// The posterior map of one signal's fix.
struct PosteriorMap {
  std::string signal;
  bool ok = false;
  std::string message;  ///< why there is no map (when !ok)
  UtmGrid grid;
  /// Probability per cell (rows from the top, UtmGrid's order); sums to 1 over the grid.
  std::vector<double> mass;
  double cell_area_m2 = 0.0;  ///< ground area of one cell (grid area / k^2 at the centre)
  int bearings = 0;           ///< bearings in the likelihood
  double wild_fraction = 0.0;
  /// Largest error of the approximate azimuths found by the check against exact geodesic
  /// azimuths (deg), and the same as a fraction of the bearing's sigma.
  double max_azimuth_error_deg = 0.0;
  double max_azimuth_error_fraction = 0.0;
  /// Probability (from the coarse pass) of the blocks left unrefined, at zero on the map.
  double unrefined_mass = 0.0;
  /// Probability in the outermost ring of coarse blocks under the bearings' normal cores
  /// alone (no wild floor): large means the square is too small for where they agree.
  double border_mass = 0.0;
  std::size_t cells_evaluated = 0;  ///< fine cells computed (the rest hold no probability)
  int coarse_factor = 1;            ///< fine cells per coarse block side
};

/// The posterior of the fix's signal over a square around fix.position. The likelihood uses
/// the bearings of fix.bearings (outliers included: the wild fraction carries them) with the
/// station offsets the fix estimated removed, each bearing's sigma widened by its station
/// position term (pos_sigma_m / range), and both candidates of an ambiguous bearing as an
/// equal mixture. Computed coarse first (blocks of cells, each bearing's sigma widened by the
/// block's angular size), then cell by cell inside the blocks that hold all but 1e-6 of the
/// probability and their neighbours. A fix that is not ok gives a map that is not ok.
/// @throws InputError for invalid options (field names the option).
PosteriorMap posterior_map(const std::vector<Bearing>& bearings, const Fix& fix,
                           const PosteriorOptions& options = {});

/// The same without any approximation: exact geodesic azimuths (GeographicLib) at every cell
/// of `grid`, no coarse pass. For tests and the benchmark's comparison; slow.
PosteriorMap posterior_map_exact(const std::vector<Bearing>& bearings, const Fix& fix,
                                 const UtmGrid& grid, double wild_fraction = 0.02);

/// Cell index holding a point of the grid's zone, or -1 when outside.
long grid_cell_of(const UtmGrid& grid, double easting_m, double northing_m);

}  // namespace lobfix
