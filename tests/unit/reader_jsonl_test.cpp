// Unit tests for lobfix/reader.hpp, JSON Lines: read_observations_jsonl, and how
// read_observations_file tells JSON Lines from CSV.
//
// References: RFC 8259 (JSON: objects, strings, numbers, literals), the JSON Lines convention
// of one value per line (common practice); the format written down in docs/input-format.md
// (field names, accepted ranges, message wording: the project's own specification; the CSV
// reader's messages are the yardstick for the same bad value); the wording of nlohmann::json
// 3.11.2 (Debian 12) parse errors, shortened as docs/input-format.md shows; Unix times
// printed by GNU date (coreutils 9.1, `date -u -d @<seconds>` and `date -u -d <time> +%s`, run
// when these tests were written, the values written in as constants). Input values are
// invented.
#include <doctest/doctest.h>

#include <cstdint>
#include <fstream>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "lobfix/reader.hpp"
#include "test_support.hpp"

namespace {

constexpr std::int64_t kNsPerS = 1'000'000'000;
// GNU date: `date -u -d 2026-06-01T08:00:00Z +%s` prints 1780300800.
constexpr std::int64_t kJune1At08Z = 1780300800;

lobfix::ReadResult read(const std::string& text, const lobfix::ReadOptions& options = {},
                        const std::string& name = "bad.jsonl") {
  std::istringstream in(text);
  return lobfix::read_observations_jsonl(in, name, options);
}

std::string join(const std::vector<std::string>& lines) {
  std::string out;
  for (const auto& line : lines)
    out += line + "\n";
  return out;
}

std::string messages(const std::vector<lobfix::Diagnostic>& list) {
  std::string out;
  for (const auto& d : list)
    out += d.to_string() + "\n";
  return out;
}

// The messages for one line of JSON Lines.
std::string line_errors(const std::string& line) {
  const auto r = read(line + "\n");
  CHECK(r.rows_read == 1);
  CHECK(r.observations.size() == (r.row_errors.empty() ? 1u : 0u));
  for (const auto& d : r.row_errors)
    CHECK(d.column == 0);
  return messages(r.row_errors);
}

// A good object's members, before the closing brace (to add one more member).
const std::string kGood =
    R"({"time": "2026-06-01T10:00:00Z", "station": "walker-A", "lat": -31.245, "lon": 146.462, )"
    R"("bearing_deg": 36, "sigma_deg": 2)";

// Temporarily reads std::cin from `text`.
class CinFrom {
 public:
  explicit CinFrom(const std::string& text) : in_(text), saved_(std::cin.rdbuf(in_.rdbuf())) {}
  ~CinFrom() { std::cin.rdbuf(saved_); }
  CinFrom(const CinFrom&) = delete;
  CinFrom& operator=(const CinFrom&) = delete;

 private:
  std::istringstream in_;
  std::streambuf* saved_;
};

void write_file(const std::string& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
  REQUIRE(out.good());
}

}  // namespace

TEST_CASE("jsonl: a good file") {
  // One object per line; '#' comments and blank lines skipped; a UTF-8 byte order mark and
  // CRLF line ends tolerated (as in CSV); JSON string escapes (RFC 8259 section 7) undone.
  const std::string text =
      "\xEF\xBB\xBF# invented exercise\r\n"
      "\r\n"
      R"({"time": "2026-06-01T10:00:00Z", "station": "walker \"A\"", "lat": -31.25, )"
      R"("lon": 146.45, "bearing_deg": 45.5, "sigma_deg": 2.5, "signal": "ch-7"})"
      "\r\n"
      "   # a comment between objects\n"
      " \t \n"
      R"(  { " Bearing_Deg ": "+310", "TIME": " 2026-06-01T10:05:00.5+02:00 ", "Lat": "-31.15",)"
      R"( "lon": 146.55, "station": "post K", "sigma_deg": 3, "signal": null, "alt_m": null}  )"
      "\n";
  const auto r = read(text, {}, "good.jsonl");
  CHECK(messages(r.row_errors).empty());
  CHECK(r.warnings.empty());
  CHECK(r.rows_read == 2);
  REQUIRE(r.observations.size() == 2);

  const auto& a = r.observations[0];
  CHECK(a.station == "walker \"A\"");
  CHECK(a.bearing_deg == 45.5);
  CHECK(a.lat_deg == -31.25);
  CHECK(a.lon_deg == 146.45);
  CHECK(a.sigma_deg == 2.5);
  CHECK(a.signal == "ch-7");
  CHECK(a.time_text == "2026-06-01T10:00:00Z");
  CHECK(a.time_unix_ns == (kJune1At08Z + 7200) * kNsPerS);
  CHECK(a.source.file == "good.jsonl");
  CHECK(a.source.line == 3);
  // JSON Lines has no columns: the field names identify the fields.
  CHECK(a.columns.time == 0);
  CHECK(a.columns.bearing == 0);
  CHECK(a.columns.lat == 0);

  const auto& b = r.observations[1];
  CHECK(b.bearing_deg == 310.0);
  CHECK(b.lat_deg == -31.15);
  CHECK(b.signal.empty());  // null is an empty cell
  CHECK_FALSE(b.alt_m.has_value());
  // String values are trimmed like CSV cells; 10:05:00.5+02:00 is 08:05:00.5Z.
  CHECK(b.time_text == "2026-06-01T10:05:00.5+02:00");
  CHECK(b.time_unix_ns == (kJune1At08Z + 300) * kNsPerS + 500'000'000);
  CHECK(b.source.line == 6);
}

TEST_CASE("jsonl: every field, and interferometer readings") {
  SUBCASE("a relative bearing with heading and mirror candidate") {
    const auto r =
        read(R"({"time": "2026-06-01T10:00:00Z", "station": "van-B", "alt_m": 312.5, )"
             R"("bearing_deg": 350, "bearing_alt_deg": 190, "sigma_deg": 2, "pos_sigma_m": 4, )"
             R"("signal": "ch-9", "reference": "Relative", "heading_deg": 90, )"
             R"("heading_sigma_deg": 1.5})"
             "\n");
    CHECK(messages(r.row_errors).empty());
    REQUIRE(r.observations.size() == 1);
    const auto& o = r.observations[0];
    CHECK(o.reference == lobfix::BearingReference::relative);
    CHECK(o.bearing_alt_deg == 190.0);
    CHECK(o.heading_deg == 90.0);
    CHECK(o.heading_sigma_deg == 1.5);
    CHECK(o.alt_m == 312.5);
    CHECK(o.pos_sigma_m == 4.0);
    CHECK_FALSE(o.lat_deg.has_value());  // no position: from the station's track
  }
  SUBCASE("interferometer readings") {
    // Half-wavelength spacing at 150 MHz: lambda = c / f = 1.9986 m (SI c = 299792458 m/s).
    const auto r =
        read(R"({"time": 1780000000, "station": "mast-C", "lat": -31.19, "lon": 146.569, )"
             R"("phase_deg": -45.5, "phase_sigma_deg": 6, "spacing_m": 0.9993, )"
             R"("frequency_hz": 1.5e8, "axis_deg": 360})"
             "\n");
    CHECK(messages(r.row_errors).empty());
    REQUIRE(r.observations.size() == 1);
    const auto& o = r.observations[0];
    CHECK_FALSE(o.bearing_deg.has_value());
    CHECK_FALSE(o.sigma_deg.has_value());
    CHECK(o.phase_deg == -45.5);
    CHECK(o.phase_sigma_deg == 6.0);
    CHECK(o.spacing_m == 0.9993);
    CHECK(o.frequency_hz == 150e6);
    CHECK(o.axis_deg == 0.0);  // 360 is north again
  }
}

TEST_CASE("jsonl: times in Unix seconds") {
  const auto time_of = [](const std::string& json_time) {
    const auto r = read(R"({"time": )" + json_time +
                        R"(, "station": "walker-A", "bearing_deg": 10, "sigma_deg": 2})"
                        "\n");
    INFO("time: " << json_time << ": " << messages(r.row_errors));
    REQUIRE(r.observations.size() == 1);
    return r.observations[0];
  };
  // GNU date: `date -u -d @1780000000` prints Thu May 28 20:26:40 UTC 2026.
  const auto whole = time_of("1780000000");
  CHECK(whole.time_unix_ns == time_of(R"("2026-05-28T20:26:40Z")").time_unix_ns);
  CHECK(whole.time_text == "1780000000");
  // A JSON number is kept as written, and converted exactly; GNU date:
  // `date -u -d @1780000000.25 +%Y-%m-%dT%H:%M:%S.%NZ` prints 2026-05-28T20:26:40.250000000Z.
  const auto quarter = time_of("1780000000.25");
  CHECK(quarter.time_text == "1780000000.25");
  CHECK(quarter.time_unix_ns == time_of(R"("2026-05-28T20:26:40.250Z")").time_unix_ns);
  CHECK(time_of("1.78e9").time_unix_ns == whole.time_unix_ns);
  // A string holding a plain number is Unix seconds too, as in a CSV cell.
  CHECK(time_of(R"("1780000000")").time_unix_ns == whole.time_unix_ns);
  // Refused as in CSV, with column 0.
  CHECK(line_errors(R"({"time": -5, "station": "a", "bearing_deg": 1, "sigma_deg": 2})") ==
        "bad.jsonl:1: time '-5' is not valid Unix seconds: it is before 1970-01-01T00:00:00Z\n");
  CHECK(line_errors(R"({"time": 1780000000250, "station": "a", "bearing_deg": 1, )"
                    R"("sigma_deg": 2})") ==
        "bad.jsonl:1: time '1780000000250' is not valid Unix seconds: it is after "
        "2262-04-11T23:47:16.854775807Z, the last time that 64-bit nanoseconds hold (a count of "
        "milliseconds?)\n");
}

TEST_CASE("jsonl: the same bad-value messages as CSV, with column 0") {
  struct Case {
    std::string field;
    std::string json;    // the value as written in JSON
    std::string reason;  // the CSV reader's reason for the same cell
  };
  // docs/input-format.md; the CSV reader's wording (reader_csv_test.cpp) for each.
  const std::vector<Case> cases = {
      {"lat", "95.2", "lat 95.2 is outside [-90, 90]"},
      {"lat", "\"95.2\"", "lat 95.2 is outside [-90, 90]"},
      {"lat", "\"12,5\"", "lat '12,5' is not a number (the decimal mark is '.')"},
      {"lat", "\"nan\"", "lat 'nan' is not a finite number"},
      {"lat", "1e400", "lat 1e400 is too large or too small"},
      {"lon", "-180.01", "lon -180.01 is outside [-180, 180]"},
      {"bearing_deg", "\"abc\"", "bearing_deg 'abc' is not a number"},
      {"bearing_deg", "361", "bearing_deg 361 is outside [0, 360]"},
      {"bearing_deg", "\"\"", "bearing_deg is empty"},
      {"bearing_deg", "null", "bearing_deg is empty"},
      {"sigma_deg", "0", "sigma_deg 0 must be > 0"},
      {"sigma_deg", "91", "sigma_deg 91 must be <= 90"},
      {"pos_sigma_m", "-1", "pos_sigma_m -1 must be >= 0"},
      {"alt_m", "200000", "alt_m 200000 is outside [-11000, 100000]"},
      {"station", "\"  \"", "station is empty"},
      {"time", "\"2026-13-01T10:00:00Z\"",
       "time '2026-13-01T10:00:00Z' is not a valid ISO 8601 time: month 13 is outside 1..12"},
      {"time", "\"2026-06-01T10:00:00\"",
       "time '2026-06-01T10:00:00' has no zone: add Z for UTC or an offset like +02:00"},
  };
  for (const Case& c : cases) {
    INFO(c.field << ": " << c.json);
    // The good object with this one member overridden (the last of two keys would be a
    // duplicate, so the good value is left out).
    std::string line = "{";
    const std::vector<std::pair<std::string, std::string>> members = {
        {"time", "\"2026-06-01T10:00:00Z\""},
        {"station", "\"walker-A\""},
        {"lat", "-31.245"},
        {"lon", "146.462"},
        {"bearing_deg", "36"},
        {"sigma_deg", "2"},
        {"pos_sigma_m", "5"},
        {"alt_m", "120"}};
    for (const auto& [name, value] : members) {
      line +=
          (line.size() > 1 ? ", \"" : "\"") + name + "\": " + (name == c.field ? c.json : value);
    }
    line += "}";
    const auto r = read("\n\n" + line + "\n");
    REQUIRE(r.row_errors.size() == 1);
    CHECK(r.row_errors[0].to_string() == "bad.jsonl:3: " + c.reason);
    CHECK(r.row_errors[0].line == 3);
    CHECK(r.row_errors[0].column == 0);
    CHECK(r.row_errors[0].field == c.field);
  }
}

TEST_CASE("jsonl: the rules between fields, as in CSV") {
  CHECK(line_errors("{}") ==
        join({"bad.jsonl:1: time is missing", "bad.jsonl:1: station is missing",
              "bad.jsonl:1: bearing_deg is missing",
              "bad.jsonl:1: sigma_deg is missing: give a value or a default (--sigma-deg)"}));
  CHECK(line_errors(R"({"time": "2026-06-01T10:00:00Z", "station": "a", "lat": 1, )"
                    R"("bearing_deg": 1, "sigma_deg": 2})") ==
        "bad.jsonl:1: lon is missing but lat is given: give both, or neither to use the "
        "station's track\n");
  CHECK(line_errors(kGood + R"(, "phase_deg": 10})") ==
        "bad.jsonl:1: bearing_deg and interferometer readings (phase_deg) are both given: give "
        "one or the other\n");
  CHECK(line_errors(R"({"time": "2026-06-01T10:00:00Z", "station": "a", "phase_deg": 10, )"
                    R"("phase_sigma_deg": 5, "axis_deg": 0})") ==
        "bad.jsonl:1: interferometer reading without spacing_m and frequency_hz: give all of "
        "phase_deg, spacing_m, frequency_hz and axis_deg\n");
  CHECK(line_errors(kGood + R"(, "heading_deg": 10})") ==
        "bad.jsonl:1: heading_deg is only used with reference 'relative'\n");
  // The default sigma fills a missing sigma_deg as it fills an empty cell.
  const auto r = read(R"({"time": "2026-06-01T10:00:00Z", "station": "a", "bearing_deg": 1})"
                      "\n",
                      [] {
                        lobfix::ReadOptions o;
                        o.default_sigma_deg = 3.0;
                        return o;
                      }());
  REQUIRE(r.observations.size() == 1);
  CHECK(r.observations[0].sigma_deg == 3.0);
}

TEST_CASE("jsonl: values of the wrong JSON type") {
  CHECK(line_errors(R"({"time": "2026-06-01T10:00:00Z", "station": 7, "bearing_deg": 36, )"
                    R"("sigma_deg": 2})") ==
        "bad.jsonl:1: station must be a string, not a number\n");
  CHECK(line_errors(kGood + R"(, "signal": ["ch-7"]})") ==
        "bad.jsonl:1: signal must be a string, not an array\n");
  CHECK(line_errors(kGood + R"(, "reference": true})") ==
        "bad.jsonl:1: reference must be a string, not a boolean\n");
  CHECK(line_errors(kGood + R"(, "alt_m": {"value": 120}})") ==
        "bad.jsonl:1: alt_m must be a number, not an object\n");
  CHECK(line_errors(R"({"time": false, "station": "a", "bearing_deg": 36, "sigma_deg": 2})") ==
        "bad.jsonl:1: time must be a string (ISO 8601) or a number (Unix seconds), not a "
        "boolean\n");
  // Several in one object: in the object's order, each naming its field.
  const auto r = read(R"({"time": "2026-06-01T10:00:00Z", "station": "a", "bearing_deg": [36], )"
                      R"("sigma_deg": true})"
                      "\n");
  CHECK(messages(r.row_errors) == join({"bad.jsonl:1: bearing_deg must be a number, not an array",
                                        "bad.jsonl:1: sigma_deg must be a number, not a boolean"}));
  REQUIRE(r.row_errors.size() == 2);
  CHECK(r.row_errors[0].field == "bearing_deg");
  CHECK(r.row_errors[1].field == "sigma_deg");
}

TEST_CASE("jsonl: a key given twice is refused, in any case") {
  CHECK(line_errors(kGood + R"(, " LAT": 12})") ==
        "bad.jsonl:1: lat appears twice in the object\n");
}

TEST_CASE("jsonl: lines that are not valid JSON, or not an object") {
  // The reason after "line is not valid JSON at column N:" is nlohmann::json 3.11.2's own.
  const auto r = read(R"({"time": "2026-06-01T10:00:00Z", "station": "a", "bearing_deg": x})"
                      "\n"
                      R"({"time": "2026-06-01T10:00:00Z", "station": "a",})"
                      "\n"
                      R"({"station": "abc})"
                      "\n"
                      R"({"station": "a"} {"station": "b"})"
                      "\n"
                      R"({'station': 'a'})"
                      "\n"
                      "[1, 2]\n42\n\"text\"\nnull\ntrue\n" +
                      kGood + "}\n");
  CHECK(r.rows_read == 11);
  REQUIRE(r.observations.size() == 1);
  CHECK(r.observations[0].source.line == 11);
  CHECK(messages(r.row_errors) ==
        join({"bad.jsonl:1: line is not valid JSON at column 65: invalid literal; last read: "
              "'\"bearing_deg\": x'",
              "bad.jsonl:2: line is not valid JSON at column 49: unexpected '}'; expected string "
              "literal",
              "bad.jsonl:3: line is not valid JSON at column 18: invalid string: missing closing "
              "quote; last read: '\"abc}'",
              "bad.jsonl:4: line is not valid JSON at column 18: unexpected '{'; expected end of "
              "input",
              "bad.jsonl:5: line is not valid JSON at column 2: invalid literal; last read: '{''; "
              "expected string literal",
              "bad.jsonl:6: line is a JSON array, not an object: give one object {...} per line",
              "bad.jsonl:7: line is a JSON number, not an object: give one object {...} per line",
              "bad.jsonl:8: line is a JSON string, not an object: give one object {...} per line",
              "bad.jsonl:9: line is JSON null, not an object: give one object {...} per line",
              "bad.jsonl:10: line is a JSON boolean, not an object: give one object {...} per "
              "line"}));
  for (const auto& d : r.row_errors) {
    CHECK(d.column == 0);
    CHECK(d.field.empty());
  }
}

TEST_CASE("jsonl: an unknown field is warned about once, at its first line") {
  const auto r = read("# a comment\n" + kGood + R"(, "operator": "kim"})" + "\n" + kGood +
                      R"(, "Operator": "lee", "weather": {"wind": 3}})" + "\n" + kGood +
                      R"(, "operator": null})" + "\n");
  CHECK(r.row_errors.empty());
  CHECK(r.observations.size() == 3);
  CHECK(messages(r.warnings) == join({"bad.jsonl:2: unknown field 'operator' ignored",
                                      "bad.jsonl:3: unknown field 'weather' ignored"}));
  REQUIRE(r.warnings.size() == 2);
  CHECK(r.warnings[0].line == 2);
  CHECK(r.warnings[0].column == 0);
  CHECK(r.warnings[0].field == "operator");
}

TEST_CASE("jsonl: the sample files under tests/data/jsonl") {
  // tests/data/jsonl/README.md describes both files.
  const std::string good = lobfix_test::data_path("jsonl/good.jsonl");
  const auto g = lobfix::read_observations_file(good);
  CHECK(messages(g.row_errors).empty());
  CHECK(g.warnings.empty());
  CHECK(g.rows_read == 4);
  REQUIRE(g.observations.size() == 4);
  // The same bearings as csv/good_small.csv, read the same way.
  const auto csv = lobfix::read_observations_file(lobfix_test::data_path("csv/good_small.csv"));
  REQUIRE(csv.observations.size() == 4);
  for (std::size_t i = 0; i < 4; ++i) {
    INFO("row " << i);
    CHECK(g.observations[i].station == csv.observations[i].station);
    CHECK(g.observations[i].time_unix_ns == csv.observations[i].time_unix_ns);
    CHECK(g.observations[i].lat_deg == csv.observations[i].lat_deg);
    CHECK(g.observations[i].lon_deg == csv.observations[i].lon_deg);
    CHECK(g.observations[i].bearing_deg == csv.observations[i].bearing_deg);
    CHECK(g.observations[i].sigma_deg == csv.observations[i].sigma_deg);
    CHECK(g.observations[i].pos_sigma_m == csv.observations[i].pos_sigma_m);
    CHECK(g.observations[i].signal == csv.observations[i].signal);
  }
  CHECK(g.observations[2].time_text == "1780308250");
  CHECK(g.observations[2].source.line == 5);

  const std::string bad = lobfix_test::data_path("jsonl/bad.jsonl");
  const auto b = lobfix::read_observations_file(bad);
  CHECK(b.rows_read == 7);
  CHECK(b.observations.size() == 2);
  CHECK(messages(b.row_errors) ==
        join({bad + ":2: bearing_deg 'abc' is not a number",
              bad + ":3: lat 95.2 is outside [-90, 90]",
              bad + ":4: line is not valid JSON at column 130: unexpected '}'; expected string "
                    "literal",
              bad + ":5: line is a JSON array, not an object: give one object {...} per line",
              bad + ":6: station must be a string, not a number"}));
  CHECK(messages(b.warnings) == join({bad + ":6: unknown field 'operator' ignored"}));
}

TEST_CASE("jsonl: read_observations_file tells JSON Lines from CSV") {
  const std::string jsonl = "# made up\n\n" + kGood + "}\n";
  const std::string csv =
      "# made up\ntime,station,bearing_deg,sigma_deg\n2026-06-01T10:00:00Z,walker-A,36,2\n";
  SUBCASE("standard input, by its first character") {
    {
      CinFrom in(jsonl);
      const auto r = lobfix::read_observations_file("-");
      REQUIRE(r.observations.size() == 1);
      CHECK(r.observations[0].source.file == "<stdin>");
      CHECK(r.observations[0].source.line == 3);
      CHECK(r.observations[0].columns.bearing == 0);  // JSON Lines
    }
    {
      CinFrom in(csv);
      const auto r = lobfix::read_observations_file("-");
      REQUIRE(r.observations.size() == 1);
      CHECK(r.observations[0].source.file == "<stdin>");
      CHECK(r.observations[0].columns.bearing == 3);  // CSV
    }
    {
      CinFrom in("\xEF\xBB\xBF  \t" + kGood + "}\n");
      const auto r = lobfix::read_observations_file("-");
      CHECK(r.observations.size() == 1);
    }
  }
  SUBCASE("a file by its name, else by its first character") {
    const std::string txt = lobfix_test::tmp_path("reader-sniff.txt");
    write_file(txt, jsonl);
    const auto by_content = lobfix::read_observations_file(txt);
    REQUIRE(by_content.observations.size() == 1);
    CHECK(by_content.observations[0].source.file == txt);

    // The name wins: a CSV header in a .NDJSON file is read (and refused) as JSON.
    const std::string ndjson = lobfix_test::tmp_path("reader-sniff.NDJSON");
    write_file(ndjson, csv);
    const auto by_name = lobfix::read_observations_file(ndjson);
    CHECK(by_name.observations.empty());
    CHECK(messages(by_name.row_errors) ==
          join({ndjson + ":2: line is not valid JSON at column 2: invalid literal; last read: "
                         "'ti'",
                ndjson + ":3: line is not valid JSON at column 6: unexpected number literal; "
                         "expected end of input"}));
  }
  SUBCASE("a file that cannot be opened") {
    CHECK_THROWS_AS(lobfix::read_observations_file(lobfix_test::tmp_path("none/x.jsonl")),
                    lobfix::InputError);
  }
}

TEST_CASE("jsonl: a default sigma outside 0 to 90 is refused, as for CSV") {
  lobfix::ReadOptions o;
  o.default_sigma_deg = -1.0;
  try {
    read(kGood + "}\n", o);
    FAIL("no InputError");
  } catch (const lobfix::InputError& e) {
    CHECK(e.diagnostic().to_string() ==
          "bad.jsonl: the default sigma_deg (--sigma-deg) -1 must be in (0, 90]");
  }
}

TEST_CASE("jsonl: many lines") {
  std::string text;
  const int n = 20000;
  for (int i = 0; i < n; ++i) {
    text += R"({"time": )" + std::to_string(1780000000 + i) + R"(, "station": "walker-)" +
            std::to_string(i % 7) + R"(", "bearing_deg": )" + std::to_string(i % 360) +
            R"(, "sigma_deg": 2})" + "\n";
  }
  const auto r = read(text);
  CHECK(r.row_errors.empty());
  REQUIRE(r.observations.size() == static_cast<std::size_t>(n));
  CHECK(r.observations.back().source.line == n);
  CHECK(r.observations.back().time_unix_ns == (1780000000 + n - 1) * kNsPerS);
  CHECK(r.observations.back().bearing_deg == static_cast<double>((n - 1) % 360));
}
