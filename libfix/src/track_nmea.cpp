// lobfix: NMEA 0183 logs as station tracks (stage "read"; docs/tracks.md).
//
// A sentence is '$' (or '!'), an address (talker and type, e.g. GPRMC), comma-separated
// fields, '*' and two hexadecimal digits: the XOR of every byte between '$' and '*'
// [common practice: NMEA 0183]. Only RMC and GGA are read:
//   RMC: time hhmmss.ss, status A/V, lat ddmm.mmmm, N/S, lon dddmm.mmmm, E/W, speed (kn),
//        course (deg), date ddmmyy, magnetic variation, E/W[, mode][, navigational status]
//   GGA: time, lat, N/S, lon, E/W, quality, satellites, HDOP, altitude, M, geoid separation,
//        M, age of differential data, differential station
#include <algorithm>
#include <cerrno>
#include <charconv>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <optional>
#include <string>
#include <string_view>
#include <system_error>
#include <utility>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/time.hpp"
#include "lobfix/track.hpp"

namespace lobfix {
namespace {

constexpr std::int64_t kNsPerS = 1'000'000'000;
constexpr std::int64_t kNsPerDay = 86'400 * kNsPerS;
constexpr std::int64_t kHalfDayNs = kNsPerDay / 2;

/// A fix as read, before fixes at the same time are merged.
struct Fix {
  std::int64_t time_unix_ns = 0;
  LatLon position;
  std::optional<double> alt_m;
  int line = 0;
  bool from_gga = false;
};

bool is_digit(char c) {
  return c >= '0' && c <= '9';
}

bool all_digits(std::string_view s) {
  return !s.empty() && std::all_of(s.begin(), s.end(), is_digit);
}

int hex_value(char c) {
  if (c >= '0' && c <= '9')
    return c - '0';
  if (c >= 'a' && c <= 'f')
    return c - 'a' + 10;
  if (c >= 'A' && c <= 'F')
    return c - 'A' + 10;
  return -1;
}

std::string hex2(int value) {
  char buf[8];
  std::snprintf(buf, sizeof buf, "%02X", value & 0xFF);
  return buf;
}

std::string_view trim(std::string_view s) {
  const auto blank = [](char c) { return c == ' ' || c == '\t' || c == '\r' || c == '\n'; };
  while (!s.empty() && blank(s.front()))
    s.remove_prefix(1);
  while (!s.empty() && blank(s.back()))
    s.remove_suffix(1);
  return s;
}

std::vector<std::string_view> split_fields(std::string_view body) {
  std::vector<std::string_view> fields;
  std::size_t start = 0;
  while (true) {
    const std::size_t comma = body.find(',', start);
    if (comma == std::string_view::npos) {
      fields.push_back(body.substr(start));
      return fields;
    }
    fields.push_back(body.substr(start, comma - start));
    start = comma + 1;
  }
}

/// A decimal number of digits and at most one '.', nothing else (no sign, no exponent).
std::optional<double> parse_unsigned_decimal(std::string_view s) {
  if (s.empty() || std::count(s.begin(), s.end(), '.') > 1)
    return std::nullopt;
  if (!std::all_of(s.begin(), s.end(), [](char c) { return is_digit(c) || c == '.'; }))
    return std::nullopt;
  if (s == ".")
    return std::nullopt;
  double value = 0.0;
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), value);
  if (ec != std::errc() || end != s.data() + s.size())
    return std::nullopt;
  return value;
}

std::optional<double> parse_signed_decimal(std::string_view s) {
  const bool negative = !s.empty() && s.front() == '-';
  if (negative)
    s.remove_prefix(1);
  const auto v = parse_unsigned_decimal(s);
  if (!v)
    return std::nullopt;
  return negative ? -*v : *v;
}

/// Where the line's problems go.
class Reporter {
 public:
  Reporter(const std::string& file, std::vector<Diagnostic>& errors)
      : file_(file), errors_(errors) {}
  void error(int line, std::string field, std::string reason) const {
    Diagnostic d;
    d.file = file_;
    d.line = line;
    d.field = std::move(field);
    d.reason = std::move(reason);
    errors_.push_back(std::move(d));
  }

 private:
  const std::string& file_;
  std::vector<Diagnostic>& errors_;
};

/// hhmmss[.s...] as nanoseconds since midnight; second 60 (a leap second) counts as the
/// next second, as POSIX time does.
std::optional<std::int64_t> parse_time_of_day(std::string_view s, const std::string& type,
                                              std::string& reason) {
  const std::string_view whole = s.substr(0, 6);
  const std::string_view rest = s.size() > 6 ? s.substr(6) : std::string_view();
  const bool fraction_ok = rest.empty() || (rest.size() >= 2 && rest.size() <= 10 &&
                                            rest.front() == '.' && all_digits(rest.substr(1)));
  if (whole.size() != 6 || !all_digits(whole) || !fraction_ok) {
    reason = type + " time '" + std::string(s) + "' is not hhmmss.ss";
    return std::nullopt;
  }
  const int h = (whole[0] - '0') * 10 + (whole[1] - '0');
  const int m = (whole[2] - '0') * 10 + (whole[3] - '0');
  const int sec = (whole[4] - '0') * 10 + (whole[5] - '0');
  if (h > 23 || m > 59 || sec > 60) {
    reason = type + " time '" + std::string(s) + "' is not a time of day (hh 00..23, mm 00..59, " +
             "ss 00..60)";
    return std::nullopt;
  }
  std::int64_t fraction_ns = 0;
  if (!rest.empty()) {
    std::int64_t scale = kNsPerS;
    for (char c : rest.substr(1)) {
      scale /= 10;
      fraction_ns += (c - '0') * scale;
    }
  }
  return ((h * 60 + m) * 60 + sec) * kNsPerS + fraction_ns;
}

/// ddmmyy as nanoseconds at the start of that UTC day; two-digit years: 80..99 are
/// 1980..1999, 00..79 are 2000..2079.
std::optional<std::int64_t> parse_date(std::string_view s, std::string& reason) {
  if (s.size() != 6 || !all_digits(s)) {
    reason = "RMC date '" + std::string(s) + "' is not ddmmyy";
    return std::nullopt;
  }
  const int yy = (s[4] - '0') * 10 + (s[5] - '0');
  const int year = yy >= 80 ? 1900 + yy : 2000 + yy;
  char text[32];
  std::snprintf(text, sizeof text, "%04d-%c%c-%c%cT00:00:00Z", year, s[2], s[3], s[0], s[1]);
  std::string why;
  const auto t = parse_iso8601_ns(text, &why);
  if (!t) {
    reason = "RMC date '" + std::string(s) + "' is not a valid date: " + why;
    return std::nullopt;
  }
  return t;
}

/// ddmm.mmmm (deg_digits 2) or dddmm.mmmm (deg_digits 3) and its hemisphere letter.
std::optional<double> parse_angle(std::string_view value, std::string_view hemisphere,
                                  int deg_digits, char positive, char negative, double max_deg,
                                  const std::string& what, std::string& reason) {
  const auto n = static_cast<std::size_t>(deg_digits);
  const std::size_t dot = value.find('.');
  const std::size_t int_len = dot == std::string_view::npos ? value.size() : dot;
  const char* shape = deg_digits == 2 ? "ddmm.mmmm" : "dddmm.mmmm";
  if (value.empty()) {
    reason = what + " is empty";
    return std::nullopt;
  }
  if (int_len != n + 2 || !all_digits(value.substr(0, n))) {
    reason = what + " '" + std::string(value) + "' is not " + shape;
    return std::nullopt;
  }
  const auto minutes = parse_unsigned_decimal(value.substr(n));
  if (!minutes) {
    reason = what + " '" + std::string(value) + "' is not " + shape;
    return std::nullopt;
  }
  if (*minutes >= 60.0) {
    reason = what + " '" + std::string(value) + "' has minutes at or over 60";
    return std::nullopt;
  }
  int degrees = 0;
  for (std::size_t i = 0; i < n; ++i)
    degrees = degrees * 10 + (value[i] - '0');
  // degrees + minutes / 60, e.g. 4807.038 N = 48 + 7.038 / 60 deg [common practice: NMEA 0183]
  const double angle_deg = degrees + *minutes / 60.0;
  if (angle_deg > max_deg) {
    reason = what + " '" + std::string(value) + "' is over " +
             std::to_string(static_cast<int>(max_deg)) + " deg";
    return std::nullopt;
  }
  if (hemisphere.size() != 1 || (hemisphere[0] != positive && hemisphere[0] != negative)) {
    reason = what + " hemisphere '" + std::string(hemisphere) + "' is not " + positive + " or " +
             negative;
    return std::nullopt;
  }
  return hemisphere[0] == negative ? -angle_deg : angle_deg;
}

std::optional<LatLon> parse_position(const std::vector<std::string_view>& fields,
                                     std::size_t lat_index, const std::string& type,
                                     std::string& reason) {
  const auto lat = parse_angle(fields[lat_index], fields[lat_index + 1], 2, 'N', 'S', 90.0,
                               type + " latitude", reason);
  if (!lat)
    return std::nullopt;
  const auto lon = parse_angle(fields[lat_index + 2], fields[lat_index + 3], 3, 'E', 'W', 180.0,
                               type + " longitude", reason);
  if (!lon)
    return std::nullopt;
  return LatLon{*lat, *lon};
}

/// The reader's state across lines.
struct State {
  const Reporter& report;
  std::vector<Fix> fixes;
  /// The latest dated fix in file order (valid RMC, or GGA dated from one): the day a GGA
  /// time belongs to is the one that puts it within 12 h of this.
  std::optional<std::int64_t> reference_ns;
  int invalid_fixes = 0;
  /// GGAs read before any valid RMC (many receivers send GGA first in each epoch): dated by
  /// the first valid RMC after them, or reported at the end of the file if none comes.
  struct PendingGga {
    std::int64_t time_of_day_ns = 0;
    Fix fix;
  };
  std::vector<PendingGga> pending;
};

// The day that puts a time of day within 12 h of the reference (both in ns; times from 1980
// on, so positive).
std::int64_t nearest_day(std::int64_t reference, std::int64_t time_of_day_ns) {
  std::int64_t t = reference - reference % kNsPerDay + time_of_day_ns;
  if (t - reference < -kHalfDayNs)
    t += kNsPerDay;
  else if (t - reference > kHalfDayNs)
    t -= kNsPerDay;
  return t;
}

void read_rmc(const std::vector<std::string_view>& f, int line, State& state) {
  if (f.size() < 10) {
    state.report.error(line, "",
                       "RMC sentence has " + std::to_string(f.size() - 1) +
                           " fields, needs at least 9 (time to date)");
    return;
  }
  const std::string_view status = f[2];
  if (status == "V") {
    ++state.invalid_fixes;
    return;
  }
  if (status != "A") {
    state.report.error(line, "status", "RMC status '" + std::string(status) + "' is not A or V");
    return;
  }
  // NMEA 2.3 mode indicator: N not valid, E estimated (dead reckoning), M manual input,
  // S simulator are no satellite fix [common practice: NMEA 0183 2.3].
  if (f.size() > 12 && f[12].size() == 1 &&
      std::string_view("NEMS").find(f[12][0]) != std::string_view::npos) {
    ++state.invalid_fixes;
    return;
  }
  std::string reason;
  const auto tod = parse_time_of_day(f[1], "RMC", reason);
  if (!tod) {
    state.report.error(line, "time", reason);
    return;
  }
  const auto day = parse_date(f[9], reason);
  if (!day) {
    state.report.error(line, "date", reason);
    return;
  }
  const auto position = parse_position(f, 3, "RMC", reason);
  if (!position) {
    state.report.error(line, "position", reason);
    return;
  }
  Fix fix;
  fix.time_unix_ns = *day + *tod;
  fix.position = *position;
  fix.line = line;
  state.reference_ns = fix.time_unix_ns;
  state.fixes.push_back(fix);
  // The GGAs that came before the first date take it now.
  for (State::PendingGga& g : state.pending) {
    g.fix.time_unix_ns = nearest_day(fix.time_unix_ns, g.time_of_day_ns);
    state.fixes.push_back(g.fix);
  }
  state.pending.clear();
}

void read_gga(const std::vector<std::string_view>& f, int line, State& state) {
  if (f.size() < 10) {
    state.report.error(line, "",
                       "GGA sentence has " + std::to_string(f.size() - 1) +
                           " fields, needs at least 9 (time to altitude)");
    return;
  }
  const std::string_view quality = f[6];
  if (quality.size() != 1 || !is_digit(quality[0])) {
    state.report.error(line, "quality",
                       "GGA fix quality '" + std::string(quality) + "' is not a digit 0..8");
    return;
  }
  // 0 invalid; 6 estimated (dead reckoning), 7 manual input, 8 simulator: no satellite fix
  // [common practice: NMEA 0183].
  if (quality[0] == '0' || quality[0] >= '6') {
    ++state.invalid_fixes;
    return;
  }
  std::string reason;
  const auto tod = parse_time_of_day(f[1], "GGA", reason);
  if (!tod) {
    state.report.error(line, "time", reason);
    return;
  }
  const auto position = parse_position(f, 2, "GGA", reason);
  if (!position) {
    state.report.error(line, "position", reason);
    return;
  }
  std::optional<double> alt_m;
  if (!f[9].empty()) {
    alt_m = parse_signed_decimal(f[9]);
    if (!alt_m) {
      state.report.error(line, "altitude",
                         "GGA altitude '" + std::string(f[9]) + "' is not a number");
      return;
    }
    if (f.size() > 10 && !f[10].empty() && f[10] != "M") {
      state.report.error(line, "altitude",
                         "GGA altitude unit '" + std::string(f[10]) + "' is not M (metres)");
      return;
    }
  }
  if (!state.reference_ns) {
    State::PendingGga g;
    g.time_of_day_ns = *tod;
    g.fix.position = *position;
    g.fix.alt_m = alt_m;
    g.fix.line = line;
    g.fix.from_gga = true;
    state.pending.push_back(g);
    return;
  }
  // The day that puts this time of day nearest the latest dated fix: a GGA more than 12 h
  // before it in the clock belongs to the next day (midnight passed), one more than 12 h
  // after it to the day before.
  const std::int64_t t = nearest_day(*state.reference_ns, *tod);
  Fix fix;
  fix.time_unix_ns = t;
  fix.position = *position;
  fix.alt_m = alt_m;
  fix.line = line;
  fix.from_gga = true;
  state.reference_ns = t;
  state.fixes.push_back(fix);
}

}  // namespace

NmeaReadResult read_nmea_track(const std::string& path, const std::string& station) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    Diagnostic d;
    d.file = path;
    d.reason = std::string("cannot open NMEA file: ") + std::strerror(errno);
    throw InputError(std::move(d));
  }
  NmeaReadResult result;
  result.track.station = station;
  result.track.file = path;
  const Reporter report(path, result.errors);
  State state{report, {}, std::nullopt, 0, {}};

  std::string text;
  int line = 0;
  while (std::getline(in, text)) {
    ++line;
    std::string_view s = text;
    if (line == 1 && s.substr(0, 3) == "\xEF\xBB\xBF")  // UTF-8 byte order mark
      s.remove_prefix(3);
    s = trim(s);
    if (s.empty())
      continue;
    ++result.sentences_read;
    if (s.front() != '$' && s.front() != '!') {
      report.error(line, "", "not an NMEA sentence: it does not start with '$'");
      continue;
    }
    const std::size_t star = s.find('*');
    if (star == std::string_view::npos) {
      report.error(line, "checksum",
                   "NMEA sentence has no checksum (*hh at its end): a sentence without one "
                   "cannot be verified and is not used");
      continue;
    }
    const std::string_view given = s.substr(star + 1);
    if (given.size() != 2 || hex_value(given[0]) < 0 || hex_value(given[1]) < 0) {
      report.error(line, "checksum",
                   "NMEA checksum '" + std::string(given) + "' is not two hexadecimal digits");
      continue;
    }
    int computed = 0;
    for (char c : s.substr(1, star - 1))
      computed ^= static_cast<unsigned char>(c);
    const int expected = hex_value(given[0]) * 16 + hex_value(given[1]);
    if (computed != expected) {
      report.error(line, "checksum",
                   "NMEA checksum " + hex2(expected) + " does not match the sentence (computed " +
                       hex2(computed) + ")");
      continue;
    }
    const auto fields = split_fields(s.substr(1, star - 1));
    const std::string_view address = fields[0];
    // Talker: two letters (GP, GN, GL, GA, BD, ...); proprietary sentences ($P...) and
    // every other type are ignored.
    if (s.front() != '$' || address.size() != 5 || address[0] == 'P' ||
        !std::all_of(address.begin(), address.begin() + 2,
                     [](char c) { return c >= 'A' && c <= 'Z'; }))
      continue;
    const std::string_view type = address.substr(2);
    if (type == "RMC")
      read_rmc(fields, line, state);
    else if (type == "GGA")
      read_gga(fields, line, state);
  }
  result.invalid_fixes = state.invalid_fixes;
  for (const State::PendingGga& g : state.pending) {
    report.error(g.fix.line, "time",
                 "GGA has no date: no valid RMC sentence in the file gives one");
  }

  // One point per time: an RMC and a GGA at the same time are one fix (the GGA's position
  // and altitude); a second RMC or GGA at a time already taken is an error.
  std::vector<Fix>& fixes = state.fixes;
  std::stable_sort(fixes.begin(), fixes.end(),
                   [](const Fix& a, const Fix& b) { return a.time_unix_ns < b.time_unix_ns; });
  auto& points = result.track.points;
  points.reserve(fixes.size());
  for (std::size_t i = 0; i < fixes.size();) {
    std::size_t j = i;
    const Fix* rmc = nullptr;
    const Fix* gga = nullptr;
    for (; j < fixes.size() && fixes[j].time_unix_ns == fixes[i].time_unix_ns; ++j) {
      const Fix*& slot = fixes[j].from_gga ? gga : rmc;
      if (slot != nullptr) {
        report.error(fixes[j].line, "time",
                     std::string("a second ") + (fixes[j].from_gga ? "GGA" : "RMC") + " fix at " +
                         format_iso8601_utc(fixes[j].time_unix_ns) + " (the first is on line " +
                         std::to_string(slot->line) + "): not used");
        continue;
      }
      slot = &fixes[j];
      ++result.sentences_used;
    }
    // The loop above always takes fixes[i], so one of the two is set.
    const Fix& use = gga != nullptr ? *gga : (rmc != nullptr ? *rmc : fixes[i]);
    TrackPoint p;
    p.time_unix_ns = use.time_unix_ns;
    p.position = use.position;
    p.alt_m = use.alt_m;
    p.source.file = path;
    p.source.line = use.line;
    points.push_back(std::move(p));
    i = j;
  }
  std::stable_sort(result.errors.begin(), result.errors.end(),
                   [](const Diagnostic& a, const Diagnostic& b) { return a.line < b.line; });
  return result;
}

}  // namespace lobfix
