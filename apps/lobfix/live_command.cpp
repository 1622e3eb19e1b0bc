// `lobfix live` (docs/live.md). The library does the parsing (ingest.hpp), the journal
// (journal.hpp) and the solving (live_session.hpp); this file holds the transports, the
// threads, the debounce and the log.
//
// Threads: the HTTP server's pool, one UDP reader, one standard input reader, one solver and
// one waiting for SIGINT/SIGTERM. Locks, always taken in this order: ingest_mu_ (journal and
// session), then state_mu_ (the latest solution and the solver's flags).
#include "live_command.hpp"

#include <arpa/inet.h>
#include <httplib.h>
#include <netdb.h>
#include <netinet/in.h>
#include <poll.h>
#include <pthread.h>
#include <sys/socket.h>
#include <unistd.h>

#include <array>
#include <atomic>
#include <chrono>
#include <condition_variable>
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>
#include <thread>
#include <utility>
#include <vector>

#include "exit_codes.hpp"
#include "live_page.hpp"
#include "lobfix/crs.hpp"
#include "lobfix/error.hpp"
#include "lobfix/export.hpp"
#include "lobfix/ingest.hpp"
#include "lobfix/journal.hpp"
#include "lobfix/live_session.hpp"
#include "lobfix/raster.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/summary.hpp"

namespace lobfix_app {

namespace {

using Clock = std::chrono::steady_clock;
using json = nlohmann::json;

constexpr const char* kTokenHeader = "X-Lobfix-Token";
constexpr std::size_t kMinTokenLength = 16;

// Messages may quote bytes of a bad packet that are not UTF-8: replaced (U+FFFD), never thrown.
std::string dump_json(const json& j, int indent = -1) {
  return j.dump(indent, ' ', false, json::error_handler_t::replace);
}

std::string utc_now_text() {
  const auto now = std::chrono::system_clock::now();
  const std::time_t t = std::chrono::system_clock::to_time_t(now);
  const auto ms =
      std::chrono::duration_cast<std::chrono::milliseconds>(now.time_since_epoch()).count() % 1000;
  std::tm tm{};
  gmtime_r(&t, &tm);
  std::array<char, 96> buf{};
  std::snprintf(buf.data(), buf.size(), "%04d-%02d-%02dT%02d:%02d:%02d.%03dZ", tm.tm_year + 1900,
                tm.tm_mon + 1, tm.tm_mday, tm.tm_hour, tm.tm_min, tm.tm_sec, static_cast<int>(ms));
  return buf.data();
}

std::mutex g_log_mu;
/// One line on stderr. Control bytes (a bad packet's, quoted in a message) are written as
/// \xNN, so that a packet can neither break the log's lines nor send a terminal commands.
void log_line(const std::string& message) {
  std::string clean;
  clean.reserve(message.size());
  for (const char c : message) {
    const auto u = static_cast<unsigned char>(c);
    if (u < 0x20 || u == 0x7F) {
      std::array<char, 8> hex{};
      std::snprintf(hex.data(), hex.size(), "\\x%02X", u);
      clean += hex.data();
    } else {
      clean += c;
    }
  }
  const std::lock_guard<std::mutex> lock(g_log_mu);
  std::cerr << utc_now_text() << " lobfix live: " << clean << '\n' << std::flush;
}

/// Compares every byte of both strings whatever they hold, so that the time taken says
/// nothing about how much of a guess was right (only the lengths' difference is visible).
bool equal_constant_time(const std::string& given, const std::string& expected) {
  const std::size_t n = std::max(given.size(), expected.size());
  unsigned diff = given.size() == expected.size() ? 0U : 1U;
  for (std::size_t i = 0; i < n; ++i) {
    const auto a = static_cast<unsigned char>(i < given.size() ? given[i] : 0);
    const auto b = static_cast<unsigned char>(i < expected.size() ? expected[i] : 0);
    diff |= static_cast<unsigned>(a ^ b);
  }
  return diff == 0U;
}

bool is_default_loopback(const std::string& address) {
  return address == "127.0.0.1" || address == "::1" || address == "localhost";
}

// Writes `text` to `path` under a temporary name beside it, then renames it over `path`.
bool write_file_atomic(const std::string& path, const std::string& text) {
  const std::string tmp = path + ".tmp-" + std::to_string(static_cast<long>(::getpid()));
  {
    std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
    out << text;
    out.flush();
    if (!out) {
      std::remove(tmp.c_str());
      return false;
    }
  }
  if (std::rename(tmp.c_str(), path.c_str()) != 0) {
    std::remove(tmp.c_str());
    return false;
  }
  return true;
}

std::string read_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// Counters of one run (docs/live.md, "Status").
struct Counters {
  std::atomic<std::uint64_t> packets{0};  ///< packets received, every transport
  std::atomic<std::uint64_t> packets_http{0};
  std::atomic<std::uint64_t> packets_udp{0};
  std::atomic<std::uint64_t> packets_stdin{0};
  std::atomic<std::uint64_t> lines{0};       ///< bearing lines received
  std::atomic<std::uint64_t> accepted{0};    ///< new bearings in the journal
  std::atomic<std::uint64_t> duplicates{0};  ///< repeats of accepted bearings
  std::array<std::atomic<std::uint64_t>, lobfix::kRejectKindCount> rejected{};
  std::atomic<std::uint64_t> journal_errors{0};
  std::atomic<std::uint64_t> solves{0};
  std::atomic<std::uint64_t> output_errors{0};
  std::atomic<std::uint64_t> http_requests{0};
};

/// What the HTTP answer and the log say about one packet.
struct IngestReply {
  int http_status = 200;
  std::string body;  ///< a JSON document
};

class LiveServer {
 public:
  LiveServer(const LiveArgs& args, lobfix::LiveOptions options, lobfix::Journal journal,
             std::string token)
      : args_(args),
        session_(std::move(options)),
        journal_(std::move(journal)),
        token_(std::move(token)),
        geojson_path_(args.geojson),
        started_(std::chrono::system_clock::now()) {
    ingest_options_.max_packet_bytes = args.max_packet_bytes;
    ingest_options_.max_lines = args.max_lines;
    ingest_options_.read.default_sigma_deg = args.sigma_deg;
    if (geojson_path_.empty()) {
      private_geojson_ =
          (std::filesystem::temp_directory_path() /
           ("lobfix-live-" + std::to_string(static_cast<long>(::getpid())) + ".geojson"))
              .string();
      geojson_path_ = private_geojson_;
    }
  }
  ~LiveServer() {
    if (!private_geojson_.empty())
      std::remove(private_geojson_.c_str());
  }
  LiveServer(const LiveServer&) = delete;
  LiveServer& operator=(const LiveServer&) = delete;

  /// Feed the journal's records to the session. Returns false when a record cannot be used.
  void replay(const lobfix::JournalRecovery& recovery) {
    if (recovery.records.empty())
      return;
    std::string all;
    for (const lobfix::JournalRecord& r : recovery.records) {
      all += r.payload;
      all += '\n';
    }
    lobfix::IngestOptions unlimited = ingest_options_;
    unlimited.max_packet_bytes = all.size();
    unlimited.max_lines = recovery.records.size();
    lobfix::IngestResult parsed = lobfix::parse_packet(all, "journal", unlimited);
    for (const lobfix::Rejection& r : parsed.rejected) {
      log_line("journal record " + std::to_string(r.line) +
               " is kept in the journal but not used: " + r.to_string());
      ++replay_unused_;
    }
    const std::lock_guard<std::mutex> lock(ingest_mu_);
    lobfix::PreparedBatch batch = session_.prepare(std::move(parsed.accepted), "journal");
    for (const lobfix::Rejection& r : batch.rejected) {
      log_line("journal record " + std::to_string(r.line) +
               " is kept in the journal but not used: " + r.to_string());
      ++replay_unused_;
    }
    replay_unused_ += batch.duplicates.size();
    // Line i of the joined text is record i (records are numbered 1, 2, ... without gaps).
    for (lobfix::PreparedBatch::Item& item : batch.items) {
      lobfix::PreparedBatch one;
      const auto seq = static_cast<std::uint64_t>(item.line);
      one.items.push_back(std::move(item));
      session_.commit(std::move(one), seq);
    }
    replayed_ = session_.bearings().size();
    mark_dirty();
  }

  IngestReply ingest(std::string_view packet, const std::string& source,
                     std::atomic<std::uint64_t>& transport, int line_offset = 0) {
    // The received counters go up last, once every outcome of the packet is counted: a
    // reader of /status that sees a packet received sees all it led to.
    struct CountReceived {
      Counters& c;
      std::atomic<std::uint64_t>& transport;
      std::uint64_t lines = 0;
      ~CountReceived() {
        c.lines += lines;
        ++transport;
        ++c.packets;
      }
    } received{counters_, transport};
    IngestReply reply;
    lobfix::IngestResult parsed;
    try {
      parsed = lobfix::parse_packet(packet, source, ingest_options_, line_offset);
    } catch (const lobfix::InputError& e) {  // options were checked at start: not expected
      log_line(std::string("internal: ") + e.what());
      reply.http_status = 500;
      reply.body = dump_json({{"error", e.what()}});
      return reply;
    }
    received.lines = static_cast<std::uint64_t>(parsed.lines);
    for (const lobfix::Diagnostic& w : parsed.warnings)
      warn_once(w);

    json results = json::array();
    json errors = json::array();
    std::uint64_t new_count = 0;
    std::uint64_t dup_count = 0;
    std::vector<lobfix::Rejection> rejected = std::move(parsed.rejected);
    {
      const std::lock_guard<std::mutex> lock(ingest_mu_);
      lobfix::PreparedBatch batch = session_.prepare(std::move(parsed.accepted), source);
      for (lobfix::Rejection& r : batch.rejected)
        rejected.push_back(std::move(r));
      std::vector<std::string> payloads;
      payloads.reserve(batch.items.size());
      for (const lobfix::PreparedBatch::Item& item : batch.items)
        payloads.push_back(item.payload);
      std::uint64_t first = 0;
      try {
        first = journal_.append(payloads);
      } catch (const std::exception& e) {
        ++counters_.journal_errors;
        log_line(std::string("journal write failed, ") + std::to_string(payloads.size()) +
                 " bearings from " + source + " not accepted: " + e.what());
        reply.http_status = 503;
        reply.body =
            dump_json({{"error", std::string("the journal could not be written: ") + e.what() +
                                     "; nothing of this packet was accepted, send it again"}});
        return reply;
      }
      for (std::size_t i = 0; i < batch.items.size(); ++i)
        results.push_back({{"line", batch.items[i].line}, {"seq", first + i}});
      for (const lobfix::PreparedBatch::Duplicate& d : batch.duplicates) {
        const std::uint64_t seq = d.seq != 0 ? d.seq : first + d.same_as_item;
        results.push_back({{"line", d.line}, {"seq", seq}, {"duplicate", true}});
      }
      new_count = batch.items.size();
      dup_count = batch.duplicates.size();
      if (new_count > 0) {
        session_.commit(std::move(batch), first);
        mark_dirty();
      }
      // Under the lock, so that /status's accepted and bearings agree.
      counters_.accepted += new_count;
      counters_.duplicates += dup_count;
    }
    for (const lobfix::Rejection& r : rejected) {
      ++counters_.rejected[static_cast<std::size_t>(r.kind)];
      const std::string text = r.to_string();
      log_line("rejected (" + std::string(lobfix::to_string(r.kind)) + "): " + text);
      json e = {{"kind", lobfix::to_string(r.kind)}, {"reason", text}};
      if (r.line > 0)
        e["line"] = r.line;
      errors.push_back(std::move(e));
    }
    reply.http_status = rejected.empty() ? 200 : 400;
    reply.body = dump_json({{"accepted", new_count},
                            {"duplicates", dup_count},
                            {"rejected", rejected.size()},
                            {"results", std::move(results)},
                            {"errors", std::move(errors)}});
    return reply;
  }

  void count_bad_token(const std::string& source, const std::string& what) {
    ++counters_.rejected[static_cast<std::size_t>(lobfix::RejectKind::bad_token)];
    log_line("refused (bad_token): " + what + " from " + source);
  }

  /// Solve whenever something new arrived, at most once per debounce interval, until
  /// stop_solver(); a last solve then takes whatever is still pending.
  void solver_loop() {
    const auto debounce = std::chrono::duration<double, std::milli>(args_.debounce_ms);
    for (;;) {
      {
        std::unique_lock<std::mutex> lock(state_mu_);
        solve_cv_.wait(lock, [&] { return dirty_ || stopping_; });
        if (!dirty_ && stopping_)
          return;
        if (!stopping_)
          solve_cv_.wait_for(lock, debounce, [&] { return stopping_; });
      }
      solve_once();
    }
  }

  void stop_solver() {
    {
      const std::lock_guard<std::mutex> lock(state_mu_);
      stopping_ = true;
    }
    solve_cv_.notify_all();
  }

  json status_json() {
    // Received first: every outcome of a packet read here as received is counted already.
    const json received = {{"packets", counters_.packets.load()},
                           {"http", counters_.packets_http.load()},
                           {"udp", counters_.packets_udp.load()},
                           {"stdin", counters_.packets_stdin.load()},
                           {"lines", counters_.lines.load()}};
    json rejected = json::object();
    std::uint64_t rejected_total = 0;
    for (int k = 0; k < lobfix::kRejectKindCount; ++k) {
      const std::uint64_t n = counters_.rejected[static_cast<std::size_t>(k)];
      rejected[lobfix::to_string(static_cast<lobfix::RejectKind>(k))] = n;
      rejected_total += n;
    }
    json s = {
        {"lobfix", LOBFIX_VERSION},
        {"started", started_text_},
        {"received", received},
        {"accepted", counters_.accepted.load()},
        {"duplicates", counters_.duplicates.load()},
        {"rejected", rejected},
        {"rejected_total", rejected_total},
        {"journal_errors", counters_.journal_errors.load()},
        {"http_requests", counters_.http_requests.load()},
        {"solves", counters_.solves.load()},
        {"output_errors", counters_.output_errors.load()},
    };
    {
      const std::lock_guard<std::mutex> lock(ingest_mu_);
      s["accepted"] = counters_.accepted.load();
      s["duplicates"] = counters_.duplicates.load();
      s["bearings"] = session_.bearings().size();
      s["last_seq"] = session_.last_seq();
      s["journal"] = {{"path", journal_.path()},          {"bytes", journal_.size_bytes()},
                      {"records_recovered", recovered_},  {"records_replayed", replayed_},
                      {"records_unused", replay_unused_}, {"truncated_bytes", truncated_bytes_}};
    }
    const std::lock_guard<std::mutex> lock(state_mu_);
    s["revision"] = revision_;
    s["last_seq_solved"] = solved_seq_;
    s["bearings_solved"] = solved_bearings_;
    s["last_solve_time"] = last_solve_time_.empty() ? json(nullptr) : json(last_solve_time_);
    s["last_solve_ms"] = last_solve_ms_;
    s["fixes"] = fixes_ok_;
    s["bearing_to_output_ms"] = {
        {"last", latency_last_ms_},
        {"max", latency_max_ms_},
        {"mean", latency_count_ > 0 ? latency_sum_ms_ / static_cast<double>(latency_count_) : 0.0}};
    return s;
  }

  std::string status_line() {
    const json s = status_json();
    std::ostringstream out;
    out << "status: received " << s["received"]["packets"] << " packets (" << s["received"]["lines"]
        << " lines), accepted " << s["accepted"] << ", duplicates " << s["duplicates"]
        << ", rejected " << s["rejected_total"] << " " << s["rejected"].dump() << ", solves "
        << s["solves"] << ", last solve " << s["last_solve_time"] << " (" << s["last_solve_ms"]
        << " ms), bearings " << s["bearings"];
    return out.str();
  }

  std::string fix_json() {
    const std::lock_guard<std::mutex> lock(state_mu_);
    return fix_json_;
  }
  std::string fix_geojson() {
    const std::lock_guard<std::mutex> lock(state_mu_);
    return geojson_;
  }

  void set_recovery(const lobfix::JournalRecovery& r) {
    recovered_ = r.records.size();
    truncated_bytes_ = r.truncated_bytes;
  }
  void set_started_text(std::string t) { started_text_ = std::move(t); }

  const std::string& token() const { return token_; }
  bool token_required() const { return !token_.empty(); }
  bool token_ok(const std::string& given) const { return equal_constant_time(given, token_); }
  Counters& counters() { return counters_; }
  const lobfix::IngestOptions& ingest_options() const { return ingest_options_; }

 private:
  // Called with ingest_mu_ held, after a commit.
  void mark_dirty() {
    {
      const std::lock_guard<std::mutex> lock(state_mu_);
      dirty_ = true;
      if (!pending_since_)
        pending_since_ = Clock::now();
    }
    solve_cv_.notify_all();
  }

  void warn_once(const lobfix::Diagnostic& w) {
    const std::lock_guard<std::mutex> lock(warn_mu_);
    if (warned_.insert(w.field + "|" + w.reason).second)
      log_line("warning: " + w.to_string() + " (said once)");
  }

  void solve_once() {
    std::vector<lobfix::Bearing> bearings;
    std::uint64_t last_seq = 0;
    std::optional<Clock::time_point> pending_since;
    {
      const std::lock_guard<std::mutex> ingest_lock(ingest_mu_);
      bearings = session_.bearings();
      last_seq = session_.last_seq();
      const std::lock_guard<std::mutex> lock(state_mu_);
      dirty_ = false;
      pending_since = pending_since_;
      pending_since_.reset();
    }
    const auto t0 = Clock::now();
    std::vector<lobfix::FixResult> results;
    try {
      results = lobfix::solve_and_describe(bearings, session_.options());
    } catch (const std::exception& e) {  // never expected: the options were checked at start
      log_line(std::string("solve failed: ") + e.what());
      return;
    }
    const auto t_solved = Clock::now();
    // Products (search areas, ...) join here: one place computes and writes all outputs.
    lobfix::ExportOptions export_options;
    export_options.ray_length_m = args_.ray_length_km * 1000.0;
    bool written = true;
    try {
      // The search areas from all bearings; the map files draw the newest rays only.
      std::vector<lobfix::SearchArea> areas;
      if (args_.area) {
        lobfix::SearchAreaOptions area_options;
        area_options.map.align_m = args_.segment_m;
        for (const lobfix::FixResult& r : results) {
          if (r.fix.ok())
            areas.push_back(lobfix::make_search_area(bearings, r, area_options));
        }
      }
      const lobfix::MapView view = lobfix::newest_for_map(bearings, results, args_.map_bearings);
      lobfix::write_geojson(geojson_path_, view.bearings, view.results, areas, export_options);
      if (!args_.kml.empty())
        lobfix::write_kml(args_.kml, view.bearings, view.results, areas, export_options);
      if (!args_.gpkg.empty())
        lobfix::write_geopackage(args_.gpkg, view.bearings, view.results, areas, export_options);
      if (!args_.geotiff.empty()) {
        for (const lobfix::SearchArea& a : areas) {
          if (!a.map.ok)
            continue;
          const std::vector<float> cells(a.map.mass.begin(), a.map.mass.end());
          lobfix::GeoTiffOptions tiff;
          tiff.description = "probability per cell";
          lobfix::write_geotiff(args_.geotiff, a.map.grid, cells, tiff);
          break;
        }
      }
    } catch (const std::exception& e) {
      written = false;
      ++counters_.output_errors;
      log_line(std::string("output not written: ") + e.what());
    }
    std::string geojson = written ? read_file(geojson_path_) : std::string();
    const auto t_written = Clock::now();
    lobfix::RunInfo run;
    run.input = "journal " + journal_.path();
    run.rows_read = static_cast<int>(bearings.size());
    run.rows_converted = static_cast<int>(bearings.size());
    run.version = LOBFIX_VERSION;
    run.robust_loss = session_.options().solve.loss;
    run.robust_tuning = session_.options().solve.loss_tuning > 0.0
                            ? session_.options().solve.loss_tuning
                            : lobfix::default_tuning(session_.options().solve.loss);
    run.excluded_outliers = session_.options().solve.exclude_outliers;
    std::string summary = lobfix::json_summary(run, bearings, results);
    const auto t1 = Clock::now();
    const auto ms = [](Clock::duration d) {
      return static_cast<long>(std::chrono::duration_cast<std::chrono::milliseconds>(d).count());
    };
    const double solve_ms = std::chrono::duration<double, std::milli>(t1 - t0).count();
    const double latency_ms =
        pending_since ? std::chrono::duration<double, std::milli>(t1 - *pending_since).count()
                      : 0.0;
    int ok = 0;
    std::string fixes_text;
    for (const lobfix::FixResult& r : results) {
      if (r.fix.ok()) {
        ++ok;
        std::array<char, 160> buf{};
        std::snprintf(buf.data(), buf.size(), "%s%s %.6f %.6f CEP %.0f m",
                      fixes_text.empty() ? "" : "; ",
                      r.fix.signal.empty() ? "fix" : ("'" + r.fix.signal + "'").c_str(),
                      r.fix.position.lat_deg, r.fix.position.lon_deg, r.uncertainty.cep_m);
        fixes_text += buf.data();
      }
    }
    ++counters_.solves;
    std::uint64_t revision = 0;
    {
      const std::lock_guard<std::mutex> lock(state_mu_);
      revision = ++revision_;
      // The summary (docs/outputs.md) with a "live" member first.
      const json live = {{"revision", revision_},
                         {"last_seq", last_seq},
                         {"bearings", bearings.size()},
                         {"solved_at", utc_now_text()},
                         {"outputs_written", written}};
      const std::size_t brace = summary.find('{');
      fix_json_ = brace == std::string::npos
                      ? summary
                      : summary.substr(0, brace + 1) + "\n  \"live\": " + live.dump() + "," +
                            summary.substr(brace + 1);
      if (written)
        geojson_ = std::move(geojson);
      solved_seq_ = last_seq;
      solved_bearings_ = bearings.size();
      last_solve_time_ = utc_now_text();
      last_solve_ms_ = solve_ms;
      fixes_ok_ = ok;
      if (pending_since) {
        latency_last_ms_ = latency_ms;
        latency_max_ms_ = std::max(latency_max_ms_, latency_ms);
        latency_sum_ms_ += latency_ms;
        ++latency_count_;
      }
    }
    std::ostringstream msg;
    msg << "solve " << revision << ": " << bearings.size() << " bearings (to seq " << last_seq
        << "), " << results.size() << (results.size() == 1 ? " signal, " : " signals, ") << ok
        << " fixed" << (fixes_text.empty() ? "" : ": " + fixes_text) << "; "
        << static_cast<long>(solve_ms) << " ms (solve " << ms(t_solved - t0) << ", files "
        << ms(t_written - t_solved) << ", summary " << ms(t1 - t_written) << ")"
        << (written ? "" : "; outputs NOT written");
    log_line(msg.str());
  }

  const LiveArgs& args_;
  lobfix::IngestOptions ingest_options_;
  Counters counters_;

  std::mutex ingest_mu_;  // guards session_ and journal_
  lobfix::LiveSession session_;
  lobfix::Journal journal_;
  std::uint64_t recovered_ = 0;
  std::uint64_t replayed_ = 0;
  std::uint64_t replay_unused_ = 0;
  std::uint64_t truncated_bytes_ = 0;

  std::mutex state_mu_;  // guards everything below
  std::condition_variable solve_cv_;
  bool dirty_ = false;
  bool stopping_ = false;
  std::optional<Clock::time_point> pending_since_;
  std::uint64_t revision_ = 0;
  std::uint64_t solved_seq_ = 0;
  std::size_t solved_bearings_ = 0;
  std::string last_solve_time_;
  double last_solve_ms_ = 0.0;
  int fixes_ok_ = 0;
  double latency_last_ms_ = 0.0;
  double latency_max_ms_ = 0.0;
  double latency_sum_ms_ = 0.0;
  std::uint64_t latency_count_ = 0;
  std::string fix_json_ =
      "{\"live\": {\"revision\": 0, \"last_seq\": 0, \"bearings\": 0}, \"fixes\": []}\n";
  std::string geojson_ = R"({"type": "FeatureCollection", "name": "lobfix", "features": []})";

  std::mutex warn_mu_;
  std::set<std::string> warned_;

  std::string token_;
  std::string geojson_path_;
  std::string private_geojson_;
  std::chrono::system_clock::time_point started_;
  std::string started_text_;
};

// ---- stop requests ----------------------------------------------------------------------

struct StopFlag {
  std::mutex mu;
  std::condition_variable cv;
  bool stop = false;
  std::string why;
  void request(const std::string& reason) {
    {
      const std::lock_guard<std::mutex> lock(mu);
      if (stop)
        return;
      stop = true;
      why = reason;
    }
    cv.notify_all();
  }
  bool requested() {
    const std::lock_guard<std::mutex> lock(mu);
    return stop;
  }
};

// ---- UDP --------------------------------------------------------------------------------

int open_udp(const std::string& address, int port, int* bound_port, std::string* error) {
  addrinfo hints{};
  hints.ai_family = AF_UNSPEC;
  hints.ai_socktype = SOCK_DGRAM;
  hints.ai_flags = AI_PASSIVE | AI_NUMERICSERV;
  addrinfo* found = nullptr;
  const std::string port_text = std::to_string(port);
  const std::string host = address == "localhost" ? "127.0.0.1" : address;
  if (const int rc = ::getaddrinfo(host.c_str(), port_text.c_str(), &hints, &found); rc != 0) {
    *error = std::string("cannot resolve ") + address + ": " + ::gai_strerror(rc);
    return -1;
  }
  const int fd = ::socket(found->ai_family, found->ai_socktype | SOCK_CLOEXEC, found->ai_protocol);
  if (fd < 0 || ::bind(fd, found->ai_addr, found->ai_addrlen) != 0) {
    *error =
        std::string("cannot bind UDP ") + address + ":" + port_text + ": " + std::strerror(errno);
    if (fd >= 0)
      ::close(fd);
    ::freeaddrinfo(found);
    return -1;
  }
  ::freeaddrinfo(found);
  const int rcvbuf = 4 * 1024 * 1024;
  (void)::setsockopt(fd, SOL_SOCKET, SO_RCVBUF, &rcvbuf, sizeof rcvbuf);
  sockaddr_storage ss{};
  socklen_t len = sizeof ss;
  ::getsockname(fd, reinterpret_cast<sockaddr*>(&ss), &len);
  *bound_port = ss.ss_family == AF_INET6 ? ntohs(reinterpret_cast<sockaddr_in6*>(&ss)->sin6_port)
                                         : ntohs(reinterpret_cast<sockaddr_in*>(&ss)->sin_port);
  return fd;
}

std::string peer_text(const sockaddr_storage& ss) {
  std::array<char, INET6_ADDRSTRLEN> host{};
  int port = 0;
  if (ss.ss_family == AF_INET6) {
    const auto* a = reinterpret_cast<const sockaddr_in6*>(&ss);
    ::inet_ntop(AF_INET6, &a->sin6_addr, host.data(), host.size());
    port = ntohs(a->sin6_port);
  } else {
    const auto* a = reinterpret_cast<const sockaddr_in*>(&ss);
    ::inet_ntop(AF_INET, &a->sin_addr, host.data(), host.size());
    port = ntohs(a->sin_port);
  }
  return std::string(host.data()) + ":" + std::to_string(port);
}

void udp_loop(int fd, LiveServer& server, StopFlag& stop) {
  // One byte more than the limit shows an oversized datagram; MSG_TRUNC gives its real size.
  const std::size_t cap =
      std::min<std::size_t>(server.ingest_options().max_packet_bytes + 1, 65536);
  std::vector<char> buf(cap);
  while (!stop.requested()) {
    pollfd p{fd, POLLIN, 0};
    const int ready = ::poll(&p, 1, 200);
    if (ready <= 0)
      continue;
    sockaddr_storage from{};
    socklen_t from_len = sizeof from;
    const ssize_t n = ::recvfrom(fd, buf.data(), buf.size(), MSG_TRUNC,
                                 reinterpret_cast<sockaddr*>(&from), &from_len);
    if (n < 0)
      continue;
    const std::string source = "udp " + peer_text(from);
    const auto size = static_cast<std::size_t>(n);
    std::string_view packet(buf.data(), std::min(size, buf.size()));
    if (size > buf.size()) {
      // Too large to hold: refused by its size alone (ingest says so in its words).
      std::string oversized(size, ' ');
      server.ingest(oversized, source, server.counters().packets_udp);
      continue;
    }
    int offset = 0;
    if (server.token_required()) {
      // The first line of every datagram is "token VALUE" on other addresses than loopback.
      const std::size_t lf = packet.find('\n');
      std::string first(packet.substr(0, lf == std::string_view::npos ? packet.size() : lf));
      if (!first.empty() && first.back() == '\r')
        first.pop_back();
      const std::string prefix = "token ";
      const bool has = first.rfind(prefix, 0) == 0;
      if (!has || !server.token_ok(first.substr(prefix.size()))) {
        server.count_bad_token(source, has ? "wrong token" : "no token line");
        ++server.counters().packets_udp;
        ++server.counters().packets;
        continue;
      }
      packet.remove_prefix(lf == std::string_view::npos ? packet.size() : lf + 1);
      offset = 1;
    }
    server.ingest(packet, source, server.counters().packets_udp, offset);
  }
}

// ---- standard input ---------------------------------------------------------------------

void stdin_loop(LiveServer& server, StopFlag& stop, bool only_source) {
  std::string pending;
  int line_no = 0;
  std::array<char, 65536> buf{};
  bool eof = false;
  // Blank lines and '#' comments are skipped, as in a file; every other line is a packet.
  const auto take_line = [&](const std::string& line) {
    ++line_no;
    const std::size_t first = line.find_first_not_of(" \t\r");
    if (first == std::string::npos || line[first] == '#')
      return;
    server.ingest(line, "stdin", server.counters().packets_stdin, line_no - 1);
  };
  while (!eof && !stop.requested()) {
    pollfd p{0, POLLIN, 0};
    if (::poll(&p, 1, 200) <= 0)
      continue;
    const ssize_t n = ::read(0, buf.data(), buf.size());
    if (n < 0) {
      if (errno == EINTR || errno == EAGAIN)
        continue;
      log_line(std::string("standard input: ") + std::strerror(errno));
      break;
    }
    if (n == 0) {
      eof = true;
      break;
    }
    pending.append(buf.data(), static_cast<std::size_t>(n));
    std::size_t start = 0;
    for (std::size_t lf = pending.find('\n'); lf != std::string::npos;
         lf = pending.find('\n', start)) {
      take_line(pending.substr(start, lf - start));
      start = lf + 1;
    }
    pending.erase(0, start);
    if (pending.size() > server.ingest_options().max_packet_bytes) {
      // A line longer than a packet may be: refused, the rest of it skipped up to its end.
      take_line(pending);
      pending.clear();
      // Skip to the next LF.
      for (;;) {
        const ssize_t m = ::read(0, buf.data(), buf.size());
        if (m <= 0) {
          eof = true;
          break;
        }
        const std::string_view chunk(buf.data(), static_cast<std::size_t>(m));
        const std::size_t lf = chunk.find('\n');
        if (lf != std::string_view::npos) {
          pending.assign(chunk.substr(lf + 1));
          break;
        }
      }
    }
  }
  if (eof) {
    if (!pending.empty())
      take_line(pending);
    log_line("standard input ended after " + std::to_string(line_no) + " lines");
    if (only_source)
      stop.request("standard input ended and there is no other source");
  }
}

}  // namespace

// ---- the command ------------------------------------------------------------------------

CLI::App* add_live_command(CLI::App& app, LiveArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "live",
      "Take bearings as they arrive (HTTP POST, UDP, standard input; JSON Lines with the "
      "fields of bearing files), keep each in a journal before acknowledging it, and solve "
      "again after each arrival: the fix, ellipses and map files follow the bearings. "
      "A restart replays the journal. See docs/live.md. A live fix is an estimate: "
      "reflections mislead, and the lead agency's procedures come first.");
  cmd->add_option("--journal", args.journal,
                  "the journal file: every accepted bearing, replayed at start (created if new)")
      ->required();
  cmd->add_option("--bind", args.bind,
                  "address to listen on; any other than 127.0.0.1 needs --token-file")
      ->capture_default_str();
  cmd->add_option("--http-port", args.http_port, "HTTP port (0: any free port)")
      ->capture_default_str()
      ->check(CLI::Range(0, 65535));
  cmd->add_flag("--no-http", args.no_http, "no HTTP server");
  cmd->add_option("--udp-port", args.udp_port,
                  "also take bearings as UDP datagrams on this port (0: any free port); UDP "
                  "has no acknowledgement")
      ->check(CLI::Range(0, 65535));
  cmd->add_flag("--stdin", args.stdin_input,
                "also take bearings from standard input, one per line");
  cmd->add_option("--token-file", args.token_file,
                  "file whose first line is the shared token (at least 16 characters) that "
                  "every request must send in the X-Lobfix-Token header (or the environment "
                  "variable LOBFIX_LIVE_TOKEN)");
  cmd->add_option("--port-file", args.port_file,
                  "write the ports listened on to this file as JSON, once bound");
  cmd->add_option("--geojson", args.geojson, "rewrite this GeoJSON file after each solve");
  cmd->add_option("--kml", args.kml, "rewrite this KML file after each solve");
  cmd->add_flag("--area", args.area,
                "also map the search area on each solve, as 'lobfix area' does (regions and "
                "segments in the map files; see docs/search-area.md)");
  cmd->add_option("--segment-m", args.segment_m, "side of a search segment with --area (m)")
      ->capture_default_str()
      ->check(CLI::Range(10.0, 100000.0));
  cmd->add_option("--gpkg", args.gpkg, "rewrite this GeoPackage after each solve");
  cmd->add_option("--geotiff", args.geotiff,
                  "rewrite this GeoTIFF of the probability map after each solve (needs --area; "
                  "the first signal with a map)");
  cmd->add_option("--ray-length-km", args.ray_length_km,
                  "length of the drawn rays; 0 draws each a little past its fix")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 20000.0));
  cmd->add_option("--map-bearings", args.map_bearings,
                  "the map files draw the newest this many bearings (0: all); the fix uses all")
      ->capture_default_str();
  cmd->add_option("--debounce-ms", args.debounce_ms,
                  "wait this long after a bearing for more before solving")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 60000.0));
  cmd->add_option("--max-packet-bytes", args.max_packet_bytes,
                  "refuse HTTP bodies, datagrams and stdin lines longer than this")
      ->capture_default_str()
      ->check(
          CLI::Range(static_cast<std::size_t>(256), static_cast<std::size_t>(64 * 1024 * 1024)));
  cmd->add_option("--max-lines", args.max_lines, "refuse packets with more bearing lines")
      ->capture_default_str()
      ->check(CLI::Range(static_cast<std::size_t>(1), static_cast<std::size_t>(1000000)));
  cmd->add_option("--status-interval-s", args.status_interval_s,
                  "log the counters this often (0: only at the end)")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 86400.0));
  cmd->add_option("--sigma-deg", args.sigma_deg,
                  "bearing sigma (deg) for bearings without a sigma_deg value");
  cmd->add_option("--declination-deg", args.declination_deg,
                  "magnetic declination (deg, east positive) for all magnetic bearings, "
                  "instead of the World Magnetic Model 2025")
      ->check(CLI::Range(-180.0, 180.0));
  cmd->add_option("--grid-crs", args.grid_crs,
                  "grid bearings refer to this projected CRS instead of the station's UTM zone");
  add_fix_options(cmd, args.fix, /*with_windows=*/false);
  return cmd;
}

int run_live(const LiveArgs& args) {
  using namespace lobfix;
  // Signals are taken by one thread with sigwait: blocked here, before any thread starts.
  sigset_t stop_signals;
  sigemptyset(&stop_signals);
  sigaddset(&stop_signals, SIGINT);
  sigaddset(&stop_signals, SIGTERM);
  pthread_sigmask(SIG_BLOCK, &stop_signals, nullptr);
  std::signal(SIGPIPE, SIG_IGN);

  if (args.sigma_deg && !(*args.sigma_deg > 0.0 && *args.sigma_deg <= 90.0)) {
    std::cerr << "lobfix: --sigma-deg must be in (0, 90]\n";
    return kExitUsage;
  }
  if (!args.geotiff.empty() && !args.area) {
    std::cerr << "lobfix: --geotiff needs --area (the GeoTIFF is the search area's map)\n";
    return kExitUsage;
  }
  if (args.no_http && !args.udp_port && !args.stdin_input) {
    std::cerr << "lobfix: live needs a source: HTTP (the default), --udp-port or --stdin\n";
    return kExitUsage;
  }

  // The token: needed on any address but the loopback default.
  std::string token;
  if (!args.token_file.empty()) {
    std::ifstream in(args.token_file);
    if (!in || !std::getline(in, token)) {
      std::cerr << "lobfix: --token-file " << args.token_file << ": cannot read the token\n";
      return kExitUsage;
    }
    while (!token.empty() && (token.back() == '\r' || token.back() == ' ' || token.back() == '\t'))
      token.pop_back();
  } else if (const char* env = std::getenv("LOBFIX_LIVE_TOKEN"); env != nullptr) {
    token = env;
  }
  if (!token.empty() && token.size() < kMinTokenLength) {
    std::cerr << "lobfix: the token must have at least " << kMinTokenLength << " characters\n";
    return kExitUsage;
  }
  if (token.empty() && !is_default_loopback(args.bind)) {
    std::cerr << "lobfix: listening on " << args.bind
              << " needs a shared token: give --token-file FILE (or set LOBFIX_LIVE_TOKEN); "
                 "without one lobfix live listens on 127.0.0.1 only\n";
    return kExitUsage;
  }

  LiveOptions options;
  if (const int rc = make_fix_options(args.fix, options.solve, options.uncertainty); rc != kExitOk)
    return rc;
  if (const std::string why = options.solve.validate(); !why.empty()) {
    std::cerr << "lobfix: " << why << "\n";
    return kExitUsage;
  }
  std::unique_ptr<ProjectedCrs> grid_crs;
  try {
    if (!args.grid_crs.empty())
      grid_crs = std::make_unique<ProjectedCrs>(args.grid_crs);
  } catch (const InputError& e) {
    std::cerr << e.what() << "\n";
    return kExitInputError;
  }
  options.normalise.declination_deg = args.declination_deg;
  options.normalise.grid_crs = grid_crs.get();

  JournalRecovery recovery;
  std::optional<Journal> journal;
  try {
    journal.emplace(Journal::open(args.journal, &recovery));
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.what() << "\n";
    return kExitInputError;
  }
  if (recovery.created) {
    log_line("journal " + args.journal + " created");
  } else {
    std::string msg = "journal " + args.journal + ": recovered " +
                      std::to_string(recovery.records.size()) + " records";
    if (recovery.truncated_bytes > 0) {
      msg += "; cut a torn last record at line " + std::to_string(recovery.truncated_line) + " (" +
             std::to_string(recovery.truncated_bytes) + " bytes: " + recovery.truncation_reason +
             ")";
    }
    log_line(msg);
  }

  LiveServer server(args, options, std::move(*journal), token);
  server.set_recovery(recovery);
  server.set_started_text(utc_now_text());
  server.replay(recovery);
  recovery.records.clear();
  std::thread solver([&] { server.solver_loop(); });

  // The waiting thread is detached (it ends with the process), so what it uses lives as
  // long as the process.
  static StopFlag stop;
  static sigset_t waited;
  waited = stop_signals;
  std::thread signals([] {
    int sig = 0;
    if (sigwait(&waited, &sig) == 0)
      stop.request(sig == SIGINT ? "SIGINT" : "SIGTERM");
  });
  signals.detach();

  // HTTP.
  httplib::Server http;
  std::thread http_thread;
  int http_port = -1;
  if (!args.no_http) {
    http.set_payload_max_length(args.max_packet_bytes);
    http.set_keep_alive_max_count(1000);
    // An idle keep-alive connection holds a worker, and a stop waits for it: keep it short.
    http.set_keep_alive_timeout(2);
    http.set_tcp_nodelay(true);
    http.set_read_timeout(5, 0);
    http.set_pre_routing_handler([&](const httplib::Request& req, httplib::Response& res) {
      ++server.counters().http_requests;
      if (!server.token_required() || (req.method == "GET" && req.path == "/"))
        return httplib::Server::HandlerResponse::Unhandled;
      const std::string given = req.get_header_value(kTokenHeader);
      if (!given.empty() && server.token_ok(given))
        return httplib::Server::HandlerResponse::Unhandled;
      server.count_bad_token(
          "http " + req.remote_addr + ":" + std::to_string(req.remote_port),
          (given.empty() ? "no token for " : "wrong token for ") + req.method + " " + req.path);
      if (req.method == "POST") {
        ++server.counters().packets_http;
        ++server.counters().packets;
      }
      res.status = 401;
      // The body of a refused POST is not read: the client must not reuse the connection.
      res.set_header("Connection", "close");
      res.set_content(json({{"error", std::string("missing or wrong token: send the shared token "
                                                  "in the ") +
                                          kTokenHeader + " header"}})
                              .dump() +
                          "\n",
                      "application/json");
      return httplib::Server::HandlerResponse::Handled;
    });
    http.set_error_handler([&](const httplib::Request& req, httplib::Response& res) {
      if (res.status == 413) {
        ++server.counters().rejected[static_cast<std::size_t>(RejectKind::too_large)];
        ++server.counters().packets_http;
        ++server.counters().packets;
        log_line("rejected (too_large): http " + req.remote_addr + ": request body over " +
                 std::to_string(args.max_packet_bytes) + " bytes");
      }
      if (res.body.empty()) {
        std::string what = res.status == 404 ? "no such endpoint: " + req.method + " " + req.path
                           : res.status == 413
                               ? "request body over the limit of " +
                                     std::to_string(args.max_packet_bytes) + " bytes"
                               : "HTTP status " + std::to_string(res.status);
        res.set_content(dump_json(json({{"error", what}})) + "\n", "application/json");
      }
    });
    http.Post("/bearings", [&](const httplib::Request& req, httplib::Response& res) {
      const IngestReply reply =
          server.ingest(req.body, "http " + req.remote_addr + ":" + std::to_string(req.remote_port),
                        server.counters().packets_http);
      res.status = reply.http_status;
      res.set_content(reply.body + "\n", "application/json");
    });
    const auto no_store = [](httplib::Response& res) {
      res.set_header("Cache-Control", "no-store");
      res.set_header("X-Content-Type-Options", "nosniff");
    };
    http.Get("/fix.json", [&](const httplib::Request&, httplib::Response& res) {
      no_store(res);
      res.set_content(server.fix_json(), "application/json");
    });
    http.Get("/fix.geojson", [&](const httplib::Request&, httplib::Response& res) {
      no_store(res);
      res.set_content(server.fix_geojson(), "application/geo+json");
    });
    http.Get("/status", [&](const httplib::Request&, httplib::Response& res) {
      no_store(res);
      res.set_content(dump_json(server.status_json(), 2) + "\n", "application/json");
    });
    http.Get("/", [&](const httplib::Request&, httplib::Response& res) {
      no_store(res);
      // The page may use only itself: no outside script, style, font or address.
      res.set_header("Content-Security-Policy",
                     "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; "
                     "connect-src 'self'; img-src data:; base-uri 'none'; form-action 'none'");
      res.set_content(live_page_html(), "text/html; charset=utf-8");
    });
    const std::string host = args.bind == "localhost" ? "127.0.0.1" : args.bind;
    if (args.http_port == 0) {
      http_port = http.bind_to_any_port(host);
    } else {
      http_port = http.bind_to_port(host, args.http_port) ? args.http_port : -1;
    }
    if (http_port < 0) {
      std::cerr << "lobfix: cannot listen for HTTP on " << args.bind << ":" << args.http_port
                << "\n";
      server.stop_solver();
      solver.join();
      return kExitUsage;
    }
    http_thread = std::thread([&] { http.listen_after_bind(); });
    log_line("http listening on " + args.bind + ":" + std::to_string(http_port) +
             (server.token_required() ? " (token required)" : ""));
  }

  int udp_fd = -1;
  int udp_port = -1;
  std::thread udp_thread;
  if (args.udp_port) {
    std::string error;
    udp_fd = open_udp(args.bind, *args.udp_port, &udp_port, &error);
    if (udp_fd < 0) {
      std::cerr << "lobfix: " << error << "\n";
      if (http_thread.joinable()) {
        http.stop();
        http_thread.join();
      }
      server.stop_solver();
      solver.join();
      return kExitUsage;
    }
    udp_thread = std::thread([&] { udp_loop(udp_fd, server, stop); });
    log_line("udp listening on " + args.bind + ":" + std::to_string(udp_port) +
             " (no acknowledgement: check /status or the journal)");
  }
  if (!args.port_file.empty()) {
    const json ports = {{"http", http_port >= 0 ? json(http_port) : json(nullptr)},
                        {"udp", udp_port >= 0 ? json(udp_port) : json(nullptr)},
                        {"pid", static_cast<long>(::getpid())}};
    if (!write_file_atomic(args.port_file, ports.dump() + "\n"))
      log_line("cannot write the port file " + args.port_file);
  }

  std::thread stdin_thread;
  if (args.stdin_input) {
    const bool only = args.no_http && !args.udp_port;
    stdin_thread = std::thread([&, only] { stdin_loop(server, stop, only); });
  }

  // Wait for a stop, logging the counters now and then.
  {
    std::unique_lock<std::mutex> lock(stop.mu);
    const auto interval = std::chrono::duration<double>(args.status_interval_s);
    while (!stop.stop) {
      if (args.status_interval_s > 0.0) {
        if (!stop.cv.wait_for(lock, interval, [&] { return stop.stop; })) {
          lock.unlock();
          log_line(server.status_line());
          lock.lock();
        }
      } else {
        stop.cv.wait(lock, [&] { return stop.stop; });
      }
    }
    log_line("stopping (" + stop.why + ")");
  }
  if (http_thread.joinable()) {
    http.stop();
    http_thread.join();
  }
  if (udp_thread.joinable())
    udp_thread.join();
  if (udp_fd >= 0)
    ::close(udp_fd);
  if (stdin_thread.joinable())
    stdin_thread.join();
  server.stop_solver();
  solver.join();
  log_line(server.status_line());
  return kExitOk;
}

}  // namespace lobfix_app
