// lobfix (private): writing files through GDAL drivers, shared by every exporter. Files
// appear atomically: the driver writes into GDAL's in-memory file system (so that every I/O
// error is ours to see: some drivers do not report failed writes), the bytes go to a
// temporary name in the target's directory, are flushed to disk, and the temporary is
// renamed over the target. GDAL's own messages never reach the terminal (the library never
// prints); the last one is carried in the OutputError.
#pragma once

#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include <functional>
#include <string>

namespace lobfix::detail {

/// GDALAllRegister(), once per process.
void register_gdal();

/// While alive, GDAL's messages go to no one; the last one is kept for OutputError.
class QuietGdal {
 public:
  QuietGdal();
  ~QuietGdal();
  QuietGdal(const QuietGdal&) = delete;
  QuietGdal& operator=(const QuietGdal&) = delete;
};

/// Throw OutputError "cannot write <path>: <what> (GDAL: <last GDAL message>)".
[[noreturn]] void fail_output(const std::string& path, const std::string& what);
/// fail_output unless err is OGRERR_NONE.
void check_ogr(OGRErr err, const std::string& path, const std::string& what);

/// WGS 84 with longitude first (x) and latitude second (y), as GeoJSON, KML and GPX write it.
OGRSpatialReference wgs84_lon_lat();

/// How the in-memory dataset is made: a vector dataset (raster_columns == 0), or a raster of
/// raster_columns x raster_rows cells with `bands` bands of `type`.
struct DatasetShape {
  int raster_columns = 0;
  int raster_rows = 0;
  int bands = 0;
  GDALDataType type = GDT_Unknown;
};

/// Create a dataset with `driver_name` in GDAL's memory file system, let `fill` write into
/// it and close it (every GDAL error checked); with as_kmz, pack the KML it wrote into a zip
/// archive as doc.kml. Then write the bytes under a hidden temporary name beside `path`
/// ("<dir>/.<stem>.tmp-<pid>-<n><extension>"), flush them and rename that onto `path`
/// (replacing a file there). On any failure nothing is left behind and OutputError names
/// `path`. Safe to call from several threads at once.
void write_atomically(const std::string& path, const char* driver_name,
                      const std::string& extension, char** dataset_options,
                      const std::function<void(GDALDataset&)>& fill, bool as_kmz = false,
                      const DatasetShape& shape = {});

/// Write `bytes` to `path` the same way (temporary name, flushed, renamed).
void write_file_atomically(const std::string& path, const std::string& bytes);

/// The extension of `path` in lower case, with its dot ("" when none).
std::string lower_extension(const std::string& path);

}  // namespace lobfix::detail
