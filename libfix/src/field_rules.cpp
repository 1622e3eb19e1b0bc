// lobfix: the rules every field of a bearing row and every row must meet, shared by the CSV
// and JSON Lines readers (detail/field_rules.hpp). Users' description: docs/input-format.md.
//
// The wording of each message is part of the format: the command-line tests compare them
// byte for byte, and the CSV and JSON Lines readers give the same message for the same bad
// value (the CSV one with its column, the JSON Lines one with column 0).
#include "detail/field_rules.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <limits>
#include <string>
#include <string_view>
#include <system_error>
#include <utility>

#include "lobfix/time.hpp"

namespace lobfix::detail {
namespace {

// Well-formed UTF-8 (RFC 3629): no overlong forms, no surrogates, nothing above U+10FFFF.
bool valid_utf8(std::string_view text) {
  std::size_t i = 0;
  while (i < text.size()) {
    const auto c = static_cast<unsigned char>(text[i]);
    std::size_t n = 0;
    std::uint32_t cp = 0;
    if (c < 0x80) {
      ++i;
      continue;
    } else if ((c & 0xE0) == 0xC0) {
      n = 1;
      cp = c & 0x1FU;
    } else if ((c & 0xF0) == 0xE0) {
      n = 2;
      cp = c & 0x0FU;
    } else if ((c & 0xF8) == 0xF0) {
      n = 3;
      cp = c & 0x07U;
    } else {
      return false;
    }
    if (i + n >= text.size())
      return false;  // the sequence runs past the end
    for (std::size_t k = 1; k <= n; ++k) {
      const auto d = static_cast<unsigned char>(text[i + k]);
      if ((d & 0xC0) != 0x80)
        return false;
      cp = (cp << 6) | (d & 0x3FU);
    }
    const std::uint32_t min[] = {0, 0x80, 0x800, 0x10000};
    if (cp < min[n] || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF))
      return false;
    i += n + 1;
  }
  return true;
}

std::string shortest(double v) {
  char buf[32];
  const auto res = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, res.ptr);
}

// ---------------------------------------------------------------------------------------------
// Numbers

enum class NumberStatus { ok, not_number, not_finite, out_of_range };

// Locale-independent: the whole text must be a decimal number; one leading '+' is allowed.
NumberStatus parse_number(std::string_view s, double* value) {
  const char* b = s.data();
  const char* const e = b + s.size();
  if (b != e && *b == '+') {
    ++b;
    if (b != e && (*b == '+' || *b == '-'))
      return NumberStatus::not_number;
  }
  if (b == e)
    return NumberStatus::not_number;
  const auto res = std::from_chars(b, e, *value, std::chars_format::general);
  if (res.ptr != e)
    return NumberStatus::not_number;
  if (res.ec == std::errc::result_out_of_range)
    return NumberStatus::out_of_range;
  if (res.ec != std::errc())
    return NumberStatus::not_number;
  if (!std::isfinite(*value))
    return NumberStatus::not_finite;
  return NumberStatus::ok;
}

// How a number field's range is checked and worded.
enum class Bounds {
  closed,            // [low, high]: "<name> <text> is outside <range>"
  positive_at_most,  // (0, high]: "must be > 0", "must be <= <high>"
  non_negative,      // [0, inf): "must be >= 0"
};

struct NumberRule {
  Bounds bounds;
  double low;
  double high;
  const char* range_text;  // closed: "[-90, 90]"; positive_at_most: "90"
  bool wrap_360;           // an azimuth: 360 is stored as 0
};

constexpr double kSigmaMaxDeg = 90.0;
constexpr double kPhaseSigmaMaxDeg = 180.0;
constexpr double kSpacingMaxM = 100.0;
constexpr double kFrequencyMaxHz = 1e12;

// The rule of a number field; nullptr for the fields that are not numbers.
const NumberRule* number_rule(Field f) {
  static constexpr NumberRule kLat{Bounds::closed, -90.0, 90.0, "[-90, 90]", false};
  static constexpr NumberRule kLon{Bounds::closed, -180.0, 180.0, "[-180, 180]", false};
  static constexpr NumberRule kAlt{Bounds::closed, -11000.0, 100000.0, "[-11000, 100000]", false};
  static constexpr NumberRule kAzimuth{Bounds::closed, 0.0, 360.0, "[0, 360]", true};
  static constexpr NumberRule kSigma{Bounds::positive_at_most, 0.0, kSigmaMaxDeg, "90", false};
  static constexpr NumberRule kPosSigma{Bounds::non_negative, 0.0, 0.0, "", false};
  static constexpr NumberRule kPhase{Bounds::closed, -360.0, 360.0, "[-360, 360]", false};
  static constexpr NumberRule kPhaseSigma{Bounds::positive_at_most, 0.0, kPhaseSigmaMaxDeg, "180",
                                          false};
  static constexpr NumberRule kSpacing{Bounds::positive_at_most, 0.0, kSpacingMaxM, "100", false};
  static constexpr NumberRule kFrequency{Bounds::positive_at_most, 0.0, kFrequencyMaxHz, "1e12",
                                         false};
  switch (f) {
    case Field::lat:
      return &kLat;
    case Field::lon:
      return &kLon;
    case Field::alt_m:
      return &kAlt;
    case Field::bearing_deg:
    case Field::bearing_alt_deg:
    case Field::heading_deg:
    case Field::axis_deg:
      return &kAzimuth;
    case Field::sigma_deg:
    case Field::heading_sigma_deg:
      return &kSigma;
    case Field::pos_sigma_m:
      return &kPosSigma;
    case Field::phase_deg:
      return &kPhase;
    case Field::phase_sigma_deg:
      return &kPhaseSigma;
    case Field::spacing_m:
      return &kSpacing;
    case Field::frequency_hz:
      return &kFrequency;
    case Field::time:
    case Field::station:
    case Field::signal:
    case Field::reference:
      return nullptr;
  }
  return nullptr;
}

// ---------------------------------------------------------------------------------------------
// Unix seconds

constexpr std::int64_t kNsPerS = 1'000'000'000;
constexpr int kMaxFractionDigits = 9;

bool is_digit(char c) {
  return c >= '0' && c <= '9';
}

// True when `s` is a plain decimal number: [+-] digits [. digits] [e [+-] digits], with at
// least one mantissa digit. ISO 8601 times fail at their first '-' or ':'.
bool is_decimal_number(std::string_view s) {
  std::size_t i = 0;
  const std::size_t n = s.size();
  if (i < n && (s[i] == '+' || s[i] == '-'))
    ++i;
  std::size_t digits = 0;
  while (i < n && is_digit(s[i])) {
    ++i;
    ++digits;
  }
  if (i < n && s[i] == '.') {
    ++i;
    while (i < n && is_digit(s[i])) {
      ++i;
      ++digits;
    }
  }
  if (digits == 0)
    return false;
  if (i < n && (s[i] == 'e' || s[i] == 'E')) {
    ++i;
    if (i < n && (s[i] == '+' || s[i] == '-'))
      ++i;
    std::size_t exponent_digits = 0;
    while (i < n && is_digit(s[i])) {
      ++i;
      ++exponent_digits;
    }
    if (exponent_digits == 0)
      return false;
  }
  return i == n;
}

// Unix seconds (POSIX time: seconds since 1970-01-01T00:00:00Z, leap seconds not counted)
// of a text that is_decimal_number accepts, converted exactly in decimal (a double would
// round 1780000000.1 to the nearest 2^-22 s).
std::optional<std::int64_t> parse_unix_seconds(std::string_view text, std::string* reason) {
  const auto fail = [&](const std::string& detail) -> std::optional<std::int64_t> {
    if (reason != nullptr)
      *reason = quoted(text) + " is not valid Unix seconds: " + detail;
    return std::nullopt;
  };
  std::string_view s = text;
  bool negative = false;
  if (s.front() == '+' || s.front() == '-') {
    negative = s.front() == '-';
    s.remove_prefix(1);
  }
  // The mantissa's digits, and how many of them stand before the decimal point.
  std::string digits;
  digits.reserve(s.size());
  long point = -1;
  std::size_t i = 0;
  for (; i < s.size() && s[i] != 'e' && s[i] != 'E'; ++i) {
    if (s[i] == '.')
      point = static_cast<long>(digits.size());
    else
      digits += s[i];
  }
  if (point < 0)
    point = static_cast<long>(digits.size());
  long exponent = 0;
  if (i < s.size()) {
    ++i;  // 'e'
    bool exponent_negative = false;
    if (i < s.size() && (s[i] == '+' || s[i] == '-')) {
      exponent_negative = s[i] == '-';
      ++i;
    }
    for (; i < s.size(); ++i) {
      if (exponent < 1'000'000)  // far beyond any time: saturate rather than overflow
        exponent = exponent * 10 + (s[i] - '0');
    }
    if (exponent_negative)
      exponent = -exponent;
  }
  // Without leading zeros, the value is 0.digits x 10^whole where whole is the number of
  // digits before the decimal point.
  const std::size_t nonzero = digits.find_first_not_of('0');
  if (nonzero == std::string::npos)
    return 0;  // zero, whatever its sign
  digits.erase(0, nonzero);
  const long whole = point - static_cast<long>(nonzero) + exponent;
  digits.erase(digits.find_last_not_of('0') + 1);
  if (negative)
    return fail("it is before 1970-01-01T00:00:00Z");
  const auto too_late = [&] {
    return fail(
        "it is after 2262-04-11T23:47:16.854775807Z, the last time that 64-bit nanoseconds hold "
        "(a count of milliseconds?)");
  };
  // INT64_MAX ns is 9223372036.854775807 s: 10 whole digits at most.
  if (whole > 10)
    return too_late();
  const long fraction_digits = static_cast<long>(digits.size()) - whole;
  if (fraction_digits > kMaxFractionDigits) {
    return fail(std::to_string(fraction_digits) +
                " fractional digits: at most 9 (nanoseconds) are allowed");
  }
  // All digits now fit in 19 decimal places: the value in nanoseconds.
  std::uint64_t ns = 0;
  for (const char c : digits)
    ns = ns * 10 + static_cast<std::uint64_t>(c - '0');
  for (long k = fraction_digits; k < kMaxFractionDigits; ++k) {
    if (__builtin_mul_overflow(ns, std::uint64_t{10}, &ns))
      return too_late();
  }
  if (ns > static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max()))
    return too_late();
  return static_cast<std::int64_t>(ns);
}

// ---------------------------------------------------------------------------------------------
// Field groups of the rules between fields

constexpr Field kInterferometerFields[] = {Field::phase_deg, Field::spacing_m, Field::frequency_hz,
                                           Field::axis_deg};

// "a", "a and b", "a, b and c".
std::string name_list(const std::vector<Field>& fields) {
  std::string out;
  for (std::size_t k = 0; k < fields.size(); ++k) {
    if (k > 0)
      out += k + 1 == fields.size() ? " and " : ", ";
    out += field_name(fields[k]);
  }
  return out;
}

constexpr BearingReference kReferences[] = {BearingReference::true_north,
                                            BearingReference::magnetic, BearingReference::grid,
                                            BearingReference::relative};

}  // namespace

std::optional<Field> find_field(std::string_view lower_name) {
  for (std::size_t c = 0; c < kFieldCount; ++c) {
    if (kFieldNames[c] == lower_name)
      return static_cast<Field>(c);
  }
  return std::nullopt;
}

std::string lower_ascii(std::string_view s) {
  std::string out(s);
  for (char& ch : out) {
    if (ch >= 'A' && ch <= 'Z')
      ch = static_cast<char>(ch - 'A' + 'a');
  }
  return out;
}

std::string_view trim_blanks(std::string_view s) {
  const auto blank = [](char c) { return c == ' ' || c == '\t' || c == '\r'; };
  std::size_t b = 0;
  std::size_t e = s.size();
  while (b < e && blank(s[b]))
    ++b;
  while (e > b && blank(s[e - 1]))
    --e;
  return s.substr(b, e - b);
}

std::string quoted(std::string_view s) {
  return "'" + std::string(s) + "'";
}

void check_read_options(const ReadOptions& options, const std::string& file_name) {
  if (!options.default_sigma_deg)
    return;
  const double s = *options.default_sigma_deg;
  if (!(s > 0.0 && s <= kSigmaMaxDeg)) {
    throw InputError(
        Diagnostic{file_name, 0, 0, "sigma_deg",
                   "the default sigma_deg (--sigma-deg) " + shortest(s) + " must be in (0, 90]"});
  }
}

// Every time read from a bearing file becomes UTC here, and only here: an ISO 8601 time
// through its zone designator (parse_iso8601_ns), Unix seconds by their definition (POSIX
// time counts from 1970-01-01T00:00:00Z). Later stages see nothing but UTC nanoseconds.
std::optional<std::int64_t> parse_time_text(std::string_view text, std::string* reason) {
  if (is_decimal_number(text))
    return parse_unix_seconds(text, reason);
  return parse_iso8601_ns(text, reason);
}

// ---------------------------------------------------------------------------------------------
// RowBuilder

RowBuilder::RowBuilder(const std::string& file_name, const ReadOptions& options,
                       std::vector<Diagnostic>* errors)
    : file_(file_name), options_(options), errors_(errors) {}

void RowBuilder::begin(int line) {
  line_ = line;
  given_ = 0;
  filled_ = 0;
  reference_ok_ = true;
  first_error_ = errors_->size();
  obs_ = Observation();
}

void RowBuilder::error(Field f, std::string reason) {
  errors_->push_back(
      Diagnostic{file_, line_, column_of(f), std::string(field_name(f)), std::move(reason)});
}

void RowBuilder::field_error(Field f, int column, std::string reason) {
  given_ |= bit(f);
  filled_ |= bit(f);
  columns_[static_cast<std::size_t>(f)] = column;
  error(f, std::move(reason));
}

void RowBuilder::row_error(int column, std::string_view field_text, std::string reason) {
  errors_->push_back(Diagnostic{file_, line_, column, std::string(field_text), std::move(reason)});
}

std::string RowBuilder::absent(Field f) const {
  return std::string(field_name(f)) + (given(f) ? " is empty" : " is missing");
}

void RowBuilder::cell(Field f, std::string_view text, int column) {
  given_ |= bit(f);
  columns_[static_cast<std::size_t>(f)] = column;
  if (text.empty()) {
    // Fields needed by every row are reported in column order; whether the others are
    // needed depends on the rest of the row (finish).
    if (f == Field::time || f == Field::station)
      error(f, absent(f));
    return;
  }
  filled_ |= bit(f);
  switch (f) {
    case Field::time: {
      std::string reason;
      const auto t = parse_time_text(text, &reason);
      if (!t) {
        error(f, "time " + reason);
        return;
      }
      obs_.time_unix_ns = *t;
      obs_.time_text = std::string(text);
      return;
    }
    case Field::station:
    case Field::signal:
      // Names travel into JSON, GeoJSON and KML, which are UTF-8: other bytes are refused
      // here, where the row and column can be named.
      if (!valid_utf8(text)) {
        error(f,
              std::string(field_name(f)) +
                  " is not UTF-8 text (save the file as UTF-8; it may be in a legacy code page)");
        return;
      }
      (f == Field::station ? obs_.station : obs_.signal) = std::string(text);
      return;
    case Field::reference: {
      const std::string lower = lower_ascii(text);
      for (const BearingReference r : kReferences) {
        if (lower == to_string(r)) {
          obs_.reference = r;
          return;
        }
      }
      reference_ok_ = false;
      error(f, "reference " + quoted(text) + " is not one of true, magnetic, grid, relative");
      return;
    }
    default:
      number(f, text);
      return;
  }
}

void RowBuilder::number(Field f, std::string_view text) {
  const std::string_view name = field_name(f);
  double v = 0.0;
  switch (parse_number(text, &v)) {
    case NumberStatus::ok:
      break;
    case NumberStatus::not_number: {
      std::string reason = std::string(name) + ' ' + quoted(text) + " is not a number";
      if (text.find(',') != std::string_view::npos)
        reason += " (the decimal mark is '.')";
      error(f, std::move(reason));
      return;
    }
    case NumberStatus::not_finite:
      error(f, std::string(name) + ' ' + quoted(text) + " is not a finite number");
      return;
    case NumberStatus::out_of_range:
      error(f, std::string(name) + ' ' + std::string(text) + " is too large or too small");
      return;
  }
  const NumberRule& rule = *number_rule(f);
  switch (rule.bounds) {
    case Bounds::closed:
      if (!(v >= rule.low && v <= rule.high)) {
        error(f, std::string(name) + ' ' + std::string(text) + " is outside " + rule.range_text);
        return;
      }
      break;
    case Bounds::positive_at_most:
      if (!(v > 0.0)) {
        error(f, std::string(name) + ' ' + std::string(text) + " must be > 0");
        return;
      }
      if (v > rule.high) {
        error(f, std::string(name) + ' ' + std::string(text) + " must be <= " + rule.range_text);
        return;
      }
      break;
    case Bounds::non_negative:
      if (v < 0.0) {
        error(f, std::string(name) + ' ' + std::string(text) + " must be >= 0");
        return;
      }
      break;
  }
  if (rule.wrap_360 && v == 360.0)
    v = 0.0;  // north again: stored azimuths are in [0, 360)
  v += 0.0;   // -0 becomes +0
  switch (f) {
    case Field::lat:
      obs_.lat_deg = v;
      break;
    case Field::lon:
      obs_.lon_deg = v;
      break;
    case Field::alt_m:
      obs_.alt_m = v;
      break;
    case Field::bearing_deg:
      obs_.bearing_deg = v;
      break;
    case Field::bearing_alt_deg:
      obs_.bearing_alt_deg = v;
      break;
    case Field::sigma_deg:
      obs_.sigma_deg = v;
      break;
    case Field::pos_sigma_m:
      obs_.pos_sigma_m = v;
      break;
    case Field::heading_deg:
      obs_.heading_deg = v;
      break;
    case Field::heading_sigma_deg:
      obs_.heading_sigma_deg = v;
      break;
    case Field::phase_deg:
      obs_.phase_deg = v;
      break;
    case Field::phase_sigma_deg:
      obs_.phase_sigma_deg = v;
      break;
    case Field::spacing_m:
      obs_.spacing_m = v;
      break;
    case Field::frequency_hz:
      obs_.frequency_hz = v;
      break;
    case Field::axis_deg:
      obs_.axis_deg = v;
      break;
    case Field::time:
    case Field::station:
    case Field::signal:
    case Field::reference:
      break;
  }
}

bool RowBuilder::finish(Observation* out) {
  // Fields every row needs (JSON Lines: no header guarantees their presence).
  for (const Field f : {Field::time, Field::station}) {
    if (!given(f))
      error(f, absent(f));
  }

  // A position is both coordinates or neither (then normalise takes it from a track).
  if (filled(Field::lat) != filled(Field::lon)) {
    const Field missing = filled(Field::lat) ? Field::lon : Field::lat;
    const Field other = missing == Field::lat ? Field::lon : Field::lat;
    error(missing, absent(missing) + " but " + std::string(field_name(other)) +
                       " is given: give both, or neither to use the station's track");
  }

  // A bearing, or the four interferometer readings it is computed from: one or the other.
  // (Masks first: the lists of names are built for messages only.)
  Mask interferometer_mask = 0;
  for (const Field f : kInterferometerFields)
    interferometer_mask |= bit(f);
  const bool has_bearing = filled(Field::bearing_deg);
  const bool any_interferometer = (filled_ & interferometer_mask) != 0;
  const bool interferometer = !has_bearing && any_interferometer;
  const auto names = [&](bool want_filled) {
    std::vector<Field> list;
    for (const Field f : kInterferometerFields) {
      if (filled(f) == want_filled)
        list.push_back(f);
    }
    return list;
  };
  if (has_bearing && any_interferometer) {
    error(Field::bearing_deg, "bearing_deg and interferometer readings (" + name_list(names(true)) +
                                  ") are both given: give one or the other");
  } else if (!has_bearing && !any_interferometer) {
    error(Field::bearing_deg,
          absent(Field::bearing_deg) +
              ((given_ & interferometer_mask) != 0
                   ? ": give a bearing, or the interferometer readings phase_deg, spacing_m, "
                     "frequency_hz and axis_deg"
                   : ""));
  } else if (interferometer && (filled_ & interferometer_mask) != interferometer_mask) {
    const std::vector<Field> missing = names(false);
    error(missing.front(), "interferometer reading without " + name_list(missing) +
                               ": give all of phase_deg, spacing_m, frequency_hz and axis_deg");
  }

  // Sigmas: a bearing's own, or the phase's for interferometer readings (the bearing sigma
  // then follows from the physics, in normalise).
  if (has_bearing && any_interferometer) {
    // Which sigma is needed depends on which of the two the user keeps.
  } else if (interferometer) {
    if (filled(Field::sigma_deg)) {
      error(Field::sigma_deg,
            "sigma_deg is not used with interferometer readings: their bearing sigma comes from "
            "phase_sigma_deg");
    }
    if (!filled(Field::phase_sigma_deg)) {
      error(Field::phase_sigma_deg,
            absent(Field::phase_sigma_deg) + ": interferometer readings need the phase's sigma");
    }
  } else {
    if (!filled(Field::sigma_deg)) {
      if (options_.default_sigma_deg) {
        obs_.sigma_deg = *options_.default_sigma_deg;  // checked by check_read_options
      } else {
        error(Field::sigma_deg,
              absent(Field::sigma_deg) + ": give a value or a default (--sigma-deg)");
      }
    }
    if (filled(Field::phase_sigma_deg)) {
      error(Field::phase_sigma_deg, "phase_sigma_deg is only used with interferometer readings");
    }
  }
  if (filled(Field::bearing_alt_deg) && !has_bearing)
    error(Field::bearing_alt_deg, "bearing_alt_deg is only used with bearing_deg");

  // A heading turns a bearing relative to the platform's nose into a true one: given with
  // its sigma, or left out for normalise to take the course (and its sigma) from a track.
  if (reference_ok_ && obs_.reference != BearingReference::relative) {
    for (const Field f : {Field::heading_deg, Field::heading_sigma_deg}) {
      if (filled(f))
        error(f, std::string(field_name(f)) + " is only used with reference 'relative'");
    }
  } else if (reference_ok_) {
    if (filled(Field::heading_deg) && !filled(Field::heading_sigma_deg)) {
      error(Field::heading_sigma_deg,
            absent(Field::heading_sigma_deg) + ": heading_deg needs its 1-sigma");
    } else if (!filled(Field::heading_deg) && filled(Field::heading_sigma_deg)) {
      error(Field::heading_sigma_deg,
            "heading_sigma_deg is only used with heading_deg: a course from a track has its own "
            "sigma");
    }
  }

  if (errors_->size() != first_error_) {
    // Column order, problems without a column (JSON Lines, absent columns) last.
    const auto key = [](const Diagnostic& d) {
      return d.column == 0 ? std::numeric_limits<int>::max() : d.column;
    };
    std::stable_sort(errors_->begin() + static_cast<std::ptrdiff_t>(first_error_), errors_->end(),
                     [&](const Diagnostic& a, const Diagnostic& b) { return key(a) < key(b); });
    return false;
  }

  FieldColumns& c = obs_.columns;
  c.time = column_of(Field::time);
  c.station = column_of(Field::station);
  c.lat = column_of(Field::lat);
  c.lon = column_of(Field::lon);
  c.bearing = column_of(Field::bearing_deg);
  c.bearing_alt = column_of(Field::bearing_alt_deg);
  c.sigma = column_of(Field::sigma_deg);
  c.reference = column_of(Field::reference);
  c.heading = column_of(Field::heading_deg);
  c.heading_sigma = column_of(Field::heading_sigma_deg);
  c.phase = column_of(Field::phase_deg);
  c.spacing = column_of(Field::spacing_m);
  c.frequency = column_of(Field::frequency_hz);
  c.axis = column_of(Field::axis_deg);
  c.phase_sigma = column_of(Field::phase_sigma_deg);
  obs_.source.file = file_;
  obs_.source.line = line_;
  *out = std::move(obs_);
  return true;
}

}  // namespace lobfix::detail
