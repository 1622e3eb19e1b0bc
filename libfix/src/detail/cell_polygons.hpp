// lobfix (private): the outline of a set of grid cells as polygons (outer rings and holes),
// for the highest-density regions and the merged search segments.
#pragma once

#include <vector>

namespace lobfix::detail {

/// A vertex on the lattice of cell corners: x = column of the corner (0..columns), y = corner
/// row counted upward from the bottom edge of the grid (0..rows), so that the rings are in a
/// right-handed frame like easting/northing.
struct Corner {
  int x = 0;
  int y = 0;
};

/// One polygon: its outer ring counter-clockwise and its holes clockwise, each closed (first
/// vertex repeated last), with no collinear vertices.
struct CellPolygon {
  std::vector<Corner> outer;
  std::vector<std::vector<Corner>> holes;
  long cells = 0;  ///< inside cells (area in cells)
};

/// The polygons of the union of the cells with inside[r * columns + c] != 0 (row 0 at the
/// top). Cells touching only at a corner belong to different polygons (the boundary turns
/// toward the inside at such a corner), so every ring is simple.
std::vector<CellPolygon> trace_cells(const std::vector<char>& inside, int columns, int rows);

}  // namespace lobfix::detail
