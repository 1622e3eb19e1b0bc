// Tests of lobfix/live_session.hpp: accepted bearings in sequence order, repeats found, the
// live solve equal to the batch stages, and the map's view of the newest bearings.
#include "lobfix/live_session.hpp"

#include <string>
#include <vector>

#include "lobfix/ingest.hpp"
#include "lobfix/normalise.hpp"
#include "test_support.hpp"

namespace {

// Four invented bearings from stations around a transmitter near (-31.2, 146.5).
const std::string kPacket =
    R"({"time": 1780308000, "station": "a", "lat": -31.25, "lon": 146.45, "bearing_deg": 38.5, "sigma_deg": 2})"
    "\n"
    R"({"time": 1780308010, "station": "b", "lat": -31.15, "lon": 146.44, "bearing_deg": 134.0, "sigma_deg": 2})"
    "\n"
    R"({"time": 1780308020, "station": "c", "lat": -31.21, "lon": 146.58, "bearing_deg": 278.0, "sigma_deg": 2})"
    "\n"
    R"({"time": 1780308030, "station": "d", "lat": -31.14, "lon": 146.54, "bearing_deg": 208.0, "sigma_deg": 2})"
    "\n";

}  // namespace

TEST_CASE("live session commits in sequence and finds repeats") {
  lobfix::LiveSession session{lobfix::LiveOptions{}};
  lobfix::IngestResult in = lobfix::parse_packet(kPacket, "test");
  REQUIRE(in.accepted.size() == 4);
  lobfix::PreparedBatch batch = session.prepare(in.accepted, "test");
  CHECK(batch.items.size() == 4);
  CHECK(batch.duplicates.empty());
  const std::string key_c = batch.items[2].key;
  session.commit(std::move(batch), 10);
  CHECK(session.bearings().size() == 4);
  CHECK(session.last_seq() == 13);
  CHECK(session.bearings()[2].source.line == 12);
  REQUIRE(session.find(key_c).has_value());
  CHECK(*session.find(key_c) == 12);

  // The same packet again, plus one line twice: every line is a repeat.
  const std::string again = kPacket + kPacket.substr(0, kPacket.find('\n') + 1);
  lobfix::PreparedBatch repeat =
      session.prepare(lobfix::parse_packet(again, "test").accepted, "test");
  CHECK(repeat.items.empty());
  REQUIRE(repeat.duplicates.size() == 5);
  CHECK(repeat.duplicates[0].seq == 10);
  CHECK(repeat.duplicates[4].seq == 10);

  // Repeats inside one new batch point at the first copy.
  lobfix::LiveSession fresh{lobfix::LiveOptions{}};
  lobfix::PreparedBatch twice = fresh.prepare(lobfix::parse_packet(again, "test").accepted, "test");
  CHECK(twice.items.size() == 4);
  REQUIRE(twice.duplicates.size() == 1);
  CHECK(twice.duplicates[0].seq == 0);
  CHECK(twice.duplicates[0].same_as_item == 0);
}

TEST_CASE("live session refuses what normalise cannot use and keeps the rest") {
  lobfix::LiveSession session{lobfix::LiveOptions{}};
  // A relative bearing without a heading needs a track course; a live session has no tracks.
  const std::string packet =
      kPacket.substr(0, kPacket.find('\n') + 1) +
      R"({"time": 1780308040, "station": "e", "lat": -31.2, "lon": 146.4, "bearing_deg": 90, "sigma_deg": 2, "reference": "relative"})"
      "\n";
  lobfix::IngestResult in = lobfix::parse_packet(packet, "test");
  REQUIRE(in.accepted.size() == 2);
  lobfix::PreparedBatch batch = session.prepare(in.accepted, "test");
  CHECK(batch.items.size() == 1);
  REQUIRE(batch.rejected.size() == 1);
  CHECK(batch.rejected[0].line == 2);
  CHECK(batch.rejected[0].kind == lobfix::RejectKind::not_usable);
  CHECK(batch.rejected[0].to_string().find("test:2") == 0);
}

TEST_CASE("live solve equals the batch stages on the same bearings") {
  lobfix::LiveOptions options;
  lobfix::LiveSession session{options};
  lobfix::IngestResult in = lobfix::parse_packet(kPacket, "test");
  session.commit(session.prepare(in.accepted, "test"), 1);
  const std::vector<lobfix::FixResult> live =
      lobfix::solve_and_describe(session.bearings(), options);

  std::vector<lobfix::Observation> obs;
  for (const lobfix::IngestedLine& l : in.accepted)
    obs.push_back(l.observation);
  const lobfix::NormaliseResult n = lobfix::normalise(obs, {}, options.normalise);
  const std::vector<lobfix::Fix> batch = lobfix::solve_by_signal(n.bearings, options.solve);
  REQUIRE(live.size() == 1);
  REQUIRE(batch.size() == 1);
  REQUIRE(live[0].fix.ok());
  CHECK(live[0].fix.position.lat_deg == batch[0].position.lat_deg);
  CHECK(live[0].fix.position.lon_deg == batch[0].position.lon_deg);
  CHECK(live[0].uncertainty.ellipses.size() == 2);
  // Near the invented transmitter (-31.2, 146.5): within 2 km.
  CHECK_ABS(live[0].fix.position.lat_deg, -31.2, 0.02);
  CHECK_ABS(live[0].fix.position.lon_deg, 146.5, 0.02);
}

TEST_CASE("live map view keeps the newest bearings and moves the indices") {
  lobfix::LiveOptions options;
  lobfix::LiveSession session{options};
  session.commit(session.prepare(lobfix::parse_packet(kPacket, "test").accepted, "test"), 1);
  const std::vector<lobfix::FixResult> results =
      lobfix::solve_and_describe(session.bearings(), options);
  REQUIRE(results.size() == 1);
  REQUIRE(results[0].fix.bearings.size() == 4);

  const lobfix::MapView all = lobfix::newest_for_map(session.bearings(), results, 0);
  CHECK(all.bearings.size() == 4);
  CHECK(all.results[0].fix.bearings.size() == 4);

  const lobfix::MapView two = lobfix::newest_for_map(session.bearings(), results, 2);
  REQUIRE(two.bearings.size() == 2);
  CHECK(two.bearings[0].station == "c");
  CHECK(two.bearings[1].station == "d");
  REQUIRE(two.results[0].fix.bearings.size() == 2);
  for (const lobfix::BearingFit& f : two.results[0].fix.bearings) {
    CHECK(f.index < 2);
    CHECK(two.bearings[f.index].station == session.bearings()[f.index + 2].station);
  }
  CHECK(two.results[0].fix.position.lat_deg == results[0].fix.position.lat_deg);
}
