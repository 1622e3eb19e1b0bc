// lobfix: the bearing CSV reader (stage "read"). The format is described for users in
// docs/input-format.md; the record splitting (RFC 4180) is in detail/csv_tokenizer.hpp.
//
// The whole input is read into memory at once and split in place: cells are views into that
// buffer, so a row costs no allocation beyond the strings a Bearing keeps.
#include "lobfix/csv_reader.hpp"

#include <array>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <istream>
#include <memory>
#include <string>
#include <string_view>
#include <system_error>
#include <utility>
#include <vector>

#include "detail/csv_tokenizer.hpp"
#include "lobfix/time.hpp"

namespace lobfix {
namespace {

using detail::CsvField;
using detail::CsvFieldIssue;
using detail::CsvRecord;
using detail::CsvTokenizer;

// The columns the reader knows, in the order of kColumnNames.
enum class Column { time, station, lat, lon, bearing_deg, sigma_deg, pos_sigma_m, alt_m, signal };
constexpr std::size_t kColumnCount = 9;
constexpr std::array<std::string_view, kColumnCount> kColumnNames = {
    "time", "station", "lat", "lon", "bearing_deg", "sigma_deg", "pos_sigma_m", "alt_m", "signal"};
constexpr int kUnknown = -1;

// Accepted ranges (docs/input-format.md).
constexpr double kLatMaxDeg = 90.0;
constexpr double kLonMaxDeg = 180.0;
constexpr double kBearingMaxDeg = 360.0;
constexpr double kSigmaMaxDeg = 90.0;
constexpr double kAltMinM = -11000.0;
constexpr double kAltMaxM = 100000.0;

std::string_view column_name(Column c) {
  return kColumnNames[static_cast<std::size_t>(c)];
}

std::string lower_ascii(std::string_view s) {
  std::string out(s);
  for (char& ch : out) {
    if (ch >= 'A' && ch <= 'Z')
      ch = static_cast<char>(ch - 'A' + 'a');
  }
  return out;
}

std::string quoted(std::string_view s) {
  return "'" + std::string(s) + "'";
}

std::string shortest(double v) {
  char buf[32];
  const auto res = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, res.ptr);
}

enum class NumberStatus { ok, not_number, not_finite, out_of_range };

// Locale-independent: the whole text must be a decimal number; one leading '+' is allowed.
NumberStatus parse_number(std::string_view s, double* value) {
  const char* b = s.data();
  const char* const e = b + s.size();
  if (b != e && *b == '+') {
    ++b;
    if (b != e && (*b == '+' || *b == '-'))
      return NumberStatus::not_number;
  }
  if (b == e)
    return NumberStatus::not_number;
  const auto res = std::from_chars(b, e, *value, std::chars_format::general);
  if (res.ptr != e)
    return NumberStatus::not_number;
  if (res.ec == std::errc::result_out_of_range)
    return NumberStatus::out_of_range;
  if (res.ec != std::errc())
    return NumberStatus::not_number;
  if (!std::isfinite(*value))
    return NumberStatus::not_finite;
  return NumberStatus::ok;
}

// The column layout found in the header.
struct Header {
  int line = 0;
  std::vector<int> roles;                    // per field: a Column as int, or kUnknown
  std::vector<std::string> names;            // per field: the name as written, trimmed
  std::array<int, kColumnCount> position{};  // per Column: 0-based field index, or -1
};

// Checks rows against the header and turns good ones into bearings.
class RowReader {
 public:
  RowReader(const std::string& file_name, const Header& header, const CsvReadOptions& options,
            CsvReadResult* result)
      : file_(file_name), header_(header), options_(options), result_(result) {}

  void read(const CsvRecord& record) {
    ++result_->rows_read;
    line_ = record.line;
    ok_ = true;
    const std::size_t expected = header_.roles.size();
    const std::size_t got = record.fields.size();
    // Only the last field can be unclosed; it swallowed the rest of the file, so it is always
    // reported, even in a column that is otherwise ignored.
    const bool unclosed = record.fields.back().issue == CsvFieldIssue::unclosed_quote;
    if (got != expected) {
      error(0, "",
            "row has " + std::to_string(got) + (got == 1 ? " field" : " fields") +
                ", the header has " + std::to_string(expected));
      if (unclosed) {
        unclosed_error(static_cast<int>(got),
                       got <= expected ? header_.names[got - 1] : std::string(),
                       record.fields.back());
      }
      return;
    }
    Bearing b;
    for (std::size_t i = 0; i < expected; ++i) {
      const int role = header_.roles[i];
      const CsvField& f = record.fields[i];
      column_ = static_cast<int>(i) + 1;
      if (f.issue == CsvFieldIssue::unclosed_quote) {
        unclosed_error(column_,
                       role == kUnknown ? std::string_view(header_.names[i])
                                        : column_name(static_cast<Column>(role)),
                       f);
        continue;
      }
      if (role == kUnknown)
        continue;
      const Column col = static_cast<Column>(role);
      if (f.issue == CsvFieldIssue::text_after_quote) {
        error(col, std::string(column_name(col)) +
                       " has text after its closing quote: put the whole cell inside the quotes");
        continue;
      }
      cell(col, f.text, &b);
    }
    if (header_.position[static_cast<std::size_t>(Column::sigma_deg)] < 0) {
      b.sigma_deg = *options_.default_sigma_deg;  // checked with the header
    }
    if (!ok_)
      return;
    b.source.file = file_;
    b.source.line = line_;
    result_->bearings.push_back(std::move(b));
  }

 private:
  void error(int column, std::string_view field, std::string reason) {
    ok_ = false;
    result_->row_errors.push_back(
        Diagnostic{file_, line_, column, std::string(field), std::move(reason)});
  }
  void error(Column col, std::string reason) {
    error(column_, column_name(col), std::move(reason));
  }

  void unclosed_error(int column, std::string_view name, const CsvField& f) {
    std::string reason =
        name.empty() ? std::string("the quote") : std::string(name) + ": the quote";
    reason += " opened on line " + std::to_string(f.quote_line) +
              " is never closed (the rest of the file was read into this cell)";
    error(column, name, std::move(reason));
  }

  // Parses a number cell; reports and returns false when it is not a finite number.
  bool number(Column col, std::string_view text, double* value) {
    const std::string_view name = column_name(col);
    switch (parse_number(text, value)) {
      case NumberStatus::ok:
        return true;
      case NumberStatus::not_number: {
        std::string reason = std::string(name) + ' ' + quoted(text) + " is not a number";
        if (text.find(',') != std::string_view::npos)
          reason += " (the decimal mark is '.')";
        error(col, std::move(reason));
        return false;
      }
      case NumberStatus::not_finite:
        error(col, std::string(name) + ' ' + quoted(text) + " is not a finite number");
        return false;
      case NumberStatus::out_of_range:
        error(col, std::string(name) + ' ' + std::string(text) + " is too large or too small");
        return false;
    }
    return false;
  }

  // Reports "<name> <text> is outside [low, high]" unless low <= v <= high.
  bool in_range(Column col, std::string_view text, double v, double low, double high,
                const char* range_text) {
    if (v >= low && v <= high)
      return true;
    error(col,
          std::string(column_name(col)) + ' ' + std::string(text) + " is outside " + range_text);
    return false;
  }

  void empty_error(Column col) { error(col, std::string(column_name(col)) + " is empty"); }

  void cell(Column col, std::string_view text, Bearing* b) {
    double v = 0.0;
    switch (col) {
      case Column::time: {
        if (text.empty()) {
          empty_error(col);
          return;
        }
        std::string reason;
        const auto t = parse_iso8601_ns(text, &reason);
        if (!t) {
          error(col, "time " + reason);
          return;
        }
        b->time_unix_ns = *t;
        b->time_text = std::string(text);
        return;
      }
      case Column::station:
        if (text.empty()) {
          empty_error(col);
          return;
        }
        b->station = std::string(text);
        return;
      case Column::signal:
        b->signal = std::string(text);
        return;
      case Column::lat:
        if (text.empty()) {
          empty_error(col);
        } else if (number(col, text, &v) &&
                   in_range(col, text, v, -kLatMaxDeg, kLatMaxDeg, "[-90, 90]")) {
          b->lat_deg = v;
        }
        return;
      case Column::lon:
        if (text.empty()) {
          empty_error(col);
        } else if (number(col, text, &v) &&
                   in_range(col, text, v, -kLonMaxDeg, kLonMaxDeg, "[-180, 180]")) {
          b->lon_deg = v;
        }
        return;
      case Column::bearing_deg:
        if (text.empty()) {
          empty_error(col);
        } else if (number(col, text, &v) &&
                   in_range(col, text, v, 0.0, kBearingMaxDeg, "[0, 360]")) {
          // 360 is north again; + 0.0 turns -0 into +0.
          b->azimuth_deg = (v == kBearingMaxDeg ? 0.0 : v) + 0.0;
        }
        return;
      case Column::sigma_deg:
        if (text.empty()) {
          if (options_.default_sigma_deg) {
            b->sigma_deg = *options_.default_sigma_deg;
          } else {
            error(col, "sigma_deg is empty: give a value or a default (--sigma-deg)");
          }
        } else if (number(col, text, &v)) {
          if (!(v > 0.0)) {
            error(col, "sigma_deg " + std::string(text) + " must be > 0");
          } else if (v > kSigmaMaxDeg) {
            error(col, "sigma_deg " + std::string(text) + " must be <= 90");
          } else {
            b->sigma_deg = v;
          }
        }
        return;
      case Column::pos_sigma_m:
        if (text.empty()) {
          b->pos_sigma_m = 0.0;
        } else if (number(col, text, &v)) {
          if (v < 0.0) {
            error(col, "pos_sigma_m " + std::string(text) + " must be >= 0");
          } else {
            b->pos_sigma_m = v + 0.0;
          }
        }
        return;
      case Column::alt_m:
        if (!text.empty() && number(col, text, &v) &&
            in_range(col, text, v, kAltMinM, kAltMaxM, "[-11000, 100000]")) {
          b->alt_m = v;
        }
        return;
    }
  }

  const std::string& file_;
  const Header& header_;
  const CsvReadOptions& options_;
  CsvReadResult* result_;
  int line_ = 0;
  int column_ = 0;
  bool ok_ = true;
};

// Reads the header record; throws InputError for problems with it.
Header read_header(CsvTokenizer& tokenizer, const std::string& file_name,
                   const CsvReadOptions& options, std::vector<Diagnostic>* warnings) {
  CsvRecord record;
  if (!tokenizer.next(record)) {
    throw InputError(
        Diagnostic{file_name, 0, 0, "",
                   "no header row: the file is empty or holds only comments and blank lines"});
  }
  Header header;
  header.line = record.line;
  header.position.fill(-1);
  header.roles.assign(record.fields.size(), kUnknown);
  std::vector<std::string> names;  // lower case, per field
  std::vector<std::string> unknown;
  for (std::size_t i = 0; i < record.fields.size(); ++i) {
    const CsvField& f = record.fields[i];
    const int column = static_cast<int>(i) + 1;
    if (f.issue == CsvFieldIssue::unclosed_quote) {
      throw InputError(Diagnostic{file_name, header.line, column, "",
                                  "header column " + std::to_string(column) +
                                      ": the quote opened on line " + std::to_string(f.quote_line) +
                                      " is never closed"});
    }
    if (f.issue == CsvFieldIssue::text_after_quote) {
      throw InputError(Diagnostic{
          file_name, header.line, column, "",
          "header column " + std::to_string(column) + " has text after its closing quote"});
    }
    header.names.push_back(std::string(f.text));
    names.push_back(lower_ascii(f.text));
    const std::string& name = names.back();
    if (name.empty()) {
      warnings->push_back(
          Diagnostic{file_name, header.line, column, "",
                     "column " + std::to_string(column) + " has no name and is ignored"});
      continue;
    }
    for (std::size_t j = 0; j < i; ++j) {
      if (names[j] == name) {
        throw InputError(Diagnostic{file_name, header.line, column, std::string(f.text),
                                    "column " + quoted(name) + " appears twice in the header " +
                                        "(columns " + std::to_string(j + 1) + " and " +
                                        std::to_string(column) + ")"});
      }
    }
    int role = kUnknown;
    for (std::size_t c = 0; c < kColumnCount; ++c) {
      if (kColumnNames[c] == name)
        role = static_cast<int>(c);
    }
    header.roles[i] = role;
    if (role == kUnknown) {
      unknown.push_back(std::string(f.text));
      warnings->push_back(Diagnostic{file_name, header.line, column, std::string(f.text),
                                     "unknown column " + quoted(f.text) + " ignored"});
    } else {
      header.position[static_cast<std::size_t>(role)] = static_cast<int>(i);
    }
  }

  std::vector<Column> missing;
  for (Column c : {Column::time, Column::station, Column::lat, Column::lon, Column::bearing_deg,
                   Column::sigma_deg}) {
    if (header.position[static_cast<std::size_t>(c)] >= 0)
      continue;
    if (c == Column::sigma_deg && options.default_sigma_deg)
      continue;
    missing.push_back(c);
  }
  if (!missing.empty()) {
    std::string reason =
        missing.size() == 1 ? "missing required column " : "missing required columns ";
    for (std::size_t k = 0; k < missing.size(); ++k) {
      if (k > 0)
        reason += ", ";
      reason += quoted(column_name(missing[k]));
    }
    if (missing.back() == Column::sigma_deg)
      reason += " (or give --sigma-deg)";
    if (!unknown.empty()) {
      reason += unknown.size() == 1 ? "; the header also has an unknown column "
                                    : "; the header also has unknown columns ";
      for (std::size_t k = 0; k < unknown.size(); ++k) {
        if (k > 0)
          reason += ", ";
        reason += quoted(unknown[k]);
      }
    }
    throw InputError(Diagnostic{file_name, header.line, 0, "", std::move(reason)});
  }
  return header;
}

CsvReadResult read_text(std::string_view text, const std::string& file_name,
                        const CsvReadOptions& options) {
  if (options.default_sigma_deg) {
    const double s = *options.default_sigma_deg;
    if (!(s > 0.0 && s <= kSigmaMaxDeg)) {
      throw InputError(
          Diagnostic{file_name, 0, 0, "sigma_deg",
                     "the default sigma_deg (--sigma-deg) " + shortest(s) + " must be in (0, 90]"});
    }
  }
  constexpr std::string_view kBom = "\xEF\xBB\xBF";
  if (text.substr(0, kBom.size()) == kBom)
    text.remove_prefix(kBom.size());

  CsvReadResult result;
  CsvTokenizer tokenizer(text);
  const Header header = read_header(tokenizer, file_name, options, &result.warnings);
  RowReader rows(file_name, header, options, &result);
  CsvRecord record;
  while (tokenizer.next(record)) {
    if (record.all_empty())
      continue;  // e.g. ",,,,," left by a spreadsheet: a blank line
    rows.read(record);
  }
  return result;
}

}  // namespace

CsvReadResult read_bearings_csv(std::istream& in, const std::string& file_name,
                                const CsvReadOptions& options) {
  std::string data;
  char buffer[1 << 16];
  while (in.read(buffer, sizeof buffer) || in.gcount() > 0) {
    data.append(buffer, static_cast<std::size_t>(in.gcount()));
  }
  return read_text(data, file_name, options);
}

CsvReadResult read_bearings_csv_file(const std::string& path, const CsvReadOptions& options) {
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
  return read_text(data, path, options);
}

}  // namespace lobfix
