#include "lobfix/error.hpp"

#include <utility>

namespace lobfix {

std::string Diagnostic::to_string() const {
  std::string out = file;
  if (line > 0) {
    out += ':' + std::to_string(line);
    if (column > 0)
      out += ':' + std::to_string(column);
  }
  out += ": ";
  out += reason;
  return out;
}

InputError::InputError(Diagnostic diagnostic)
    : std::runtime_error(diagnostic.to_string()), diagnostic_(std::move(diagnostic)) {}

}  // namespace lobfix
