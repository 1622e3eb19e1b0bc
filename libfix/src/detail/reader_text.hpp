// lobfix (private): the readers of reader.hpp working on text already in memory, so that
// read_observations_file can look at the text before choosing one (reader.cpp).
#pragma once

#include <iosfwd>
#include <string>
#include <string_view>

#include "lobfix/reader.hpp"

namespace lobfix::detail {

/// Reads bearing CSV held in `text` (reader_csv.cpp).
ReadResult read_csv_text(std::string_view text, const std::string& file_name,
                         const ReadOptions& options);

/// Reads bearing JSON Lines held in `text` (reader_jsonl.cpp).
ReadResult read_jsonl_text(std::string_view text, const std::string& file_name,
                           const ReadOptions& options);

/// The rest of the stream, whole (reader.cpp).
std::string read_stream_text(std::istream& in);

/// The UTF-8 byte order mark (EF BB BF), which both formats allow before the first line.
inline constexpr std::string_view kUtf8Bom = "\xEF\xBB\xBF";

inline std::string_view without_bom(std::string_view text) {
  if (text.substr(0, kUtf8Bom.size()) == kUtf8Bom)
    text.remove_prefix(kUtf8Bom.size());
  return text;
}

}  // namespace lobfix::detail
