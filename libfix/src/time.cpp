// lobfix: ISO 8601 / RFC 3339 date-times to and from nanoseconds since the Unix epoch.
//
// Notation (after the reference below): y, m, d a civil date in the proleptic Gregorian
// calendar; z days since 1970-01-01; era a 400-year cycle of 146097 days; yoe the year of the
// era [0, 399]; doy the day of the year counted from 1 March [0, 365]; doe the day of the era
// [0, 146096]. days_from_civil and civil_from_days are Howard Hinnant's public-domain
// algorithms of the same names from "chrono-Compatible Low-Level Date Algorithms"
// (https://howardhinnant.github.io/date_algorithms.html). Leap seconds are not counted (POSIX
// time): 23:59:60 is the same instant as 00:00:00 of the next day.
#include "lobfix/time.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace lobfix {
namespace {

constexpr std::int64_t kNsPerS = 1'000'000'000;
constexpr std::int64_t kSPerDay = 86'400;

bool is_leap_year(std::int64_t y) {
  return y % 4 == 0 && (y % 100 != 0 || y % 400 == 0);
}

int days_in_month(std::int64_t y, int m) {
  static constexpr int kDays[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  return (m == 2 && is_leap_year(y)) ? 29 : kDays[m - 1];
}

// Days since 1970-01-01 of the civil date y-m-d (m in 1..12, d in 1..31).
std::int64_t days_from_civil(std::int64_t y, int m, int d) {
  y -= (m <= 2) ? 1 : 0;
  const std::int64_t era = (y >= 0 ? y : y - 399) / 400;
  const std::int64_t yoe = y - era * 400;                                    // [0, 399]
  const std::int64_t doy = (153 * (m > 2 ? m - 3 : m + 9) + 2) / 5 + d - 1;  // [0, 365]
  const std::int64_t doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;            // [0, 146096]
  return era * 146097 + doe - 719468;
}

struct CivilDate {
  std::int64_t y;
  int m;
  int d;
};

// The civil date of day z since 1970-01-01.
CivilDate civil_from_days(std::int64_t z) {
  z += 719468;
  const std::int64_t era = (z >= 0 ? z : z - 146096) / 146097;
  const std::int64_t doe = z - era * 146097;                                       // [0, 146096]
  const std::int64_t yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;  // [0, 399]
  const std::int64_t doy = doe - (365 * yoe + yoe / 4 - yoe / 100);                // [0, 365]
  const std::int64_t mp = (5 * doy + 2) / 153;                                     // [0, 11]
  const int d = static_cast<int>(doy - (153 * mp + 2) / 5 + 1);                    // [1, 31]
  const int m = static_cast<int>(mp < 10 ? mp + 3 : mp - 9);                       // [1, 12]
  return {era * 400 + yoe + (m <= 2 ? 1 : 0), m, d};
}

bool is_digit(char c) {
  return c >= '0' && c <= '9';
}

// A left-to-right reader over the text being parsed.
class Cursor {
 public:
  explicit Cursor(std::string_view text) : text_(text) {}

  bool at_end() const { return pos_ >= text_.size(); }
  char peek() const { return at_end() ? '\0' : text_[pos_]; }
  void skip() { ++pos_; }
  std::string_view rest() const { return text_.substr(pos_); }

  bool accept(char c) {
    if (at_end() || text_[pos_] != c)
      return false;
    ++pos_;
    return true;
  }

  // Reads exactly n digits into *value.
  bool digits(int n, int* value) {
    if (text_.size() - pos_ < static_cast<std::size_t>(n))
      return false;
    int v = 0;
    for (int k = 0; k < n; ++k) {
      const char c = text_[pos_ + static_cast<std::size_t>(k)];
      if (!is_digit(c))
        return false;
      v = v * 10 + (c - '0');
    }
    pos_ += static_cast<std::size_t>(n);
    *value = v;
    return true;
  }

  // What stands at the cursor, for messages: "'x'" or "the end of the text".
  std::string describe() const {
    if (at_end())
      return "the end of the text";
    return std::string("'") + text_[pos_] + "'";
  }

 private:
  std::string_view text_;
  std::size_t pos_ = 0;
};

std::string range_detail(const char* what, int value, int low, int high) {
  return std::string(what) + ' ' + std::to_string(value) + " is outside " + std::to_string(low) +
         ".." + std::to_string(high);
}

void append_2(std::string& out, std::int64_t v) {
  out += static_cast<char>('0' + v / 10);
  out += static_cast<char>('0' + v % 10);
}

}  // namespace

std::optional<std::int64_t> parse_iso8601_ns(std::string_view text, std::string* reason) {
  const auto fail = [&](const std::string& detail) -> std::optional<std::int64_t> {
    if (reason != nullptr) {
      *reason = "'" + std::string(text) + "' is not a valid ISO 8601 time: " + detail;
    }
    return std::nullopt;
  };

  Cursor c(text);
  int year = 0;
  int month = 0;
  int day = 0;
  if (text.empty())
    return fail("the text is empty");
  if (!c.digits(4, &year) || !c.accept('-') || !c.digits(2, &month) || !c.accept('-') ||
      !c.digits(2, &day)) {
    return fail("expected the date as YYYY-MM-DD at the start");
  }
  if (month < 1 || month > 12)
    return fail(range_detail("month", month, 1, 12));
  const int month_days = days_in_month(year, month);
  if (day < 1 || day > month_days) {
    return fail(range_detail("day", day, 1, month_days) + " for " + std::string(text.substr(0, 7)));
  }

  if (c.at_end())
    return fail("the time of day is missing: expected 'T' and hh:mm:ss after the date");
  if (!(c.accept('T') || c.accept('t') || c.accept(' '))) {
    return fail("expected 'T' between the date and the time of day, found " + c.describe());
  }

  int hour = 0;
  int minute = 0;
  int second = 0;
  if (!c.digits(2, &hour) || !c.accept(':') || !c.digits(2, &minute) || !c.accept(':') ||
      !c.digits(2, &second)) {
    return fail("expected the time of day as hh:mm:ss (seconds are required)");
  }
  if (hour > 23)
    return fail(range_detail("hour", hour, 0, 23));
  if (minute > 59)
    return fail(range_detail("minute", minute, 0, 59));
  if (second > 60)
    return fail(range_detail("second", second, 0, 60));

  std::int64_t fraction_ns = 0;
  if (c.peek() == '.' || c.peek() == ',') {
    c.skip();
    int count = 0;
    std::int64_t value = 0;
    while (is_digit(c.peek())) {
      if (count < 9)
        value = value * 10 + (c.peek() - '0');
      ++count;
      c.skip();
    }
    if (count == 0)
      return fail("expected digits after the decimal mark");
    if (count > 9) {
      return fail(std::to_string(count) +
                  " fractional digits: at most 9 (nanoseconds) are allowed");
    }
    for (int k = count; k < 9; ++k)
      value *= 10;
    fraction_ns = value;
  }

  std::int64_t offset_s = 0;  // local time minus UTC
  if (c.at_end()) {
    if (reason != nullptr) {
      *reason = "'" + std::string(text) + "' has no zone: add Z for UTC or an offset like +02:00";
    }
    return std::nullopt;
  }
  if (c.accept('Z') || c.accept('z')) {
    // UTC
  } else if (c.peek() == '+' || c.peek() == '-') {
    const int sign = c.peek() == '-' ? -1 : 1;
    c.skip();
    int offset_hour = 0;
    int offset_minute = 0;
    if (!c.digits(2, &offset_hour))
      return fail("expected an offset like +02:00 after the sign");
    if (c.accept(':')) {
      if (!c.digits(2, &offset_minute))
        return fail("expected the offset minutes after ':'");
    } else if (is_digit(c.peek())) {
      if (!c.digits(2, &offset_minute))
        return fail("expected the offset as +hhmm");
    }
    if (offset_hour > 23)
      return fail(range_detail("offset hour", offset_hour, 0, 23));
    if (offset_minute > 59)
      return fail(range_detail("offset minute", offset_minute, 0, 59));
    offset_s = static_cast<std::int64_t>(sign) * (static_cast<std::int64_t>(offset_hour) * 3600 +
                                                  static_cast<std::int64_t>(offset_minute) * 60);
  } else {
    return fail("expected Z or an offset like +02:00 after the time of day, found " + c.describe());
  }
  if (!c.at_end())
    return fail("unexpected text '" + std::string(c.rest()) + "' after the zone");

  const std::int64_t local_s = hour * 3600 + minute * 60;
  if (second == 60) {
    // Leap seconds are inserted after 23:59:59 UTC only.
    std::int64_t utc_before = (local_s + 59 - offset_s) % kSPerDay;
    if (utc_before < 0)
      utc_before += kSPerDay;
    if (utc_before != kSPerDay - 1) {
      return fail("second 60 (a leap second) is only valid at 23:59:60 UTC");
    }
  }
  const std::int64_t unix_s =
      days_from_civil(year, month, day) * kSPerDay + local_s + second - offset_s;
  // Before the epoch, counted down from the next whole second, so that the extremes that fit
  // (INT64_MIN and INT64_MAX nanoseconds) do not overflow on the way.
  const bool down = unix_s < 0 && fraction_ns > 0;
  const std::int64_t whole_s = down ? unix_s + 1 : unix_s;
  std::int64_t whole_ns = 0;
  std::int64_t result = 0;
  if (__builtin_mul_overflow(whole_s, kNsPerS, &whole_ns) ||
      (down ? __builtin_sub_overflow(whole_ns, kNsPerS - fraction_ns, &result)
            : __builtin_add_overflow(whole_ns, fraction_ns, &result))) {
    return fail(
        "it is outside 1677-09-21T00:12:43.145224192Z..2262-04-11T23:47:16.854775807Z, the span "
        "that 64-bit nanoseconds hold");
  }
  return result;
}

std::string format_iso8601_utc(std::int64_t time_unix_ns) {
  std::int64_t s = time_unix_ns / kNsPerS;
  std::int64_t ns = time_unix_ns % kNsPerS;
  if (ns < 0) {
    ns += kNsPerS;
    --s;
  }
  std::int64_t days = s / kSPerDay;
  std::int64_t sod = s % kSPerDay;
  if (sod < 0) {
    sod += kSPerDay;
    --days;
  }
  const CivilDate date = civil_from_days(days);

  std::string out;
  out.reserve(30);
  append_2(out, date.y / 100);
  append_2(out, date.y % 100);
  out += '-';
  append_2(out, date.m);
  out += '-';
  append_2(out, date.d);
  out += 'T';
  append_2(out, sod / 3600);
  out += ':';
  append_2(out, sod / 60 % 60);
  out += ':';
  append_2(out, sod % 60);
  if (ns != 0) {
    int width = 9;
    std::int64_t value = ns;
    if (ns % 1'000'000 == 0) {
      width = 3;
      value = ns / 1'000'000;
    } else if (ns % 1'000 == 0) {
      width = 6;
      value = ns / 1'000;
    }
    out += '.';
    char digits[9];
    for (int k = width - 1; k >= 0; --k) {
      digits[k] = static_cast<char>('0' + value % 10);
      value /= 10;
    }
    out.append(digits, static_cast<std::size_t>(width));
  }
  out += 'Z';
  return out;
}

}  // namespace lobfix
