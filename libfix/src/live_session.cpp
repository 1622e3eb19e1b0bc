// The accepted bearings of a live session and their solve (live_session.hpp).
#include "lobfix/live_session.hpp"

#include <utility>

#include "lobfix/consistency.hpp"

namespace lobfix {

std::vector<FixResult> solve_and_describe(const std::vector<Bearing>& bearings,
                                          const LiveOptions& options) {
  // The same steps, in the same order, as the batch command's solve without windows.
  std::vector<FixResult> results;
  for (Fix& fix : solve_by_signal(bearings, options.solve)) {
    FixResult r;
    r.uncertainty = describe_uncertainty(fix, options.uncertainty);
    r.motion = test_for_motion(fix, bearings, options.uncertainty.alpha);
    r.fix = std::move(fix);
    results.push_back(std::move(r));
  }
  return results;
}

MapView newest_for_map(const std::vector<Bearing>& bearings, const std::vector<FixResult>& results,
                       std::size_t max_bearings) {
  MapView view;
  if (max_bearings == 0 || bearings.size() <= max_bearings) {
    view.bearings = bearings;
    view.results = results;
    return view;
  }
  const std::size_t first = bearings.size() - max_bearings;
  view.bearings.assign(bearings.begin() + static_cast<std::ptrdiff_t>(first), bearings.end());
  view.results = results;
  for (FixResult& r : view.results) {
    std::vector<BearingFit> kept;
    for (BearingFit& f : r.fix.bearings) {
      if (f.index >= first) {
        f.index -= first;
        kept.push_back(f);
      }
    }
    r.fix.bearings = std::move(kept);
  }
  return view;
}

LiveSession::LiveSession(LiveOptions options) : options_(std::move(options)) {}

PreparedBatch LiveSession::prepare(std::vector<IngestedLine> lines,
                                   const std::string& source) const {
  PreparedBatch batch;
  std::vector<Observation> observations;
  observations.reserve(lines.size());
  for (IngestedLine& l : lines) {
    l.observation.source.file = source;
    l.observation.source.line = l.line;
    observations.push_back(l.observation);
  }
  NormaliseResult n = normalise(observations, {}, options_.normalise);
  // normalise keeps input order; its errors name the line they belong to.
  std::unordered_map<int, std::vector<Diagnostic>> errors;
  for (Diagnostic& d : n.errors)
    errors[d.line].push_back(std::move(d));
  std::unordered_map<std::string, std::size_t> in_batch;
  std::size_t next_bearing = 0;
  for (IngestedLine& l : lines) {
    if (const auto e = errors.find(l.line); e != errors.end()) {
      batch.rejected.push_back(Rejection{l.line, RejectKind::not_usable, std::move(e->second)});
      continue;
    }
    Bearing b = std::move(n.bearings[next_bearing++]);
    if (const auto seq = find(l.key)) {
      batch.duplicates.push_back(PreparedBatch::Duplicate{l.line, *seq, 0});
      continue;
    }
    if (const auto it = in_batch.find(l.key); it != in_batch.end()) {
      batch.duplicates.push_back(PreparedBatch::Duplicate{l.line, 0, it->second});
      continue;
    }
    in_batch.emplace(l.key, batch.items.size());
    batch.items.push_back(
        PreparedBatch::Item{std::move(b), std::move(l.payload), std::move(l.key), l.line});
  }
  return batch;
}

void LiveSession::commit(PreparedBatch batch, std::uint64_t first_seq) {
  std::uint64_t seq = first_seq;
  for (PreparedBatch::Item& item : batch.items) {
    item.bearing.source = SourceRef{"journal", static_cast<int>(seq)};
    seq_by_key_.emplace(std::move(item.key), seq);
    bearings_.push_back(std::move(item.bearing));
    last_seq_ = seq++;
  }
}

std::optional<std::uint64_t> LiveSession::find(const std::string& key) const {
  const auto it = seq_by_key_.find(key);
  if (it == seq_by_key_.end())
    return std::nullopt;
  return it->second;
}

}  // namespace lobfix
