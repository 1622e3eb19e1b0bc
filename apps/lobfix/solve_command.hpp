// `lobfix solve`: bearings CSV in, fix summary and map files out.
#pragma once

#include <CLI/CLI.hpp>
#include <optional>
#include <string>
#include <vector>

namespace lobfix_app {

struct SolveArgs {
  std::string input;
  std::string geojson;
  std::string kml;
  bool json = false;
  bool quiet = false;
  bool skip_bad = false;
  std::vector<double> confidence{0.5, 0.95};
  std::optional<double> sigma_deg;
  double max_range_km = 5000.0;
  double ray_length_km = 0.0;
  double alpha = 0.05;
  unsigned long long seed = 1;
  std::vector<std::string> tracks;  ///< FILE.gpx or STATION=FILE
  std::optional<double> declination_deg;
  std::string grid_crs;
  double gps_sigma_m = 5.0;
  double track_gap_s = 60.0;
  double track_tolerance_s = 2.0;
  std::string robust = "andrews";
  double robust_tuning = 0.0;
  double outlier_sigma = 3.0;
  bool exclude_outliers = false;
  bool estimate_station_bias = false;
  double bias_prior_deg = 10.0;
  std::string window;
  std::string window_step;
};

/// Register the subcommand; `args` must outlive the parse.
CLI::App* add_solve_command(CLI::App& app, SolveArgs& args);

/// Run it; returns the exit code.
int run_solve(const SolveArgs& args);

}  // namespace lobfix_app
