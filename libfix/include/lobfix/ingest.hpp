// lobfix: one packet of bearings as a live session receives it (an HTTP body, a UDP
// datagram, a line of standard input) parsed into observations, or into rejections with
// their reasons (docs/live.md, "Packets").
//
// A packet is JSON Lines: one bearing object per line, with the fields and rules of bearing
// files (docs/input-format.md); the lines are read by read_observations_jsonl, so a bad value
// gets the same message as in a file. Nothing here touches the network or the disk.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/observation.hpp"
#include "lobfix/reader.hpp"

namespace lobfix {

/// Why a line or packet was refused; the counters of a live session are kept per kind.
enum class RejectKind {
  too_large,       ///< the packet is over IngestOptions::max_packet_bytes
  too_many_lines,  ///< the packet has more bearing lines than IngestOptions::max_lines
  empty,           ///< the packet holds no bearing (only blanks and comments)
  bad_json,        ///< a line is not valid JSON
  not_object,      ///< a line is valid JSON but not an object
  bad_field,       ///< a field is missing, of the wrong type, out of range, or breaks a rule
  not_usable,      ///< read fine but cannot become a true bearing (stage normalise)
  bad_token,       ///< the shared token is missing or wrong (the transports check it)
};
/// "too_large", "too_many_lines", "empty", "bad_json", "not_object", "bad_field",
/// "not_usable", "bad_token".
const char* to_string(RejectKind kind);
inline constexpr int kRejectKindCount = 8;

struct IngestOptions {
  /// Packets longer than this (bytes) are refused whole, unread.
  std::size_t max_packet_bytes = std::size_t{1024} * 1024;
  /// Packets with more bearing lines (not blank, not comments) than this are refused whole.
  std::size_t max_lines = 10000;
  ReadOptions read;
};

/// A good line: the observation as read and the line as it goes into the journal.
struct IngestedLine {
  Observation observation;
  std::string payload;  ///< the line as received, without its line end and outer blanks
  /// The line's JSON in one canonical form (members sorted, numbers as parsed): two lines
  /// with the same key carry the same bearing (a retransmission).
  std::string key;
  int line = 0;  ///< 1-based line of the packet (plus the caller's offset)
};

/// A refused line (line > 0) or packet (line 0), with every reason found.
struct Rejection {
  int line = 0;
  RejectKind kind = RejectKind::bad_field;
  std::vector<Diagnostic> reasons;  ///< at least one; file = the packet's source name
  /// The reasons as "source:line: reason" joined by "; ".
  std::string to_string() const;
};

struct IngestResult {
  std::vector<IngestedLine> accepted;  ///< in packet order
  std::vector<Rejection> rejected;     ///< in packet order
  std::vector<Diagnostic> warnings;    ///< e.g. an unknown field (the reader's warnings)
  int lines = 0;                       ///< bearing lines seen (not blank, not comments)
};

/// Parse one packet. `source` names it in messages (e.g. "http 127.0.0.1:5123"); line
/// numbers are the packet's own plus `line_offset`. Never throws for anything in `packet`:
/// every line ends up either accepted or rejected with a reason.
/// @throws InputError only for invalid options (a default sigma outside (0, 90]).
IngestResult parse_packet(std::string_view packet, const std::string& source,
                          const IngestOptions& options = {}, int line_offset = 0);

}  // namespace lobfix
