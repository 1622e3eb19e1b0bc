// lobfix: the state of a live session, the bearings accepted so far and how they are solved
// again when more arrive (docs/live.md). The session holds no network or file: the app feeds
// it lines from ingest.hpp after they are in the journal (journal.hpp).
//
// Each solve is a full solve of all accepted bearings, through the same stages and functions
// as a batch run (normalise, solve_by_signal, describe_uncertainty, test_for_motion), so the
// live fix equals `lobfix solve` of the same bearings with the same options.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <unordered_map>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/ingest.hpp"
#include "lobfix/normalise.hpp"
#include "lobfix/solver.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

struct LiveOptions {
  NormaliseOptions normalise;  ///< no tracks: live bearings carry their own positions
  SolveOptions solve;
  UncertaintyOptions uncertainty;
};

/// A batch checked against the session: the lines that can join it, with their true
/// bearings, and those that cannot.
struct PreparedBatch {
  struct Item {
    Bearing bearing;
    std::string payload;  ///< for the journal
    std::string key;      ///< ingest's canonical form
    int line = 0;
  };
  std::vector<Item> items;  ///< new bearings, in packet order
  /// Lines that repeat a bearing already accepted (or earlier in the batch): line and the
  /// sequence number it has (0 when it repeats an item of this batch, which has none yet).
  struct Duplicate {
    int line = 0;
    std::uint64_t seq = 0;
    std::size_t same_as_item = 0;  ///< index into items when seq is 0
  };
  std::vector<Duplicate> duplicates;
  std::vector<Rejection> rejected;  ///< kind not_usable
};

/// The solved state at one moment.
struct LiveSolution {
  std::uint64_t revision = 0;  ///< 1 for the first solve, +1 for each
  std::uint64_t last_seq = 0;  ///< the newest sequence number included
  std::vector<Bearing> bearings;
  std::vector<FixResult> results;  ///< one per signal, as solve_by_signal groups them
};

/// Solve and describe `bearings` as a batch run does: one FixResult per signal.
/// @throws InputError for invalid options.
std::vector<FixResult> solve_and_describe(const std::vector<Bearing>& bearings,
                                          const LiveOptions& options);

/// What the map files of a live session draw: the newest bearings only, with the results
/// per-bearing entries limited to those and their indices moved to match. The fixes, their
/// ellipses and statistics are those of all bearings. (A map of thousands of rays shows
/// nothing, and drawing them takes seconds on every solve.)
struct MapView {
  std::vector<Bearing> bearings;
  std::vector<FixResult> results;
};
/// The newest `max_bearings` of `bearings` (all of them when max_bearings is 0 or not
/// fewer), in order, and `results` to match.
MapView newest_for_map(const std::vector<Bearing>& bearings, const std::vector<FixResult>& results,
                       std::size_t max_bearings);

/// Accepted bearings in sequence order. Not thread-safe: the caller serialises.
class LiveSession {
 public:
  explicit LiveSession(LiveOptions options);

  /// Normalise `lines` (stage normalise, without tracks) and sort out repeats. Changes
  /// nothing. The bearings' source is named `source`, line = the packet line.
  PreparedBatch prepare(std::vector<IngestedLine> lines, const std::string& source) const;

  /// Add the items of `batch`, which the journal holds as records first_seq, first_seq + 1,
  /// ... in order. The bearings' source becomes ("journal", seq).
  void commit(PreparedBatch batch, std::uint64_t first_seq);

  /// The sequence number of the accepted bearing with this key, if any.
  std::optional<std::uint64_t> find(const std::string& key) const;

  const std::vector<Bearing>& bearings() const { return bearings_; }
  std::uint64_t last_seq() const { return last_seq_; }
  const LiveOptions& options() const { return options_; }

 private:
  LiveOptions options_;
  std::vector<Bearing> bearings_;
  std::unordered_map<std::string, std::uint64_t> seq_by_key_;
  std::uint64_t last_seq_ = 0;
};

}  // namespace lobfix
