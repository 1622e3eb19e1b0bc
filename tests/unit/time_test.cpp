// Unit tests for lobfix/time.hpp: ISO 8601 / RFC 3339 date-times <-> Unix nanoseconds.
//
// Reference values: the examples of RFC 3339 section 5.8, and Unix times printed by GNU date
// (coreutils, `date -u -d <time> +%s`, run when these tests were written; the value is
// written in as a constant).
#include "lobfix/time.hpp"

#include <doctest/doctest.h>

#include <cstdint>
#include <limits>
#include <random>
#include <string>

#include "test_support.hpp"

namespace {

constexpr std::int64_t kNsPerS = 1'000'000'000;

std::int64_t parse_ok(const std::string& text) {
  std::string reason;
  const auto t = lobfix::parse_iso8601_ns(text, &reason);
  INFO("text: " << text << ", reason: " << reason);
  REQUIRE(t.has_value());
  return *t;
}

// The reason given for a refused text (the test fails when the text is accepted).
std::string refused(const std::string& text) {
  std::string reason;
  const auto t = lobfix::parse_iso8601_ns(text, &reason);
  INFO("text: " << text);
  CHECK_FALSE(t.has_value());
  CHECK_FALSE(reason.empty());
  return reason;
}

}  // namespace

TEST_CASE("RFC 3339 section 5.8 examples") {
  // "1985-04-12T23:20:50.52Z": GNU date gives 482196050 for 1985-04-12T23:20:50Z.
  CHECK(parse_ok("1985-04-12T23:20:50.52Z") == 482196050 * kNsPerS + 520'000'000);

  // "1996-12-19T16:39:57-08:00" is 1996-12-20T00:39:57Z (RFC 3339 5.8); GNU date: 851042397.
  CHECK(parse_ok("1996-12-19T16:39:57-08:00") == parse_ok("1996-12-20T00:39:57Z"));
  CHECK(parse_ok("1996-12-20T00:39:57Z") == 851042397 * kNsPerS);

  // "1990-12-31T23:59:60Z" and "1990-12-31T15:59:60-08:00" are the same leap second
  // (RFC 3339 5.8); POSIX time counts it as the next second, 1991-01-01T00:00:00Z, which GNU
  // date gives as 662688000.
  CHECK(parse_ok("1990-12-31T23:59:60Z") == 662688000 * kNsPerS);
  CHECK(parse_ok("1990-12-31T15:59:60-08:00") == 662688000 * kNsPerS);

  // "1937-01-01T12:00:27.87+00:20" is 1937-01-01T11:40:27.87Z (RFC 3339 5.8: 20 minutes
  // ahead of UTC); GNU date gives -1041337173 for 1937-01-01T11:40:27Z.
  CHECK(parse_ok("1937-01-01T12:00:27.87+00:20") == -1041337173 * kNsPerS + 870'000'000);
}

TEST_CASE("Unix times against known values") {
  // The epoch itself and the second before it (POSIX).
  CHECK(parse_ok("1970-01-01T00:00:00Z") == 0);
  CHECK(parse_ok("1969-12-31T23:59:59Z") == -1 * kNsPerS);  // GNU date: -1
  // 2000-01-01T00:00:00Z = 946684800 (POSIX, common practice; GNU date agrees).
  CHECK(parse_ok("2000-01-01T00:00:00Z") == 946684800 * kNsPerS);
  // The last second of a signed 32-bit time_t, 2^31 - 1 (common practice; GNU date agrees).
  CHECK(parse_ok("2038-01-19T03:14:07Z") == 2147483647 * kNsPerS);
  // GNU date values.
  CHECK(parse_ok("2026-06-01T08:00:00Z") == 1780300800 * kNsPerS);
  CHECK(parse_ok("2024-02-29T00:00:00Z") == 1709164800 * kNsPerS);
  CHECK(parse_ok("2024-03-01T00:00:00Z") == 1709251200 * kNsPerS);
  CHECK(parse_ok("2000-02-29T12:00:00Z") == 951825600 * kNsPerS);
  CHECK(parse_ok("2100-03-01T00:00:00Z") == 4107542400 * kNsPerS);
  CHECK(parse_ok("1900-03-01T00:00:00Z") == -2203891200 * kNsPerS);
}

TEST_CASE("offsets, separators and fractions") {
  // 2026-06-01T08:00:00Z = 1780300800 (GNU date); every text below is that instant.
  const std::int64_t t = 1780300800 * kNsPerS;
  CHECK(parse_ok("2026-06-01T10:00:00+02:00") == t);
  CHECK(parse_ok("2026-06-01T10:00:00+0200") == t);
  CHECK(parse_ok("2026-06-01T10:00:00+02") == t);
  CHECK(parse_ok("2026-06-01T03:30:00-04:30") == t);
  CHECK(parse_ok("2026-06-01t08:00:00z") == t);
  CHECK(parse_ok("2026-06-01 08:00:00Z") == t);
  // RFC 3339 4.3: -00:00 means UTC with the local offset unknown.
  CHECK(parse_ok("2026-06-01T08:00:00-00:00") == t);
  // An offset can move the date across a day and a year boundary.
  CHECK(parse_ok("2025-12-31T23:30:00-01:00") == parse_ok("2026-01-01T00:30:00Z"));
  // Fractions: ISO 8601 allows ',' as the decimal mark; up to nanoseconds.
  CHECK(parse_ok("2026-06-01T08:00:00,5Z") == t + 500'000'000);
  CHECK(parse_ok("2026-06-01T08:00:00.5Z") == t + 500'000'000);
  CHECK(parse_ok("2026-06-01T08:00:00.000001Z") == t + 1'000);
  CHECK(parse_ok("2026-06-01T08:00:00.123456789Z") == t + 123'456'789);
  // Before the epoch the fraction still counts forward in time.
  CHECK(parse_ok("1969-12-31T23:59:59.25Z") == -750'000'000);
}

TEST_CASE("leap years follow the Gregorian rule") {
  // Gregorian rule (common practice): a leap year is divisible by 4, except century years,
  // which must be divisible by 400. 2024 and 2000 are leap years; 2023, 2100, 1900 are not.
  CHECK(parse_ok("2024-02-29T12:00:00Z") - parse_ok("2024-02-28T12:00:00Z") == 86400 * kNsPerS);
  CHECK(parse_ok("2000-02-29T00:00:00Z") - parse_ok("2000-02-28T00:00:00Z") == 86400 * kNsPerS);
  CHECK(refused("2023-02-29T12:00:00Z") ==
        "'2023-02-29T12:00:00Z' is not a valid ISO 8601 time: day 29 is outside 1..28 for "
        "2023-02");
  CHECK(refused("2100-02-29T00:00:00Z") ==
        "'2100-02-29T00:00:00Z' is not a valid ISO 8601 time: day 29 is outside 1..28 for "
        "2100-02");
  CHECK(refused("1900-02-29T00:00:00Z").find("day 29 is outside 1..28") != std::string::npos);
  // 1900 has no 29 February, so 28 February and 1 March are one day apart.
  CHECK(parse_ok("1900-03-01T00:00:00Z") - parse_ok("1900-02-28T00:00:00Z") == 86400 * kNsPerS);
  // 30 days hath September, April, June and November.
  CHECK(refused("2026-04-31T00:00:00Z") ==
        "'2026-04-31T00:00:00Z' is not a valid ISO 8601 time: day 31 is outside 1..30 for "
        "2026-04");
  CHECK(parse_ok("2026-12-31T00:00:00Z") - parse_ok("2026-12-30T00:00:00Z") == 86400 * kNsPerS);
}

TEST_CASE("refused texts say why") {
  const std::string prefix = " is not a valid ISO 8601 time: ";
  CHECK(refused("2026-06-01T10:00:00") ==
        "'2026-06-01T10:00:00' has no zone: add Z for UTC or an offset like +02:00");
  CHECK(refused("2026-06-01T10:00:00.5") ==
        "'2026-06-01T10:00:00.5' has no zone: add Z for UTC or an offset like +02:00");
  CHECK(refused("2026-13-01T10:00:00Z") ==
        "'2026-13-01T10:00:00Z'" + prefix + "month 13 is outside 1..12");
  CHECK(refused("2026-00-01T10:00:00Z") ==
        "'2026-00-01T10:00:00Z'" + prefix + "month 0 is outside 1..12");
  CHECK(refused("2026-06-00T10:00:00Z") ==
        "'2026-06-00T10:00:00Z'" + prefix + "day 0 is outside 1..30 for 2026-06");
  CHECK(refused("2026-06-01T24:00:00Z") ==
        "'2026-06-01T24:00:00Z'" + prefix + "hour 24 is outside 0..23");
  CHECK(refused("2026-06-01T10:60:00Z") ==
        "'2026-06-01T10:60:00Z'" + prefix + "minute 60 is outside 0..59");
  CHECK(refused("2026-06-01T10:00:61Z") ==
        "'2026-06-01T10:00:61Z'" + prefix + "second 61 is outside 0..60");
  CHECK(refused("2026-06-01T10:00:00+24:00") ==
        "'2026-06-01T10:00:00+24:00'" + prefix + "offset hour 24 is outside 0..23");
  CHECK(refused("2026-06-01T10:00:00+02:60") ==
        "'2026-06-01T10:00:00+02:60'" + prefix + "offset minute 60 is outside 0..59");
  CHECK(refused("2026-06-01T10:00:00.1234567890Z") ==
        "'2026-06-01T10:00:00.1234567890Z'" + prefix +
            "10 fractional digits: at most 9 (nanoseconds) are allowed");
  CHECK(refused("yesterday") ==
        "'yesterday'" + prefix + "expected the date as YYYY-MM-DD at the start");
  CHECK(refused("2026-06-01") == "'2026-06-01'" + prefix +
                                     "the time of day is missing: expected 'T' and hh:mm:ss "
                                     "after the date");
  CHECK(refused("2026-06-01T10:00Z") == "'2026-06-01T10:00Z'" + prefix +
                                            "expected the time of day as hh:mm:ss (seconds are "
                                            "required)");
  CHECK(refused("2026-06-01T10:00:00Zjunk") ==
        "'2026-06-01T10:00:00Zjunk'" + prefix + "unexpected text 'junk' after the zone");
  CHECK(refused("2026-06-01T10:00:00 Z") ==
        "'2026-06-01T10:00:00 Z'" + prefix +
            "expected Z or an offset like +02:00 after the time of day, found ' '");
  CHECK(refused("2026-06-01T10:00:00.Z") ==
        "'2026-06-01T10:00:00.Z'" + prefix + "expected digits after the decimal mark");
  CHECK(refused("2026-06-01X10:00:00Z") ==
        "'2026-06-01X10:00:00Z'" + prefix +
            "expected 'T' between the date and the time of day, found 'X'");
  CHECK(refused("") == "''" + prefix + "the text is empty");
  refused(" 2026-06-01T10:00:00Z");     // no surrounding blanks
  refused("20260601T100000Z");          // ISO 8601 basic format is not accepted
  refused("2026-06-01T10:00:00+2:00");  // offset hours take two digits
  // A leap second is inserted after 23:59:59 UTC only.
  CHECK(refused("2026-06-01T10:00:60Z") ==
        "'2026-06-01T10:00:60Z'" + prefix +
            "second 60 (a leap second) is only valid at 23:59:60 UTC");
  // Without a place for the reason, the answer is the same.
  CHECK_FALSE(lobfix::parse_iso8601_ns("2026-06-01T10:00:00").has_value());
}

TEST_CASE("the span of 64-bit nanoseconds") {
  // INT64_MIN and INT64_MAX nanoseconds are -9223372036.854775808 s and 9223372036.854775807 s
  // (2^63, ISO C++ <cstdint>); GNU date: @-9223372037 is 1677-09-21T00:12:43Z and @9223372036
  // is 2262-04-11T23:47:16Z.
  const std::int64_t lo = std::numeric_limits<std::int64_t>::min();
  const std::int64_t hi = std::numeric_limits<std::int64_t>::max();
  CHECK(parse_ok("1677-09-21T00:12:43.145224192Z") == lo);
  CHECK(parse_ok("2262-04-11T23:47:16.854775807Z") == hi);
  const std::string outside =
      "it is outside 1677-09-21T00:12:43.145224192Z..2262-04-11T23:47:16.854775807Z, the span "
      "that 64-bit nanoseconds hold";
  CHECK(refused("1677-09-21T00:12:43.145224191Z").find(outside) != std::string::npos);
  CHECK(refused("2262-04-11T23:47:16.854775808Z").find(outside) != std::string::npos);
  CHECK(refused("0000-01-01T00:00:00Z").find(outside) != std::string::npos);
  CHECK(refused("9999-12-31T23:59:59Z").find(outside) != std::string::npos);
  CHECK(lobfix::format_iso8601_utc(lo) == "1677-09-21T00:12:43.145224192Z");
  CHECK(lobfix::format_iso8601_utc(hi) == "2262-04-11T23:47:16.854775807Z");
}

TEST_CASE("format_iso8601_utc") {
  using lobfix::format_iso8601_utc;
  CHECK(format_iso8601_utc(0) == "1970-01-01T00:00:00Z");
  // 946684800 is 2000-01-01T00:00:00Z (POSIX, common practice).
  CHECK(format_iso8601_utc(946684800 * kNsPerS) == "2000-01-01T00:00:00Z");
  // GNU date: @-1041337173 is 1937-01-01T11:40:27Z; @482196050 is 1985-04-12T23:20:50Z.
  CHECK(format_iso8601_utc(-1041337173 * kNsPerS) == "1937-01-01T11:40:27Z");
  CHECK(format_iso8601_utc(482196050 * kNsPerS + 520'000'000) == "1985-04-12T23:20:50.520Z");
  // GNU date: @1709164800 is 2024-02-29T00:00:00Z.
  CHECK(format_iso8601_utc(1709164800 * kNsPerS + 1'500) == "2024-02-29T00:00:00.000001500Z");
  CHECK(format_iso8601_utc(1709164800 * kNsPerS + 250'000) == "2024-02-29T00:00:00.000250Z");
  // One nanosecond before the epoch.
  CHECK(format_iso8601_utc(-1) == "1969-12-31T23:59:59.999999999Z");
}

TEST_CASE("format and parse round trip") {
  // Written times read back to the same nanosecond, over the whole span (fixed seed).
  std::mt19937_64 rng(20260601);
  std::uniform_int_distribution<std::int64_t> any(std::numeric_limits<std::int64_t>::min(),
                                                  std::numeric_limits<std::int64_t>::max());
  for (int k = 0; k < 2000; ++k) {
    std::int64_t t = any(rng);
    if (k % 4 == 1)
      t -= t % kNsPerS;  // whole seconds
    if (k % 4 == 2)
      t -= t % 1'000'000;  // milliseconds
    const std::string text = lobfix::format_iso8601_utc(t);
    INFO("t = " << t << ", text = " << text);
    const auto back = lobfix::parse_iso8601_ns(text);
    REQUIRE(back.has_value());
    CHECK(*back == t);
  }
  // And a text in canonical form is written back unchanged.
  for (const char* text : {"1985-04-12T23:20:50.520Z", "1996-12-20T00:39:57Z",
                           "2024-02-29T23:59:59.999999999Z", "1900-03-01T00:00:00.000100Z"}) {
    CHECK(lobfix::format_iso8601_utc(parse_ok(text)) == text);
  }
}
