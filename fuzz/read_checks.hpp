// Properties every ReadResult must have, whatever the input (lobfix/reader.hpp and
// lobfix/observation.hpp state them; the ranges are those of docs/input-format.md), checked
// by the CSV and JSON Lines fuzz targets after each read that did not throw.
#pragma once

#include <cmath>
#include <optional>
#include <set>
#include <string>

#include "detail/field_rules.hpp"
#include "fuzz_support.hpp"
#include "lobfix/reader.hpp"

namespace lobfix_fuzz {

inline bool in_closed(const std::optional<double>& v, double low, double high) {
  return v && std::isfinite(*v) && *v >= low && *v <= high;
}
inline bool azimuth(const std::optional<double>& v) {
  return v && std::isfinite(*v) && *v >= 0.0 && *v < 360.0;
}
inline bool positive_at_most(const std::optional<double>& v, double high) {
  return v && std::isfinite(*v) && *v > 0.0 && *v <= high;
}

/// `jsonl` selects the JSON Lines form of the diagnostics (column 0 everywhere).
inline void check_read_result(const lobfix::ReadResult& r, const std::string& file_name,
                              const lobfix::ReadOptions& options, bool jsonl) {
  using lobfix::BearingReference;
  FUZZ_CHECK(r.rows_read >= 0, "rows_read is not negative");
  std::set<int> error_lines;
  for (const lobfix::Diagnostic& d : r.row_errors) {
    FUZZ_CHECK(d.file == file_name, "a row error names the file");
    FUZZ_CHECK(d.line >= 1, "a row error names its 1-based line");
    FUZZ_CHECK(jsonl ? d.column == 0 : d.column >= 0, "row error column");
    FUZZ_CHECK(!d.reason.empty(), "a row error says what is wrong");
    error_lines.insert(d.line);
  }
  for (const lobfix::Diagnostic& d : r.warnings) {
    FUZZ_CHECK(d.file == file_name, "a warning names the file");
    FUZZ_CHECK(!d.reason.empty(), "a warning says what it is about");
  }
  // "Rows with any problem are never in observations ... nothing is dropped silently."
  FUZZ_CHECK(r.observations.size() + error_lines.size() == static_cast<std::size_t>(r.rows_read),
             "every row read is either an observation or has a row error");

  int previous_line = 0;
  for (const lobfix::Observation& o : r.observations) {
    FUZZ_CHECK(o.source.file == file_name, "an observation names its file");
    FUZZ_CHECK(o.source.line > previous_line, "observations are in file order, one per line");
    previous_line = o.source.line;
    FUZZ_CHECK(error_lines.count(o.source.line) == 0, "a row with a problem is no observation");
    FUZZ_CHECK(!o.station.empty(), "station is non-empty");
    FUZZ_CHECK(!o.time_text.empty(), "the time text is kept");
    const auto again = lobfix::detail::parse_time_text(o.time_text, nullptr);
    FUZZ_CHECK(again && *again == o.time_unix_ns, "the kept time text gives the same time");

    FUZZ_CHECK(o.lat_deg.has_value() == o.lon_deg.has_value(), "lat and lon come together");
    if (o.lat_deg) {
      FUZZ_CHECK(in_closed(o.lat_deg, -90.0, 90.0), "lat in [-90, 90]");
      FUZZ_CHECK(in_closed(o.lon_deg, -180.0, 180.0), "lon in [-180, 180]");
    }
    if (o.alt_m)
      FUZZ_CHECK(in_closed(o.alt_m, -11000.0, 100000.0), "alt_m in [-11000, 100000]");
    FUZZ_CHECK(std::isfinite(o.pos_sigma_m) && o.pos_sigma_m >= 0.0, "pos_sigma_m >= 0");

    const bool interferometer = o.phase_deg.has_value();
    FUZZ_CHECK(o.bearing_deg.has_value() != interferometer,
               "a bearing or interferometer readings, never both or neither");
    if (o.bearing_deg) {
      FUZZ_CHECK(azimuth(o.bearing_deg), "bearing_deg in [0, 360)");
      FUZZ_CHECK(positive_at_most(o.sigma_deg, 90.0), "a bearing has its sigma in (0, 90]");
      if (!options.default_sigma_deg)
        FUZZ_CHECK(jsonl || o.columns.sigma >= 1, "without a default, sigma has its column");
      FUZZ_CHECK(!o.phase_sigma_deg && !o.spacing_m && !o.frequency_hz && !o.axis_deg,
                 "no interferometer field with a bearing");
    } else {
      FUZZ_CHECK(in_closed(o.phase_deg, -360.0, 360.0), "phase_deg in [-360, 360]");
      FUZZ_CHECK(positive_at_most(o.phase_sigma_deg, 180.0), "phase_sigma_deg in (0, 180]");
      FUZZ_CHECK(positive_at_most(o.spacing_m, 100.0), "spacing_m in (0, 100]");
      FUZZ_CHECK(positive_at_most(o.frequency_hz, 1e12), "frequency_hz in (0, 1e12]");
      FUZZ_CHECK(azimuth(o.axis_deg), "axis_deg in [0, 360)");
      FUZZ_CHECK(!o.sigma_deg, "no sigma_deg with interferometer readings");
      FUZZ_CHECK(!o.bearing_alt_deg, "no bearing_alt_deg without a bearing");
    }
    if (o.bearing_alt_deg)
      FUZZ_CHECK(azimuth(o.bearing_alt_deg), "bearing_alt_deg in [0, 360)");

    if (o.reference == BearingReference::relative) {
      FUZZ_CHECK(o.heading_deg.has_value() == o.heading_sigma_deg.has_value(),
                 "a heading comes with its sigma");
      if (o.heading_deg) {
        FUZZ_CHECK(azimuth(o.heading_deg), "heading_deg in [0, 360)");
        FUZZ_CHECK(positive_at_most(o.heading_sigma_deg, 90.0), "heading_sigma_deg in (0, 90]");
      }
    } else {
      FUZZ_CHECK(!o.heading_deg && !o.heading_sigma_deg, "a heading only for relative bearings");
    }

    const lobfix::FieldColumns& c = o.columns;
    if (jsonl) {
      FUZZ_CHECK(c.time == 0 && c.station == 0 && c.lat == 0 && c.bearing == 0 && c.sigma == 0 &&
                     c.phase == 0,
                 "JSON Lines observations have no columns");
    } else {
      FUZZ_CHECK(c.time >= 1 && c.station >= 1 && c.time != c.station,
                 "CSV time and station have their own columns");
    }
  }
}

}  // namespace lobfix_fuzz
