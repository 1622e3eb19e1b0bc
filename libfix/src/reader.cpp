// lobfix: opening a bearing file and choosing its reader (reader.hpp). The readers
// themselves are reader_csv.cpp and reader_jsonl.cpp.
#include "lobfix/reader.hpp"

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <iostream>
#include <memory>
#include <string>
#include <string_view>

#include "detail/field_rules.hpp"
#include "detail/reader_text.hpp"

namespace lobfix {
namespace {

bool ends_with(std::string_view s, std::string_view suffix) {
  return s.size() >= suffix.size() && s.substr(s.size() - suffix.size()) == suffix;
}

// JSON Lines when the first line that is neither blank nor a comment (both formats allow
// '#' comments) starts with '{': a CSV header starts with a column name.
bool looks_like_jsonl(std::string_view text) {
  text = detail::without_bom(text);
  std::size_t p = 0;
  while (p < text.size()) {
    const char c = text[p];
    if (c == ' ' || c == '\t' || c == '\r' || c == '\n') {
      ++p;
    } else if (c == '#') {
      const std::size_t eol = text.find('\n', p);
      if (eol == std::string_view::npos)
        return false;
      p = eol + 1;
    } else {
      return c == '{';
    }
  }
  return false;
}

std::string read_file_text(const std::string& path) {
  struct FileCloser {
    void operator()(std::FILE* f) const { std::fclose(f); }
  };
  errno = 0;
  const std::unique_ptr<std::FILE, FileCloser> file(std::fopen(path.c_str(), "rb"));
  if (!file) {
    const int e = errno;
    throw InputError(Diagnostic{
        path, 0, 0, "",
        std::string("cannot open file: ") + (e != 0 ? std::strerror(e) : "unknown error")});
  }
  std::string data;
  char buffer[1 << 16];
  std::size_t got = 0;
  while ((got = std::fread(buffer, 1, sizeof buffer, file.get())) > 0)
    data.append(buffer, got);
  if (std::ferror(file.get())) {
    const int e = errno;
    throw InputError(Diagnostic{
        path, 0, 0, "",
        std::string("cannot read file: ") + (e != 0 ? std::strerror(e) : "unknown error")});
  }
  return data;
}

}  // namespace

namespace detail {

std::string read_stream_text(std::istream& in) {
  std::string data;
  char buffer[1 << 16];
  while (in.read(buffer, sizeof buffer) || in.gcount() > 0)
    data.append(buffer, static_cast<std::size_t>(in.gcount()));
  return data;
}

}  // namespace detail

ReadResult read_observations_file(const std::string& path, const ReadOptions& options) {
  const bool from_stdin = path == "-";
  const std::string name = from_stdin ? std::string("<stdin>") : path;
  // Standard input cannot be peeked at and put back portably: it is read whole first, as a
  // file is, and then looked at.
  const std::string text = from_stdin ? detail::read_stream_text(std::cin) : read_file_text(path);
  const std::string lower = detail::lower_ascii(name);
  const bool jsonl =
      ends_with(lower, ".jsonl") || ends_with(lower, ".ndjson") || looks_like_jsonl(text);
  return jsonl ? detail::read_jsonl_text(text, name, options)
               : detail::read_csv_text(text, name, options);
}

}  // namespace lobfix
