// Writing through GDAL drivers, atomically: see detail/gdal_output.hpp.
#include "detail/gdal_output.hpp"

#include <cpl_conv.h>
#include <cpl_error.h>
#include <cpl_vsi.h>
#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cctype>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <mutex>

#include "lobfix/error.hpp"

namespace lobfix::detail {

namespace {
namespace fs = std::filesystem;
}  // namespace

void register_gdal() {
  static std::once_flag once;
  std::call_once(once, [] { GDALAllRegister(); });
}

QuietGdal::QuietGdal() {
  CPLPushErrorHandler(CPLQuietErrorHandler);
  CPLErrorReset();
}
QuietGdal::~QuietGdal() {
  CPLPopErrorHandler();
}

[[noreturn]] void fail_output(const std::string& path, const std::string& what) {
  std::string message = "cannot write " + path + ": " + what;
  const char* gdal = CPLGetLastErrorMsg();
  if (gdal != nullptr && *gdal != '\0')
    message += std::string(" (GDAL: ") + gdal + ")";
  throw OutputError(message);
}

void check_ogr(OGRErr err, const std::string& path, const std::string& what) {
  if (err != OGRERR_NONE)
    fail_output(path, what);
}

/// WGS 84 with longitude first (x) and latitude second (y), as GeoJSON and KML write them.
OGRSpatialReference wgs84_lon_lat() {
  OGRSpatialReference srs;
  srs.SetWellKnownGeogCS("WGS84");
  srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  return srs;
}

namespace {

void remove_quietly(const fs::path& p) {
  std::error_code ec;
  fs::remove(p, ec);
}

/// A unique number per write in this process, for temporary names.
unsigned next_serial() {
  static std::atomic<unsigned> counter{0};
  return counter.fetch_add(1);
}

/// "<dir>/.<stem>.tmp-<pid>-<n><ext>": hidden, unique to this process and call, and with
/// the target's extension.
fs::path temporary_for(const fs::path& target, const std::string& extension, unsigned serial) {
  const std::string name = "." + target.stem().string() + ".tmp-" +
                           std::to_string(static_cast<long>(::getpid())) + "-" +
                           std::to_string(serial) + extension;
  return target.parent_path() / name;
}

/// GDAL's in-memory file system directory of one write; removed with everything in it.
class MemoryDir {
 public:
  explicit MemoryDir(unsigned serial)
      : dir_("/vsimem/lobfix-export-" + std::to_string(static_cast<long>(::getpid())) + "-" +
             std::to_string(serial)) {}
  ~MemoryDir() { VSIRmdirRecursive(dir_.c_str()); }
  MemoryDir(const MemoryDir&) = delete;
  MemoryDir& operator=(const MemoryDir&) = delete;
  const std::string& dir() const { return dir_; }

 private:
  std::string dir_;
};

/// Write `size` bytes to a new file `temp` and flush them to the disk, checking every
/// step (a full disk shows up here, not as a short file).
void write_bytes(const fs::path& temp, const GByte* data, std::size_t size,
                 const std::string& path) {
  const auto os_fail = [&](const char* what) {
    const std::string reason = std::strerror(errno);
    remove_quietly(temp);
    CPLErrorReset();
    fail_output(path, std::string(what) + ": " + reason);
  };
  const int fd = ::open(temp.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
  if (fd < 0) {
    const std::string reason = std::strerror(errno);
    CPLErrorReset();
    fail_output(path, "cannot create a file there: " + reason);
  }
  std::size_t done = 0;
  while (done < size) {
    const ssize_t n = ::write(fd, data + done, size - done);
    if (n < 0 && errno == EINTR)
      continue;
    if (n <= 0) {
      const int saved = errno;
      ::close(fd);
      errno = saved;
      os_fail("writing failed");
    }
    done += static_cast<std::size_t>(n);
  }
  if (::fsync(fd) != 0) {
    const int saved = errno;
    ::close(fd);
    errno = saved;
    os_fail("flushing to disk failed");
  }
  if (::close(fd) != 0)
    os_fail("closing failed");
}

}  // namespace

/// Create a dataset with `driver_name` in GDAL's memory file system, let `fill` write into
/// it and close it (every GDAL error checked); with as_kmz, pack the KML it wrote into a
/// zip archive as doc.kml. Then write the bytes under a temporary name beside `path`
/// ("<dir>/.<stem>.tmp-<pid>-<n><extension>"), flush them and rename that onto `path`
/// (replacing a file there). On any failure nothing is left behind and OutputError names
/// `path`.
void write_atomically(const std::string& path, const char* driver_name,
                      const std::string& extension, char** dataset_options,
                      const std::function<void(GDALDataset&)>& fill, bool as_kmz,
                      const DatasetShape& shape) {
  register_gdal();
  const QuietGdal quiet;
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName(driver_name);
  if (driver == nullptr)
    fail_output(path, std::string("GDAL has no ") + driver_name + " driver");
  const fs::path target(path);
  if (target.filename().empty())
    fail_output(path, "the path names no file");
  const unsigned serial = next_serial();
  const MemoryDir memory(serial);
  const std::string memory_file = memory.dir() + (as_kmz ? "/doc.kml" : "/out" + extension);

  GDALDataset* ds = driver->Create(memory_file.c_str(), shape.raster_columns, shape.raster_rows,
                                   shape.bands, shape.type, dataset_options);
  if (ds == nullptr)
    fail_output(path, "the driver cannot create the file");
  try {
    fill(*ds);
  } catch (...) {
    GDALClose(ds);
    throw;
  }
  CPLErrorReset();
  GDALClose(ds);
  if (CPLGetLastErrorType() >= CE_Failure)
    fail_output(path, "the driver failed to finish the file");
  vsi_l_offset size = 0;
  const GByte* data = VSIGetMemFileBuffer(memory_file.c_str(), &size, FALSE);
  if (data != nullptr && as_kmz) {
    // KMZ: the one KML file as doc.kml at the root of a zip archive.
    const std::string archive = memory.dir() + "/map.kmz";
    VSILFILE* out = VSIFOpenL(("/vsizip/" + archive + "/doc.kml").c_str(), "wb");
    if (out == nullptr)
      fail_output(path, "cannot start the KMZ archive");
    const bool written = VSIFWriteL(data, 1, static_cast<std::size_t>(size), out) == size;
    if (VSIFCloseL(out) != 0 || !written)
      fail_output(path, "cannot write the KMZ archive");
    data = VSIGetMemFileBuffer(archive.c_str(), &size, FALSE);
  }
  if (data == nullptr)
    fail_output(path, "the driver wrote no file");

  const fs::path temp = temporary_for(target, extension, serial);
  remove_quietly(temp);  // a stale one of an earlier process with the same id
  write_bytes(temp, data, static_cast<std::size_t>(size), path);
  std::error_code ec;
  fs::rename(temp, target, ec);
  if (ec) {
    remove_quietly(temp);
    CPLErrorReset();
    fail_output(path, "cannot move the finished file into place: " + ec.message());
  }
}

void write_file_atomically(const std::string& path, const std::string& bytes) {
  const fs::path target(path);
  if (target.filename().empty())
    fail_output(path, "the path names no file");
  const fs::path temp = temporary_for(target, target.extension().string(), next_serial());
  remove_quietly(temp);
  write_bytes(temp, reinterpret_cast<const GByte*>(bytes.data()), bytes.size(), path);
  std::error_code ec;
  fs::rename(temp, target, ec);
  if (ec) {
    remove_quietly(temp);
    fail_output(path, "cannot move the finished file into place: " + ec.message());
  }
}

std::string lower_extension(const std::string& path) {
  std::string ext = fs::path(path).extension().string();
  for (char& c : ext)
    c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return ext;
}

}  // namespace lobfix::detail
