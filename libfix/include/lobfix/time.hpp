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
/// (ss = 60) is accepted and counted as the following second.
///
/// @return the time, or std::nullopt with a human reason in *reason (when reason is not null).
std::optional<std::int64_t> parse_iso8601_ns(std::string_view text, std::string* reason = nullptr);

/// Format nanoseconds since the epoch as "YYYY-MM-DDThh:mm:ss[.fff]Z" (UTC), with the
/// fraction written only when non-zero (milliseconds, or more digits when needed).
std::string format_iso8601_utc(std::int64_t time_unix_ns);

}  // namespace lobfix
