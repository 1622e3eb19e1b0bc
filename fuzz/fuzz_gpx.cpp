// libFuzzer target: GPX tracks through GDAL (read_gpx_tracks, lobfix/track.hpp), fed through
// a file of this process (fuzz_support.hpp) since the reader takes a path.
//
// Each input is read twice: with the tracks' own names, and as one given station. Neither
// read may crash, hang or throw anything but lobfix::InputError, and what they return must
// have the properties track.hpp states: at least one Track, none empty, stations unique
// (or the one given), points strictly increasing in time and rounded to the millisecond,
// positions on the globe. Naming the station only merges the tracks: when both reads
// succeed they hold the same points.
//
// GDAL itself is not instrumented (only its allocations are seen by AddressSanitizer): a
// crash inside GDAL is reported like any other, and tells whether the reader hands GDAL
// something it cannot take or GDAL fails on its own.
#include <cpl_error.h>
#include <gdal.h>

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <set>
#include <string>
#include <vector>

#include "fuzz_support.hpp"
#include "lobfix/error.hpp"
#include "lobfix/track.hpp"

namespace {

const std::string kStation = "fuzz-station";
constexpr std::int64_t kNsPerMs = 1'000'000;

std::optional<std::vector<lobfix::Track>> read(const std::string& path,
                                               const std::string& station) {
  try {
    std::vector<lobfix::Track> tracks = lobfix::read_gpx_tracks(path, station);
    FUZZ_CHECK(!tracks.empty(), "a read that succeeds gives a track");
    if (!station.empty())
      FUZZ_CHECK(tracks.size() == 1, "a given station gets one track");
    std::set<std::string> stations;
    for (const lobfix::Track& t : tracks) {
      FUZZ_CHECK(!t.station.empty(), "a track has its station");
      FUZZ_CHECK(station.empty() || t.station == station, "the given station is used");
      FUZZ_CHECK(stations.insert(t.station).second, "tracks of one name are merged");
      FUZZ_CHECK(t.file == path, "a track names its file");
      FUZZ_CHECK(!t.points.empty(), "a track without points is no track");
      const lobfix::TrackPoint* previous = nullptr;
      for (const lobfix::TrackPoint& p : t.points) {
        FUZZ_CHECK(p.source.file == path && p.source.line >= 1, "a point names its place");
        FUZZ_CHECK(std::isfinite(p.position.lat_deg) && std::fabs(p.position.lat_deg) <= 90.0,
                   "lat in [-90, 90]");
        FUZZ_CHECK(std::isfinite(p.position.lon_deg) && std::fabs(p.position.lon_deg) <= 180.0,
                   "lon in [-180, 180]");
        FUZZ_CHECK(p.time_unix_ns % kNsPerMs == 0, "GPX times are rounded to the millisecond");
        if (previous != nullptr)
          FUZZ_CHECK(previous->time_unix_ns < p.time_unix_ns, "points strictly increasing");
        previous = &p;
      }
    }
    return tracks;
  } catch (const lobfix::InputError& e) {
    FUZZ_CHECK(e.diagnostic().file == path, "an InputError names the file");
    FUZZ_CHECK(!e.diagnostic().reason.empty(), "an InputError says what is wrong");
    return std::nullopt;
  }
}

std::multiset<std::int64_t> all_times(const std::vector<lobfix::Track>& tracks) {
  std::multiset<std::int64_t> times;
  for (const lobfix::Track& t : tracks) {
    for (const lobfix::TrackPoint& p : t.points)
      times.insert(p.time_unix_ns);
  }
  return times;
}

}  // namespace

extern "C" int LLVMFuzzerInitialize(int*, char***) {
  // Once for the whole run (the reader also registers once); GDAL's messages outside the
  // reader's own quiet scope go nowhere either.
  GDALAllRegister();
  CPLPushErrorHandler(CPLQuietErrorHandler);
  return 0;
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const lobfix_fuzz::InputFile file(".gpx");
  const std::string& path = file.write(data, size);
  const auto named = read(path, "");
  const auto merged = read(path, kStation);
  if (named && merged)
    FUZZ_CHECK(all_times(*named) == all_times(*merged), "naming the station only merges");
  return 0;
}
