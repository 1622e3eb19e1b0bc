// lobfix: solving per time window, for a transmitter that moves (stage "solve").
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "lobfix/bearing.hpp"

namespace lobfix {

/// A time window [start, end) and the bearings that fall in it.
struct TimeWindow {
  std::int64_t start_unix_ns = 0;
  std::int64_t end_unix_ns = 0;
  std::vector<std::size_t> indices;  ///< into the bearings, in input order
};

/// Windows of `length_s` every `step_s` seconds (step = length: fixed windows one after the
/// other; step < length: sliding, overlapping windows), from the earliest bearing's time to
/// past the latest. Windows holding fewer than `min_bearings` bearings are left out.
/// @throws InputError (field "window") unless 0 < step_s and 0 < length_s.
std::vector<TimeWindow> make_windows(const std::vector<Bearing>& bearings, double length_s,
                                     double step_s, std::size_t min_bearings = 2);

/// A duration as people write it: "90" or "90s" (seconds), "10m" or "10min", "1.5h".
/// std::nullopt when it cannot be read or is not positive.
std::optional<double> parse_duration_s(std::string_view text);

}  // namespace lobfix
