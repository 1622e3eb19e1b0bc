// lobfix: square-cell grids aligned to a UTM zone, and writing them as GeoTIFF (stage
// "export"). The probability map of the search area and the accuracy map of a planned
// network are such grids. Format details: docs/outputs.md.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "lobfix/geodesy.hpp"

namespace lobfix {

/// A north-up grid of square cells in a UTM zone: column c, row r (row 0 at the top, the
/// north edge) covers easting [west_m + c cell_m, west_m + (c + 1) cell_m) and northing
/// (north_m - (r + 1) cell_m, north_m - r cell_m]. Cell values are stored row by row from
/// the top: index r * columns + c.
struct UtmGrid {
  UtmZone zone;
  double west_m = 0.0;   ///< easting of the west edge (m)
  double north_m = 0.0;  ///< northing of the north edge (m)
  double cell_m = 0.0;   ///< side of a cell (m), > 0
  int columns = 0;
  int rows = 0;

  std::size_t size() const noexcept {
    return static_cast<std::size_t>(columns) * static_cast<std::size_t>(rows);
  }
  double centre_easting_m(int column) const noexcept { return west_m + (column + 0.5) * cell_m; }
  double centre_northing_m(int row) const noexcept { return north_m - (row + 0.5) * cell_m; }
};

/// What goes into a GeoTIFF besides the cells.
struct GeoTiffOptions {
  /// Cells holding this value are "no data" (GDAL's NoData); none when empty.
  std::optional<double> nodata;
  std::string description;  ///< band description, e.g. "probability per cell"
  std::string units;        ///< band unit type, e.g. "m" (empty: none)
};

/// Write `values` (grid.size() of them, rows from the top) as a single-band float32
/// GeoTIFF: DEFLATE-compressed with the floating-point predictor, tiled, georeferenced
/// by a geotransform in metres and the grid's UTM CRS (EPSG 326zz/327zz, UPS 32661/32761),
/// readable by gdalinfo and any GIS. The file appears atomically (temporary name, flushed,
/// renamed); on failure nothing is left behind.
/// @throws InputError when values.size() != grid.size() or the grid is empty or its cell
/// is not positive (field "grid").
/// @throws OutputError when it cannot be written (the message names `path`).
void write_geotiff(const std::string& path, const UtmGrid& grid, const std::vector<float>& values,
                   const GeoTiffOptions& options = {});

}  // namespace lobfix
