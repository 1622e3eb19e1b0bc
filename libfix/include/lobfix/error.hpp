// lobfix: errors for bad input or configuration (tier 1 of the error tiers in
// docs/architecture.md). Expected numerical outcomes are statuses, not exceptions.
#pragma once

#include <stdexcept>
#include <string>

namespace lobfix {

/// Where a problem was found in a user's file and what is wrong with it.
/// line and column are 1-based; 0 means "not applicable" (e.g. a whole-file problem has
/// line 0, a missing header column has column 0).
struct Diagnostic {
  std::string file;    ///< the file name as the user gave it
  int line = 0;        ///< 1-based physical line number, 0 for the whole file
  int column = 0;      ///< 1-based field (column) number, 0 for the whole line
  std::string field;   ///< column name the problem is about, may be empty
  std::string reason;  ///< what is wrong, in words a field user understands

  /// "file:line:column: reason", dropping ":column" when column is 0 and ":line" when line
  /// is 0.
  std::string to_string() const;
};

/// Bad input or configuration: thrown by readers and option checks.
class InputError : public std::runtime_error {
 public:
  explicit InputError(Diagnostic diagnostic);
  const Diagnostic& diagnostic() const noexcept { return diagnostic_; }

 private:
  Diagnostic diagnostic_;
};

/// An output file could not be written (disk full, no permission, driver failure).
class OutputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace lobfix
