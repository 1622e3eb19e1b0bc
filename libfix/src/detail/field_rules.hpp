// lobfix (private): the fields of a bearing row and the rules their values and the row as a
// whole must meet, shared by the CSV reader (reader_csv.cpp) and the JSON Lines reader
// (reader_jsonl.cpp) so that both say the same thing about the same mistake. The rules are
// written down for users in docs/input-format.md; the implementation is field_rules.cpp.
//
// A reader hands each row to a RowBuilder field by field (text already unquoted and
// trimmed), then asks it to finish the row: cell() checks one value (syntax, range), finish()
// the rules between fields (bearing or interferometer readings, lat with lon, heading only
// for relative bearings, ...). Every problem is one Diagnostic naming the line, the column
// (0 for JSON Lines) and the field.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/observation.hpp"
#include "lobfix/reader.hpp"

namespace lobfix::detail {

/// The fields a reader knows, in the order of kFieldNames.
enum class Field : std::uint8_t {
  time,
  station,
  lat,
  lon,
  alt_m,
  bearing_deg,
  bearing_alt_deg,
  sigma_deg,
  pos_sigma_m,
  signal,
  reference,
  heading_deg,
  heading_sigma_deg,
  phase_deg,
  phase_sigma_deg,
  spacing_m,
  frequency_hz,
  axis_deg,
};
inline constexpr std::size_t kFieldCount = 18;
/// Column (CSV) and field (JSON Lines) names, lower case.
// clang-format off
inline constexpr std::array<std::string_view, kFieldCount> kFieldNames = {
    "time", "station", "lat", "lon", "alt_m", "bearing_deg", "bearing_alt_deg", "sigma_deg",
    "pos_sigma_m", "signal", "reference", "heading_deg", "heading_sigma_deg", "phase_deg",
    "phase_sigma_deg", "spacing_m", "frequency_hz", "axis_deg"};
// clang-format on

inline std::string_view field_name(Field f) {
  return kFieldNames[static_cast<std::size_t>(f)];
}

/// The field called `lower_name` (lower case, trimmed), if there is one.
std::optional<Field> find_field(std::string_view lower_name);

/// ASCII letters to lower case, other bytes unchanged.
std::string lower_ascii(std::string_view s);
/// `s` without the spaces, tabs and carriage returns around it.
std::string_view trim_blanks(std::string_view s);
/// "'s'".
std::string quoted(std::string_view s);

/// @throws InputError (line 0) when the options hold a default sigma outside (0, 90].
void check_read_options(const ReadOptions& options, const std::string& file_name);

/// A time as written in a bearing file -> nanoseconds since 1970-01-01T00:00:00Z (UTC).
/// ISO 8601 with a zone (parse_iso8601_ns), or Unix seconds: a plain decimal number such as
/// `1780000000.25`, optionally with an exponent (JSON numbers may have one), at least 0,
/// at most 9 significant fractional digits. On failure, the reason quotes the text and reads
/// on from the word "time".
std::optional<std::int64_t> parse_time_text(std::string_view text, std::string* reason);

/// Assembles Observations from the fields of one row at a time.
class RowBuilder {
 public:
  /// Row errors are appended to *errors, each row's in column order (those without a
  /// column last); `file_name` and `options` must outlive the builder.
  RowBuilder(const std::string& file_name, const ReadOptions& options,
             std::vector<Diagnostic>* errors);

  /// Starts a row on physical line `line` (1-based).
  void begin(int line);

  /// One field of the row, at 1-based `column` (0 for JSON Lines), its text unquoted and
  /// trimmed; "" for an empty cell. A field given no cell at all is "missing" rather than
  /// "empty" in messages.
  void cell(Field field, std::string_view text, int column);

  /// A field whose value cannot be read at all (bad quoting, a wrong JSON type): reported as
  /// is; the field counts as given, so that no rule between fields reports it again.
  void field_error(Field field, int column, std::string reason);

  /// A problem with no field of its own (a quote left open in an unknown column).
  void row_error(int column, std::string_view field_text, std::string reason);

  /// Applies the rules between fields and ends the row.
  /// @return true, with the row moved into *out, when the row has no problem.
  bool finish(Observation* out);

 private:
  using Mask = std::uint32_t;
  static constexpr Mask bit(Field f) { return Mask{1} << static_cast<unsigned>(f); }
  bool given(Field f) const { return (given_ & bit(f)) != 0; }
  bool filled(Field f) const { return (filled_ & bit(f)) != 0; }
  int column_of(Field f) const { return given(f) ? columns_[static_cast<std::size_t>(f)] : 0; }

  void error(Field f, std::string reason);
  void number(Field f, std::string_view text);
  // "empty" for a field given as an empty cell, "missing" for one not given at all.
  std::string absent(Field f) const;

  const std::string& file_;
  const ReadOptions& options_;
  std::vector<Diagnostic>* errors_;
  std::size_t first_error_ = 0;  // index in *errors_ of this row's first problem
  int line_ = 0;
  Mask given_ = 0;   // fields given a cell (perhaps empty) in this row
  Mask filled_ = 0;  // fields given a non-empty cell
  bool reference_ok_ = true;
  std::array<int, kFieldCount> columns_{};
  Observation obs_;
};

}  // namespace lobfix::detail
