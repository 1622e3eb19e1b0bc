// Regression tests for inputs the fuzz targets (fuzz/, docs/fuzzing.md) found to break a
// reader: each file of tests/data/fuzz (README.md there) is fed to its reader, which must
// refuse it cleanly, with an InputError or row errors, instead of crashing or returning a
// wrong value.
//
// References: the 64-bit nanosecond limit (2^63 - 1) ns = 9223372036.854775807 s after
// 1970-01-01T00:00:00Z, and GNU date (coreutils): `date -u -d @9223372036` prints
// 2262-04-11T23:47:16Z, `date -u -d @9223372020` prints 2262-04-11T23:47:00Z.
#include <cstdint>
#include <fstream>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/track.hpp"
#include "test_support.hpp"

using lobfix_test::data_path;
using lobfix_test::tmp_path;

TEST_CASE("fuzz regression: a GPX time after the last one 64-bit nanoseconds hold is refused") {
  // tests/data/fuzz/gpx_time_after_2262.gpx, as fuzz_gpx found and minimised it: one <trk>
  // without a name, one point at 2262-4-11T23:47:17Z (GDAL reads the one-digit month). Its
  // minute, 23:47:00Z (9223372020 s, GNU date), still fits in 64-bit nanoseconds; adding its
  // 17 s went past 9223372036.854775807 s, a signed overflow (UndefinedBehaviorSanitizer in
  // track.cpp; a g++ build wrapped round to a time in 1677 and kept the point).
  const std::string path = data_path("fuzz/gpx_time_after_2262.gpx");

  // Without a station the unnamed track is refused before any time is looked at (track.hpp).
  CHECK_THROWS_AS(lobfix::read_gpx_tracks(path), lobfix::InputError);

  bool refused = false;
  try {
    lobfix::read_gpx_tracks(path, "fuzz-station");
  } catch (const lobfix::InputError& e) {
    refused = true;
    const lobfix::Diagnostic& d = e.diagnostic();
    CHECK(d.file == path);
    CHECK(d.field == "time");
    INFO(d.reason);
    CHECK(d.reason.rfind("point 1 of track 'fuzz-station' has a time that is not valid", 0) == 0);
    // The limit as GNU date gives its whole seconds, with (2^63 - 1) mod 10^9 ns after them.
    CHECK(d.reason.find("after 2262-04-11T23:47:16.854775807Z") != std::string::npos);
  }
  CHECK(refused);
}

TEST_CASE("fuzz regression: the last GPX millisecond that 64-bit nanoseconds hold is read") {
  // The same point at 23:47:16.854Z: 9223372036 s (GNU date) + 0.854 s, 775807 ns before the
  // limit, is an ordinary time.
  const std::string path = tmp_path("fuzz_regression_last_ms.gpx");
  {
    std::ofstream out(path);
    out << "<gpx version=\"1.1\" xmlns=\"http://www.topografix.com/GPX/1/1\"><trk><trkseg>"
           "<trkpt lat=\"0\" lon=\"0\"><time>2262-04-11T23:47:16.854Z</time></trkpt>"
           "</trkseg></trk></gpx>\n";
  }
  const std::vector<lobfix::Track> tracks = lobfix::read_gpx_tracks(path, "fuzz-station");
  REQUIRE(tracks.size() == 1);
  REQUIRE(tracks[0].points.size() == 1);
  CHECK(tracks[0].points[0].time_unix_ns == std::int64_t{9223372036} * 1'000'000'000 + 854'000'000);
}
