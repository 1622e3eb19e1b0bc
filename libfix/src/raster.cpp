// GeoTIFF through GDAL's GTiff driver (GeoTIFF: OGC 19-008r4), written atomically by
// detail/gdal_output.
#include "lobfix/raster.hpp"

#include <cpl_string.h>

#include "detail/gdal_output.hpp"
#include "lobfix/error.hpp"

namespace lobfix {

void write_geotiff(const std::string& path, const UtmGrid& grid, const std::vector<float>& values,
                   const GeoTiffOptions& options) {
  if (grid.columns <= 0 || grid.rows <= 0 || !(grid.cell_m > 0.0)) {
    throw InputError({path, 0, 0, "grid", "the grid has no cells"});
  }
  if (values.size() != grid.size()) {
    throw InputError({path, 0, 0, "grid", "the values do not match the grid's size"});
  }
  CPLStringList creation;
  creation.SetNameValue("COMPRESS", "DEFLATE");
  creation.SetNameValue("PREDICTOR", "3");  // floating-point predictor
  creation.SetNameValue("TILED", "YES");
  detail::DatasetShape shape;
  shape.raster_columns = grid.columns;
  shape.raster_rows = grid.rows;
  shape.bands = 1;
  shape.type = GDT_Float32;
  std::string extension = detail::lower_extension(path);
  if (extension.empty())
    extension = ".tif";
  detail::write_atomically(
      path, "GTiff", extension, creation.List(),
      [&](GDALDataset& ds) {
        double transform[6] = {grid.west_m, grid.cell_m, 0.0, grid.north_m, 0.0, -grid.cell_m};
        if (ds.SetGeoTransform(transform) != CE_None)
          detail::fail_output(path, "cannot set the geotransform");
        OGRSpatialReference srs;
        if (srs.importFromEPSG(grid.zone.epsg()) != OGRERR_NONE)
          detail::fail_output(path, "cannot make EPSG:" + std::to_string(grid.zone.epsg()));
        if (ds.SetSpatialRef(&srs) != CE_None)
          detail::fail_output(path, "cannot set the CRS");
        GDALRasterBand* band = ds.GetRasterBand(1);
        if (options.nodata && band->SetNoDataValue(*options.nodata) != CE_None)
          detail::fail_output(path, "cannot set the no-data value");
        if (!options.description.empty())
          band->SetDescription(options.description.c_str());
        if (!options.units.empty() && band->SetUnitType(options.units.c_str()) != CE_None)
          detail::fail_output(path, "cannot set the unit");
        // RasterIO takes a non-const buffer even for writing.
        std::vector<float> buffer = values;
        if (band->RasterIO(GF_Write, 0, 0, grid.columns, grid.rows, buffer.data(), grid.columns,
                           grid.rows, GDT_Float32, 0, 0) != CE_None) {
          detail::fail_output(path, "cannot write the cells");
        }
      },
      false, shape);
}

}  // namespace lobfix
