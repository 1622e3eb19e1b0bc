// lobfix (private): writing a text file atomically (temporary name beside the target, flushed
// to disk, renamed over it), for the outputs that need no GDAL driver.
#pragma once

#include <string>

namespace lobfix::detail {

/// Write `text` to `path` atomically; on failure nothing is left behind.
/// @throws OutputError naming `path`.
void write_text_atomically(const std::string& path, const std::string& text);

}  // namespace lobfix::detail
