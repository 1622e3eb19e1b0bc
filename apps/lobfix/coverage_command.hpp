// `lobfix coverage`: station sites in, a GeoTIFF of the predicted CEP (Cramer-Rao) and
// optional CEP contours out.
#pragma once

#include <CLI/CLI.hpp>
#include <optional>
#include <string>
#include <vector>

namespace lobfix_app {

struct CoverageArgs {
  std::string sites;
  std::string output;
  std::string contours_geojson;
  std::vector<double> contour_levels_m;
  std::optional<double> sigma_deg;
  double cell_m = 100.0;
  double margin_km = 10.0;
  double min_crossing_deg = 10.0;
  int threads = 0;
  bool json = false;
};

CLI::App* add_coverage_command(CLI::App& app, CoverageArgs& args);
int run_coverage(const CoverageArgs& args);

}  // namespace lobfix_app
