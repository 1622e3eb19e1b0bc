// lobfix: the bearing CSV reader (stage "read"). Format: docs/input-format.md.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/error.hpp"

namespace lobfix {

struct CsvReadOptions {
  /// Bearing sigma (deg) used when the sigma_deg column is absent or a cell is empty.
  std::optional<double> default_sigma_deg;
};

/// What a read produced. Rows with any bad cell are never in `bearings`; each bad cell is
/// one entry of `row_errors` (a row with two bad cells gives two entries, same line). The
/// caller decides whether bad rows fail the run or are skipped: nothing is dropped silently.
struct CsvReadResult {
  std::vector<Bearing> bearings;
  std::vector<Diagnostic> row_errors;  ///< bad cells and malformed rows, in file order
  std::vector<Diagnostic> warnings;    ///< e.g. an unknown column (once per column)
  int rows_read = 0;                   ///< data rows seen (not counting header, comments, blanks)
};

/// Read bearings from CSV text. `file_name` is used in diagnostics only.
/// @throws InputError for problems with the whole file: no header, a missing required
///         column, a duplicated column name.
CsvReadResult read_bearings_csv(std::istream& in, const std::string& file_name,
                                const CsvReadOptions& options = {});

/// Open `path` and read it as above.
/// @throws InputError when the file cannot be opened, and as read_bearings_csv.
CsvReadResult read_bearings_csv_file(const std::string& path, const CsvReadOptions& options = {});

}  // namespace lobfix
