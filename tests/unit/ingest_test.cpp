// Tests of lobfix/ingest.hpp: live packets give the file reader's observations and messages,
// every line is either accepted or rejected with a reason and a kind, and the limits hold.
#include "lobfix/ingest.hpp"

#include <string>

#include "test_support.hpp"

namespace {

const std::string kGood =
    R"({"time": "2026-06-01T10:00:00Z", "station": "walker-A", "lat": -31.245, "lon": 146.462, "bearing_deg": 36.0, "sigma_deg": 2.0, "signal": "ch-7"})";
const std::string kGood2 =
    R"({"time": 1780308150, "station": "van-B", "lat": "-31.1580", "lon": 146.448, "bearing_deg": 133.2, "sigma_deg": 2})";

}  // namespace

TEST_CASE("ingest accepts one bearing with the reader's values") {
  const lobfix::IngestResult r = lobfix::parse_packet(kGood, "http");
  REQUIRE(r.accepted.size() == 1);
  CHECK(r.rejected.empty());
  CHECK(r.lines == 1);
  const lobfix::IngestedLine& a = r.accepted[0];
  CHECK(a.line == 1);
  CHECK(a.payload == kGood);
  CHECK(a.observation.station == "walker-A");
  CHECK(a.observation.signal == "ch-7");
  CHECK_ABS(*a.observation.bearing_deg, 36.0, 0.0);
  CHECK_ABS(*a.observation.lat_deg, -31.245, 0.0);
  // 2026-06-01T10:00:00Z is 1780308000 s after the epoch (docs/input-format.md's example:
  // 1780308405 is 10:06:45 that day).
  CHECK(a.observation.time_unix_ns == 1780308000LL * 1000000000LL);
}

TEST_CASE("ingest reads a batch and numbers lines with the offset") {
  const std::string packet = "# two bearings\r\n" + kGood + "\r\n\n" + kGood2 + "\n";
  const lobfix::IngestResult r = lobfix::parse_packet(packet, "stdin", {}, 100);
  REQUIRE(r.accepted.size() == 2);
  CHECK(r.accepted[0].line == 102);
  CHECK(r.accepted[1].line == 104);
  CHECK(r.accepted[1].observation.station == "van-B");
  CHECK(r.lines == 2);
  CHECK(r.accepted[0].payload == kGood);  // no CR kept
}

TEST_CASE("ingest keys are equal for the same bearing written differently") {
  const std::string spaced =
      R"({ "station":"walker-A","time":"2026-06-01T10:00:00Z","signal":"ch-7","sigma_deg":2.0,"bearing_deg":36.0,"lon":146.462,"lat":-31.245 })";
  const lobfix::IngestResult a = lobfix::parse_packet(kGood, "http");
  const lobfix::IngestResult b = lobfix::parse_packet(spaced, "http");
  const lobfix::IngestResult c = lobfix::parse_packet(kGood2, "http");
  REQUIRE(a.accepted.size() == 1);
  REQUIRE(b.accepted.size() == 1);
  REQUIRE(c.accepted.size() == 1);
  CHECK(a.accepted[0].key == b.accepted[0].key);
  CHECK(a.accepted[0].key != c.accepted[0].key);
}

TEST_CASE("ingest rejects bad lines with the file reader's messages and keeps the good") {
  const std::string packet =
      kGood + "\n" +  // 1 good
      R"({"time": "2026-06-01T10:00:00Z", "station": "x", "lat": 95, "lon": 1, "bearing_deg": 1, "sigma_deg": 1})" +
      "\n" +               // 2 lat
      "{\"time\": 1,\n" +  // 3 not JSON
      "[1, 2]\n" +         // 4 array
      R"({"time": "2026-06-01T10:00:00Z", "station": "x", "lat": 1, "lon": 1, "bearing_deg": "abc", "sigma_deg": 1})" +
      "\n" +          // 5 number
      kGood2 + "\n";  // 6 good
  const lobfix::IngestResult r = lobfix::parse_packet(packet, "http 127.0.0.1");
  REQUIRE(r.accepted.size() == 2);
  CHECK(r.accepted[0].line == 1);
  CHECK(r.accepted[1].line == 6);
  REQUIRE(r.rejected.size() == 4);
  CHECK(r.rejected[0].line == 2);
  CHECK(r.rejected[0].kind == lobfix::RejectKind::bad_field);
  CHECK(r.rejected[0].to_string() == "http 127.0.0.1:2: lat 95 is outside [-90, 90]");
  CHECK(r.rejected[1].line == 3);
  CHECK(r.rejected[1].kind == lobfix::RejectKind::bad_json);
  CHECK(r.rejected[1].reasons[0].reason.find("line is not valid JSON") == 0);
  CHECK(r.rejected[2].kind == lobfix::RejectKind::not_object);
  CHECK(r.rejected[2].to_string().find("line is a JSON array, not an object") != std::string::npos);
  CHECK(r.rejected[3].kind == lobfix::RejectKind::bad_field);
  CHECK(r.rejected[3].to_string() == "http 127.0.0.1:5: bearing_deg 'abc' is not a number");
  CHECK(r.lines == 6);
}

TEST_CASE("ingest refuses a packet over the size limit unread") {
  lobfix::IngestOptions options;
  options.max_packet_bytes = 100;
  const lobfix::IngestResult r = lobfix::parse_packet(kGood, "udp", options);
  CHECK(r.accepted.empty());
  REQUIRE(r.rejected.size() == 1);
  CHECK(r.rejected[0].line == 0);
  CHECK(r.rejected[0].kind == lobfix::RejectKind::too_large);
  CHECK(r.rejected[0].to_string().find("is over the limit of 100 bytes") != std::string::npos);
  options.max_packet_bytes = kGood.size();  // the limit itself is allowed
  CHECK(lobfix::parse_packet(kGood, "udp", options).accepted.size() == 1);
}

TEST_CASE("ingest refuses too many lines and empty packets") {
  lobfix::IngestOptions options;
  options.max_lines = 2;
  const std::string three = kGood + "\n" + kGood2 + "\n" + kGood + "\n";
  const lobfix::IngestResult r = lobfix::parse_packet(three, "http", options);
  CHECK(r.accepted.empty());
  REQUIRE(r.rejected.size() == 1);
  CHECK(r.rejected[0].kind == lobfix::RejectKind::too_many_lines);
  for (const std::string empty : {"", "\n\n", "  # only a comment\n"}) {
    const lobfix::IngestResult e = lobfix::parse_packet(empty, "http");
    REQUIRE(e.rejected.size() == 1);
    CHECK(e.rejected[0].kind == lobfix::RejectKind::empty);
    CHECK(e.accepted.empty());
  }
}

TEST_CASE("ingest survives bytes that are not text") {
  const std::string junk("\x00\xff\xfe{\"time\x01\n\x80\x81\n", 12);
  const lobfix::IngestResult r = lobfix::parse_packet(junk, "udp");
  CHECK(r.accepted.empty());
  CHECK(r.rejected.size() == static_cast<std::size_t>(r.lines));
  for (const lobfix::Rejection& x : r.rejected)
    CHECK_FALSE(x.reasons.empty());
}

TEST_CASE("ingest names the reject kinds") {
  CHECK(std::string(lobfix::to_string(lobfix::RejectKind::too_large)) == "too_large");
  CHECK(std::string(lobfix::to_string(lobfix::RejectKind::not_usable)) == "not_usable");
  CHECK(std::string(lobfix::to_string(lobfix::RejectKind::bad_token)) == "bad_token");
}
