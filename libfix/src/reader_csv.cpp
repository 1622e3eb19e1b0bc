// lobfix: bearing CSV read into Observations (stage "read"). The format is described for
// users in docs/input-format.md; the record splitting (RFC 4180) is in detail/csv_tokenizer.hpp
// and the rules for each field and row, shared with the JSON Lines reader, in
// detail/field_rules.hpp.
//
// The whole input is read into memory at once and split in place: cells are views into that
// buffer, so a row costs no allocation beyond the strings an Observation keeps.
#include <array>
#include <istream>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "detail/csv_tokenizer.hpp"
#include "detail/field_rules.hpp"
#include "detail/reader_text.hpp"
#include "lobfix/reader.hpp"

namespace lobfix {
namespace {

using detail::CsvField;
using detail::CsvFieldIssue;
using detail::CsvRecord;
using detail::CsvTokenizer;
using detail::Field;
using detail::field_name;
using detail::kFieldCount;
using detail::quoted;

constexpr int kUnknown = -1;

// The column layout found in the header.
struct Header {
  int line = 0;
  std::vector<int> roles;                   // per column: a Field as int, or kUnknown
  std::vector<std::string> names;           // per column: the name as written, trimmed
  std::array<int, kFieldCount> position{};  // per Field: 0-based column index, or -1

  bool has(Field f) const { return position[static_cast<std::size_t>(f)] >= 0; }
};

// Checks rows against the header and hands their cells to the field rules.
class RowReader {
 public:
  RowReader(const std::string& file_name, const Header& header, const ReadOptions& options,
            ReadResult* result)
      : file_(file_name),
        header_(header),
        result_(result),
        builder_(file_name, options, &result->row_errors) {}

  void read(const CsvRecord& record) {
    ++result_->rows_read;
    const int line = record.line;
    const std::size_t expected = header_.roles.size();
    const std::size_t got = record.fields.size();
    // Only the last field can be unclosed; it swallowed the rest of the file, so it is always
    // reported, even in a column that is otherwise ignored.
    const bool unclosed = record.fields.back().issue == CsvFieldIssue::unclosed_quote;
    if (got != expected) {
      error(line, 0, "",
            "row has " + std::to_string(got) + (got == 1 ? " field" : " fields") +
                ", the header has " + std::to_string(expected));
      if (unclosed) {
        const std::string name = got <= expected ? column_label(got - 1) : std::string();
        error(line, static_cast<int>(got), name, unclosed_reason(name, record.fields.back()));
      }
      return;
    }
    builder_.begin(line);
    for (std::size_t i = 0; i < expected; ++i) {
      const int role = header_.roles[i];
      const CsvField& f = record.fields[i];
      const int column = static_cast<int>(i) + 1;
      if (f.issue == CsvFieldIssue::unclosed_quote) {
        const std::string name = column_label(i);
        if (role == kUnknown) {
          builder_.row_error(column, name, unclosed_reason(name, f));
        } else {
          builder_.field_error(static_cast<Field>(role), column, unclosed_reason(name, f));
        }
        continue;
      }
      if (role == kUnknown)
        continue;
      const Field field = static_cast<Field>(role);
      if (f.issue == CsvFieldIssue::text_after_quote) {
        builder_.field_error(
            field, column,
            std::string(field_name(field)) +
                " has text after its closing quote: put the whole cell inside the quotes");
        continue;
      }
      builder_.cell(field, f.text, column);
    }
    Observation obs;
    if (builder_.finish(&obs))
      result_->observations.push_back(std::move(obs));
  }

 private:
  void error(int line, int column, std::string_view field, std::string reason) {
    result_->row_errors.push_back(
        Diagnostic{file_, line, column, std::string(field), std::move(reason)});
  }

  // A column's name for messages: the field's own name, or as written for unknown columns.
  std::string column_label(std::size_t index) const {
    const int role = header_.roles[index];
    return role == kUnknown ? header_.names[index]
                            : std::string(field_name(static_cast<Field>(role)));
  }

  static std::string unclosed_reason(std::string_view name, const CsvField& f) {
    std::string reason =
        name.empty() ? std::string("the quote") : std::string(name) + ": the quote";
    reason += " opened on line " + std::to_string(f.quote_line) +
              " is never closed (the rest of the file was read into this cell)";
    return reason;
  }

  const std::string& file_;
  const Header& header_;
  ReadResult* result_;
  detail::RowBuilder builder_;
};

// The columns a header must have, given the ones it has (docs/input-format.md, Columns).
std::vector<Field> missing_columns(const Header& header, const ReadOptions& options) {
  std::vector<Field> missing;
  const auto need = [&](Field f) {
    if (!header.has(f))
      missing.push_back(f);
  };
  need(Field::time);
  need(Field::station);
  // lat and lon are optional (positions from tracks), but each needs the other.
  if (header.has(Field::lon))
    need(Field::lat);
  if (header.has(Field::lat))
    need(Field::lon);
  // A bearing, or interferometer readings: any of their columns asks for all of them.
  bool interferometer = false;
  for (const Field f : {Field::phase_deg, Field::spacing_m, Field::frequency_hz, Field::axis_deg})
    interferometer = interferometer || header.has(f);
  if (interferometer) {
    for (const Field f : {Field::phase_deg, Field::spacing_m, Field::frequency_hz, Field::axis_deg,
                          Field::phase_sigma_deg})
      need(f);
  } else {
    need(Field::bearing_deg);
  }
  // Kept last, where the "(or give --sigma-deg)" hint follows it.
  if ((header.has(Field::bearing_deg) || !interferometer) && !options.default_sigma_deg)
    need(Field::sigma_deg);
  return missing;
}

// Reads the header record; throws InputError for problems with it.
Header read_header(CsvTokenizer& tokenizer, const std::string& file_name,
                   const ReadOptions& options, std::vector<Diagnostic>* warnings) {
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
  std::vector<std::string> names;  // lower case, per column
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
    header.names.emplace_back(f.text);
    names.push_back(detail::lower_ascii(f.text));
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
    const auto field = detail::find_field(name);
    if (!field) {
      unknown.emplace_back(f.text);
      warnings->push_back(Diagnostic{file_name, header.line, column, std::string(f.text),
                                     "unknown column " + quoted(f.text) + " ignored"});
      continue;
    }
    header.roles[i] = static_cast<int>(*field);
    header.position[static_cast<std::size_t>(*field)] = static_cast<int>(i);
  }

  const std::vector<Field> missing = missing_columns(header, options);
  if (!missing.empty()) {
    std::string reason =
        missing.size() == 1 ? "missing required column " : "missing required columns ";
    bool interferometer = false;
    for (std::size_t k = 0; k < missing.size(); ++k) {
      if (k > 0)
        reason += ", ";
      reason += quoted(field_name(missing[k]));
      interferometer =
          interferometer || (missing[k] != Field::time && missing[k] != Field::station &&
                             missing[k] != Field::lat && missing[k] != Field::lon &&
                             missing[k] != Field::bearing_deg && missing[k] != Field::sigma_deg);
    }
    if (missing.back() == Field::sigma_deg)
      reason += " (or give --sigma-deg)";
    if (interferometer) {
      reason +=
          "; interferometer readings need all of phase_deg, phase_sigma_deg, spacing_m, "
          "frequency_hz and axis_deg";
    }
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

}  // namespace

namespace detail {

ReadResult read_csv_text(std::string_view text, const std::string& file_name,
                         const ReadOptions& options) {
  check_read_options(options, file_name);
  ReadResult result;
  CsvTokenizer tokenizer(without_bom(text));
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

}  // namespace detail

ReadResult read_observations_csv(std::istream& in, const std::string& file_name,
                                 const ReadOptions& options) {
  const std::string text = detail::read_stream_text(in);
  return detail::read_csv_text(text, file_name, options);
}

}  // namespace lobfix
