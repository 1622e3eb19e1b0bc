// lobfix: bearing files, CSV and JSON Lines, read into Observations (stage "read").
// Formats, field rules and every message: docs/input-format.md.
//
// Both readers check each value (syntax, range) and the rules between the fields of a row (a
// bearing or interferometer readings, lat with lon, a heading only for relative bearings,
// ...) with one shared set of rules and the same wording; what needs outside data (tracks,
// the magnetic model, the other bearings) is checked by normalise (normalise.hpp). Times are
// turned into UTC here, from ISO 8601 with a zone or from Unix seconds; the text is kept.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/observation.hpp"

namespace lobfix {

struct ReadOptions {
  /// Bearing sigma (deg), in (0, 90], for rows with a bearing_deg that give no sigma_deg
  /// (column or field absent, or cell empty). Not used for interferometer rows, whose sigma
  /// follows from phase_sigma_deg.
  std::optional<double> default_sigma_deg;
};

/// What a read produced. Rows with any problem are never in `observations`; each problem
/// is one entry of `row_errors` (a row with two bad cells gives two entries, same line, in
/// column order). The caller decides whether bad rows fail the run or are skipped: nothing
/// is dropped silently.
struct ReadResult {
  std::vector<Observation> observations;  ///< the good rows, in file order
  std::vector<Diagnostic> row_errors;     ///< bad cells and malformed rows, in file order
  std::vector<Diagnostic> warnings;       ///< e.g. an unknown column or field (once each)
  /// Data rows (CSV) or non-blank, non-comment lines (JSON Lines) seen, good or bad.
  int rows_read = 0;
};

/// CSV with a header row (RFC 4180 quoting, '#' comments). `file_name` is used in
/// diagnostics only; CSV diagnostics give the 1-based column.
/// @throws InputError for whole-file problems: no header, missing or duplicated columns, a
///         default sigma outside (0, 90].
ReadResult read_observations_csv(std::istream& in, const std::string& file_name,
                                 const ReadOptions& options = {});

/// JSON Lines: one JSON object per line with the CSV's field names (matched without regard
/// to case), numbers as JSON numbers or numeric strings, "time" as a string (ISO 8601 or
/// Unix seconds) or a number (Unix seconds); blank lines and '#' comments skipped. A bad
/// line (not JSON, not an object, a bad or wrongly typed field, a key given twice) is a row
/// error naming the line and the field, with column 0; an unknown field is warned about
/// once, at the first line it appears on.
/// @throws InputError for a default sigma outside (0, 90].
ReadResult read_observations_jsonl(std::istream& in, const std::string& file_name,
                                   const ReadOptions& options = {});

/// Open `path` ("-" is standard input, named "<stdin>" in diagnostics) and read it as JSON
/// Lines when its name ends in .jsonl or .ndjson (any case) or, failing that, when its first
/// line that is neither blank nor a '#' comment starts with '{'; else as CSV.
/// @throws InputError when the file cannot be opened or read, and as the readers.
ReadResult read_observations_file(const std::string& path, const ReadOptions& options = {});

}  // namespace lobfix
