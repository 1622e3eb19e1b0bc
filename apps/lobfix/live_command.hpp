// `lobfix live`: a long-running session that takes bearings as they arrive (HTTP POST, UDP,
// standard input), keeps each in the journal before acknowledging it, solves again after
// each arrival and rewrites the map files; docs/live.md.
#pragma once

#include <CLI/CLI.hpp>
#include <cstddef>
#include <optional>
#include <string>

#include "pipeline.hpp"

namespace lobfix_app {

struct LiveArgs {
  std::string journal;
  std::string bind = "127.0.0.1";
  int http_port = 8650;  ///< 0: any free port (see --port-file)
  bool no_http = false;
  std::optional<int> udp_port;  ///< absent: no UDP
  bool stdin_input = false;
  std::string token_file;
  std::string port_file;
  std::string geojson;
  std::string kml;
  bool area = false;  ///< also the search area (map, regions, segments) on every solve
  double segment_m = 250.0;
  std::string gpkg;
  std::string geotiff;
  double ray_length_km = 0.0;
  std::size_t map_bearings = 500;  ///< 0: all
  double debounce_ms = 100.0;
  std::size_t max_packet_bytes = std::size_t{1024} * 1024;
  std::size_t max_lines = 10000;
  double status_interval_s = 60.0;
  std::optional<double> sigma_deg;
  std::optional<double> declination_deg;
  std::string grid_crs;
  FixArgs fix;
};

/// Register the subcommand; `args` must outlive the parse.
CLI::App* add_live_command(CLI::App& app, LiveArgs& args);

/// Run it until SIGINT or SIGTERM (or the end of standard input when it is the only
/// source); returns the exit code.
int run_live(const LiveArgs& args);

}  // namespace lobfix_app
