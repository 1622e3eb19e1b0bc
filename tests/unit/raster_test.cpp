// Tests of lobfix/raster.hpp: GeoTIFF files read back with GDAL (an independent reader of
// the format), their georeference against the grid and their CRS against the EPSG code of
// the UTM zone (EPSG registry: 32613 is WGS 84 / UTM zone 13N).
#include "lobfix/raster.hpp"

#include <gdal_priv.h>
#include <ogr_spatialref.h>

#include <filesystem>
#include <numeric>
#include <vector>

#include "lobfix/error.hpp"
#include "test_support.hpp"

TEST_CASE("a GeoTIFF reads back with its cells, geotransform, CRS and no-data value") {
  GDALAllRegister();
  lobfix::UtmGrid grid;
  grid.zone = {13, true};
  grid.west_m = 490000.0;
  grid.north_m = 4486000.0;
  grid.cell_m = 25.0;
  grid.columns = 7;
  grid.rows = 5;
  std::vector<float> values(grid.size());
  std::iota(values.begin(), values.end(), 1.0F);
  values[3] = -1.0F;
  lobfix::GeoTiffOptions options;
  options.nodata = -1.0;
  options.description = "test cells";
  const std::string path = lobfix_test::tmp_path("raster.tif");
  lobfix::write_geotiff(path, grid, values, options);

  GDALDataset* ds = static_cast<GDALDataset*>(GDALOpen(path.c_str(), GA_ReadOnly));
  REQUIRE(ds != nullptr);
  CHECK(ds->GetRasterXSize() == 7);
  CHECK(ds->GetRasterYSize() == 5);
  double t[6] = {};
  REQUIRE(ds->GetGeoTransform(t) == CE_None);
  CHECK(t[0] == 490000.0);
  CHECK(t[1] == 25.0);
  CHECK(t[3] == 4486000.0);
  CHECK(t[5] == -25.0);
  const OGRSpatialReference* srs = ds->GetSpatialRef();
  REQUIRE(srs != nullptr);
  CHECK(std::string(srs->GetAuthorityCode(nullptr)) == "32613");
  GDALRasterBand* band = ds->GetRasterBand(1);
  CHECK(band->GetRasterDataType() == GDT_Float32);
  int has_nodata = 0;
  CHECK(band->GetNoDataValue(&has_nodata) == -1.0);
  CHECK(has_nodata != 0);
  CHECK(std::string(band->GetDescription()) == "test cells");
  std::vector<float> back(grid.size());
  REQUIRE(band->RasterIO(GF_Read, 0, 0, 7, 5, back.data(), 7, 5, GDT_Float32, 0, 0) == CE_None);
  CHECK(back == values);
  CHECK(std::string(ds->GetMetadataItem("COMPRESSION", "IMAGE_STRUCTURE")) == "DEFLATE");
  GDALClose(ds);
}

TEST_CASE("a GeoTIFF is refused for a mismatched grid and leaves nothing for an unwritable path") {
  lobfix::UtmGrid grid;
  grid.zone = {13, true};
  grid.cell_m = 10.0;
  grid.columns = 2;
  grid.rows = 2;
  CHECK_THROWS_AS(lobfix::write_geotiff(lobfix_test::tmp_path("bad.tif"), grid, {1.0F}),
                  lobfix::InputError);
  CHECK_THROWS_AS(lobfix::write_geotiff("/nonexistent-dir/x.tif", grid, {1, 2, 3, 4}),
                  lobfix::OutputError);
  CHECK_FALSE(std::filesystem::exists(lobfix_test::tmp_path("bad.tif")));
}
