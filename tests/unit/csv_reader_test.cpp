// Unit tests for lobfix/csv_reader.hpp: the bearing CSV reader.
//
// References: RFC 4180 (section 2: quoted fields, "" escapes, CRLF), the format written down
// in docs/input-format.md (column names, accepted ranges, message wording: the project's own
// specification), RFC 3339 / GNU date for times (see time_test.cpp). Input values are invented.
#include "lobfix/csv_reader.hpp"

#include <doctest/doctest.h>

#include <cerrno>
#include <cmath>
#include <cstring>
#include <sstream>
#include <string>
#include <vector>

#include "test_support.hpp"

namespace {

constexpr std::int64_t kNsPerS = 1'000'000'000;

lobfix::CsvReadResult read(const std::string& text, const lobfix::CsvReadOptions& options = {},
                           const std::string& name = "bad.csv") {
  std::istringstream in(text);
  return lobfix::read_bearings_csv(in, name, options);
}

// The message of the InputError that reading `text` throws ("" if none is thrown).
std::string input_error(const std::string& text, const lobfix::CsvReadOptions& options = {}) {
  try {
    read(text, options);
  } catch (const lobfix::InputError& e) {
    CHECK(std::string(e.what()) == e.diagnostic().to_string());
    return e.diagnostic().to_string();
  }
  FAIL("no InputError for: " << text);
  return "";
}

// Lines joined by '\n', so that a failed check prints both sides in full.
std::string join(const std::vector<std::string>& lines) {
  std::string out;
  for (const auto& line : lines)
    out += line + "\n";
  return out;
}

// The Diagnostic::to_string() of each entry, one a line.
std::string messages(const std::vector<lobfix::Diagnostic>& list) {
  std::string out;
  for (const auto& d : list)
    out += d.to_string() + "\n";
  return out;
}

lobfix::CsvReadOptions sigma(double s) {
  lobfix::CsvReadOptions o;
  o.default_sigma_deg = s;
  return o;
}

const std::string kHeader = "time,station,lat,lon,bearing_deg,sigma_deg,pos_sigma_m,alt_m,signal\n";
const std::string kGoodRow = "2026-06-01T10:00:00Z,walker-A,-31.245,146.462,36,2,5,120,ch-7\n";

}  // namespace

TEST_CASE("a good file: shuffled upper-case columns, quoting, comments, blank lines, CRLF") {
  // RFC 4180 section 2: CRLF line ends (rule 1), a field holding a comma is quoted (rule 6), a
  // quote inside a quoted field is written twice (rule 7). A UTF-8 byte order mark (EF BB BF,
  // Unicode section 23.8) before the header is tolerated.
  const std::string text =
      "\xEF\xBB\xBF# invented exercise, north ridge\r\n"
      "\r\n"
      "  STATION , Bearing_Deg,TIME,Lat,LON,Sigma_Deg,Signal \r\n"
      "\"walker, A\",45.5,2026-06-01T10:00:00Z,-31.25,146.45,2.5,ch-7\r\n"
      "   # a comment between rows\r\n"
      " \t \r\n"
      "\"post \"\"K\"\"\" , +310 ,  2026-06-01T10:05:00.5+02:00 ,-31.15,+146.55, 3 ,\r\n";
  const auto r = read(text, {}, "good.csv");
  CHECK(r.row_errors.empty());
  CHECK(r.warnings.empty());
  CHECK(r.rows_read == 2);
  REQUIRE(r.bearings.size() == 2);

  const auto& a = r.bearings[0];
  CHECK(a.station == "walker, A");
  CHECK(a.azimuth_deg == 45.5);
  CHECK(a.lat_deg == -31.25);
  CHECK(a.lon_deg == 146.45);
  CHECK(a.sigma_deg == 2.5);
  CHECK(a.signal == "ch-7");
  CHECK(a.pos_sigma_m == 0.0);
  CHECK_FALSE(a.alt_m.has_value());
  CHECK(a.time_text == "2026-06-01T10:00:00Z");
  // 2026-06-01T08:00:00Z is 1780300800 s (GNU date); 10:00Z is two hours later.
  CHECK(a.time_unix_ns == (1780300800 + 7200) * kNsPerS);
  CHECK(a.source.file == "good.csv");
  CHECK(a.source.line == 4);

  const auto& b = r.bearings[1];
  CHECK(b.station == "post \"K\"");
  CHECK(b.azimuth_deg == 310.0);
  CHECK(b.lon_deg == 146.55);
  CHECK(b.sigma_deg == 3.0);
  CHECK(b.signal.empty());
  // Trimmed, otherwise as written; 10:05:00.5+02:00 is 08:05:00.5Z.
  CHECK(b.time_text == "2026-06-01T10:05:00.5+02:00");
  CHECK(b.time_unix_ns == (1780300800 + 300) * kNsPerS + 500'000'000);
  CHECK(b.source.line == 7);
}

TEST_CASE("LF line ends, optional columns and a final line without a line end") {
  const auto r = read(kHeader + kGoodRow + "2026-06-01T10:01:00Z,van-B,-31.1,146.4,90,2,,,");
  CHECK(r.row_errors.empty());
  REQUIRE(r.bearings.size() == 2);
  CHECK(r.bearings[0].pos_sigma_m == 5.0);
  REQUIRE(r.bearings[0].alt_m.has_value());
  CHECK(*r.bearings[0].alt_m == 120.0);
  CHECK(r.bearings[0].signal == "ch-7");
  // Empty optional cells: pos_sigma_m 0, no altitude, no signal label.
  CHECK(r.bearings[1].pos_sigma_m == 0.0);
  CHECK_FALSE(r.bearings[1].alt_m.has_value());
  CHECK(r.bearings[1].signal.empty());
  CHECK(r.bearings[1].source.line == 3);
}

TEST_CASE("sigma_deg from the options") {
  const std::string no_sigma =
      "time,station,lat,lon,bearing_deg\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10\n";
  SUBCASE("the column is absent") {
    const auto r = read(no_sigma, sigma(4.0));
    REQUIRE(r.bearings.size() == 1);
    CHECK(r.bearings[0].sigma_deg == 4.0);
  }
  SUBCASE("an empty cell takes the default, a written one wins") {
    const auto r = read(kHeader +
                            "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,,,,\n"
                            "2026-06-01T10:00:00Z,walker-B,-31.2,146.4,10,1.5,,,\n",
                        sigma(4.0));
    REQUIRE(r.bearings.size() == 2);
    CHECK(r.bearings[0].sigma_deg == 4.0);
    CHECK(r.bearings[1].sigma_deg == 1.5);
  }
  SUBCASE("neither: the missing column stops the read") {
    CHECK(input_error(no_sigma) ==
          "bad.csv:1: missing required column 'sigma_deg' (or give --sigma-deg)");
  }
  SUBCASE("neither: an empty cell is a bad cell") {
    const auto r = read(kHeader + "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,,,,\n");
    CHECK(r.bearings.empty());
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:2:6: sigma_deg is empty: give a value or a default (--sigma-deg)"}));
  }
  SUBCASE("a default outside (0, 90] is refused") {
    CHECK(input_error(no_sigma, sigma(0.0)) ==
          "bad.csv: the default sigma_deg (--sigma-deg) 0 must be in (0, 90]");
    CHECK(input_error(no_sigma, sigma(120.0)) ==
          "bad.csv: the default sigma_deg (--sigma-deg) 120 must be in (0, 90]");
    CHECK(input_error(no_sigma, sigma(std::nan(""))).find("must be in (0, 90]") !=
          std::string::npos);
  }
}

TEST_CASE("an unknown column is warned about once, not per row") {
  const auto r = read(
      "# header on line 2\n"
      "time,station,lat,lon,bearing_deg,sigma_deg,Operator\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,kim\n"
      "2026-06-01T10:01:00Z,walker-A,-31.2,146.4,11,2,lee\n"
      "2026-06-01T10:02:00Z,walker-A,-31.2,146.4,12,2,\n");
  CHECK(r.bearings.size() == 3);
  CHECK(r.row_errors.empty());
  REQUIRE(r.warnings.size() == 1);
  CHECK(r.warnings[0].file == "bad.csv");
  CHECK(r.warnings[0].line == 2);
  CHECK(r.warnings[0].column == 7);
  CHECK(r.warnings[0].field == "Operator");
  CHECK(r.warnings[0].reason == "unknown column 'Operator' ignored");
}

// One bad cell in an otherwise good row (kGoodRow with field `column` replaced).
std::string row_with(int column, const std::string& cell) {
  std::vector<std::string> fields;
  std::string row = kGoodRow.substr(0, kGoodRow.size() - 1);
  std::size_t start = 0;
  for (;;) {
    const std::size_t comma = row.find(',', start);
    fields.push_back(row.substr(start, comma - start));
    if (comma == std::string::npos)
      break;
    start = comma + 1;
  }
  fields[static_cast<std::size_t>(column - 1)] = cell;
  std::string out;
  for (std::size_t i = 0; i < fields.size(); ++i)
    out += (i ? "," : "") + fields[i];
  return out + "\n";
}

TEST_CASE("each kind of bad cell: its message, line and column") {
  struct Case {
    int column;
    std::string cell;
    std::string message;  // Diagnostic::to_string() of the row on line 3
  };
  // Ranges and wording: docs/input-format.md.
  const std::vector<Case> cases = {
      {3, "95.2", "bad.csv:3:3: lat 95.2 is outside [-90, 90]"},
      {3, "-90.5", "bad.csv:3:3: lat -90.5 is outside [-90, 90]"},
      {3, "", "bad.csv:3:3: lat is empty"},
      {3, "nan", "bad.csv:3:3: lat 'nan' is not a finite number"},
      {3, "\"12,5\"", "bad.csv:3:3: lat '12,5' is not a number (the decimal mark is '.')"},
      {3, "1e400", "bad.csv:3:3: lat 1e400 is too large or too small"},
      {3, "++5", "bad.csv:3:3: lat '++5' is not a number"},
      {3, "+-5", "bad.csv:3:3: lat '+-5' is not a number"},
      {3, "5 5", "bad.csv:3:3: lat '5 5' is not a number"},
      {3, "0x10", "bad.csv:3:3: lat '0x10' is not a number"},
      {4, "180.01", "bad.csv:3:4: lon 180.01 is outside [-180, 180]"},
      {4, "-inf", "bad.csv:3:4: lon '-inf' is not a finite number"},
      {5, "abc", "bad.csv:3:5: bearing_deg 'abc' is not a number"},
      {5, "360.5", "bad.csv:3:5: bearing_deg 360.5 is outside [0, 360]"},
      {5, "-1", "bad.csv:3:5: bearing_deg -1 is outside [0, 360]"},
      {5, "12deg", "bad.csv:3:5: bearing_deg '12deg' is not a number"},
      {5, "", "bad.csv:3:5: bearing_deg is empty"},
      {6, "0", "bad.csv:3:6: sigma_deg 0 must be > 0"},
      {6, "-2", "bad.csv:3:6: sigma_deg -2 must be > 0"},
      {6, "91", "bad.csv:3:6: sigma_deg 91 must be <= 90"},
      {6, "infinity", "bad.csv:3:6: sigma_deg 'infinity' is not a finite number"},
      {7, "-1", "bad.csv:3:7: pos_sigma_m -1 must be >= 0"},
      {7, "inf", "bad.csv:3:7: pos_sigma_m 'inf' is not a finite number"},
      {8, "200000", "bad.csv:3:8: alt_m 200000 is outside [-11000, 100000]"},
      {8, "-11000.5", "bad.csv:3:8: alt_m -11000.5 is outside [-11000, 100000]"},
      {8, "high", "bad.csv:3:8: alt_m 'high' is not a number"},
      {2, "", "bad.csv:3:2: station is empty"},
      {2, "\"  \"", "bad.csv:3:2: station is empty"},
      {1, "", "bad.csv:3:1: time is empty"},
      {1, "2026-13-01T10:00:00Z",
       "bad.csv:3:1: time '2026-13-01T10:00:00Z' is not a valid ISO 8601 time: month 13 is "
       "outside 1..12"},
      {1, "2026-06-01T10:00:00",
       "bad.csv:3:1: time '2026-06-01T10:00:00' has no zone: add Z for UTC or an offset like "
       "+02:00"},
      {1, "2026-02-29T10:00:00Z",
       "bad.csv:3:1: time '2026-02-29T10:00:00Z' is not a valid ISO 8601 time: day 29 is "
       "outside 1..28 for 2026-02"},
      {2, "\"walker\"A",
       "bad.csv:3:2: station has text after its closing quote: put the whole "
       "cell inside the quotes"},
  };
  for (const Case& c : cases) {
    const std::string text = kHeader + kGoodRow + row_with(c.column, c.cell) + kGoodRow;
    INFO("cell: " << c.cell);
    const auto r = read(text);
    CHECK(r.rows_read == 3);
    CHECK(r.bearings.size() == 2);  // the bad row is left out
    CHECK(messages(r.row_errors) == c.message + "\n");
    REQUIRE(r.row_errors.size() == 1);
    CHECK(r.row_errors[0].line == 3);
    CHECK(r.row_errors[0].column == c.column);
  }
}

TEST_CASE("accepted edge values") {
  // Range ends are inside: lat +-90, lon +-180, bearing 0 and 360, sigma 90, alt limits.
  const auto r = read(kHeader +
                      "2026-06-01T10:00:00Z,s1,90,180,360,90,0,100000,\n"
                      "2026-06-01T10:00:00Z,s2,-90,-180,0,0.001,0,-11000,\n"
                      "2026-06-01T10:00:00Z,s3,+1.5e1,.5,-0,5.,1E2,+0,\n");
  CHECK(r.row_errors.empty());
  REQUIRE(r.bearings.size() == 3);
  // 360 deg is north again: the stored azimuth is in [0, 360).
  CHECK(r.bearings[0].azimuth_deg == 0.0);
  CHECK(r.bearings[0].lat_deg == 90.0);
  CHECK(r.bearings[0].lon_deg == 180.0);
  CHECK(r.bearings[0].sigma_deg == 90.0);
  CHECK(r.bearings[1].lat_deg == -90.0);
  CHECK(r.bearings[1].azimuth_deg == 0.0);
  CHECK(*r.bearings[1].alt_m == -11000.0);
  CHECK(r.bearings[2].lat_deg == 15.0);
  CHECK(r.bearings[2].lon_deg == 0.5);
  CHECK(r.bearings[2].azimuth_deg == 0.0);
  CHECK_FALSE(std::signbit(r.bearings[2].azimuth_deg));  // -0 is stored as +0
  CHECK(r.bearings[2].sigma_deg == 5.0);
  CHECK(r.bearings[2].pos_sigma_m == 100.0);
}

TEST_CASE("two bad cells in one row give two diagnostics, in column order") {
  const auto r =
      read(kHeader + kGoodRow + "2026-06-01T10:00:00,walker-A,95.2,146.462,abc,2,5,120,ch-7\n");
  CHECK(r.bearings.size() == 1);
  CHECK(r.rows_read == 2);
  CHECK(messages(r.row_errors) ==
        join({"bad.csv:3:1: time '2026-06-01T10:00:00' has no zone: add Z for UTC or an offset "
              "like +02:00",
              "bad.csv:3:3: lat 95.2 is outside [-90, 90]",
              "bad.csv:3:5: bearing_deg 'abc' is not a number"}));
  for (const auto& d : r.row_errors)
    CHECK(d.line == 3);
  CHECK(r.row_errors[0].field == "time");
  CHECK(r.row_errors[1].field == "lat");
  CHECK(r.row_errors[2].field == "bearing_deg");
}

TEST_CASE("a row with the wrong number of fields") {
  const auto r = read(
      "time,station,lat,lon,bearing_deg,sigma_deg\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,\n"
      "2026-06-01T10:00:00Z\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2\n");
  CHECK(r.rows_read == 4);
  REQUIRE(r.bearings.size() == 1);
  CHECK(r.bearings[0].source.line == 5);
  CHECK(messages(r.row_errors) == join({"bad.csv:2: row has 5 fields, the header has 6",
                                        "bad.csv:3: row has 7 fields, the header has 6",
                                        "bad.csv:4: row has 1 field, the header has 6"}));
  CHECK(r.row_errors[0].column == 0);
}

TEST_CASE("header problems stop the read") {
  SUBCASE("every missing required column in one message") {
    CHECK(input_error("# made up\ntime,station,bearing_deg\n") ==
          "bad.csv:2: missing required columns 'lat', 'lon', 'sigma_deg' (or give --sigma-deg)");
    CHECK(input_error("time,station,bearing_deg\n", sigma(2.0)) ==
          "bad.csv:1: missing required columns 'lat', 'lon'");
    CHECK(input_error("station,lat,lon,sigma_deg\n") ==
          "bad.csv:1: missing required columns 'time', 'bearing_deg'");
  }
  SUBCASE("a missing column names the unknown ones, which may be a misspelling") {
    CHECK(input_error("time,station,latitude,lon,bearing_deg,sigma_deg\n") ==
          "bad.csv:1: missing required column 'lat'; the header also has an unknown column "
          "'latitude'");
  }
  SUBCASE("a duplicated column, in any case") {
    try {
      read("time,station,lat,LAT ,lon,bearing_deg,sigma_deg\n");
      FAIL("no InputError");
    } catch (const lobfix::InputError& e) {
      CHECK(e.diagnostic().to_string() ==
            "bad.csv:1:4: column 'lat' appears twice in the header (columns 3 and 4)");
      CHECK(e.diagnostic().field == "LAT");
    }
    CHECK(input_error("time,station,lat,lon,bearing_deg,sigma_deg,note,Note\n") ==
          "bad.csv:1:8: column 'note' appears twice in the header (columns 7 and 8)");
  }
  SUBCASE("no header") {
    const std::string reason =
        "bad.csv: no header row: the file is empty or holds only comments and blank lines";
    CHECK(input_error("") == reason);
    CHECK(input_error("\xEF\xBB\xBF") == reason);
    CHECK(input_error("# only a comment\n\n   \n") == reason);
  }
  SUBCASE("an unclosed quote in the header") {
    CHECK(input_error("time,\"station,lat\n") ==
          "bad.csv:1:2: header column 2: the quote opened on line 1 is never closed");
  }
}

TEST_CASE("a header without data rows is not an error") {
  const auto r = read("time,station,lat,lon,bearing_deg,sigma_deg\r\n");
  CHECK(r.rows_read == 0);
  CHECK(r.bearings.empty());
  CHECK(r.row_errors.empty());
}

TEST_CASE("a quoted field spanning lines: diagnostics use the line where the row starts") {
  const auto r = read(kHeader +
                      "2026-06-01T10:00:00Z,\"walker\nA\",-31.2,146.4,10,2,,,\"first\r\nsecond\"\n"
                      "2026-06-01T10:00:00Z,\"van\nB\",95.2,146.4,10,2,,,\n"
                      "2026-06-01T10:00:00Z,walker-C,-31.2,146.4,10,2,,,\n");
  CHECK(r.rows_read == 3);
  REQUIRE(r.bearings.size() == 2);
  CHECK(r.bearings[0].station == "walker\nA");
  CHECK(r.bearings[0].signal == "first\r\nsecond");
  CHECK(r.bearings[0].source.line == 2);
  CHECK(r.bearings[1].station == "walker-C");
  CHECK(r.bearings[1].source.line == 7);
  CHECK(messages(r.row_errors) == join({"bad.csv:5:3: lat 95.2 is outside [-90, 90]"}));
}

TEST_CASE("an unclosed quote runs to the end of the file and is reported") {
  // RFC 4180 section 2 rule 5: a quoted field ends at its closing quote; without one the
  // field holds the rest of the file, which must not vanish unreported.
  SUBCASE("in a known column") {
    const auto r = read(kHeader + kGoodRow +
                        "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,,,\"ch\n" + kGoodRow);
    CHECK(r.rows_read == 2);
    CHECK(r.bearings.size() == 1);
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:3:9: signal: the quote opened on line 3 is never closed (the rest of "
                "the file was read into this cell)"}));
  }
  SUBCASE("in an ignored column") {
    const auto r = read(
        "time,station,lat,lon,bearing_deg,sigma_deg,note\n"
        "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,\"calm\n"
        "2026-06-01T10:01:00Z,walker-A,-31.2,146.4,11,2,\n");
    CHECK(r.bearings.empty());
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:2:7: note: the quote opened on line 2 is never closed (the rest of the "
                "file was read into this cell)"}));
  }
  SUBCASE("in a row with too few fields") {
    const auto r = read(
        "time,station,lat,lon,bearing_deg,sigma_deg\n"
        "2026-06-01T10:00:00Z,\"walker-A,-31.2,146.4,10,2\n"
        "2026-06-01T10:01:00Z,walker-A,-31.2,146.4,11,2\n");
    CHECK(r.bearings.empty());
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:2: row has 2 fields, the header has 6",
                "bad.csv:2:2: station: the quote opened on line 2 is never closed (the rest of "
                "the file was read into this cell)"}));
  }
}

TEST_CASE("comment and blank handling") {
  // '#' starts a comment only as the first non-blank character of a line; quoted, it is data.
  // A line of empty cells (as spreadsheets write) counts as blank.
  const auto r = read(kHeader + "  # 2026-06-01T10:00:00Z,not,a,row\n,,,,,,,,\n , ,\t,,,,,,\n" +
                      "2026-06-01T10:00:00Z,\"#4\",-31.2,146.4,10,2,,,#not a comment\n");
  CHECK(r.rows_read == 1);
  CHECK(r.row_errors.empty());
  REQUIRE(r.bearings.size() == 1);
  CHECK(r.bearings[0].station == "#4");
  CHECK(r.bearings[0].signal == "#not a comment");
  CHECK(r.bearings[0].source.line == 5);
}

TEST_CASE("read_bearings_csv_file") {
  SUBCASE("open failure") {
    const std::string path = lobfix_test::tmp_path("no-such-dir/none.csv");
    try {
      lobfix::read_bearings_csv_file(path);
      FAIL("no InputError");
    } catch (const lobfix::InputError& e) {
      // ENOENT (POSIX) for a missing directory; the text is the C library's strerror.
      CHECK(e.diagnostic().file == path);
      CHECK(e.diagnostic().line == 0);
      CHECK(e.diagnostic().column == 0);
      CHECK(e.diagnostic().field.empty());
      CHECK(e.diagnostic().reason == std::string("cannot open file: ") + std::strerror(ENOENT));
      CHECK(e.diagnostic().to_string() ==
            path + ": cannot open file: " + std::string(std::strerror(ENOENT)));
    }
  }
  SUBCASE("good_small.csv") {
    const std::string path = lobfix_test::data_path("csv/good_small.csv");
    const auto r = lobfix::read_bearings_csv_file(path);
    CHECK(r.rows_read == 4);
    CHECK(r.row_errors.empty());
    CHECK(r.warnings.empty());
    REQUIRE(r.bearings.size() == 4);
    CHECK(r.bearings[0].station == "walker-A");
    CHECK(r.bearings[0].source.file == path);
    CHECK(r.bearings[0].source.line == 3);
    CHECK(r.bearings[2].azimuth_deg == 260.4);
    CHECK(r.bearings[2].sigma_deg == 1.5);
    CHECK(r.bearings[3].pos_sigma_m == 5.0);
    CHECK(r.bearings[3].signal == "ch-7");
    // 2026-06-01T08:00:00Z is 1780300800 s (GNU date); 10:06:45Z is 2 h 6 min 45 s later.
    CHECK(r.bearings[3].time_unix_ns == (1780300800 + 7200 + 405) * kNsPerS);
  }
}

TEST_CASE("the shared bad-input samples under tests/data/csv") {
  struct Case {
    std::string file;
    std::vector<std::string> messages;  // after the path
    std::size_t bearings;
  };
  const std::vector<Case> cases = {
      {"bad_lat.csv", {":4:3: lat 95.2 is outside [-90, 90]"}, 3},
      {"bad_bearing.csv",
       {":3:5: bearing_deg 'abc' is not a number", ":5:5: bearing_deg 361 is outside [0, 360]"},
       2},
      {"bad_sigma.csv", {":2:6: sigma_deg 0 must be > 0"}, 3},
      {"bad_time.csv",
       {":2:1: time '2026-13-01T10:00:00Z' is not a valid ISO 8601 time: month 13 is outside "
        "1..12",
        ":4:1: time '2026-06-01T10:04:10' has no zone: add Z for UTC or an offset like +02:00"},
       2},
      {"bad_fields.csv", {":3: row has 5 fields, the header has 6"}, 3},
  };
  for (const Case& c : cases) {
    const std::string path = lobfix_test::data_path("csv/" + c.file);
    INFO(path);
    const auto r = lobfix::read_bearings_csv_file(path);
    std::vector<std::string> expected;
    for (const auto& m : c.messages)
      expected.push_back(path + m);
    CHECK(messages(r.row_errors) == join(expected));
    CHECK(r.bearings.size() == c.bearings);
    CHECK(r.rows_read == 4);
  }

  const std::string missing = lobfix_test::data_path("csv/missing_column.csv");
  try {
    lobfix::read_bearings_csv_file(missing);
    FAIL("no InputError");
  } catch (const lobfix::InputError& e) {
    CHECK(e.diagnostic().to_string() == missing + ":1: missing required column 'lon'");
  }

  const std::string no_sigma = lobfix_test::data_path("csv/no_sigma.csv");
  try {
    lobfix::read_bearings_csv_file(no_sigma);
    FAIL("no InputError");
  } catch (const lobfix::InputError& e) {
    CHECK(e.diagnostic().to_string() ==
          no_sigma + ":1: missing required column 'sigma_deg' (or give --sigma-deg)");
  }
  const auto r = lobfix::read_bearings_csv_file(no_sigma, sigma(2.0));
  CHECK(r.bearings.size() == 4);
  CHECK(r.row_errors.empty());
}

TEST_CASE("many rows") {
  // 20,000 generated rows: every one is read, in order, with its own line.
  std::string text = kHeader;
  const int n = 20000;
  for (int i = 0; i < n; ++i) {
    text += "2026-06-01T10:00:00.5Z,\"walker, " + std::to_string(i % 7) + "\"," +
            std::to_string(-31.0 - i * 1e-5) + ",146.5," + std::to_string(i % 360) + ",2,,,\n";
  }
  const auto r = read(text);
  CHECK(r.row_errors.empty());
  REQUIRE(r.bearings.size() == static_cast<std::size_t>(n));
  CHECK(r.bearings.back().source.line == n + 1);
  CHECK(r.bearings.back().azimuth_deg == static_cast<double>((n - 1) % 360));
  CHECK(r.bearings.back().station == "walker, " + std::to_string((n - 1) % 7));
}
