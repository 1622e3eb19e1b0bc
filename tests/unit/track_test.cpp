// Tests of lobfix/track.hpp: GPX and NMEA tracks, positions and courses along them.
//
// References: GeographicLib 2.1 (Karney 2013, "Algorithms for geodesics", J. Geodesy
// 87:43-55) called directly here for every geodesic check; NMEA 0183 sentence layout and
// checksum [common practice]; the example sentences as commonly quoted [memory]; GDAL's GPX
// driver reading the files of tests/data/tracks (README.md there).
#include "lobfix/track.hpp"

#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/GeodesicLine.hpp>

#include <cctype>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <fstream>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/time.hpp"
#include "test_support.hpp"

using lobfix_test::data_path;
using lobfix_test::tmp_path;

namespace {

const GeographicLib::Geodesic& geod() {
  return GeographicLib::Geodesic::WGS84();
}

std::int64_t ns(const char* iso) {
  std::string why;
  const auto t = lobfix::parse_iso8601_ns(iso, &why);
  REQUIRE_MESSAGE(t.has_value(), why);
  return *t;
}

lobfix::TrackPoint point(std::int64_t t, double lat_deg, double lon_deg) {
  lobfix::TrackPoint p;
  p.time_unix_ns = t;
  p.position = {lat_deg, lon_deg};
  return p;
}

lobfix::Track track_of(const std::string& station, const std::string& file,
                       std::vector<lobfix::TrackPoint> points) {
  lobfix::Track track;
  track.station = station;
  track.file = file;
  track.points = std::move(points);
  return track;
}

/// The point s12_m from (lat, lon) along azimuth azi_deg, by GeographicLib directly.
lobfix::LatLon direct(double lat_deg, double lon_deg, double azi_deg, double s12_m) {
  lobfix::LatLon p;
  geod().Direct(lat_deg, lon_deg, azi_deg, s12_m, p.lat_deg, p.lon_deg);
  return p;
}

double distance_m(const lobfix::LatLon& a, const lobfix::LatLon& b) {
  double s12 = 0.0;
  geod().Inverse(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg, s12);
  return s12;
}

std::string write_tmp(const std::string& name, const std::string& text) {
  const std::string path = tmp_path(name);
  std::ofstream out(path, std::ios::binary);
  out << text;
  REQUIRE(out.good());
  return path;
}

/// NMEA checksum computed here on its own: XOR of every byte of `body` (the text between
/// '$' and '*') [common practice: NMEA 0183].
unsigned nmea_xor(const std::string& body) {
  unsigned x = 0;
  for (const char c : body)
    x ^= static_cast<unsigned char>(c);
  return x;
}

std::string hex2(unsigned v) {
  char buf[8];
  std::snprintf(buf, sizeof buf, "%02X", v);
  return buf;
}

std::string sentence(const std::string& body) {
  return "$" + body + "*" + hex2(nmea_xor(body));
}

/// A walker track: 10:00:00Z to 10:06:15Z, a 95 s gap from 10:01:30Z to 10:03:05Z.
lobfix::Track walker_a() {
  const char* times[] = {"2026-06-01T10:00:00Z", "2026-06-01T10:00:45Z", "2026-06-01T10:01:30Z",
                         "2026-06-01T10:03:05Z", "2026-06-01T10:03:50Z", "2026-06-01T10:04:35Z",
                         "2026-06-01T10:05:20Z", "2026-06-01T10:06:15Z"};
  std::vector<lobfix::TrackPoint> pts;
  for (int i = 0; i < 8; ++i)
    pts.push_back(point(ns(times[i]), -31.2450 + 0.0003 * i, 146.4620 + 0.0004 * i));
  return track_of("walker-A", "track.gpx", pts);
}

}  // namespace

// ---------------------------------------------------------------------------------------
// Interpolation

TEST_CASE("position_at lies on the geodesic between the neighbours, not on a lat/lon line") {
  // A 102 km segment in 20 minutes (an aircraft), long enough that a linear interpolation in
  // latitude and longitude misses the geodesic by far more than a metre.
  const lobfix::LatLon p1{-31.0, 146.0};
  const lobfix::LatLon p2{-30.3, 146.75};
  const std::int64_t t1 = ns("2026-06-01T10:00:00Z");
  const std::int64_t t2 = ns("2026-06-01T10:20:00Z");
  const auto track =
      track_of("plane-1", "plane.gpx",
               {point(t1, p1.lat_deg, p1.lon_deg), point(t2, p2.lat_deg, p2.lon_deg)});
  lobfix::TrackOptions options;
  options.max_gap_s = 3600.0;

  // Reference: GeographicLib's inverse problem p1 -> p2 (Karney 2013).
  double s12 = 0.0;
  double azi1 = 0.0;
  double azi2 = 0.0;
  geod().Inverse(p1.lat_deg, p1.lon_deg, p2.lat_deg, p2.lon_deg, s12, azi1, azi2);
  REQUIRE(s12 > 100e3);

  for (const double f : {0.25, 0.5, 0.9}) {
    CAPTURE(f);
    const std::int64_t t = t1 + static_cast<std::int64_t>(f * static_cast<double>(t2 - t1));
    std::string reason;
    const auto got = lobfix::position_at(track, t, options, &reason);
    REQUIRE_MESSAGE(got.has_value(), reason);

    // On the geodesic: same azimuth from p1 (1e-9 deg), at f s12 from p1 and (1 - f) s12
    // from p2 (1 mm), by GeographicLib's inverse problem.
    double s1x = 0.0;
    double azi1x = 0.0;
    double azi2x = 0.0;
    geod().Inverse(p1.lat_deg, p1.lon_deg, got->lat_deg, got->lon_deg, s1x, azi1x, azi2x);
    CHECK_ABS(azi1x, azi1, 1e-9);
    CHECK_ABS(s1x, f * s12, 1e-3);
    CHECK_ABS(distance_m(*got, p2), (1.0 - f) * s12, 1e-3);

    // And the same point as GeographicLib's GeodesicLine from p1 (direct problem).
    const GeographicLib::GeodesicLine line =
        geod().InverseLine(p1.lat_deg, p1.lon_deg, p2.lat_deg, p2.lon_deg);
    lobfix::LatLon ref;
    line.Position(f * s12, ref.lat_deg, ref.lon_deg);
    CHECK(distance_m(*got, ref) <= 1e-3);

    // A naive implementation, linear in lat and lon, is off by more than a metre here: this
    // test would catch it.
    const lobfix::LatLon linear{p1.lat_deg + f * (p2.lat_deg - p1.lat_deg),
                                p1.lon_deg + f * (p2.lon_deg - p1.lon_deg)};
    INFO("linear interpolation is " << distance_m(linear, ref) << " m off the geodesic");
    CHECK(distance_m(linear, ref) > 1.0);
  }
}

TEST_CASE("position_at exactly at a point returns that point") {
  const auto track = walker_a();
  const lobfix::TrackOptions options;
  for (const auto& p : track.points) {
    const auto got = lobfix::position_at(track, p.time_unix_ns, options);
    REQUIRE(got.has_value());
    CHECK(got->lat_deg == p.position.lat_deg);
    CHECK(got->lon_deg == p.position.lon_deg);
  }
}

TEST_CASE("position_at outside the span, in gaps and within the tolerance") {
  const auto track = walker_a();
  const lobfix::TrackOptions options;  // tolerance 2 s, gap 60 s (track.hpp defaults)
  std::string reason;

  // Beyond the tolerance: refused with the documented reasons (docs/tracks.md).
  CHECK_FALSE(lobfix::position_at(track, ns("2026-06-01T10:07:00Z"), options, &reason));
  CHECK(reason ==
        "time 2026-06-01T10:07:00Z is 45 s after the end of track 'walker-A' (track.gpx, ends "
        "2026-06-01T10:06:15Z)");
  CHECK_FALSE(lobfix::position_at(track, ns("2026-06-01T09:59:30Z"), options, &reason));
  CHECK(reason ==
        "time 2026-06-01T09:59:30Z is 30 s before the start of track 'walker-A' (track.gpx, "
        "starts 2026-06-01T10:00:00Z)");
  CHECK_FALSE(lobfix::position_at(track, ns("2026-06-01T10:06:17.001Z"), options, &reason));
  CHECK(reason ==
        "time 2026-06-01T10:06:17.001Z is 2.001 s after the end of track 'walker-A' "
        "(track.gpx, ends 2026-06-01T10:06:15Z)");

  // In the 95 s gap (longer than 60 s).
  CHECK_FALSE(lobfix::position_at(track, ns("2026-06-01T10:02:00Z"), options, &reason));
  CHECK(reason ==
        "time 2026-06-01T10:02:00Z falls in a 95 s gap of track 'walker-A' (track.gpx) between "
        "2026-06-01T10:01:30Z and 2026-06-01T10:03:05Z (longer than max_gap_s 60 s)");
  // With a longer max_gap_s the same time interpolates.
  lobfix::TrackOptions wide = options;
  wide.max_gap_s = 120.0;
  CHECK(lobfix::position_at(track, ns("2026-06-01T10:02:00Z"), wide).has_value());

  // Within the tolerance (2 s, the end included): the end point itself.
  const auto& first = track.points.front().position;
  const auto& last = track.points.back().position;
  auto got = lobfix::position_at(track, ns("2026-06-01T10:06:16.5Z"), options);
  REQUIRE(got.has_value());
  CHECK(got->lat_deg == last.lat_deg);
  CHECK(got->lon_deg == last.lon_deg);
  got = lobfix::position_at(track, ns("2026-06-01T10:06:17Z"), options);
  REQUIRE(got.has_value());
  CHECK(got->lat_deg == last.lat_deg);
  got = lobfix::position_at(track, ns("2026-06-01T09:59:58Z"), options);
  REQUIRE(got.has_value());
  CHECK(got->lat_deg == first.lat_deg);
  CHECK(got->lon_deg == first.lon_deg);
  // ... and at both ends of a gap.
  got = lobfix::position_at(track, ns("2026-06-01T10:01:31Z"), options);
  REQUIRE(got.has_value());
  CHECK(got->lat_deg == track.points[2].position.lat_deg);
  got = lobfix::position_at(track, ns("2026-06-01T10:03:03.5Z"), options);
  REQUIRE(got.has_value());
  CHECK(got->lat_deg == track.points[3].position.lat_deg);

  // An empty track.
  const auto empty = track_of("walker-Z", "empty.gpx", {});
  CHECK_FALSE(lobfix::position_at(empty, ns("2026-06-01T10:00:00Z"), options, &reason));
  CHECK(reason == "time 2026-06-01T10:00:00Z: track 'walker-Z' (empty.gpx) has no points");
}

TEST_CASE("TrackOptions are checked") {
  const auto track = walker_a();
  lobfix::TrackOptions options;
  std::string why;
  CHECK(options.is_valid(&why));
  options.max_gap_s = 0.0;
  CHECK_FALSE(options.is_valid(&why));
  CHECK(why == "max_gap_s 0 must be > 0");
  CHECK_THROWS_AS(lobfix::position_at(track, track.points[0].time_unix_ns, options),
                  lobfix::InputError);
  options = {};
  options.time_tolerance_s = -1.0;
  CHECK_FALSE(options.is_valid(&why));
  CHECK(why == "time_tolerance_s -1 must be >= 0");
  options = {};
  options.gps_sigma_m = std::nan("");
  CHECK_FALSE(options.is_valid());
  CHECK_THROWS_AS(lobfix::course_at(track, track.points[0].time_unix_ns, options),
                  lobfix::InputError);
}

// ---------------------------------------------------------------------------------------
// Course over ground

TEST_CASE("course_at is GeographicLib's azimuth along the segment, at the time fraction") {
  const lobfix::LatLon p1{-31.0, 146.0};
  const lobfix::LatLon p2{-30.3, 146.75};
  const std::int64_t t1 = ns("2026-06-01T10:00:00Z");
  const std::int64_t t2 = ns("2026-06-01T10:20:00Z");
  const auto track =
      track_of("plane-1", "plane.gpx",
               {point(t1, p1.lat_deg, p1.lon_deg), point(t2, p2.lat_deg, p2.lon_deg)});
  lobfix::TrackOptions options;
  options.max_gap_s = 3600.0;

  const GeographicLib::GeodesicLine line =
      geod().InverseLine(p1.lat_deg, p1.lon_deg, p2.lat_deg, p2.lon_deg);
  const double s12 = line.Distance();
  for (const double f : {0.0, 0.25, 0.75}) {
    CAPTURE(f);
    const std::int64_t t = t1 + static_cast<std::int64_t>(f * static_cast<double>(t2 - t1));
    std::string reason;
    const auto c = lobfix::course_at(track, t, options, &reason);
    REQUIRE_MESSAGE(c.has_value(), reason);
    // Forward azimuth at f s12 along the geodesic (GeographicLib GeodesicLine::Position).
    double lat = 0.0;
    double lon = 0.0;
    double azi = 0.0;
    line.Position(f * s12, lat, lon, azi);
    CHECK_ABS(c->course_deg, lobfix::wrap_deg360(azi), 1e-9);
    CHECK_ABS(c->speed_mps, s12 / 1200.0, 1e-9);
    if (f > 0.0) {
      // The azimuth turns along a long geodesic (meridian convergence): the azimuth at p1
      // would be wrong by more than 0.01 deg here.
      CHECK(std::fabs(c->course_deg - line.Azimuth()) > 0.01);
    }
  }
}

TEST_CASE("course_at exactly at a point uses the previous and the next point") {
  const std::int64_t t0 = ns("2026-06-01T10:00:00Z");
  const std::int64_t s10 = 10'000'000'000;
  // A zig-zag: B lies off the line from A to C.
  const lobfix::LatLon a{-31.2000, 146.5000};
  const lobfix::LatLon b = direct(a.lat_deg, a.lon_deg, 30.0, 120.0);
  const lobfix::LatLon c = direct(b.lat_deg, b.lon_deg, 120.0, 80.0);
  const auto track =
      track_of("walker-B", "b.gpx",
               {point(t0, a.lat_deg, a.lon_deg), point(t0 + s10, b.lat_deg, b.lon_deg),
                point(t0 + 3 * s10, c.lat_deg, c.lon_deg)});
  const lobfix::TrackOptions options;
  std::string reason;
  const auto got = lobfix::course_at(track, t0 + s10, options, &reason);
  REQUIRE_MESSAGE(got.has_value(), reason);
  // Reference: the geodesic A -> C, azimuth at the time fraction 10 s / 30 s of it.
  const GeographicLib::GeodesicLine ac =
      geod().InverseLine(a.lat_deg, a.lon_deg, c.lat_deg, c.lon_deg);
  double lat = 0.0;
  double lon = 0.0;
  double azi = 0.0;
  ac.Position(ac.Distance() / 3.0, lat, lon, azi);
  CHECK_ABS(got->course_deg, lobfix::wrap_deg360(azi), 1e-9);
  CHECK_ABS(got->speed_mps, ac.Distance() / 30.0, 1e-9);
  CHECK(std::fabs(got->course_deg - 30.0) > 1.0);  // not the segment A -> B

  // At the first point only the next side exists: the segment A -> B, azimuth at A.
  const auto at_a = lobfix::course_at(track, t0, options, &reason);
  REQUIRE(at_a.has_value());
  CHECK_ABS(at_a->course_deg, 30.0, 1e-9);  // B was made by GeographicLib Direct at 30 deg
  // At the last point: the segment B -> C, azimuth at C (GeographicLib Inverse azi2).
  double s12 = 0.0;
  double azi1 = 0.0;
  double azi2 = 0.0;
  geod().Inverse(b.lat_deg, b.lon_deg, c.lat_deg, c.lon_deg, s12, azi1, azi2);
  const auto at_c = lobfix::course_at(track, t0 + 3 * s10 + 1'000'000'000, options, &reason);
  REQUIRE_MESSAGE(at_c.has_value(), reason);
  CHECK_ABS(at_c->course_deg, lobfix::wrap_deg360(azi2), 1e-9);
  CHECK_ABS(at_c->speed_mps, s12 / 20.0, 1e-9);
}

TEST_CASE("course sigma is atan(sqrt(2) gps_sigma_m / s12)") {
  // Small-angle model of docs/tracks.md: two independent position errors of gps_sigma_m
  // across a segment of length s12. Values [derived]: atan(sqrt(2) * 5 / 100) = 4.044691 deg,
  // atan(sqrt(2) * 5 / 20) = 19.471221 deg, atan(sqrt(2) * 5 / 1000) = 0.405136 deg,
  // atan(sqrt(2) * 2 / 100) = 1.620137 deg.
  struct Case {
    double s12_m;
    double gps_sigma_m;
    double sigma_deg;
  };
  const Case cases[] = {{100.0, 5.0, 4.044691},
                        {20.0, 5.0, 19.471221},
                        {1000.0, 5.0, 0.405136},
                        {100.0, 2.0, 1.620137}};
  const std::int64_t t0 = ns("2026-06-01T10:00:00Z");
  const std::int64_t dt = 10'000'000'000;
  for (const Case& k : cases) {
    CAPTURE(k.s12_m);
    CAPTURE(k.gps_sigma_m);
    // The second point exactly s12_m away (GeographicLib Direct, azimuth 60 deg).
    const lobfix::LatLon b = direct(-31.2, 146.5, 60.0, k.s12_m);
    const auto track = track_of("vehicle-1", "v.nmea",
                                {point(t0, -31.2, 146.5), point(t0 + dt, b.lat_deg, b.lon_deg)});
    lobfix::TrackOptions options;
    options.gps_sigma_m = k.gps_sigma_m;
    std::string reason;
    const auto c = lobfix::course_at(track, t0 + dt / 2, options, &reason);
    REQUIRE_MESSAGE(c.has_value(), reason);
    CHECK_ABS(c->sigma_deg, k.sigma_deg, 1e-6);
    CHECK_ABS(c->speed_mps, k.s12_m / 10.0, 1e-9);
  }
}

TEST_CASE("course_at refuses a station standing still") {
  const std::int64_t t0 = ns("2026-06-01T10:00:00Z");
  const std::int64_t dt = 10'000'000'000;
  const lobfix::TrackOptions options;  // gps_sigma_m 5: standing under 10 m
  std::string reason;
  const lobfix::LatLon b = direct(-31.2, 146.5, 45.0, 3.0);
  const auto standing = track_of("vehicle-1", "v.nmea",
                                 {point(t0, -31.2, 146.5), point(t0 + dt, b.lat_deg, b.lon_deg)});
  CHECK_FALSE(lobfix::course_at(standing, t0 + dt / 2, options, &reason));
  CHECK(reason ==
        "station 'vehicle-1' is standing still at 2026-06-01T10:00:05Z (moved 3 m in 10 s): its "
        "course gives no heading");
  // Its position is still known.
  CHECK(lobfix::position_at(standing, t0 + dt / 2, options).has_value());

  // The threshold 2 gps_sigma_m = 10 m, either side.
  const lobfix::LatLon near = direct(-31.2, 146.5, 45.0, 9.9);
  const lobfix::LatLon far = direct(-31.2, 146.5, 45.0, 10.1);
  CHECK_FALSE(lobfix::course_at(
      track_of("vehicle-1", "v.nmea",
               {point(t0, -31.2, 146.5), point(t0 + dt, near.lat_deg, near.lon_deg)}),
      t0 + dt / 2, options));
  const auto moving = lobfix::course_at(
      track_of("vehicle-1", "v.nmea",
               {point(t0, -31.2, 146.5), point(t0 + dt, far.lat_deg, far.lon_deg)}),
      t0 + dt / 2, options);
  REQUIRE(moving.has_value());
  // At the threshold the sigma is atan(sqrt(2) / 2) = 35.26 deg [derived]: slightly under.
  CHECK(moving->sigma_deg < 35.27);
  CHECK(moving->sigma_deg > 34.0);
}

TEST_CASE("course_at without a segment: one point, a point between gaps, in a gap") {
  const lobfix::TrackOptions options;
  std::string reason;
  const std::int64_t t0 = ns("2026-06-01T10:00:00Z");
  const auto single = track_of("mast-C", "c.gpx", {point(t0, -31.19, 146.569)});
  CHECK(lobfix::position_at(single, t0, options).has_value());
  CHECK_FALSE(lobfix::course_at(single, t0, options, &reason));
  CHECK(reason ==
        "time 2026-06-01T10:00:00Z: track 'mast-C' (c.gpx) has one point only: it gives no "
        "course over ground");

  const std::int64_t min5 = 300'000'000'000;
  const auto islands = track_of("walker-E", "e.gpx",
                                {point(t0, -31.19, 146.569), point(t0 + min5, -31.18, 146.569),
                                 point(t0 + 2 * min5, -31.17, 146.569)});
  CHECK_FALSE(lobfix::course_at(islands, t0 + min5, options, &reason));
  CHECK(reason ==
        "time 2026-06-01T10:05:00Z: the point at 2026-06-01T10:05:00Z of track 'walker-E' "
        "(e.gpx) lies between gaps longer than max_gap_s 60 s: it gives no course over ground");

  const auto track = walker_a();
  CHECK_FALSE(lobfix::course_at(track, ns("2026-06-01T10:02:00Z"), options, &reason));
  CHECK(reason ==
        "time 2026-06-01T10:02:00Z falls in a 95 s gap of track 'walker-A' (track.gpx) between "
        "2026-06-01T10:01:30Z and 2026-06-01T10:03:05Z (longer than max_gap_s 60 s)");
  CHECK_FALSE(lobfix::course_at(track, ns("2026-06-01T10:07:00Z"), options, &reason));
  CHECK(reason ==
        "time 2026-06-01T10:07:00Z is 45 s after the end of track 'walker-A' (track.gpx, ends "
        "2026-06-01T10:06:15Z)");
  // Within the tolerance of a gap's end: the segment on the side that is not the gap.
  const auto edge = lobfix::course_at(track, ns("2026-06-01T10:01:31Z"), options, &reason);
  REQUIRE_MESSAGE(edge.has_value(), reason);
  double s12 = 0.0;
  double azi1 = 0.0;
  double azi2 = 0.0;
  const auto& p1 = track.points[1].position;
  const auto& p2 = track.points[2].position;
  geod().Inverse(p1.lat_deg, p1.lon_deg, p2.lat_deg, p2.lon_deg, s12, azi1, azi2);
  CHECK_ABS(edge->course_deg, lobfix::wrap_deg360(azi2), 1e-9);
}

TEST_CASE("a 100,000-point track: binary search, no per-lookup copies") {
  // One point a second for 27.8 hours, walking north-east.
  const std::int64_t t0 = ns("2026-06-01T00:00:00Z");
  const std::int64_t s1 = 1'000'000'000;
  const int n = 100'000;
  std::vector<lobfix::TrackPoint> pts;
  pts.reserve(n);
  for (int i = 0; i < n; ++i)
    pts.push_back(point(t0 + i * s1, -31.5 + 1e-5 * i, 146.0 + 1.2e-5 * i));
  const auto track = track_of("walker-F", "f.gpx", std::move(pts));
  const lobfix::TrackOptions options;

  const auto start = std::chrono::steady_clock::now();
  int found = 0;
  for (int i = 0; i + 1 < n; ++i) {
    if (lobfix::position_at(track, t0 + i * s1 + s1 / 2, options))
      ++found;
  }
  const double elapsed_s =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  CHECK(found == n - 1);
  // A linear scan or a copy of the track per lookup takes minutes; 100,000 binary searches
  // and geodesics take well under a second on this machine, so 10 s leaves room for load.
  INFO("100,000 lookups took " << elapsed_s << " s");
  CHECK(elapsed_s < 10.0);

  // Spot checks against GeographicLib: the midpoint of segment k.
  for (const int k : {0, 4321, 50'000, n - 2}) {
    CAPTURE(k);
    const auto& a = track.points[k].position;
    const auto& b = track.points[k + 1].position;
    const auto got = lobfix::position_at(track, t0 + k * s1 + s1 / 2, options);
    REQUIRE(got.has_value());
    const GeographicLib::GeodesicLine line =
        geod().InverseLine(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg);
    lobfix::LatLon ref;
    line.Position(line.Distance() / 2, ref.lat_deg, ref.lon_deg);
    CHECK(distance_m(*got, ref) <= 1e-3);
  }
}

// ---------------------------------------------------------------------------------------
// NMEA 0183

TEST_CASE("NMEA checksum is the XOR of the bytes between $ and *") {
  // By hand: 'A' 0x41 ^ 'B' 0x42 = 0x03; ^ ',' 0x2C = 0x2F; ^ '1' 0x31 = 0x1E.
  CHECK(nmea_xor("AB,1") == 0x1E);
  // The GGA example sentence as commonly quoted ends in *47 [memory]; computed here alone.
  CHECK(nmea_xor("GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,") == 0x47);

  // A sentence built here, north and west hemispheres (an invented spot at sea).
  const std::string rmc = "GPRMC,101500.00,A,3112.3456,N,14627.1234,W,0.5,45.0,010626,,,A";
  const std::string gga = "GNGGA,101510.00,3112.3500,N,14627.1300,W,1,08,0.9,12.5,M,-1.2,M,,";
  const unsigned x_rmc = nmea_xor(rmc);
  const unsigned x_gga = nmea_xor(gga);
  std::string lower = hex2(x_gga);
  for (char& ch : lower)
    ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  const std::string good = write_tmp(
      "track_checksum_good.nmea", "$" + rmc + "*" + hex2(x_rmc) + "\n$" + gga + "*" + lower + "\n");
  auto r = lobfix::read_nmea_track(good, "vehicle-1");
  CHECK(r.errors.empty());
  REQUIRE(r.track.points.size() == 2);
  CHECK(r.track.station == "vehicle-1");
  CHECK(r.track.file == good);
  // ddmm.mmmm: 3112.3456 N = 31 + 12.3456 / 60 deg; 14627.1234 W = -(146 + 27.1234 / 60) deg
  // [common practice: NMEA 0183].
  CHECK_ABS(r.track.points[0].position.lat_deg, 31.0 + 12.3456 / 60.0, 1e-12);
  CHECK_ABS(r.track.points[0].position.lon_deg, -(146.0 + 27.1234 / 60.0), 1e-12);
  CHECK(r.track.points[0].time_unix_ns == ns("2026-06-01T10:15:00Z"));
  CHECK(r.track.points[1].time_unix_ns == ns("2026-06-01T10:15:10Z"));
  CHECK(r.track.points[1].alt_m == 12.5);
  CHECK(r.track.points[1].source.line == 2);

  // The same sentence with its checksum off by one bit: file:line and both values.
  const unsigned wrong = x_rmc ^ 0x01;
  const std::string bad =
      write_tmp("track_checksum_bad.nmea",
                "$" + gga + "*" + hex2(x_gga) + "\n\n$" + rmc + "*" + hex2(wrong) + "\n");
  r = lobfix::read_nmea_track(bad, "vehicle-1");
  REQUIRE(r.errors.size() == 2);
  // The GGA came first and no valid RMC follows to date it.
  CHECK(r.errors[0].to_string() ==
        bad + ":1: GGA has no date: no valid RMC sentence in the file gives one");
  CHECK(r.errors[1].to_string() == bad + ":3: NMEA checksum " + hex2(wrong) +
                                       " does not match the sentence (computed " + hex2(x_rmc) +
                                       ")");
  CHECK(r.track.points.empty());
  CHECK(r.sentences_read == 2);  // the blank line is not a sentence
}

TEST_CASE("NMEA: the commonly quoted example sentences") {
  // RMC, GGA, GSA and VTG as quoted in NMEA 0183 introductions [memory]; their checksums
  // agree with the XOR computed above. RMC's checksum written in lower case (compared
  // without regard to case).
  const std::string path =
      write_tmp("track_examples.nmea",
                "$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6a\r\n"
                "$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,*47\r\n"
                "$GPGSA,A,3,04,05,,09,12,,,24,,,,,2.5,1.3,2.1*39\r\n"
                "$GPVTG,054.7,T,034.4,M,005.5,N,010.2,K*48\r\n");
  const auto r = lobfix::read_nmea_track(path, "example");
  CHECK(r.errors.empty());
  CHECK(r.sentences_read == 4);  // GSA and VTG counted, not used
  CHECK(r.sentences_used == 2);  // RMC and GGA at the same time: one point
  CHECK(r.invalid_fixes == 0);
  REQUIRE(r.track.points.size() == 1);
  const auto& p = r.track.points[0];
  // 230394 with the 1980-2079 window is 23 March 1994; 123519 is 12:35:19 UTC.
  CHECK(p.time_unix_ns == ns("1994-03-23T12:35:19Z"));
  // 4807.038 N = 48 + 7.038 / 60 deg; 01131.000 E = 11 + 31 / 60 deg.
  CHECK_ABS(p.position.lat_deg, 48.0 + 7.038 / 60.0, 1e-12);
  CHECK_ABS(p.position.lon_deg, 11.0 + 31.0 / 60.0, 1e-12);
  REQUIRE(p.alt_m.has_value());
  CHECK(*p.alt_m == 545.4);  // from the GGA
  CHECK(p.source.line == 2);
}

TEST_CASE("NMEA: date from RMC, midnight, invalid fixes skipped and counted") {
  const std::string path = data_path("tracks/vehicle_midnight.nmea");
  const auto r = lobfix::read_nmea_track(path, "vehicle-1");
  for (const auto& e : r.errors)
    INFO(e.to_string());
  CHECK(r.errors.empty());
  CHECK(r.sentences_read == 8);
  CHECK(r.sentences_used == 5);
  CHECK(r.invalid_fixes == 2);  // RMC status V (line 5), GGA quality 0 (line 6)
  REQUIRE(r.track.points.size() == 4);
  const auto& pts = r.track.points;
  // Line 1 RMC and line 2 GGA at 23:59:50 on 31 May: one point, the GGA's altitude.
  CHECK(pts[0].time_unix_ns == ns("2026-05-31T23:59:50Z"));
  CHECK(pts[0].source.line == 2);
  CHECK(pts[0].alt_m == 212.3);
  // Line 4 GGA at 00:00:00: the RMC said 31 May at 23:59:50; earlier in the clock by more
  // than 12 h, so the next day.
  CHECK(pts[1].time_unix_ns == ns("2026-06-01T00:00:00Z"));
  CHECK_ABS(pts[1].position.lon_deg, 146.0 + 30.12 / 60.0, 1e-12);
  CHECK_ABS(pts[1].position.lat_deg, -(31.0 + 12.0 / 60.0), 1e-12);
  // Line 7 GN talker RMC, no altitude.
  CHECK(pts[2].time_unix_ns == ns("2026-06-01T00:00:20Z"));
  CHECK_FALSE(pts[2].alt_m.has_value());
  CHECK(pts[2].source.line == 7);
  // Line 8 GGA dated by the RMC of line 7.
  CHECK(pts[3].time_unix_ns == ns("2026-06-01T00:00:30Z"));
  CHECK(pts[3].alt_m == 213.0);

  // A GGA later in the clock than the last dated fix by more than 12 h is the day before.
  const std::string back = write_tmp(
      "track_rollback.nmea",
      sentence("GPRMC,000005.00,A,3112.0000,S,14630.0000,E,0.0,0.0,010626,,,A") + "\n" +
          sentence("GPGGA,235958.00,3112.0000,S,14630.0000,E,1,08,0.9,212.3,M,20.1,M,,") + "\n");
  const auto rb = lobfix::read_nmea_track(back, "vehicle-1");
  CHECK(rb.errors.empty());
  REQUIRE(rb.track.points.size() == 2);
  CHECK(rb.track.points[0].time_unix_ns == ns("2026-05-31T23:59:58Z"));
  CHECK(rb.track.points[0].source.line == 2);
}

TEST_CASE("NMEA: two-digit years 1980-2079, fractional seconds") {
  const std::string path = write_tmp(
      "track_years.nmea",
      sentence("GPRMC,000000.00,A,3112.0000,S,14630.0000,E,0.0,0.0,010180,,") + "\n" +
          sentence("GPRMC,235959.125,A,3112.0000,S,14630.0000,E,0.0,0.0,311279,,") + "\n" +
          sentence("GPRMC,120000,A,3112.0000,S,14630.0000,E,0.0,0.0,311299,,") + "\n" +
          sentence("GPRMC,120000,A,3112.0000,S,14630.0000,E,0.0,0.0,010100,,") + "\n");
  const auto r = lobfix::read_nmea_track(path, "vehicle-1");
  CHECK(r.errors.empty());
  REQUIRE(r.track.points.size() == 4);
  CHECK(r.track.points[0].time_unix_ns == ns("1980-01-01T00:00:00Z"));
  CHECK(r.track.points[1].time_unix_ns == ns("1999-12-31T12:00:00Z"));
  CHECK(r.track.points[2].time_unix_ns == ns("2000-01-01T12:00:00Z"));
  CHECK(r.track.points[3].time_unix_ns == ns("2079-12-31T23:59:59.125Z"));
}

TEST_CASE("NMEA: bad and missing checksums and other errors, each file:line") {
  const std::string path = data_path("tracks/vehicle_errors.nmea");
  const auto r = lobfix::read_nmea_track(path, "vehicle-1");
  // Line 1 is a GGA before any RMC: the first valid RMC (line 4, 1 June 2026) dates it.
  REQUIRE(r.errors.size() == 5);
  CHECK(r.errors[0].to_string() ==
        path + ":2: NMEA checksum 6B does not match the sentence (computed 7E)");
  CHECK(r.errors[1].to_string() ==
        path +
            ":3: NMEA sentence has no checksum (*hh at its end): a sentence without one cannot "
            "be verified and is not used");
  CHECK(r.errors[2].to_string() == path + ":5: not an NMEA sentence: it does not start with '$'");
  CHECK(r.errors[3].to_string() == path + ":6: RMC latitude '31X2.0040' is not ddmm.mmmm");
  CHECK(r.errors[4].line == 8);
  CHECK(r.errors[4].reason.rfind("RMC date '310226' is not a valid date: ", 0) == 0);
  REQUIRE(r.track.points.size() == 3);
  CHECK(r.track.points[0].source.line == 1);
  CHECK(r.track.points[0].time_unix_ns == ns("2026-06-01T10:15:00Z"));
  CHECK(r.track.points[1].source.line == 4);
  CHECK(r.track.points[2].source.line == 7);
  CHECK(r.track.points[2].time_unix_ns == ns("2026-06-01T10:15:40Z"));
  CHECK(r.sentences_read == 8);
  CHECK(r.sentences_used == 3);

  // A second fix of one type at the same time is an error; the first is kept.
  const std::string dup = write_tmp(
      "track_duplicate.nmea",
      sentence("GPRMC,101500.00,A,3112.0000,S,14630.0000,E,0.0,0.0,010626,,,A") + "\n" +
          sentence("GPRMC,101500.00,A,3112.0100,S,14630.0000,E,0.0,0.0,010626,,,A") + "\n");
  const auto rd = lobfix::read_nmea_track(dup, "vehicle-1");
  REQUIRE(rd.errors.size() == 1);
  CHECK(rd.errors[0].to_string() ==
        dup + ":2: a second RMC fix at 2026-06-01T10:15:00Z (the first is on line 1): not used");
  REQUIRE(rd.track.points.size() == 1);
  CHECK(rd.track.points[0].source.line == 1);

  CHECK_THROWS_AS(lobfix::read_nmea_track(tmp_path("no_such_file.nmea"), "vehicle-1"),
                  lobfix::InputError);
}

// ---------------------------------------------------------------------------------------
// GPX through GDAL

TEST_CASE("GPX: two named tracks, times in UTC, points sorted by time") {
  const std::string path = data_path("tracks/two_walkers.gpx");
  const auto tracks = lobfix::read_gpx_tracks(path);
  REQUIRE(tracks.size() == 2);
  CHECK(tracks[0].station == "walker-A");
  CHECK(tracks[1].station == "walker-B");  // blanks around the <name> dropped
  CHECK(tracks[0].file == path);

  const auto& a = tracks[0].points;
  REQUIRE(a.size() == 5);
  // File order 1, 2, 3, 4, 5 with point 4 (10:00:20) before point 3 (10:00:30) in time.
  const char* expected[] = {"2026-06-01T10:00:00Z", "2026-06-01T10:00:10.250Z",
                            "2026-06-01T10:00:20Z", "2026-06-01T10:00:30Z",
                            "2026-06-01T10:02:00Z"};  // 12:02:00+02:00 in the file
  const int numbers[] = {1, 2, 4, 3, 5};
  for (std::size_t i = 0; i < 5; ++i) {
    CAPTURE(i);
    CHECK(a[i].time_unix_ns == ns(expected[i]));
    CHECK(a[i].source.line == numbers[i]);
    CHECK(a[i].source.file == path);
  }
  CHECK(a[0].position.lat_deg == -31.245);
  CHECK(a[0].position.lon_deg == 146.462);
  REQUIRE(a[0].alt_m.has_value());
  CHECK(*a[0].alt_m == 211.5);
  CHECK_FALSE(a[4].alt_m.has_value());

  const auto& b = tracks[1].points;
  REQUIRE(b.size() == 3);
  CHECK(b[0].time_unix_ns == ns("2026-06-01T09:59:55Z"));
  CHECK(b[2].time_unix_ns == ns("2026-06-01T10:00:15Z"));

  // The break between walker-A's segments (90 s) is a gap with the default 60 s.
  std::string reason;
  CHECK_FALSE(lobfix::position_at(tracks[0], ns("2026-06-01T10:01:00Z"), {}, &reason));
  CHECK(reason.find("falls in a 90 s gap of track 'walker-A'") != std::string::npos);
}

TEST_CASE("GPX: an unnamed track needs a station") {
  const std::string path = data_path("tracks/unnamed.gpx");
  try {
    lobfix::read_gpx_tracks(path);
    FAIL("an unnamed track without a station was accepted");
  } catch (const lobfix::InputError& e) {
    CHECK(e.diagnostic().file == path);
    CHECK(e.diagnostic().reason ==
          "track 1 (<trk> number in the file) has no <name>: give its station explicitly "
          "(--track STATION=FILE)");
  }
  const auto tracks = lobfix::read_gpx_tracks(path, "mast-C");
  REQUIRE(tracks.size() == 1);
  CHECK(tracks[0].station == "mast-C");
  REQUIRE(tracks[0].points.size() == 2);
  CHECK(tracks[0].points[1].time_unix_ns == ns("2026-06-01T10:00:05Z"));

  // With a station given, every <trk> of the file is that station's: one track.
  const auto merged = lobfix::read_gpx_tracks(data_path("tracks/two_walkers.gpx"), "walker-A");
  REQUIRE(merged.size() == 1);
  CHECK(merged[0].points.size() == 8);
  CHECK(merged[0].points[0].time_unix_ns == ns("2026-06-01T09:59:55Z"));
}

TEST_CASE("GPX: bad points are InputErrors naming the point") {
  const auto reason_of = [](const std::string& path) {
    try {
      lobfix::read_gpx_tracks(path);
    } catch (const lobfix::InputError& e) {
      CHECK(e.diagnostic().file == path);
      return e.diagnostic().reason;
    }
    return std::string("(no error)");
  };
  CHECK(reason_of(data_path("tracks/no_time.gpx")) == "point 2 of track 'walker-C' has no time");
  CHECK(reason_of(data_path("tracks/no_zone.gpx")) ==
        "point 3 of track 'walker-C' has a time without zone: GPX times are UTC, write them "
        "with Z");
  CHECK(reason_of(data_path("tracks/same_time.gpx")) ==
        "points 2 and 4 of track 'walker-D' have the same time 2026-06-01T10:00:05Z");
  // Not a GPX file (an NMEA log under a .gpx name), and no file at all.
  const std::string not_gpx =
      write_tmp("track_not_gpx.gpx",
                sentence("GPRMC,101500.00,A,3112.0000,S,14630.0000,E,0.0,0.0,010626,,,A") + "\n");
  CHECK(reason_of(not_gpx).rfind("cannot be read as a GPX file", 0) == 0);
  CHECK(reason_of(tmp_path("no_such_file.gpx")).rfind("cannot be read as a GPX file", 0) == 0);
  // A GPX file with no track points.
  const std::string empty =
      write_tmp("track_empty.gpx",
                "<?xml version=\"1.0\"?>\n<gpx version=\"1.1\" creator=\"lobfix tests\" "
                "xmlns=\"http://www.topografix.com/GPX/1/1\">\n  <wpt lat=\"-31.2\" "
                "lon=\"146.5\"><name>camp</name></wpt>\n</gpx>\n");
  CHECK_THROWS_WITH_AS(lobfix::read_gpx_tracks(empty),
                       (empty + ": has no track points (<trk><trkseg><trkpt>)").c_str(),
                       lobfix::InputError);
}

TEST_CASE("NMEA: a receiver that sends GGA before RMC in each epoch loses no fix") {
  // Many receivers send $--GGA first in each epoch [common practice]: the GGAs before the
  // first RMC take its date (looking ahead), so the first epoch is kept.
  const std::string path = write_tmp(
      "track_gga_first.nmea",
      sentence("GPGGA,235958.00,3112.0000,S,14630.0000,E,1,08,0.9,212.3,M,20.1,M,,") + "\n" +
          sentence("GPGGA,235959.00,3112.0005,S,14630.0005,E,1,08,0.9,212.3,M,20.1,M,,") + "\n" +
          sentence("GPRMC,000000.00,A,3112.0010,S,14630.0010,E,1.2,80.0,010626,,") + "\n");
  const auto r = lobfix::read_nmea_track(path, "vehicle-1");
  CHECK(r.errors.empty());
  REQUIRE(r.track.points.size() == 3);
  // The RMC is 1 June 00:00:00; the GGAs before it fall on 31 May (within 12 h of it).
  CHECK(r.track.points[0].time_unix_ns == ns("2026-05-31T23:59:58Z"));
  CHECK(r.track.points[1].time_unix_ns == ns("2026-05-31T23:59:59Z"));
  CHECK(r.track.points[2].time_unix_ns == ns("2026-06-01T00:00:00Z"));
}
