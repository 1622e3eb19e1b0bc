// lobfix (private): splits CSV text into records of fields, after RFC 4180.
//
// Fields are separated by ',' and records end at LF or CRLF. A field whose first non-blank
// character is '"' is quoted: it runs to the matching '"', may hold commas and line ends, and
// writes a quote as "". A quote inside an unquoted field is kept as an ordinary character.
// Records whose first non-blank character is '#' (comments) and records holding only blanks
// are skipped. Every field is trimmed of surrounding spaces, tabs and carriage returns
// (outside and inside its quotes). Physical lines are counted from 1 so that messages can
// point at the line where a record starts.
#pragma once

#include <algorithm>
#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

namespace lobfix::detail {

/// What is wrong with the quoting of one field.
enum class CsvFieldIssue {
  none,
  text_after_quote,  ///< something other than blanks between the closing quote and the ','
  unclosed_quote,    ///< the opening quote has no closing quote: the field ran to the end
};

struct CsvField {
  std::string_view text;  ///< trimmed, unquoted, "" unescaped; valid until the next record
  bool quoted = false;
  CsvFieldIssue issue = CsvFieldIssue::none;
  int quote_line = 0;  ///< physical line of the opening quote (quoted fields)
};

struct CsvRecord {
  int line = 0;  ///< 1-based physical line where the record starts
  std::vector<CsvField> fields;

  bool all_empty() const {
    return std::all_of(fields.begin(), fields.end(), [](const CsvField& f) {
      return f.text.empty() && f.issue == CsvFieldIssue::none;
    });
  }
};

/// Reads records one at a time from text held by the caller (which must outlive it).
class CsvTokenizer {
 public:
  explicit CsvTokenizer(std::string_view text) : text_(text) {}

  /// Fills `record` with the next record, skipping comments and blank lines.
  /// @return false at the end of the text (record is then empty).
  bool next(CsvRecord& record) {
    record.fields.clear();
    scratch_.clear();
    if (!skip_blank_and_comment_lines())
      return false;
    record.line = line_;
    bool more = true;
    while (more) {
      record.fields.emplace_back();
      more = read_field(record.fields.size() - 1, record.fields.back());
    }
    // Unescaped fields live in scratch_, which may have moved while it grew: point at it now.
    for (const Unescaped& u : unescaped_) {
      record.fields[u.field].text = std::string_view(scratch_).substr(u.offset, u.size);
    }
    unescaped_.clear();
    for (CsvField& f : record.fields)
      f.text = trim(f.text);
    return true;
  }

 private:
  static bool is_blank(char c) { return c == ' ' || c == '\t' || c == '\r'; }

  static std::string_view trim(std::string_view s) {
    std::size_t b = 0;
    std::size_t e = s.size();
    while (b < e && is_blank(s[b]))
      ++b;
    while (e > b && is_blank(s[e - 1]))
      --e;
    return s.substr(b, e - b);
  }

  // Moves to the start of the next record; false at the end of the text.
  bool skip_blank_and_comment_lines() {
    const std::size_t n = text_.size();
    while (pos_ < n) {
      std::size_t p = pos_;
      while (p < n && is_blank(text_[p]))
        ++p;
      if (p == n) {
        pos_ = n;
        return false;
      }
      if (text_[p] == '\n') {
        pos_ = p + 1;
        ++line_;
        continue;
      }
      if (text_[p] == '#') {
        const std::size_t eol = text_.find('\n', p);
        if (eol == std::string_view::npos) {
          pos_ = n;
          return false;
        }
        pos_ = eol + 1;
        ++line_;
        continue;
      }
      return true;
    }
    return false;
  }

  // Ends a field at pos_: true when another field of the same record follows.
  bool end_field() {
    if (pos_ >= text_.size())
      return false;
    const char c = text_[pos_++];
    if (c == ',')
      return true;
    ++line_;  // c == '\n'
    return false;
  }

  void count_lines(std::size_t from, std::size_t to) {
    line_ += static_cast<int>(std::count(text_.begin() + from, text_.begin() + to, '\n'));
  }

  // Reads one field starting at pos_; true when another field of the record follows.
  bool read_field(std::size_t index, CsvField& field) {
    const std::size_t n = text_.size();
    std::size_t p = pos_;
    while (p < n && (text_[p] == ' ' || text_[p] == '\t'))
      ++p;
    if (p < n && text_[p] == '"') {
      pos_ = p + 1;
      read_quoted(index, field);
      while (pos_ < n && is_blank(text_[pos_]))
        ++pos_;
      if (pos_ < n && text_[pos_] != ',' && text_[pos_] != '\n') {
        field.issue = CsvFieldIssue::text_after_quote;
        while (pos_ < n && text_[pos_] != ',' && text_[pos_] != '\n')
          ++pos_;
      }
      return end_field();
    }
    const std::size_t start = pos_;
    while (p < n && text_[p] != ',' && text_[p] != '\n')
      ++p;
    field.text = text_.substr(start, p - start);
    pos_ = p;
    return end_field();
  }

  // Reads a quoted field's content; pos_ is just after the opening quote.
  void read_quoted(std::size_t index, CsvField& field) {
    field.quoted = true;
    field.quote_line = line_;
    std::size_t segment = pos_;
    bool escaped = false;  // content is being copied to scratch_ because of a ""
    std::size_t offset = 0;
    for (;;) {
      const std::size_t q = text_.find('"', pos_);
      const std::size_t stop = q == std::string_view::npos ? text_.size() : q;
      count_lines(pos_, stop);
      if (q != std::string_view::npos && q + 1 < text_.size() && text_[q + 1] == '"') {
        if (!escaped) {
          escaped = true;
          offset = scratch_.size();
        }
        scratch_.append(text_.substr(segment, q + 1 - segment));
        pos_ = q + 2;
        segment = pos_;
        continue;
      }
      if (q == std::string_view::npos)
        field.issue = CsvFieldIssue::unclosed_quote;
      if (escaped) {
        scratch_.append(text_.substr(segment, stop - segment));
        unescaped_.push_back({index, offset, scratch_.size() - offset});
      } else {
        field.text = text_.substr(segment, stop - segment);
      }
      pos_ = q == std::string_view::npos ? text_.size() : q + 1;
      return;
    }
  }

  std::string_view text_;
  std::size_t pos_ = 0;
  int line_ = 1;
  std::string scratch_;
  struct Unescaped {
    std::size_t field;   // index in the record
    std::size_t offset;  // start in scratch_
    std::size_t size;
  };
  std::vector<Unescaped> unescaped_;
};

}  // namespace lobfix::detail
