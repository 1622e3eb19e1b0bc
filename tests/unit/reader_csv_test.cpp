// Unit tests for lobfix/reader.hpp, CSV: read_observations_csv and read_observations_file on
// CSV files.
//
// References: RFC 4180 (section 2: quoted fields, "" escapes, CRLF); the format written down
// in docs/input-format.md (column names, accepted ranges, which fields go together, message
// wording: the project's own specification); Unix times printed by GNU date (coreutils
// 9.1, `date -u -d @<seconds>` and `date -u -d <time> +%s`, run when these tests were written,
// the values written in as constants); RFC 3339 for ISO 8601 times (see time_test.cpp). Input
// values are invented.
#include <doctest/doctest.h>

#include <cerrno>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <sstream>
#include <string>
#include <vector>

#include "lobfix/reader.hpp"
#include "lobfix/time.hpp"
#include "test_support.hpp"

namespace {

constexpr std::int64_t kNsPerS = 1'000'000'000;
// GNU date: `date -u -d 2026-06-01T08:00:00Z +%s` prints 1780300800.
constexpr std::int64_t kJune1At08Z = 1780300800;

lobfix::ReadResult read(const std::string& text, const lobfix::ReadOptions& options = {},
                        const std::string& name = "bad.csv") {
  std::istringstream in(text);
  return lobfix::read_observations_csv(in, name, options);
}

// The message of the InputError that reading `text` throws ("" if none is thrown).
std::string input_error(const std::string& text, const lobfix::ReadOptions& options = {}) {
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

lobfix::ReadOptions sigma(double s) {
  lobfix::ReadOptions o;
  o.default_sigma_deg = s;
  return o;
}

const std::string kHeader = "time,station,lat,lon,bearing_deg,sigma_deg,pos_sigma_m,alt_m,signal\n";
const std::string kGoodRow = "2026-06-01T10:00:00Z,walker-A,-31.245,146.462,36,2,5,120,ch-7\n";

// Every column the reader knows, in the order of the rows built by all_columns_row.
const std::string kAllHeader =
    "time,station,lat,lon,alt_m,bearing_deg,bearing_alt_deg,sigma_deg,pos_sigma_m,signal,"
    "reference,heading_deg,heading_sigma_deg,phase_deg,phase_sigma_deg,spacing_m,frequency_hz,"
    "axis_deg\n";

// A row of kAllHeader: the cells given, the others empty.
struct AllColumns {
  std::string time = "2026-06-01T10:00:00Z", station = "van-B", lat = "-31.158", lon = "146.448",
              alt_m, bearing_deg, bearing_alt_deg, sigma_deg, pos_sigma_m, signal, reference,
              heading_deg, heading_sigma_deg, phase_deg, phase_sigma_deg, spacing_m, frequency_hz,
              axis_deg;
  std::string row() const {
    const std::string cells[] = {time,
                                 station,
                                 lat,
                                 lon,
                                 alt_m,
                                 bearing_deg,
                                 bearing_alt_deg,
                                 sigma_deg,
                                 pos_sigma_m,
                                 signal,
                                 reference,
                                 heading_deg,
                                 heading_sigma_deg,
                                 phase_deg,
                                 phase_sigma_deg,
                                 spacing_m,
                                 frequency_hz,
                                 axis_deg};
    std::string out;
    for (const auto& c : cells)
      out += c + ",";
    out.back() = '\n';
    return out;
  }
};

// A plain bearing row of kAllHeader.
AllColumns bearing_row() {
  AllColumns r;
  r.bearing_deg = "133.2";
  r.sigma_deg = "2";
  return r;
}

// An interferometer row of kAllHeader: half-wavelength spacing at 150 MHz (lambda = c / f
// = 1.9986 m, SI c = 299792458 m/s).
AllColumns interferometer_row() {
  AllColumns r;
  r.phase_deg = "-45.5";
  r.phase_sigma_deg = "6";
  r.spacing_m = "0.9993";
  r.frequency_hz = "150e6";
  r.axis_deg = "90";
  return r;
}

// The messages of reading one row under kAllHeader (no default sigma).
std::string all_columns_errors(const AllColumns& row) {
  const auto r = read(kAllHeader + row.row());
  CHECK(r.rows_read == 1);
  CHECK(r.observations.size() == (r.row_errors.empty() ? 1u : 0u));
  return messages(r.row_errors);
}

// kGoodRow with field `column` replaced.
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

}  // namespace

TEST_CASE("csv: a good file: shuffled upper-case columns, quoting, comments, blank lines, CRLF") {
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
  REQUIRE(r.observations.size() == 2);

  const auto& a = r.observations[0];
  CHECK(a.station == "walker, A");
  CHECK(a.bearing_deg == 45.5);
  CHECK(a.lat_deg == -31.25);
  CHECK(a.lon_deg == 146.45);
  CHECK(a.sigma_deg == 2.5);
  CHECK(a.signal == "ch-7");
  CHECK(a.pos_sigma_m == 0.0);
  CHECK(a.reference == lobfix::BearingReference::true_north);
  CHECK_FALSE(a.alt_m.has_value());
  CHECK_FALSE(a.bearing_alt_deg.has_value());
  CHECK_FALSE(a.heading_deg.has_value());
  CHECK_FALSE(a.phase_deg.has_value());
  CHECK(a.time_text == "2026-06-01T10:00:00Z");
  // 10:00Z is two hours after 08:00Z.
  CHECK(a.time_unix_ns == (kJune1At08Z + 7200) * kNsPerS);
  CHECK(a.source.file == "good.csv");
  CHECK(a.source.line == 4);
  // The columns as found in the header, 1-based; 0 for those the file does not have.
  CHECK(a.columns.station == 1);
  CHECK(a.columns.bearing == 2);
  CHECK(a.columns.time == 3);
  CHECK(a.columns.lat == 4);
  CHECK(a.columns.lon == 5);
  CHECK(a.columns.sigma == 6);
  CHECK(a.columns.reference == 0);
  CHECK(a.columns.phase == 0);

  const auto& b = r.observations[1];
  CHECK(b.station == "post \"K\"");
  CHECK(b.bearing_deg == 310.0);
  CHECK(b.lon_deg == 146.55);
  CHECK(b.sigma_deg == 3.0);
  CHECK(b.signal.empty());
  // Trimmed, otherwise as written; 10:05:00.5+02:00 is 08:05:00.5Z.
  CHECK(b.time_text == "2026-06-01T10:05:00.5+02:00");
  CHECK(b.time_unix_ns == (kJune1At08Z + 300) * kNsPerS + 500'000'000);
  CHECK(b.source.line == 7);
}

TEST_CASE("csv: LF line ends, optional columns and a final line without a line end") {
  const auto r = read(kHeader + kGoodRow + "2026-06-01T10:01:00Z,van-B,-31.1,146.4,90,2,,,");
  CHECK(r.row_errors.empty());
  REQUIRE(r.observations.size() == 2);
  CHECK(r.observations[0].pos_sigma_m == 5.0);
  REQUIRE(r.observations[0].alt_m.has_value());
  CHECK(*r.observations[0].alt_m == 120.0);
  CHECK(r.observations[0].signal == "ch-7");
  // Empty optional cells: pos_sigma_m 0, no altitude, no signal label.
  CHECK(r.observations[1].pos_sigma_m == 0.0);
  CHECK_FALSE(r.observations[1].alt_m.has_value());
  CHECK(r.observations[1].signal.empty());
  CHECK(r.observations[1].source.line == 3);
}

TEST_CASE("csv: sigma_deg from the options") {
  const std::string no_sigma =
      "time,station,lat,lon,bearing_deg\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10\n";
  SUBCASE("the column is absent") {
    const auto r = read(no_sigma, sigma(4.0));
    REQUIRE(r.observations.size() == 1);
    CHECK(r.observations[0].sigma_deg == 4.0);
    CHECK(r.observations[0].columns.sigma == 0);
  }
  SUBCASE("an empty cell takes the default, a written one wins") {
    const auto r = read(kHeader +
                            "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,,,,\n"
                            "2026-06-01T10:00:00Z,walker-B,-31.2,146.4,10,1.5,,,\n",
                        sigma(4.0));
    REQUIRE(r.observations.size() == 2);
    CHECK(r.observations[0].sigma_deg == 4.0);
    CHECK(r.observations[1].sigma_deg == 1.5);
  }
  SUBCASE("neither: the missing column stops the read") {
    CHECK(input_error(no_sigma) ==
          "bad.csv:1: missing required column 'sigma_deg' (or give --sigma-deg)");
  }
  SUBCASE("neither: an empty cell is a bad cell") {
    const auto r = read(kHeader + "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,,,,\n");
    CHECK(r.observations.empty());
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

TEST_CASE("csv: an unknown column is warned about once, not per row") {
  const auto r = read(
      "# header on line 2\n"
      "time,station,lat,lon,bearing_deg,sigma_deg,Operator\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,kim\n"
      "2026-06-01T10:01:00Z,walker-A,-31.2,146.4,11,2,lee\n"
      "2026-06-01T10:02:00Z,walker-A,-31.2,146.4,12,2,\n");
  CHECK(r.observations.size() == 3);
  CHECK(r.row_errors.empty());
  REQUIRE(r.warnings.size() == 1);
  CHECK(r.warnings[0].file == "bad.csv");
  CHECK(r.warnings[0].line == 2);
  CHECK(r.warnings[0].column == 7);
  CHECK(r.warnings[0].field == "Operator");
  CHECK(r.warnings[0].reason == "unknown column 'Operator' ignored");
}

TEST_CASE("csv: each kind of bad cell: its message, line and column") {
  struct Case {
    int column;
    std::string cell;
    std::string message;  // Diagnostic::to_string() of the row on line 3
  };
  // Ranges and wording: docs/input-format.md.
  const std::vector<Case> cases = {
      {3, "95.2", "bad.csv:3:3: lat 95.2 is outside [-90, 90]"},
      {3, "-90.5", "bad.csv:3:3: lat -90.5 is outside [-90, 90]"},
      {3, "",
       "bad.csv:3:3: lat is empty but lon is given: give both, or neither to use the "
       "station's track"},
      {3, "nan", "bad.csv:3:3: lat 'nan' is not a finite number"},
      {3, "\"12,5\"", "bad.csv:3:3: lat '12,5' is not a number (the decimal mark is '.')"},
      {3, "1e400", "bad.csv:3:3: lat 1e400 is too large or too small"},
      {3, "++5", "bad.csv:3:3: lat '++5' is not a number"},
      {3, "+-5", "bad.csv:3:3: lat '+-5' is not a number"},
      {3, "5 5", "bad.csv:3:3: lat '5 5' is not a number"},
      {3, "0x10", "bad.csv:3:3: lat '0x10' is not a number"},
      {4, "180.01", "bad.csv:3:4: lon 180.01 is outside [-180, 180]"},
      {4, "-inf", "bad.csv:3:4: lon '-inf' is not a finite number"},
      {4, "",
       "bad.csv:3:4: lon is empty but lat is given: give both, or neither to use the "
       "station's track"},
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
    CHECK(r.observations.size() == 2);  // the bad row is left out
    CHECK(messages(r.row_errors) == c.message + "\n");
    REQUIRE(r.row_errors.size() == 1);
    CHECK(r.row_errors[0].line == 3);
    CHECK(r.row_errors[0].column == c.column);
  }
}

TEST_CASE("csv: accepted edge values") {
  // Range ends are inside: lat +-90, lon +-180, bearing 0 and 360, sigma 90, alt limits.
  const auto r = read(kHeader +
                      "2026-06-01T10:00:00Z,s1,90,180,360,90,0,100000,\n"
                      "2026-06-01T10:00:00Z,s2,-90,-180,0,0.001,0,-11000,\n"
                      "2026-06-01T10:00:00Z,s3,+1.5e1,.5,-0,5.,1E2,+0,\n");
  CHECK(r.row_errors.empty());
  REQUIRE(r.observations.size() == 3);
  // 360 deg is north again: the stored bearing is in [0, 360).
  CHECK(r.observations[0].bearing_deg == 0.0);
  CHECK(r.observations[0].lat_deg == 90.0);
  CHECK(r.observations[0].lon_deg == 180.0);
  CHECK(r.observations[0].sigma_deg == 90.0);
  CHECK(r.observations[1].lat_deg == -90.0);
  CHECK(r.observations[1].bearing_deg == 0.0);
  CHECK(*r.observations[1].alt_m == -11000.0);
  CHECK(r.observations[2].lat_deg == 15.0);
  CHECK(r.observations[2].lon_deg == 0.5);
  REQUIRE(r.observations[2].bearing_deg.has_value());
  CHECK(*r.observations[2].bearing_deg == 0.0);
  CHECK_FALSE(std::signbit(*r.observations[2].bearing_deg));  // -0 is stored as +0
  CHECK(r.observations[2].sigma_deg == 5.0);
  CHECK(r.observations[2].pos_sigma_m == 100.0);
}

TEST_CASE("csv: two bad cells in one row give two diagnostics, in column order") {
  const auto r =
      read(kHeader + kGoodRow + "2026-06-01T10:00:00,walker-A,95.2,146.462,abc,2,5,120,ch-7\n");
  CHECK(r.observations.size() == 1);
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

TEST_CASE("csv: a row with the wrong number of fields") {
  const auto r = read(
      "time,station,lat,lon,bearing_deg,sigma_deg\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,\n"
      "2026-06-01T10:00:00Z\n"
      "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2\n");
  CHECK(r.rows_read == 4);
  REQUIRE(r.observations.size() == 1);
  CHECK(r.observations[0].source.line == 5);
  CHECK(messages(r.row_errors) == join({"bad.csv:2: row has 5 fields, the header has 6",
                                        "bad.csv:3: row has 7 fields, the header has 6",
                                        "bad.csv:4: row has 1 field, the header has 6"}));
  CHECK(r.row_errors[0].column == 0);
}

TEST_CASE("csv: header problems stop the read") {
  SUBCASE("every missing required column in one message") {
    CHECK(input_error("# made up\ntime,station,bearing_deg\n") ==
          "bad.csv:2: missing required column 'sigma_deg' (or give --sigma-deg)");
    CHECK(input_error("station,lat,lon,sigma_deg\n") ==
          "bad.csv:1: missing required columns 'time', 'bearing_deg'");
    CHECK(input_error("lat,sigma_deg\n") ==
          "bad.csv:1: missing required columns 'time', 'station', 'lon', 'bearing_deg'");
    CHECK(input_error("time,station,lon\n") ==
          "bad.csv:1: missing required columns 'lat', 'bearing_deg', 'sigma_deg' (or give "
          "--sigma-deg)");
  }
  SUBCASE("a missing column names the unknown ones, which may be a misspelling") {
    CHECK(input_error("time,station,latitude,lon,bearing_deg,sigma_deg\n") ==
          "bad.csv:1: missing required column 'lat'; the header also has an unknown column "
          "'latitude'");
  }
  SUBCASE("interferometer columns come together") {
    CHECK(input_error("time,station,phase_deg,spacing_m\n") ==
          "bad.csv:1: missing required columns 'frequency_hz', 'axis_deg', 'phase_sigma_deg'; "
          "interferometer readings need all of phase_deg, phase_sigma_deg, spacing_m, "
          "frequency_hz and axis_deg");
    CHECK(input_error("time,station,bearing_deg,axis_deg\n") ==
          "bad.csv:1: missing required columns 'phase_deg', 'spacing_m', 'frequency_hz', "
          "'phase_sigma_deg', 'sigma_deg' (or give --sigma-deg); interferometer readings need "
          "all of phase_deg, phase_sigma_deg, spacing_m, frequency_hz and axis_deg");
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

TEST_CASE("csv: a header without data rows is not an error") {
  const auto r = read("time,station,lat,lon,bearing_deg,sigma_deg\r\n");
  CHECK(r.rows_read == 0);
  CHECK(r.observations.empty());
  CHECK(r.row_errors.empty());
}

TEST_CASE("csv: a quoted field spanning lines: diagnostics use the line where the row starts") {
  const auto r = read(kHeader +
                      "2026-06-01T10:00:00Z,\"walker\nA\",-31.2,146.4,10,2,,,\"first\r\nsecond\"\n"
                      "2026-06-01T10:00:00Z,\"van\nB\",95.2,146.4,10,2,,,\n"
                      "2026-06-01T10:00:00Z,walker-C,-31.2,146.4,10,2,,,\n");
  CHECK(r.rows_read == 3);
  REQUIRE(r.observations.size() == 2);
  CHECK(r.observations[0].station == "walker\nA");
  CHECK(r.observations[0].signal == "first\r\nsecond");
  CHECK(r.observations[0].source.line == 2);
  CHECK(r.observations[1].station == "walker-C");
  CHECK(r.observations[1].source.line == 7);
  CHECK(messages(r.row_errors) == join({"bad.csv:5:3: lat 95.2 is outside [-90, 90]"}));
}

TEST_CASE("csv: an unclosed quote runs to the end of the file and is reported") {
  // RFC 4180 section 2 rule 5: a quoted field ends at its closing quote; without one the
  // field holds the rest of the file, which must not vanish unreported.
  SUBCASE("in a known column") {
    const auto r = read(kHeader + kGoodRow +
                        "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,,,\"ch\n" + kGoodRow);
    CHECK(r.rows_read == 2);
    CHECK(r.observations.size() == 1);
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:3:9: signal: the quote opened on line 3 is never closed (the rest of "
                "the file was read into this cell)"}));
  }
  SUBCASE("in an ignored column") {
    const auto r = read(
        "time,station,lat,lon,bearing_deg,sigma_deg,note\n"
        "2026-06-01T10:00:00Z,walker-A,-31.2,146.4,10,2,\"calm\n"
        "2026-06-01T10:01:00Z,walker-A,-31.2,146.4,11,2,\n");
    CHECK(r.observations.empty());
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:2:7: note: the quote opened on line 2 is never closed (the rest of the "
                "file was read into this cell)"}));
  }
  SUBCASE("in a row with too few fields") {
    const auto r = read(
        "time,station,lat,lon,bearing_deg,sigma_deg\n"
        "2026-06-01T10:00:00Z,\"walker-A,-31.2,146.4,10,2\n"
        "2026-06-01T10:01:00Z,walker-A,-31.2,146.4,11,2\n");
    CHECK(r.observations.empty());
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:2: row has 2 fields, the header has 6",
                "bad.csv:2:2: station: the quote opened on line 2 is never closed (the rest of "
                "the file was read into this cell)"}));
  }
  SUBCASE("in a column that must be given with another") {
    // The bad cell is reported once: its column is not also "empty" for the lat/lon rule.
    const auto r = read(
        "time,station,bearing_deg,sigma_deg,lon,lat\n"
        "2026-06-01T10:00:00Z,walker-A,10,2,146.4,\"-31.2\n");
    CHECK(messages(r.row_errors) ==
          join({"bad.csv:2:6: lat: the quote opened on line 2 is never closed (the rest of the "
                "file was read into this cell)"}));
  }
}

TEST_CASE("csv: comment and blank handling") {
  // '#' starts a comment only as the first non-blank character of a line; quoted, it is data.
  // A line of empty cells (as spreadsheets write) counts as blank.
  const auto r = read(kHeader + "  # 2026-06-01T10:00:00Z,not,a,row\n,,,,,,,,\n , ,\t,,,,,,\n" +
                      "2026-06-01T10:00:00Z,\"#4\",-31.2,146.4,10,2,,,#not a comment\n");
  CHECK(r.rows_read == 1);
  CHECK(r.row_errors.empty());
  REQUIRE(r.observations.size() == 1);
  CHECK(r.observations[0].station == "#4");
  CHECK(r.observations[0].signal == "#not a comment");
  CHECK(r.observations[0].source.line == 5);
}

TEST_CASE("csv: positions are optional: from tracks, checked later by normalise") {
  SUBCASE("no lat and lon columns") {
    const auto r = read(
        "time,station,bearing_deg,sigma_deg\n"
        "2026-06-01T10:00:00Z,van-B,133.2,2\n");
    CHECK(r.row_errors.empty());
    REQUIRE(r.observations.size() == 1);
    CHECK_FALSE(r.observations[0].lat_deg.has_value());
    CHECK_FALSE(r.observations[0].lon_deg.has_value());
    CHECK(r.observations[0].columns.lat == 0);
    CHECK(r.observations[0].columns.lon == 0);
  }
  SUBCASE("both cells empty in one row, both given in the next") {
    const auto r = read(kHeader + "2026-06-01T10:00:00Z,van-B,,,133.2,2,,,\n" + kGoodRow);
    CHECK(r.row_errors.empty());
    REQUIRE(r.observations.size() == 2);
    CHECK_FALSE(r.observations[0].lat_deg.has_value());
    CHECK(r.observations[0].columns.lat == 3);  // the column exists, the cell is empty
    CHECK(r.observations[1].lat_deg == -31.245);
  }
  SUBCASE("a column without its partner is a header error") {
    CHECK(input_error("time,station,lat,bearing_deg,sigma_deg\n") ==
          "bad.csv:1: missing required column 'lon'");
  }
}

TEST_CASE("csv: every column on good rows") {
  SUBCASE("a magnetic bearing with a mirror candidate") {
    AllColumns row = bearing_row();
    row.bearing_alt_deg = "46.8";
    row.reference = "Magnetic";  // case does not matter
    row.alt_m = "312.5";
    row.pos_sigma_m = "4";
    row.signal = "ch-9";
    const auto r = read(kAllHeader + row.row(), {}, "all.csv");
    CHECK(messages(r.row_errors).empty());
    REQUIRE(r.observations.size() == 1);
    const auto& o = r.observations[0];
    CHECK(o.reference == lobfix::BearingReference::magnetic);
    CHECK(o.bearing_deg == 133.2);
    CHECK(o.bearing_alt_deg == 46.8);
    CHECK(o.sigma_deg == 2.0);
    CHECK(o.alt_m == 312.5);
    CHECK(o.pos_sigma_m == 4.0);
    CHECK(o.signal == "ch-9");
    CHECK_FALSE(o.phase_deg.has_value());
    CHECK_FALSE(o.heading_deg.has_value());
    // Every column's 1-based position in kAllHeader.
    CHECK(o.columns.time == 1);
    CHECK(o.columns.station == 2);
    CHECK(o.columns.lat == 3);
    CHECK(o.columns.lon == 4);
    CHECK(o.columns.bearing == 6);
    CHECK(o.columns.bearing_alt == 7);
    CHECK(o.columns.sigma == 8);
    CHECK(o.columns.reference == 11);
    CHECK(o.columns.heading == 12);
    CHECK(o.columns.heading_sigma == 13);
    CHECK(o.columns.phase == 14);
    CHECK(o.columns.phase_sigma == 15);
    CHECK(o.columns.spacing == 16);
    CHECK(o.columns.frequency == 17);
    CHECK(o.columns.axis == 18);
  }
  SUBCASE("references by name, any case; empty is true") {
    const std::vector<std::pair<std::string, lobfix::BearingReference>> cases = {
        {"", lobfix::BearingReference::true_north},
        {"true", lobfix::BearingReference::true_north},
        {"TRUE", lobfix::BearingReference::true_north},
        {"magnetic", lobfix::BearingReference::magnetic},
        {"Grid", lobfix::BearingReference::grid},
        {"relative", lobfix::BearingReference::relative},
    };
    for (const auto& [text, reference] : cases) {
      AllColumns row = bearing_row();
      row.reference = text;
      // Not `text` itself: C++17 lets no lambda (INFO makes one) capture a structured binding.
      INFO("reference: " << row.reference);
      const auto r = read(kAllHeader + row.row());
      REQUIRE(r.observations.size() == 1);
      CHECK(r.observations[0].reference == reference);
    }
  }
  SUBCASE("a relative bearing with the platform's heading") {
    AllColumns row = bearing_row();
    row.reference = "relative";
    row.bearing_deg = "350";
    row.heading_deg = "360";  // north again, stored as 0
    row.heading_sigma_deg = "1.5";
    const auto r = read(kAllHeader + row.row());
    CHECK(messages(r.row_errors).empty());
    REQUIRE(r.observations.size() == 1);
    CHECK(r.observations[0].reference == lobfix::BearingReference::relative);
    CHECK(r.observations[0].bearing_deg == 350.0);
    CHECK(r.observations[0].heading_deg == 0.0);
    CHECK(r.observations[0].heading_sigma_deg == 1.5);
  }
  SUBCASE("a relative bearing without a heading (normalise takes it from the track)") {
    AllColumns row = bearing_row();
    row.reference = "relative";
    const auto r = read(kAllHeader + row.row());
    REQUIRE(r.observations.size() == 1);
    CHECK_FALSE(r.observations[0].heading_deg.has_value());
  }
  SUBCASE("interferometer readings instead of a bearing") {
    const auto r = read(kAllHeader + interferometer_row().row());
    CHECK(messages(r.row_errors).empty());
    REQUIRE(r.observations.size() == 1);
    const auto& o = r.observations[0];
    CHECK_FALSE(o.bearing_deg.has_value());
    CHECK_FALSE(o.sigma_deg.has_value());  // it follows from the phase sigma, in normalise
    CHECK(o.phase_deg == -45.5);
    CHECK(o.phase_sigma_deg == 6.0);
    CHECK(o.spacing_m == 0.9993);
    CHECK(o.frequency_hz == 150e6);
    CHECK(o.axis_deg == 90.0);
    CHECK(o.reference == lobfix::BearingReference::true_north);
  }
  SUBCASE("the default sigma is for bearings, not for interferometer readings") {
    const auto r = read(kAllHeader + interferometer_row().row() + bearing_row().row(), sigma(3));
    REQUIRE(r.observations.size() == 2);
    CHECK_FALSE(r.observations[0].sigma_deg.has_value());
    CHECK(r.observations[1].sigma_deg == 2.0);
  }
  SUBCASE("a file of interferometer readings needs no sigma_deg column") {
    const auto r = read(
        "time,station,phase_deg,phase_sigma_deg,spacing_m,frequency_hz,axis_deg\n"
        "1780000000,mast-C,120,5,0.5,299792458,0\n");
    CHECK(messages(r.row_errors).empty());
    REQUIRE(r.observations.size() == 1);
    CHECK(r.observations[0].columns.bearing == 0);
    CHECK(r.observations[0].columns.phase == 3);
  }
  SUBCASE("edge values of the new columns") {
    // Both ends of [0, 360], [-360, 360], (0, 90], (0, 180], (0, 100], (0, 1e12].
    AllColumns a = interferometer_row();
    a.phase_deg = "-360";
    a.phase_sigma_deg = "180";
    a.spacing_m = "100";
    a.frequency_hz = "1e12";
    a.axis_deg = "360";
    AllColumns b = interferometer_row();
    b.phase_deg = "360";
    b.phase_sigma_deg = "1e-3";
    b.spacing_m = "1e-3";
    b.frequency_hz = "1";
    b.axis_deg = "0";
    AllColumns c = bearing_row();
    c.reference = "relative";
    c.bearing_alt_deg = "360";
    c.heading_deg = "0";
    c.heading_sigma_deg = "90";
    const auto r = read(kAllHeader + a.row() + b.row() + c.row());
    CHECK(messages(r.row_errors).empty());
    REQUIRE(r.observations.size() == 3);
    CHECK(r.observations[0].phase_deg == -360.0);
    CHECK(r.observations[0].axis_deg == 0.0);
    CHECK(r.observations[0].frequency_hz == 1e12);
    CHECK(r.observations[1].phase_deg == 360.0);
    CHECK(r.observations[2].bearing_alt_deg == 0.0);
    CHECK(r.observations[2].heading_sigma_deg == 90.0);
  }
}

TEST_CASE("csv: bad cells of the new columns") {
  struct Case {
    AllColumns row;
    std::string message;  // after "bad.csv:2:"
  };
  const auto with = [](AllColumns row, std::string AllColumns::*cell, std::string text) {
    row.*cell = std::move(text);
    return row;
  };
  const AllColumns b = bearing_row();
  AllColumns rel = bearing_row();
  rel.reference = "relative";
  rel.heading_deg = "10";
  rel.heading_sigma_deg = "1";
  const AllColumns i = interferometer_row();
  const std::vector<Case> cases = {
      {with(b, &AllColumns::bearing_alt_deg, "361"), "7: bearing_alt_deg 361 is outside [0, 360]"},
      {with(b, &AllColumns::bearing_alt_deg, "x"), "7: bearing_alt_deg 'x' is not a number"},
      {with(b, &AllColumns::reference, "north"),
       "11: reference 'north' is not one of true, magnetic, grid, relative"},
      {with(rel, &AllColumns::heading_deg, "360.5"), "12: heading_deg 360.5 is outside [0, 360]"},
      {with(rel, &AllColumns::heading_deg, "-1"), "12: heading_deg -1 is outside [0, 360]"},
      {with(rel, &AllColumns::heading_sigma_deg, "0"), "13: heading_sigma_deg 0 must be > 0"},
      {with(rel, &AllColumns::heading_sigma_deg, "90.5"),
       "13: heading_sigma_deg 90.5 must be <= 90"},
      {with(i, &AllColumns::phase_deg, "360.5"), "14: phase_deg 360.5 is outside [-360, 360]"},
      {with(i, &AllColumns::phase_deg, "-400"), "14: phase_deg -400 is outside [-360, 360]"},
      {with(i, &AllColumns::phase_deg, "nan"), "14: phase_deg 'nan' is not a finite number"},
      {with(i, &AllColumns::phase_sigma_deg, "0"), "15: phase_sigma_deg 0 must be > 0"},
      {with(i, &AllColumns::phase_sigma_deg, "181"), "15: phase_sigma_deg 181 must be <= 180"},
      {with(i, &AllColumns::spacing_m, "0"), "16: spacing_m 0 must be > 0"},
      {with(i, &AllColumns::spacing_m, "-0.5"), "16: spacing_m -0.5 must be > 0"},
      {with(i, &AllColumns::spacing_m, "100.5"), "16: spacing_m 100.5 must be <= 100"},
      {with(i, &AllColumns::frequency_hz, "0"), "17: frequency_hz 0 must be > 0"},
      {with(i, &AllColumns::frequency_hz, "2e12"), "17: frequency_hz 2e12 must be <= 1e12"},
      {with(i, &AllColumns::frequency_hz, "150 MHz"), "17: frequency_hz '150 MHz' is not a number"},
      {with(i, &AllColumns::axis_deg, "360.1"), "18: axis_deg 360.1 is outside [0, 360]"},
  };
  for (const Case& c : cases) {
    INFO(c.row.row());
    CHECK(all_columns_errors(c.row) == "bad.csv:2:" + c.message + "\n");
  }
}

TEST_CASE("csv: the rules between fields of a row") {
  // docs/input-format.md, "Bad rows": each broken rule is one message at the column to fix.
  SUBCASE("a bearing and interferometer readings") {
    AllColumns row = interferometer_row();
    row.bearing_deg = "133.2";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:6: bearing_deg and interferometer readings (phase_deg, spacing_m, "
                "frequency_hz and axis_deg) are both given: give one or the other"}));
  }
  SUBCASE("neither a bearing nor interferometer readings") {
    AllColumns row;
    row.sigma_deg = "2";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:6: bearing_deg is empty: give a bearing, or the interferometer "
                "readings phase_deg, spacing_m, frequency_hz and axis_deg"}));
  }
  SUBCASE("incomplete interferometer readings name what is missing") {
    AllColumns row = interferometer_row();
    row.spacing_m = "";
    row.axis_deg = "";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:16: interferometer reading without spacing_m and axis_deg: give all "
                "of phase_deg, spacing_m, frequency_hz and axis_deg"}));
    row = AllColumns();
    row.frequency_hz = "150e6";
    row.phase_sigma_deg = "5";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:14: interferometer reading without phase_deg, spacing_m and axis_deg: "
                "give all of phase_deg, spacing_m, frequency_hz and axis_deg"}));
  }
  SUBCASE("interferometer readings without their phase sigma, or with a bearing sigma") {
    AllColumns row = interferometer_row();
    row.phase_sigma_deg = "";
    row.sigma_deg = "2";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:8: sigma_deg is not used with interferometer readings: their bearing "
                "sigma comes from phase_sigma_deg",
                "bad.csv:2:15: phase_sigma_deg is empty: interferometer readings need the "
                "phase's sigma"}));
  }
  SUBCASE("interferometer readings take the row's reference (for axis_deg)") {
    // docs/interferometer.md: axis_deg is read in the row's north, like bearing_deg.
    AllColumns row = interferometer_row();
    row.reference = "grid";
    CHECK(all_columns_errors(row).empty());
    row.reference = "relative";
    row.heading_deg = "45";
    row.heading_sigma_deg = "2";
    CHECK(all_columns_errors(row).empty());
  }
  SUBCASE("a mirror candidate needs a bearing") {
    AllColumns row = interferometer_row();
    row.bearing_alt_deg = "10";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:7: bearing_alt_deg is only used with bearing_deg"}));
  }
  SUBCASE("a heading needs reference 'relative'") {
    AllColumns row = bearing_row();
    row.reference = "magnetic";
    row.heading_deg = "45";
    row.heading_sigma_deg = "2";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:12: heading_deg is only used with reference 'relative'",
                "bad.csv:2:13: heading_sigma_deg is only used with reference 'relative'"}));
    row.reference = "";  // true
    row.heading_sigma_deg = "";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:12: heading_deg is only used with reference 'relative'"}));
    // A relative bearing: a heading with its sigma, or neither (the course from a track).
    row.reference = "relative";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:13: heading_sigma_deg is empty: heading_deg needs its 1-sigma"}));
    row.heading_deg = "";
    row.heading_sigma_deg = "2";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:13: heading_sigma_deg is only used with heading_deg: a course from a "
                "track has its own sigma"}));
    row.heading_deg = "45";
    // With an unreadable reference, only the reference is reported.
    row.reference = "nose";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:11: reference 'nose' is not one of true, magnetic, grid, relative"}));
  }
  SUBCASE("messages of one row come in column order") {
    AllColumns row = interferometer_row();
    row.time = "";
    row.lat = "";
    row.phase_sigma_deg = "";
    row.axis_deg = "";
    row.heading_deg = "5";
    CHECK(all_columns_errors(row) ==
          join({"bad.csv:2:1: time is empty",
                "bad.csv:2:3: lat is empty but lon is given: give both, or neither to use the "
                "station's track",
                "bad.csv:2:12: heading_deg is only used with reference 'relative'",
                "bad.csv:2:15: phase_sigma_deg is empty: interferometer readings need the phase's "
                "sigma",
                "bad.csv:2:18: interferometer reading without axis_deg: give all of phase_deg, "
                "spacing_m, frequency_hz and axis_deg"}));
  }
}

TEST_CASE("csv: times in Unix seconds") {
  const std::string header = "time,station,bearing_deg,sigma_deg\n";
  const auto time_of = [&](const std::string& cell) {
    const auto r = read(header + cell + ",walker-A,10,2\n");
    INFO("time: " << cell << ": " << messages(r.row_errors));
    REQUIRE(r.observations.size() == 1);
    CHECK(r.observations[0].time_text == cell);  // as written
    return r.observations[0].time_unix_ns;
  };
  const auto refused = [&](const std::string& cell) {
    const auto r = read(header + cell + ",walker-A,10,2\n");
    CHECK(r.observations.empty());
    return messages(r.row_errors);
  };
  SUBCASE("whole and fractional seconds") {
    // GNU date: `date -u -d @1780000000` prints Thu May 28 20:26:40 UTC 2026.
    const std::int64_t t = time_of("1780000000");
    CHECK(t == time_of("2026-05-28T20:26:40Z"));
    CHECK(lobfix::format_iso8601_utc(t) == "2026-05-28T20:26:40Z");
    // GNU date: `date -u -d @1780000000.25 +%Y-%m-%dT%H:%M:%S.%NZ` prints
    // 2026-05-28T20:26:40.250000000Z.
    CHECK(time_of("1780000000.25") == time_of("2026-05-28T20:26:40.25Z"));
    // GNU date: `date -u -d @1780000000.123456789 +%Y-%m-%dT%H:%M:%S.%NZ` prints
    // 2026-05-28T20:26:40.123456789Z: nanoseconds are kept exactly, which a double
    // (spacing 2^-22 s near 1.78e9 s, IEEE 754 binary64) could not do.
    CHECK(time_of("1780000000.123456789") == time_of("2026-05-28T20:26:40.123456789Z"));
    // An exponent and a leading '+' (as numbers are written elsewhere in the file).
    CHECK(time_of("1.78e9") == time_of("1780000000"));
    CHECK(time_of("+178000000000e-2") == time_of("1780000000"));
    CHECK(time_of("17800000002500e-4") == time_of("1780000000.25"));
  }
  SUBCASE("the ends of the range") {
    // GNU date: `date -u -d @0` prints Thu Jan  1 00:00:00 UTC 1970, the epoch.
    CHECK(time_of("0") == time_of("1970-01-01T00:00:00Z"));
    CHECK(time_of("-0") == 0);
    CHECK(time_of("0.000000001") == 1);
    // The last nanosecond 64 bits hold (INT64_MAX = 9223372036854775807, ISO C limits) is
    // 2262-04-11T23:47:16.854775807Z, as time.hpp documents; GNU date:
    // `date -u -d @9223372036 +%Y-%m-%dT%H:%M:%SZ` prints 2262-04-11T23:47:16Z.
    CHECK(time_of("9223372036.854775807") == time_of("2262-04-11T23:47:16.854775807Z"));
  }
  SUBCASE("refused") {
    CHECK(refused("-5") ==
          "bad.csv:2:1: time '-5' is not valid Unix seconds: it is before 1970-01-01T00:00:00Z\n");
    CHECK(refused("1780000000250") ==
          "bad.csv:2:1: time '1780000000250' is not valid Unix seconds: it is after "
          "2262-04-11T23:47:16.854775807Z, the last time that 64-bit nanoseconds hold (a count "
          "of milliseconds?)\n");
    CHECK(refused("9223372036.854775808") ==
          "bad.csv:2:1: time '9223372036.854775808' is not valid Unix seconds: it is after "
          "2262-04-11T23:47:16.854775807Z, the last time that 64-bit nanoseconds hold (a count "
          "of milliseconds?)\n");
    CHECK(refused("1e999999999999") ==
          "bad.csv:2:1: time '1e999999999999' is not valid Unix seconds: it is after "
          "2262-04-11T23:47:16.854775807Z, the last time that 64-bit nanoseconds hold (a count "
          "of milliseconds?)\n");
    CHECK(refused("1780000000.1234567891") ==
          "bad.csv:2:1: time '1780000000.1234567891' is not valid Unix seconds: 10 fractional "
          "digits: at most 9 (nanoseconds) are allowed\n");
    // Not a plain number: read as ISO 8601, and refused as such.
    CHECK(refused("1780000000.25Z") ==
          "bad.csv:2:1: time '1780000000.25Z' is not a valid ISO 8601 time: expected the date as "
          "YYYY-MM-DD at the start\n");
    CHECK(refused("1e") ==
          "bad.csv:2:1: time '1e' is not a valid ISO 8601 time: expected the date as YYYY-MM-DD "
          "at the start\n");
  }
}

TEST_CASE("csv: read_observations_file") {
  SUBCASE("open failure") {
    const std::string path = lobfix_test::tmp_path("no-such-dir/none.csv");
    try {
      lobfix::read_observations_file(path);
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
    const auto r = lobfix::read_observations_file(path);
    CHECK(r.rows_read == 4);
    CHECK(r.row_errors.empty());
    CHECK(r.warnings.empty());
    REQUIRE(r.observations.size() == 4);
    CHECK(r.observations[0].station == "walker-A");
    CHECK(r.observations[0].source.file == path);
    CHECK(r.observations[0].source.line == 3);
    CHECK(r.observations[2].bearing_deg == 260.4);
    CHECK(r.observations[2].sigma_deg == 1.5);
    CHECK(r.observations[3].pos_sigma_m == 5.0);
    CHECK(r.observations[3].signal == "ch-7");
    // 10:06:45Z is 2 h 6 min 45 s after 08:00Z.
    CHECK(r.observations[3].time_unix_ns == (kJune1At08Z + 7200 + 405) * kNsPerS);
  }
  SUBCASE("every column, and Unix seconds: all_columns.csv") {
    // tests/data/csv/README.md describes the file.
    const std::string path = lobfix_test::data_path("csv/all_columns.csv");
    const auto r = lobfix::read_observations_file(path);
    CHECK(messages(r.row_errors).empty());
    CHECK(r.warnings.empty());
    REQUIRE(r.observations.size() == 4);
    CHECK(r.observations[0].reference == lobfix::BearingReference::magnetic);
    CHECK(r.observations[1].reference == lobfix::BearingReference::relative);
    CHECK(r.observations[1].heading_deg == 270.0);
    CHECK(r.observations[2].phase_deg.has_value());
    CHECK_FALSE(r.observations[2].bearing_deg.has_value());
    CHECK_FALSE(r.observations[3].lat_deg.has_value());
    // GNU date: `date -u -d 2026-06-01T10:04:10Z +%s` prints 1780308250.
    CHECK(r.observations[2].time_unix_ns == 1780308250 * kNsPerS);
    CHECK(r.observations[2].time_text == "1780308250");
  }
}

TEST_CASE("csv: the shared bad-input samples under tests/data/csv") {
  struct Case {
    std::string file;
    std::vector<std::string> messages;  // after the path
    std::size_t observations;
  };
  // tests/data/csv/README.md lists these messages; the command-line tests expect them too.
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
    const auto r = lobfix::read_observations_file(path);
    std::vector<std::string> expected;
    for (const auto& m : c.messages)
      expected.push_back(path + m);
    CHECK(messages(r.row_errors) == join(expected));
    CHECK(r.observations.size() == c.observations);
    CHECK(r.rows_read == 4);
  }

  const std::string missing = lobfix_test::data_path("csv/missing_column.csv");
  try {
    lobfix::read_observations_file(missing);
    FAIL("no InputError");
  } catch (const lobfix::InputError& e) {
    CHECK(e.diagnostic().to_string() == missing + ":1: missing required column 'lon'");
  }

  const std::string no_sigma = lobfix_test::data_path("csv/no_sigma.csv");
  try {
    lobfix::read_observations_file(no_sigma);
    FAIL("no InputError");
  } catch (const lobfix::InputError& e) {
    CHECK(e.diagnostic().to_string() ==
          no_sigma + ":1: missing required column 'sigma_deg' (or give --sigma-deg)");
  }
  const auto r = lobfix::read_observations_file(no_sigma, sigma(2.0));
  CHECK(r.observations.size() == 4);
  CHECK(r.row_errors.empty());

  const std::string rules = lobfix_test::data_path("csv/bad_rules.csv");
  const auto b = lobfix::read_observations_file(rules);
  CHECK(messages(b.row_errors) ==
        join({rules + ":3:9: heading_deg is only used with reference 'relative'",
              rules + ":4:5: bearing_deg and interferometer readings (phase_deg, spacing_m, "
                      "frequency_hz and axis_deg) are both given: give one or the other",
              rules + ":5:13: interferometer reading without frequency_hz: give all of phase_deg, "
                      "spacing_m, frequency_hz and axis_deg",
              rules + ":6:3: lat is empty but lon is given: give both, or neither to use the "
                      "station's track"}));
  CHECK(b.observations.size() == 1);
}

TEST_CASE("csv: many rows") {
  // 20,000 generated rows: every one is read, in order, with its own line.
  std::string text = kHeader;
  const int n = 20000;
  for (int i = 0; i < n; ++i) {
    text += "2026-06-01T10:00:00.5Z,\"walker, " + std::to_string(i % 7) + "\"," +
            std::to_string(-31.0 - i * 1e-5) + ",146.5," + std::to_string(i % 360) + ",2,,,\n";
  }
  const auto r = read(text);
  CHECK(r.row_errors.empty());
  REQUIRE(r.observations.size() == static_cast<std::size_t>(n));
  CHECK(r.observations.back().source.line == n + 1);
  CHECK(r.observations.back().bearing_deg == static_cast<double>((n - 1) % 360));
  CHECK(r.observations.back().station == "walker, " + std::to_string((n - 1) % 7));
}

TEST_CASE("csv: a station name that is not UTF-8 is refused with its line and column") {
  // RFC 3629: 0xFF never occurs in UTF-8; "\xC3\xA9" (e acute) is well formed.
  std::istringstream in(
      "time,station,lat,lon,bearing_deg,sigma_deg\n"
      "2026-06-01T10:00:00Z,walker-\xFF,-31.2,146.5,10,2\n"
      "2026-06-01T10:01:00Z,caf\xC3\xA9,-31.2,146.6,20,2\n");
  const lobfix::ReadResult r = lobfix::read_observations_csv(in, "names.csv");
  REQUIRE(r.row_errors.size() == 1);
  CHECK(r.row_errors[0].to_string() ==
        "names.csv:2:2: station is not UTF-8 text (save the file as UTF-8; it may be in a legacy "
        "code page)");
  REQUIRE(r.observations.size() == 1);
  CHECK(r.observations[0].station == "caf\xC3\xA9");
}
