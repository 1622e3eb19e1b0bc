// Live packets to observations (ingest.hpp): the packet's limits, then the JSON Lines reader
// on the whole packet, then each line sorted into accepted or rejected.
#include "lobfix/ingest.hpp"

#include <map>
#include <nlohmann/json.hpp>
#include <utility>

#include "detail/field_rules.hpp"
#include "detail/reader_text.hpp"

namespace lobfix {

namespace {

// The reader's line-level messages (not about one field) say what the line is.
RejectKind kind_of(const Diagnostic& d) {
  if (!d.field.empty())
    return RejectKind::bad_field;
  if (d.reason.rfind("line is not valid JSON", 0) == 0)
    return RejectKind::bad_json;
  if (d.reason.rfind("line is a JSON", 0) == 0 || d.reason.rfind("line is JSON", 0) == 0)
    return RejectKind::not_object;
  return RejectKind::bad_field;
}

struct PacketLine {
  std::string_view text;
  int line = 0;
};

// The bearing lines of a packet, split exactly as the JSON Lines reader splits a file.
std::vector<PacketLine> bearing_lines(std::string_view text) {
  std::vector<PacketLine> out;
  text = detail::without_bom(text);
  int line = 0;
  std::size_t start = 0;
  while (start < text.size()) {
    ++line;
    std::size_t end = text.find('\n', start);
    if (end == std::string_view::npos)
      end = text.size();
    const std::string_view t = detail::trim_blanks(text.substr(start, end - start));
    start = end + 1;
    if (!t.empty() && t.front() != '#')
      out.push_back(PacketLine{t, line});
  }
  return out;
}

}  // namespace

const char* to_string(RejectKind kind) {
  switch (kind) {
    case RejectKind::too_large:
      return "too_large";
    case RejectKind::too_many_lines:
      return "too_many_lines";
    case RejectKind::empty:
      return "empty";
    case RejectKind::bad_json:
      return "bad_json";
    case RejectKind::not_object:
      return "not_object";
    case RejectKind::bad_field:
      return "bad_field";
    case RejectKind::not_usable:
      return "not_usable";
    case RejectKind::bad_token:
      return "bad_token";
  }
  return "unknown";
}

std::string Rejection::to_string() const {
  std::string out;
  for (const Diagnostic& d : reasons) {
    if (!out.empty())
      out += "; ";
    out += d.to_string();
  }
  return out;
}

IngestResult parse_packet(std::string_view packet, const std::string& source,
                          const IngestOptions& options, int line_offset) {
  detail::check_read_options(options.read, source);
  IngestResult result;
  const auto reject_packet = [&](RejectKind kind, std::string reason) {
    result.rejected.push_back(
        Rejection{0, kind, {Diagnostic{source, 0, 0, "", std::move(reason)}}});
    return result;
  };
  if (packet.size() > options.max_packet_bytes) {
    return reject_packet(RejectKind::too_large, "packet of " + std::to_string(packet.size()) +
                                                    " bytes is over the limit of " +
                                                    std::to_string(options.max_packet_bytes) +
                                                    " bytes; nothing in it was read");
  }
  const std::vector<PacketLine> lines = bearing_lines(packet);
  result.lines = static_cast<int>(lines.size());
  if (lines.empty())
    return reject_packet(RejectKind::empty,
                         "packet holds no bearing (only blank or comment lines)");
  if (lines.size() > options.max_lines) {
    return reject_packet(RejectKind::too_many_lines, "packet has " + std::to_string(lines.size()) +
                                                         " bearing lines, over the limit of " +
                                                         std::to_string(options.max_lines) +
                                                         "; nothing in it was read");
  }

  ReadResult read = detail::read_jsonl_text(packet, source, options.read);
  // Reasons per line, in the reader's order.
  std::map<int, std::vector<Diagnostic>> errors;
  for (Diagnostic& d : read.row_errors)
    errors[d.line].push_back(std::move(d));
  std::map<int, Observation*> good;
  for (Observation& o : read.observations)
    good[o.source.line] = &o;

  for (const PacketLine& pl : lines) {
    const int shown = pl.line + line_offset;
    if (const auto e = errors.find(pl.line); e != errors.end()) {
      Rejection r;
      r.line = shown;
      r.kind = kind_of(e->second.front());
      for (Diagnostic& d : e->second) {
        d.line = shown;
        r.reasons.push_back(std::move(d));
      }
      result.rejected.push_back(std::move(r));
      continue;
    }
    const auto g = good.find(pl.line);
    if (g == good.end()) {
      // The reader reports every line it does not accept; a line with neither is a reader
      // bug, still reported rather than lost.
      result.rejected.push_back(Rejection{
          shown, RejectKind::bad_field, {Diagnostic{source, shown, 0, "", "line was not read"}}});
      continue;
    }
    IngestedLine in;
    in.observation = std::move(*g->second);
    in.observation.source.line = shown;
    in.payload = std::string(pl.text);
    // The reader accepted the line, so it is one JSON object without repeated members.
    in.key = nlohmann::json::parse(pl.text, nullptr, false).dump();
    in.line = shown;
    result.accepted.push_back(std::move(in));
  }
  for (Diagnostic& w : read.warnings) {
    w.line += w.line > 0 ? line_offset : 0;
    result.warnings.push_back(std::move(w));
  }
  return result;
}

}  // namespace lobfix
