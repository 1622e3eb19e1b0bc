#include "lobfix/windows.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <limits>

#include "lobfix/error.hpp"

namespace lobfix {

std::vector<TimeWindow> make_windows(const std::vector<Bearing>& bearings, double length_s,
                                     double step_s, std::size_t min_bearings) {
  if (!(length_s > 0.0) || !(step_s > 0.0) || !std::isfinite(length_s) || !std::isfinite(step_s)) {
    throw InputError({"", 0, 0, "window", "the window and its step must be positive durations"});
  }
  std::vector<TimeWindow> out;
  if (bearings.empty())
    return out;
  std::int64_t first = std::numeric_limits<std::int64_t>::max();
  std::int64_t last = std::numeric_limits<std::int64_t>::min();
  for (const Bearing& b : bearings) {
    first = std::min(first, b.time_unix_ns);
    last = std::max(last, b.time_unix_ns);
  }
  const auto length_ns = static_cast<std::int64_t>(std::llround(length_s * 1e9));
  const auto step_ns = std::max<std::int64_t>(1, std::llround(step_s * 1e9));
  for (std::int64_t start = first; start <= last; start += step_ns) {
    TimeWindow w;
    w.start_unix_ns = start;
    w.end_unix_ns = start + length_ns;
    for (std::size_t i = 0; i < bearings.size(); ++i) {
      if (bearings[i].time_unix_ns >= w.start_unix_ns && bearings[i].time_unix_ns < w.end_unix_ns)
        w.indices.push_back(i);
    }
    const bool reaches_last = w.end_unix_ns > last;
    if (w.indices.size() >= min_bearings)
      out.push_back(std::move(w));
    if (reaches_last)
      break;  // this window already reaches past the last bearing
  }
  return out;
}

std::optional<double> parse_duration_s(std::string_view text) {
  double value = 0.0;
  const char* begin = text.data();
  const char* end = text.data() + text.size();
  const auto [ptr, ec] = std::from_chars(begin, end, value);
  if (ec != std::errc() || ptr == begin)
    return std::nullopt;
  const std::string_view unit(ptr, static_cast<std::size_t>(end - ptr));
  double scale = 0.0;
  if (unit.empty() || unit == "s") {
    scale = 1.0;
  } else if (unit == "m" || unit == "min") {
    scale = 60.0;
  } else if (unit == "h") {
    scale = 3600.0;
  } else {
    return std::nullopt;
  }
  const double s = value * scale;
  if (!(s > 0.0) || !std::isfinite(s))
    return std::nullopt;
  return s;
}

}  // namespace lobfix
