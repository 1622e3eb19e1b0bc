// lobfix: ISO 8601 times as they appear in bearing files.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace lobfix {

/// Parse an ISO 8601 / RFC 3339 date-time with a zone designator into nanoseconds since
/// 1970-01-01T00:00:00Z.
///
/// Accepted: YYYY-MM-DDThh:mm:ss[.fraction](Z|+hh:mm|-hh:mm|+hhmm|-hhmm|+hh|-hh), the 'T'
/// may also be 't' or one space, 'Z' may be 'z'; up to 9 fractional digits. A time with no
/// zone designator is refused (the zone of a field log cannot be guessed). A leap second
/// (ss = 60) is accepted at 23:59:60 UTC only (after applying the offset) and counted as the
/// following second, as POSIX time does. The date is checked against the Gregorian calendar
/// (month 1..12, day within its month, 29 February in leap years only), hour 0..23, minute
/// 0..59, second 0..60, offset hours 0..23 and minutes 0..59; the decimal mark may be '.' or
/// ','. Nothing else is accepted: no surrounding blanks, no week or ordinal dates, no basic
/// format without separators. A year is 4 digits, but 64-bit nanoseconds only span
/// 1677-09-21T00:12:43.145224192Z to 2262-04-11T23:47:16.854775807Z: times outside are refused.
///
/// @return the time, or std::nullopt with a human reason in *reason (when reason is not null).
///         The reason quotes the text and reads on from a field name, e.g.
///         "'2026-13-01T10:00:00Z' is not a valid ISO 8601 time: month 13 is outside 1..12" or
///         "'2026-06-01T10:00:00' has no zone: add Z for UTC or an offset like +02:00".
std::optional<std::int64_t> parse_iso8601_ns(std::string_view text, std::string* reason = nullptr);

/// Format nanoseconds since the epoch as "YYYY-MM-DDThh:mm:ss[.fff]Z" (UTC), with the
/// fraction written only when non-zero (milliseconds, or more digits when needed).
std::string format_iso8601_utc(std::int64_t time_unix_ns);

}  // namespace lobfix
