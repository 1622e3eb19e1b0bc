// libFuzzer target: NMEA 0183 logs (read_nmea_track, lobfix/track.hpp), fed through a file
// of this process (fuzz_support.hpp) since the reader takes a path.
//
// The reader must never crash, hang or throw (the file always opens), and its result must
// have the properties track.hpp states: points strictly increasing in time, positions on the
// globe, counts that add up, errors naming 1-based lines in line order.
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <string>

#include "fuzz_support.hpp"
#include "lobfix/error.hpp"
#include "lobfix/time.hpp"
#include "lobfix/track.hpp"

namespace {

const std::string kStation = "fuzz-station";

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const lobfix_fuzz::InputFile file(".nmea");
  const std::string& path = file.write(data, size);
  // Physical lines as std::getline counts them: a last line without '\n' counts too.
  const auto newlines = std::count(data, data + size, std::uint8_t{'\n'});
  const long lines = static_cast<long>(newlines) + (size > 0 && data[size - 1] != '\n' ? 1 : 0);

  lobfix::NmeaReadResult r;
  try {
    r = lobfix::read_nmea_track(path, kStation);
  } catch (const lobfix::InputError& e) {
    std::fprintf(stderr, "lobfix fuzz: InputError: %s\n", e.what());
    FUZZ_CHECK(false, "the reader throws only when the file cannot be opened");
  }

  FUZZ_CHECK(r.track.station == kStation && r.track.file == path, "the track is the station's");
  FUZZ_CHECK(r.sentences_read >= 0 && r.sentences_read <= lines, "sentences_read counts lines");
  FUZZ_CHECK(r.sentences_used >= 0 && r.invalid_fixes >= 0, "counts are not negative");
  FUZZ_CHECK(r.sentences_used + r.invalid_fixes <= r.sentences_read,
             "used and invalid sentences are sentences read");
  FUZZ_CHECK(static_cast<long>(r.track.points.size()) <= r.sentences_used,
             "every point comes from a used sentence");
  int previous_line = 0;
  for (const lobfix::Diagnostic& d : r.errors) {
    FUZZ_CHECK(d.file == path, "an error names the file");
    FUZZ_CHECK(d.line >= 1 && d.line <= lines, "an error names a line of the file");
    FUZZ_CHECK(d.line >= previous_line, "errors are in line order");
    FUZZ_CHECK(!d.reason.empty(), "an error says what is wrong");
    previous_line = d.line;
  }

  // RMC years 80..99 and 00..79 date fixes from 1980-01-01 to the end of 2079. A GGA takes
  // the day that puts it within 12 h of the latest dated fix, which may be the day before or
  // after: each sentence moves the dates by one day at most.
  constexpr std::int64_t kNsPerDay = 86'400'000'000'000;
  const std::int64_t drift_ns = (r.sentences_read + 1) * kNsPerDay;
  const std::int64_t from = *lobfix::parse_iso8601_ns("1980-01-01T00:00:00Z") - drift_ns;
  const std::int64_t to = *lobfix::parse_iso8601_ns("2080-01-01T00:00:00Z") + drift_ns;
  const lobfix::TrackPoint* previous = nullptr;
  for (const lobfix::TrackPoint& p : r.track.points) {
    FUZZ_CHECK(p.source.file == path && p.source.line >= 1 && p.source.line <= lines,
               "a point names its line");
    FUZZ_CHECK(std::isfinite(p.position.lat_deg) && std::fabs(p.position.lat_deg) <= 90.0,
               "lat in [-90, 90]");
    FUZZ_CHECK(std::isfinite(p.position.lon_deg) && std::fabs(p.position.lon_deg) <= 180.0,
               "lon in [-180, 180]");
    FUZZ_CHECK(!p.alt_m || std::isfinite(*p.alt_m), "altitude is finite");
    FUZZ_CHECK(p.time_unix_ns >= from && p.time_unix_ns < to, "times within the RMC years");
    if (previous != nullptr)
      FUZZ_CHECK(previous->time_unix_ns < p.time_unix_ns, "points strictly increasing in time");
    previous = &p;
  }
  return 0;
}
