// lobfix: GPX tracks through GDAL's GPX driver, and positions and courses along a track
// (docs/tracks.md). The NMEA reader is in track_nmea.cpp.
//
// Notation (Karney 2013, "Algorithms for geodesics", J. Geodesy 87:43-55): p1 = p_i and
// p2 = p_{i+1} are consecutive points; s12 the geodesic distance between them (m); azi1 the
// forward azimuth at p1 (deg); f = (t - t1) / (t2 - t1) the time fraction; the point at t is
// the direct problem from p1 along azi1 over f s12.
#include "lobfix/track.hpp"

#include <gdal.h>
#include <gdal_priv.h>
#include <ogrsf_frmts.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <map>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/time.hpp"

namespace lobfix {
namespace {

constexpr double kNsPerS = 1e9;
constexpr std::int64_t kNsPerMs = 1'000'000;
// GDAL's OGRField TZFlag: 0 unknown, 1 local time, 100 UTC, 100 + n: UTC + n * 15 min.
constexpr int kGdalTzUtc = 100;
constexpr int kGdalTzMinutesPerStep = 15;

// ---------------------------------------------------------------------------------------
// Text for messages

/// A number with up to `decimals` decimals, trailing zeros dropped: 45, 2.5, 0.125.
std::string format_number(double value, int decimals) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, value);
  std::string s = buf;
  if (s.find('.') != std::string::npos) {
    while (!s.empty() && s.back() == '0')
      s.pop_back();
    if (!s.empty() && s.back() == '.')
      s.pop_back();
  }
  if (s == "-0")
    s = "0";
  return s;
}

std::string format_seconds(std::int64_t dt_ns) {
  return format_number(static_cast<double>(dt_ns) / kNsPerS, 3) + " s";
}

std::string track_label(const Track& track) {
  return "track '" + track.station + "' (" + track.file;
}

// ---------------------------------------------------------------------------------------
// GPX through GDAL

void register_gdal_drivers() {
  static std::once_flag once;
  std::call_once(once, [] { GDALAllRegister(); });
}

/// While alive, GDAL's messages go to no one (the library never prints); the last one is
/// kept for the InputError.
class QuietGdal {
 public:
  QuietGdal() {
    CPLPushErrorHandler(CPLQuietErrorHandler);
    CPLErrorReset();
  }
  ~QuietGdal() { CPLPopErrorHandler(); }
  QuietGdal(const QuietGdal&) = delete;
  QuietGdal& operator=(const QuietGdal&) = delete;
};

struct DatasetCloser {
  void operator()(GDALDataset* ds) const { GDALClose(ds); }
};

[[noreturn]] void gpx_fail(const std::string& path, std::string reason,
                           const std::string& field = "") {
  Diagnostic d;
  d.file = path;
  d.field = field;
  d.reason = std::move(reason);
  throw InputError(std::move(d));
}

std::string gdal_last_message() {
  const char* msg = CPLGetLastErrorMsg();
  if (msg == nullptr || *msg == '\0')
    return "";
  return std::string(" (GDAL: ") + msg + ")";
}

std::string trim_blanks(const std::string& s) {
  const char* blanks = " \t\r\n";
  const auto first = s.find_first_not_of(blanks);
  if (first == std::string::npos)
    return "";
  const auto last = s.find_last_not_of(blanks);
  return s.substr(first, last - first + 1);
}

int field_index(OGRLayer& layer, const char* name, const std::string& path, bool required) {
  const int index = layer.GetLayerDefn()->GetFieldIndex(name);
  if (index < 0 && required)
    gpx_fail(path, std::string("GPX layer '") + layer.GetName() + "' has no field '" + name + "'");
  return index;
}

/// One <trk> of the tracks layer: its name and its place in the file.
struct GpxTrack {
  std::string name;
  bool named = false;
  int ordinal = 0;  ///< 1-based <trk> number in the file
};

/// The time of a GDAL DateTime field in UTC nanoseconds, or a reason.
std::optional<std::int64_t> gdal_time_ns(const OGRFeature& feature, int index,
                                         std::string& reason) {
  int year = 0;
  int month = 0;
  int day = 0;
  int hour = 0;
  int minute = 0;
  float second = 0.0f;
  int tz_flag = 0;
  if (!feature.GetFieldAsDateTime(index, &year, &month, &day, &hour, &minute, &second, &tz_flag)) {
    reason = "has a time GDAL cannot read";
    return std::nullopt;
  }
  if (tz_flag < 2) {  // 0 unknown, 1 local: the zone of a field log cannot be guessed
    reason = "has a time without zone: GPX times are UTC, write them with Z";
    return std::nullopt;
  }
  if (!(second >= 0.0f && second < 61.0f)) {
    reason = "has a time with second " + format_number(second, 3) + " outside 0..60";
    return std::nullopt;
  }
  const int offset_min = (tz_flag - kGdalTzUtc) * kGdalTzMinutesPerStep;
  const int offset_abs = offset_min < 0 ? -offset_min : offset_min;
  // The whole minute through the project's ISO 8601 parser (it checks the calendar), the
  // seconds added after: GDAL's float seconds rounded to the millisecond.
  char text[64];
  std::snprintf(text, sizeof text, "%04d-%02d-%02dT%02d:%02d:00%c%02d:%02d", year, month, day, hour,
                minute, offset_min < 0 ? '-' : '+', offset_abs / 60, offset_abs % 60);
  std::string why;
  const auto minute_ns = parse_iso8601_ns(text, &why);
  if (!minute_ns) {
    reason = "has a time that is not valid: " + why;
    return std::nullopt;
  }
  const auto ms = static_cast<std::int64_t>(std::llround(static_cast<double>(second) * 1000.0));
  // The minute may fit in 64-bit nanoseconds while its seconds do not (after 23:47:16.854775807Z
  // on 2262-04-11).
  std::int64_t time_ns = 0;
  if (__builtin_add_overflow(*minute_ns, ms * kNsPerMs, &time_ns)) {
    reason =
        "has a time that is not valid: it is after 2262-04-11T23:47:16.854775807Z, the last time "
        "that 64-bit nanoseconds hold";
    return std::nullopt;
  }
  return time_ns;
}

}  // namespace

std::vector<Track> read_gpx_tracks(const std::string& path, const std::string& station) {
  register_gdal_drivers();
  const QuietGdal quiet;
  const char* const allowed_drivers[] = {"GPX", nullptr};
  std::unique_ptr<GDALDataset, DatasetCloser> ds(GDALDataset::FromHandle(
      GDALOpenEx(path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY | GDAL_OF_VERBOSE_ERROR,
                 allowed_drivers, nullptr, nullptr)));
  if (!ds)
    gpx_fail(path, "cannot be read as a GPX file" + gdal_last_message());

  OGRLayer* tracks_layer = ds->GetLayerByName("tracks");
  OGRLayer* points_layer = ds->GetLayerByName("track_points");
  if (tracks_layer == nullptr || points_layer == nullptr)
    gpx_fail(path, "GDAL's GPX driver gives no 'tracks' and 'track_points' layers");

  // <trk> names by the tracks layer's feature id, which track_points' track_fid refers to.
  std::map<GIntBig, GpxTrack> trk_by_fid;
  {
    const int name_index = field_index(*tracks_layer, "name", path, true);
    tracks_layer->ResetReading();
    int ordinal = 0;
    for (auto& feature : *tracks_layer) {
      GpxTrack trk;
      trk.ordinal = ++ordinal;
      if (feature->IsFieldSetAndNotNull(name_index)) {
        trk.name = trim_blanks(feature->GetFieldAsString(name_index));
        trk.named = !trk.name.empty();
      }
      trk_by_fid[feature->GetFID()] = std::move(trk);
    }
  }

  const int fid_index = field_index(*points_layer, "track_fid", path, true);
  field_index(*points_layer, "track_seg_id", path, true);
  const int time_index = field_index(*points_layer, "time", path, true);
  const int ele_index = field_index(*points_layer, "ele", path, false);

  std::vector<Track> tracks;
  std::map<std::string, std::size_t> track_by_station;
  points_layer->ResetReading();
  for (auto& feature : *points_layer) {
    const GIntBig fid = feature->GetFieldAsInteger64(fid_index);
    const auto trk_it = trk_by_fid.find(fid);
    if (trk_it == trk_by_fid.end())
      gpx_fail(path, "a track point refers to track " + std::to_string(fid) +
                         ", which GDAL did not list");
    const GpxTrack& trk = trk_it->second;
    if (station.empty() && !trk.named)
      gpx_fail(path, "track " + std::to_string(trk.ordinal) +
                         " (<trk> number in the file) has no <name>: give its station "
                         "explicitly (--track STATION=FILE)");
    const std::string& name = station.empty() ? trk.name : station;

    auto [it, inserted] = track_by_station.try_emplace(name, tracks.size());
    if (inserted) {
      Track track;
      track.station = name;
      track.file = path;
      tracks.push_back(std::move(track));
    }
    Track& track = tracks[it->second];

    TrackPoint point;
    point.source.file = path;
    point.source.line = static_cast<int>(track.points.size()) + 1;
    const std::string what =
        "point " + std::to_string(point.source.line) + " of track '" + name + "'";

    const OGRGeometry* geometry = feature->GetGeometryRef();
    if (geometry == nullptr || wkbFlatten(geometry->getGeometryType()) != wkbPoint)
      gpx_fail(path, what + " has no position");
    const auto* p = geometry->toPoint();
    point.position.lat_deg = p->getY();
    point.position.lon_deg = p->getX();
    if (!(point.position.lat_deg >= -90.0 && point.position.lat_deg <= 90.0))
      gpx_fail(path, what + " has lat " + format_number(point.position.lat_deg, 7) +
                         " outside [-90, 90]");
    if (!(point.position.lon_deg >= -180.0 && point.position.lon_deg <= 180.0))
      gpx_fail(path, what + " has lon " + format_number(point.position.lon_deg, 7) +
                         " outside [-180, 180]");
    if (ele_index >= 0 && feature->IsFieldSetAndNotNull(ele_index))
      point.alt_m = feature->GetFieldAsDouble(ele_index);

    if (!feature->IsFieldSetAndNotNull(time_index))
      gpx_fail(path, what + " has no time", "time");
    std::string why;
    const auto t = gdal_time_ns(*feature, time_index, why);
    if (!t)
      gpx_fail(path, std::string(what).append(" ").append(why), "time");
    point.time_unix_ns = *t;
    track.points.push_back(std::move(point));
  }
  if (tracks.empty())
    gpx_fail(path, "has no track points (<trk><trkseg><trkpt>)");

  for (Track& track : tracks) {
    std::stable_sort(
        track.points.begin(), track.points.end(),
        [](const TrackPoint& a, const TrackPoint& b) { return a.time_unix_ns < b.time_unix_ns; });
    for (std::size_t i = 1; i < track.points.size(); ++i) {
      const TrackPoint& a = track.points[i - 1];
      const TrackPoint& b = track.points[i];
      if (a.time_unix_ns == b.time_unix_ns) {
        const int first = std::min(a.source.line, b.source.line);
        const int second = std::max(a.source.line, b.source.line);
        gpx_fail(path,
                 "points " + std::to_string(first) + " and " + std::to_string(second) +
                     " of track '" + track.station + "' have the same time " +
                     format_iso8601_utc(a.time_unix_ns),
                 "time");
      }
    }
  }
  return tracks;
}

// ---------------------------------------------------------------------------------------
// Options

bool TrackOptions::is_valid(std::string* error) const {
  std::string why;
  if (!(std::isfinite(time_tolerance_s) && time_tolerance_s >= 0.0))
    why = "time_tolerance_s " + format_number(time_tolerance_s, 3) + " must be >= 0";
  else if (!(std::isfinite(max_gap_s) && max_gap_s > 0.0))
    why = "max_gap_s " + format_number(max_gap_s, 3) + " must be > 0";
  else if (!(std::isfinite(gps_sigma_m) && gps_sigma_m > 0.0))
    why = "gps_sigma_m " + format_number(gps_sigma_m, 3) + " must be > 0";
  if (why.empty())
    return true;
  if (error != nullptr)
    *error = why;
  return false;
}

// ---------------------------------------------------------------------------------------
// Where a time falls on a track

namespace {

/// Either a point of the track (exactly at it, or within the tolerance of an end of the
/// span or of a gap) or a segment between consecutive points i, i + 1 with the time fraction.
struct Placement {
  enum class Kind { point, segment } kind = Kind::point;
  std::size_t i = 0;
  double f = 0.0;
};

void set_reason(std::string* reason, std::string text) {
  if (reason != nullptr)
    *reason = std::move(text);
}

void check_options(const TrackOptions& options) {
  std::string why;
  if (!options.is_valid(&why)) {
    Diagnostic d;
    d.reason = "track options: " + why;
    throw InputError(std::move(d));
  }
}

std::int64_t seconds_to_ns(double s) {
  return static_cast<std::int64_t>(std::llround(s * kNsPerS));
}

/// Is the interval between points i and i + 1 a gap?
bool is_gap(const Track& track, std::size_t i, std::int64_t max_gap_ns) {
  return track.points[i + 1].time_unix_ns - track.points[i].time_unix_ns > max_gap_ns;
}

std::optional<Placement> place(const Track& track, std::int64_t t, const TrackOptions& options,
                               std::string* reason) {
  const auto& pts = track.points;
  const auto when = [t] { return "time " + format_iso8601_utc(t); };  // for reasons only
  if (pts.empty()) {
    set_reason(reason, when() + ": " + track_label(track) + ") has no points");
    return std::nullopt;
  }
  const std::int64_t tolerance_ns = seconds_to_ns(options.time_tolerance_s);
  const std::int64_t max_gap_ns = seconds_to_ns(options.max_gap_s);
  // Index of the first point after t: pts[k - 1] <= t < pts[k].
  const auto after = std::upper_bound(
      pts.begin(), pts.end(), t,
      [](std::int64_t time, const TrackPoint& p) { return time < p.time_unix_ns; });
  const auto k = static_cast<std::size_t>(after - pts.begin());

  if (k == 0) {
    const std::int64_t dt = pts.front().time_unix_ns - t;
    if (dt <= tolerance_ns)
      return Placement{Placement::Kind::point, 0, 0.0};
    set_reason(reason, when() + " is " + format_seconds(dt) + " before the start of " +
                           track_label(track) + ", starts " +
                           format_iso8601_utc(pts.front().time_unix_ns) + ")");
    return std::nullopt;
  }
  const std::size_t i = k - 1;
  if (pts[i].time_unix_ns == t)
    return Placement{Placement::Kind::point, i, 0.0};
  if (k == pts.size()) {
    const std::int64_t dt = t - pts.back().time_unix_ns;
    if (dt <= tolerance_ns)
      return Placement{Placement::Kind::point, i, 0.0};
    set_reason(reason, when() + " is " + format_seconds(dt) + " after the end of " +
                           track_label(track) + ", ends " +
                           format_iso8601_utc(pts.back().time_unix_ns) + ")");
    return std::nullopt;
  }
  const std::int64_t t1 = pts[i].time_unix_ns;
  const std::int64_t t2 = pts[k].time_unix_ns;
  if (t2 - t1 > max_gap_ns) {
    if (t - t1 <= tolerance_ns || t2 - t <= tolerance_ns)
      return Placement{Placement::Kind::point, (t - t1 <= t2 - t) ? i : k, 0.0};
    set_reason(reason, when() + " falls in a " + format_seconds(t2 - t1) + " gap of " +
                           track_label(track) + ") between " + format_iso8601_utc(t1) + " and " +
                           format_iso8601_utc(t2) + " (longer than max_gap_s " +
                           format_number(options.max_gap_s, 3) + " s)");
    return std::nullopt;
  }
  const double f = static_cast<double>(t - t1) / static_cast<double>(t2 - t1);
  return Placement{Placement::Kind::segment, i, f};
}

/// The course along the geodesic from point a to point b at fraction f of the way, or the
/// standing-still reason.
std::optional<CourseOverGround> segment_course(const Track& track, std::size_t a, std::size_t b,
                                               double f, std::int64_t t,
                                               const TrackOptions& options, std::string* reason) {
  const TrackPoint& p1 = track.points[a];
  const TrackPoint& p2 = track.points[b];
  const GeodesicLine12 g = geodesic_inverse(p1.position, p2.position);
  const std::int64_t dt_ns = p2.time_unix_ns - p1.time_unix_ns;
  if (g.s12_m < 2.0 * options.gps_sigma_m) {
    set_reason(reason, "station '" + track.station + "' is standing still at " +
                           format_iso8601_utc(t) + " (moved " + format_number(g.s12_m, 1) +
                           " m in " + format_seconds(dt_ns) + "): its course gives no heading");
    return std::nullopt;
  }
  CourseOverGround c;
  c.course_deg = wrap_deg360(geodesic_direct(p1.position, g.azi1_deg, f * g.s12_m).azi2_deg);
  c.speed_mps = g.s12_m / (static_cast<double>(dt_ns) / kNsPerS);
  constexpr double kRadToDeg = 57.29577951308232;  // 180 / pi
  c.sigma_deg = std::atan(std::sqrt(2.0) * options.gps_sigma_m / g.s12_m) * kRadToDeg;
  return c;
}

}  // namespace

std::optional<LatLon> position_at(const Track& track, std::int64_t time_unix_ns,
                                  const TrackOptions& options, std::string* reason) {
  check_options(options);
  const auto placed = place(track, time_unix_ns, options, reason);
  if (!placed)
    return std::nullopt;
  const TrackPoint& p1 = track.points[placed->i];
  if (placed->kind == Placement::Kind::point)
    return p1.position;
  const TrackPoint& p2 = track.points[placed->i + 1];
  const GeodesicLine12 g = geodesic_inverse(p1.position, p2.position);
  return geodesic_direct(p1.position, g.azi1_deg, placed->f * g.s12_m).point;
}

std::optional<CourseOverGround> course_at(const Track& track, std::int64_t time_unix_ns,
                                          const TrackOptions& options, std::string* reason) {
  check_options(options);
  const auto placed = place(track, time_unix_ns, options, reason);
  if (!placed)
    return std::nullopt;
  const std::size_t i = placed->i;
  if (placed->kind == Placement::Kind::segment)
    return segment_course(track, i, i + 1, placed->f, time_unix_ns, options, reason);

  // At point i: the segment from the previous to the next point when both sides are not
  // gaps, else the one side that is not.
  const std::int64_t max_gap_ns = seconds_to_ns(options.max_gap_s);
  const std::size_t n = track.points.size();
  const bool has_prev = i > 0 && !is_gap(track, i - 1, max_gap_ns);
  const bool has_next = i + 1 < n && !is_gap(track, i, max_gap_ns);
  if (has_prev && has_next) {
    const double f =
        static_cast<double>(track.points[i].time_unix_ns - track.points[i - 1].time_unix_ns) /
        static_cast<double>(track.points[i + 1].time_unix_ns - track.points[i - 1].time_unix_ns);
    return segment_course(track, i - 1, i + 1, f, time_unix_ns, options, reason);
  }
  if (has_prev)
    return segment_course(track, i - 1, i, 1.0, time_unix_ns, options, reason);
  if (has_next)
    return segment_course(track, i, i + 1, 0.0, time_unix_ns, options, reason);
  const std::string when = "time " + format_iso8601_utc(time_unix_ns);
  if (n == 1)
    set_reason(reason, when + ": " + track_label(track) +
                           ") has one point only: it gives no course over ground");
  else
    set_reason(reason,
               when + ": the point at " + format_iso8601_utc(track.points[i].time_unix_ns) +
                   " of " + track_label(track) + ") lies between gaps longer than max_gap_s " +
                   format_number(options.max_gap_s, 3) + " s: it gives no course over ground");
  return std::nullopt;
}

}  // namespace lobfix
