// lobfix: names of the bearing references (bearing.hpp), as written in bearing files
// (docs/input-format.md) and in reports.
#include "lobfix/bearing.hpp"

namespace lobfix {

const char* to_string(BearingReference reference) {
  switch (reference) {
    case BearingReference::true_north:
      return "true";
    case BearingReference::magnetic:
      return "magnetic";
    case BearingReference::grid:
      return "grid";
    case BearingReference::relative:
      return "relative";
  }
  return "true";
}

}  // namespace lobfix
