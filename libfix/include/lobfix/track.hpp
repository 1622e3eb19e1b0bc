// lobfix: station GPS tracks (GPX 1.1, NMEA 0183) and positions and courses along them
// (stages "read" and "normalise"). Formats, models and defaults: docs/tracks.md.
//
// Notation (Karney 2013, "Algorithms for geodesics", J. Geodesy 87:43-55): between two
// consecutive track points p_i (point 1) and p_{i+1} (point 2), s12 is the geodesic distance
// (m) and azi1 the azimuth of the geodesic at p_i (deg clockwise from true north); f is the
// fraction of the time from p_i to p_{i+1}.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"

namespace lobfix {

struct TrackPoint {
  std::int64_t time_unix_ns = 0;  ///< UTC, nanoseconds since 1970-01-01T00:00:00Z
  LatLon position;                ///< WGS 84
  /// Height as the file gives it: GPX <ele>, NMEA GGA altitude above mean sea level (m).
  std::optional<double> alt_m;
  /// Where it came from: file and physical line (NMEA), or file and the 1-based number of
  /// the point among its track's points in file order (GPX, where lines are not known).
  SourceRef source;
};

/// One station's track, points sorted by time (strictly increasing after reading; exact
/// duplicates in time are an error, reported by the reader).
struct Track {
  std::string station;  ///< which station's positions these are
  std::string file;     ///< file it was read from, as given
  std::vector<TrackPoint> points;
};

/// Read a GPX 1.1 file with GDAL's GPX driver only (layers track_points and tracks). Each
/// <trk> becomes a Track whose station is the track's <name> (blanks around it dropped);
/// <trk>s with the same name are one station and are merged into one Track, and when
/// `station` is given every <trk> of the file is that station's (one Track). A track without
/// a name and no `station` given is an InputError. Segments (<trkseg>) are joined: a break
/// between them is an ordinary gap (TrackOptions::max_gap_s). Points are sorted by time;
/// <trk>s without points give no Track.
///
/// Times must carry a zone (Z or an offset, converted to UTC); GDAL keeps seconds as a float,
/// so times are rounded to the millisecond.
/// @throws InputError naming the file (and the point: "point 7 of track 'walker-A'") for an
///         unreadable file, a file without track points, a point without a time or with a
///         time without a zone, a position outside [-90, 90] / [-180, 180], an unnamed track,
///         and two points of one track at the same time.
std::vector<Track> read_gpx_tracks(const std::string& path, const std::string& station = "");

/// Read an NMEA 0183 log: $--RMC (time, date, position, validity) and $--GGA (time,
/// position, fix quality, altitude) sentences from any talker (GP, GN, GL, GA, ...); every
/// sentence's checksum (*hh) is verified and a sentence without one is an error; sentences
/// of other types are ignored; invalid fixes (RMC status V or mode N/E/M/S, GGA quality 0 or
/// 6/7/8) are skipped and counted. GGA carries no date: it takes the date of the latest
/// valid RMC before it in the file, carried across midnight by the nearest day within 12 h
/// of the latest dated fix; GGAs before the first valid RMC take its date, and in a file
/// with no valid RMC each GGA is an error ("no date"). An RMC
/// and a GGA at the same time give one point (the GGA's position and altitude). RMC years
/// are two digits: 80..99 are 1980..1999, 00..79 are 2000..2079.
struct NmeaReadResult {
  Track track;
  int sentences_read = 0;  ///< non-blank lines
  int sentences_used = 0;  ///< RMC and GGA sentences that gave (or confirmed) a point
  int invalid_fixes = 0;   ///< RMC and GGA sentences skipped as invalid fixes
  /// Bad checksums, sentences without a checksum, malformed sentences and fields, GGA
  /// without a date, and a second fix at a time already taken: file:line each. The line's
  /// sentence gives no point.
  std::vector<Diagnostic> errors;
};
/// @throws InputError when the file cannot be opened.
NmeaReadResult read_nmea_track(const std::string& path, const std::string& station);

struct TrackOptions {
  /// A bearing may lie this far outside the track's time span (s) and take its end point;
  /// the same holds at both ends of a gap.
  double time_tolerance_s = 2.0;
  /// Two consecutive points further apart in time than this (s) are a gap: no
  /// interpolation across it.
  double max_gap_s = 60.0;
  /// Horizontal 1-sigma of a track position (m), typical consumer GPS [common practice].
  double gps_sigma_m = 5.0;

  /// True when time_tolerance_s >= 0, max_gap_s > 0 and gps_sigma_m > 0 (all finite);
  /// otherwise false with the reason in *error (when not null).
  bool is_valid(std::string* error = nullptr) const;
};

/// Position along the track at time t: on the geodesic between the two neighbouring points,
/// at the fraction of the time between them; exactly at a point, that point. std::nullopt
/// with *reason when t is outside the span (beyond the tolerance), inside a gap (beyond the
/// tolerance of both its ends), or the track has no points.
/// O(log n): the neighbours are found by binary search.
/// @throws InputError when the options are not valid (TrackOptions::is_valid).
std::optional<LatLon> position_at(const Track& track, std::int64_t time_unix_ns,
                                  const TrackOptions& options, std::string* reason = nullptr);

/// Course over ground at time t from the neighbouring points, with its uncertainty.
struct CourseOverGround {
  /// True, [0, 360): the forward azimuth of the geodesic between the neighbouring points,
  /// taken at the fraction f of the way along it (at a point with neighbours on both sides,
  /// the geodesic from the previous to the next point).
  double course_deg = 0.0;
  double speed_mps = 0.0;  ///< s12 over the time between the two points
  /// 1-sigma of the course (deg): from the position errors of the two points over the
  /// distance between them, sigma = atan(sqrt(2) gps_sigma_m / s12) (docs/tracks.md).
  double sigma_deg = 0.0;
};
/// std::nullopt with *reason when outside the span, in a gap, with no segment to take a
/// course from (a track of one point, a point between two gaps), or standing still (the
/// distance between the points is under 2 gps_sigma_m, where the course is meaningless).
/// @throws InputError when the options are not valid (TrackOptions::is_valid).
std::optional<CourseOverGround> course_at(const Track& track, std::int64_t time_unix_ns,
                                          const TrackOptions& options,
                                          std::string* reason = nullptr);

}  // namespace lobfix
