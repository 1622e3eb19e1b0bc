// libFuzzer target: live packets (parse_packet, lobfix/ingest.hpp) and the journal's record
// lines (journal.hpp) built from what a packet accepts.
//
// Each input is one packet, parsed with small limits and with line offsets. Properties:
// parse_packet never throws for a packet; every bearing line is either accepted or rejected
// (or the whole packet is refused with line 0); every rejection has a reason naming the
// source; every accepted line's payload is one line that, parsed alone, is accepted again
// with the same key and values; and a journal holding the accepted payloads replays them
// exactly (through a file of this process, fuzz_support.hpp).
#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <set>
#include <string>
#include <string_view>

#include "fuzz_support.hpp"
#include "lobfix/error.hpp"
#include "lobfix/ingest.hpp"
#include "lobfix/journal.hpp"

namespace {

const std::string kSource = "fuzz";

lobfix::IngestResult parse(std::string_view packet, const lobfix::IngestOptions& options,
                           int offset) {
  try {
    return lobfix::parse_packet(packet, kSource, options, offset);
  } catch (const std::exception& e) {
    std::fprintf(stderr, "lobfix fuzz: exception: %s\n", e.what());
    FUZZ_CHECK(false, "parse_packet never throws for a packet");
    return {};
  }
}

void check_result(const lobfix::IngestResult& r, const lobfix::IngestOptions& options,
                  std::size_t size, int offset) {
  bool packet_refused = false;
  std::set<int> lines;
  for (const lobfix::Rejection& x : r.rejected) {
    FUZZ_CHECK(!x.reasons.empty(), "a rejection has a reason");
    for (const lobfix::Diagnostic& d : x.reasons) {
      FUZZ_CHECK(d.file == kSource, "a reason names the source");
      FUZZ_CHECK(!d.reason.empty(), "a reason says what is wrong");
    }
    if (x.line == 0) {
      packet_refused = true;
      FUZZ_CHECK(x.kind == lobfix::RejectKind::too_large ||
                     x.kind == lobfix::RejectKind::too_many_lines ||
                     x.kind == lobfix::RejectKind::empty,
                 "only size, line count and emptiness refuse a whole packet");
    } else {
      FUZZ_CHECK(x.line > offset, "a rejected line is numbered after the offset");
      FUZZ_CHECK(lines.insert(x.line).second, "a line is rejected once");
    }
  }
  if (size > options.max_packet_bytes) {
    FUZZ_CHECK(packet_refused && r.accepted.empty(), "an oversized packet is refused unread");
    return;
  }
  for (const lobfix::IngestedLine& a : r.accepted) {
    FUZZ_CHECK(lines.insert(a.line).second, "a line is either accepted or rejected, once");
    FUZZ_CHECK(a.payload.find('\n') == std::string::npos, "a payload is one line");
    FUZZ_CHECK(!a.payload.empty() && !a.key.empty(), "a payload and its key are not empty");
  }
  if (packet_refused) {
    FUZZ_CHECK(r.accepted.empty() && r.rejected.size() == 1, "a refused packet has one rejection");
    return;
  }
  FUZZ_CHECK(static_cast<int>(lines.size()) == r.lines, "every bearing line is accounted for");
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view packet(reinterpret_cast<const char*>(data), size);
  lobfix::IngestOptions options;
  options.max_packet_bytes = 2048;
  options.max_lines = 16;
  const int offset = static_cast<int>(size % 7);
  const lobfix::IngestResult r = parse(packet, options, offset);
  check_result(r, options, size, offset);

  // Each accepted payload alone is the same bearing.
  std::string journal_text;
  std::uint64_t seq = 0;
  for (const lobfix::IngestedLine& a : r.accepted) {
    const lobfix::IngestResult again = parse(a.payload, options, 0);
    FUZZ_CHECK(again.accepted.size() == 1 && again.rejected.empty(),
               "an accepted payload alone is accepted");
    const lobfix::IngestedLine& b = again.accepted[0];
    FUZZ_CHECK(b.key == a.key, "the same payload gives the same key");
    FUZZ_CHECK(b.observation.time_unix_ns == a.observation.time_unix_ns &&
                   b.observation.bearing_deg == a.observation.bearing_deg &&
                   b.observation.lat_deg == a.observation.lat_deg &&
                   b.observation.station == a.observation.station,
               "the same payload gives the same values");
    journal_text += lobfix::journal_record_line(++seq, a.payload) + "\n";
  }

  // A journal of those records (and a few bytes of the input, without LF, as a torn last record)
  // replays them.
  if (!r.accepted.empty()) {
    static const lobfix_fuzz::InputFile file(".journal");
    std::string tail(packet.substr(0, size % 13));
    tail.erase(std::remove(tail.begin(), tail.end(), '\n'), tail.end());  // one torn line
    const std::string text = journal_text + tail;
    const std::string& path =
        file.write(reinterpret_cast<const std::uint8_t*>(text.data()), text.size());
    lobfix::JournalRecovery rec;
    try {
      const lobfix::Journal j = lobfix::Journal::open(path, &rec);
      FUZZ_CHECK(j.next_seq() == seq + 1, "the next sequence number follows the records");
    } catch (const lobfix::InputError& e) {
      std::fprintf(stderr, "lobfix fuzz: journal: %s\n", e.what());
      FUZZ_CHECK(false, "a journal with a torn tail opens");
    }
    FUZZ_CHECK(rec.records.size() == r.accepted.size(), "every record is replayed");
    for (std::size_t i = 0; i < rec.records.size(); ++i)
      FUZZ_CHECK(rec.records[i].payload == r.accepted[i].payload, "records replay as written");
    FUZZ_CHECK(rec.bytes_kept == journal_text.size(), "only the torn tail is cut");
  }
  return 0;
}
