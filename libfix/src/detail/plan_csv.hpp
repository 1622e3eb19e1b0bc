// lobfix (private): small helpers of the planning inputs' CSV readers (scenario and spot
// files): lower-casing a header name, reading a whole file, and a number in a range.
#pragma once

#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>
#include <string_view>

#include "lobfix/error.hpp"

namespace lobfix::detail {

inline std::string lower_text(std::string_view s) {
  std::string out(s);
  for (char& c : out)
    c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return out;
}

/// The whole file without a UTF-8 byte order mark. @throws InputError when it cannot be read.
inline std::string read_whole_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in)
    throw InputError({path, 0, 0, "", "cannot open file"});
  std::ostringstream buffer;
  buffer << in.rdbuf();
  std::string text = buffer.str();
  if (text.rfind("\xEF\xBB\xBF", 0) == 0)
    text.erase(0, 3);
  return text;
}

/// A number in [lo, hi] ((lo, hi] when open_low) into `value`; else false and the reason,
/// which starts with `name`.
inline bool parse_number_in(std::string_view text, double lo, double hi, bool open_low,
                            double& value, std::string& reason, const char* name) {
  const std::string s(text);
  char* end = nullptr;
  errno = 0;
  value = std::strtod(s.c_str(), &end);
  if (s.empty() || end != s.c_str() + s.size() || errno == ERANGE || !std::isfinite(value)) {
    reason = std::string(name) + " '" + s + "' is not a number";
    return false;
  }
  if ((open_low ? !(value > lo) : !(value >= lo)) || !(value <= hi)) {
    std::ostringstream why;
    why << name << " " << s << " is outside " << (open_low ? "(" : "[") << lo << ", " << hi << "]";
    reason = why.str();
    return false;
  }
  return true;
}

}  // namespace lobfix::detail
