// lobfix: bearing JSON Lines read into Observations (stage "read"). The format is described
// for users in docs/input-format.md; the rules for each field and row are the CSV reader's
// (detail/field_rules.hpp), with column 0 and the field's name in every message.
//
// Each line is parsed by nlohmann::json's SAX interface rather than into a json value: the
// handler sees every key (so a key given twice is caught, where a json object keeps only the
// last) and the text of every number as written (so that messages quote "36.0" as the user
// wrote it, and a time in Unix seconds is converted exactly, not through a double).
#include <cstddef>
#include <cstdint>
#include <istream>
#include <string>
#include <string_view>
#include <unordered_set>
#include <utility>
#include <vector>

#include <nlohmann/json.hpp>

#include "detail/field_rules.hpp"
#include "detail/reader_text.hpp"
#include "lobfix/reader.hpp"

namespace lobfix {
namespace {

using detail::Field;
using detail::field_name;
using detail::quoted;
using json = nlohmann::json;

// The JSON type of a value.
enum class Kind { none, null, boolean, number, string, object, array };

// "boolean", for "line is a JSON boolean".
const char* kind_name(Kind k) {
  switch (k) {
    case Kind::null:
      return "null";
    case Kind::boolean:
      return "boolean";
    case Kind::number:
      return "number";
    case Kind::string:
      return "string";
    case Kind::object:
      return "object";
    case Kind::array:
      return "array";
    case Kind::none:
      break;
  }
  return "nothing";
}

// "a boolean", for "must be a string, not a boolean".
std::string kind_text(Kind k) {
  if (k == Kind::null || k == Kind::none)
    return kind_name(k);
  return (k == Kind::object || k == Kind::array ? "an " : "a ") + std::string(kind_name(k));
}

// One member of the line's object: its key, and its value's type and text (a string's
// content, a number as written; nothing for the other types).
struct Member {
  std::string key;
  Kind kind = Kind::none;
  std::string text;
};

// Collects the members of one line's top-level object (nlohmann's SAX interface); values
// nested deeper are only checked for syntax.
class LineHandler {
 public:
  using number_integer_t = json::number_integer_t;
  using number_unsigned_t = json::number_unsigned_t;
  using number_float_t = json::number_float_t;
  using string_t = json::string_t;
  using binary_t = json::binary_t;

  void reset() {
    depth_ = 0;
    top_ = Kind::none;
    count_ = 0;
    error_.clear();
    overflow_token_.clear();
  }

  bool null() { return value(Kind::null, std::string_view()); }
  bool boolean(bool) { return value(Kind::boolean, std::string_view()); }
  bool number_integer(number_integer_t v) { return value(Kind::number, std::to_string(v)); }
  bool number_unsigned(number_unsigned_t v) { return value(Kind::number, std::to_string(v)); }
  bool number_float(number_float_t, const string_t& text) { return value(Kind::number, text); }
  bool string(string_t& s) { return value(Kind::string, s); }
  bool binary(binary_t&) { return value(Kind::string, std::string_view()); }  // not in JSON text
  bool start_object(std::size_t) { return open(Kind::object); }
  bool end_object() { return close(); }
  bool start_array(std::size_t) { return open(Kind::array); }
  bool end_array() { return close(); }
  bool key(string_t& k) {
    if (depth_ == 1) {
      if (count_ == members_.size())
        members_.emplace_back();
      Member& m = members_[count_++];
      m.key = k;
      m.kind = Kind::none;
      m.text.clear();
    }
    return true;
  }
  bool parse_error(std::size_t, const std::string& last_token,
                   const nlohmann::detail::exception& e) {
    error_ = e.what();
    if (e.id == kNumberOverflow)
      overflow_token_ = last_token;
    return false;
  }

  Kind top() const { return top_; }
  std::size_t size() const { return count_; }
  const Member& operator[](std::size_t i) const { return members_[i]; }
  const std::string& error() const { return error_; }
  /// A number too large for a double ("1e400"), when that stopped the parse...
  const std::string& overflow_token() const { return overflow_token_; }
  /// ...and the member it was the value of, if any.
  const Member* pending_member() const {
    return depth_ == 1 && count_ > 0 && members_[count_ - 1].kind == Kind::none
               ? &members_[count_ - 1]
               : nullptr;
  }

 private:
  // nlohmann's out_of_range.406: "number overflow parsing '...'".
  static constexpr int kNumberOverflow = 406;

  bool value(Kind kind, std::string_view text) {
    if (depth_ == 0) {
      top_ = kind;
    } else if (depth_ == 1 && count_ > 0) {
      Member& m = members_[count_ - 1];
      m.kind = kind;
      m.text.assign(text.data(), text.size());
    }
    return true;
  }
  bool open(Kind kind) {
    value(kind, std::string_view());
    ++depth_;
    return true;
  }
  bool close() {
    --depth_;
    return true;
  }

  int depth_ = 0;
  Kind top_ = Kind::none;
  std::vector<Member> members_;  // reused from line to line; the first count_ are this line's
  std::size_t count_ = 0;
  std::string error_;
  std::string overflow_token_;
};

// nlohmann's "[json.exception.parse_error.101] parse error at line 1, column 7: syntax error
// while parsing value - invalid literal; last read: '"a": x'" as "line is not valid JSON at
// column 7: invalid literal; last read: '"a": x'" (each line is parsed alone: its line is 1).
std::string json_error_reason(std::string what) {
  if (!what.empty() && what.front() == '[') {
    const std::size_t end = what.find("] ");
    if (end != std::string::npos)
      what.erase(0, end + 2);
  }
  std::string where;
  constexpr std::string_view kAt = "parse error at line ";
  if (what.compare(0, kAt.size(), kAt) == 0) {
    const std::size_t column = what.find("column ");
    const std::size_t colon = what.find(": ");
    if (column != std::string::npos && colon != std::string::npos && column < colon) {
      where = " at " + what.substr(column, colon - column);
      what.erase(0, colon + 2);
    }
  }
  constexpr std::string_view kSyntax = "syntax error while parsing ";
  if (what.compare(0, kSyntax.size(), kSyntax) == 0) {
    const std::size_t dash = what.find(" - ");
    if (dash != std::string::npos)
      what.erase(0, dash + 3);
  }
  return "line is not valid JSON" + where + ": " + what;
}

// What a field's JSON value must be.
enum class ValueType { text, time, number };

ValueType value_type(Field f) {
  switch (f) {
    case Field::station:
    case Field::signal:
    case Field::reference:
      return ValueType::text;
    case Field::time:
      return ValueType::time;
    default:
      return ValueType::number;
  }
}

class JsonlReader {
 public:
  JsonlReader(const std::string& file_name, const ReadOptions& options, ReadResult* result)
      : file_(file_name), result_(result), builder_(file_name, options, &result->row_errors) {}

  void read_line(std::string_view line_text, int line) {
    ++result_->rows_read;
    handler_.reset();
    const bool parsed = json::sax_parse(line_text.begin(), line_text.end(), &handler_,
                                        json::input_format_t::json, /*strict=*/true,
                                        /*ignore_comments=*/false);
    if (!parsed) {
      const Member* member = handler_.pending_member();
      const auto field =
          member != nullptr && !handler_.overflow_token().empty()
              ? detail::find_field(detail::lower_ascii(detail::trim_blanks(member->key)))
              : std::nullopt;
      if (field && value_type(*field) != ValueType::text) {
        // The field rules' message for such a number (as for "1e400" in a CSV cell); the
        // rest of the line is unread, so no rule between fields is applied.
        const std::size_t before = result_->row_errors.size();
        builder_.begin(line);
        builder_.cell(*field, handler_.overflow_token(), 0);
        if (result_->row_errors.size() != before)
          return;
      }
      error(line, json_error_reason(handler_.error()));
      return;
    }
    if (handler_.top() != Kind::object) {
      const Kind top = handler_.top();
      error(line, std::string("line is ") +
                      (top == Kind::null ? "JSON null" : std::string("a JSON ") + kind_name(top)) +
                      ", not an object: give one object {...} per line");
      return;
    }
    builder_.begin(line);
    std::uint32_t seen = 0;
    for (std::size_t i = 0; i < handler_.size(); ++i) {
      const Member& m = handler_[i];
      const std::string_view key = detail::trim_blanks(m.key);
      const std::string lower = detail::lower_ascii(key);
      const auto field = detail::find_field(lower);
      if (!field) {
        if (warned_.insert(lower).second) {
          result_->warnings.push_back(Diagnostic{file_, line, 0, std::string(key),
                                                 "unknown field " + quoted(key) + " ignored"});
        }
        continue;
      }
      const std::uint32_t bit = std::uint32_t{1} << static_cast<unsigned>(*field);
      if ((seen & bit) != 0) {
        builder_.field_error(*field, 0,
                             std::string(field_name(*field)) + " appears twice in the object");
        continue;
      }
      seen |= bit;
      member(*field, m);
    }
    Observation obs;
    if (builder_.finish(&obs))
      result_->observations.push_back(std::move(obs));
  }

 private:
  void error(int line, std::string reason) {
    result_->row_errors.push_back(Diagnostic{file_, line, 0, "", std::move(reason)});
  }

  // Checks the JSON type of a known field's value and hands its text to the field rules.
  void member(Field f, const Member& m) {
    const ValueType type = value_type(f);
    switch (m.kind) {
      case Kind::null:
        builder_.cell(f, std::string_view(), 0);  // as an empty CSV cell
        return;
      case Kind::string:
        builder_.cell(f, detail::trim_blanks(m.text), 0);
        return;
      case Kind::number:
        if (type != ValueType::text) {
          // A number for "time" is Unix seconds; the rules tell it from ISO 8601.
          builder_.cell(f, m.text, 0);
          return;
        }
        break;
      case Kind::none:
      case Kind::boolean:
      case Kind::object:
      case Kind::array:
        break;
    }
    std::string reason(field_name(f));
    switch (type) {
      case ValueType::text:
        reason += " must be a string, not ";
        break;
      case ValueType::time:
        reason += " must be a string (ISO 8601) or a number (Unix seconds), not ";
        break;
      case ValueType::number:
        reason += " must be a number, not ";
        break;
    }
    reason += kind_text(m.kind);
    builder_.field_error(f, 0, std::move(reason));
  }

  const std::string& file_;
  ReadResult* result_;
  detail::RowBuilder builder_;
  LineHandler handler_;
  std::unordered_set<std::string> warned_;  // unknown fields, lower case
};

}  // namespace

namespace detail {

ReadResult read_jsonl_text(std::string_view text, const std::string& file_name,
                           const ReadOptions& options) {
  check_read_options(options, file_name);
  ReadResult result;
  JsonlReader reader(file_name, options, &result);
  text = without_bom(text);
  int line = 0;
  std::size_t start = 0;
  while (start < text.size()) {
    ++line;
    std::size_t end = text.find('\n', start);
    if (end == std::string_view::npos)
      end = text.size();
    const std::string_view line_text = trim_blanks(text.substr(start, end - start));
    start = end + 1;
    if (line_text.empty() || line_text.front() == '#')
      continue;  // blank lines and comments
    reader.read_line(line_text, line);
  }
  return result;
}

}  // namespace detail

ReadResult read_observations_jsonl(std::istream& in, const std::string& file_name,
                                   const ReadOptions& options) {
  const std::string text = detail::read_stream_text(in);
  return detail::read_jsonl_text(text, file_name, options);
}

}  // namespace lobfix
