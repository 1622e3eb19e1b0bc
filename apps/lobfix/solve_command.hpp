// `lobfix solve`: bearings in, fix summary and map files out.
#pragma once

#include <CLI/CLI.hpp>
#include <string>

#include "pipeline.hpp"

namespace lobfix_app {

struct SolveArgs {
  InputArgs input;
  FixArgs fix;
  std::string geojson;
  std::string kml;
  bool json = false;
  bool quiet = false;
  double ray_length_km = 0.0;
  std::string crs;  ///< --crs: also give the coordinates in this projected CRS
};

/// Register the subcommand; `args` must outlive the parse.
CLI::App* add_solve_command(CLI::App& app, SolveArgs& args);

/// Run it; returns the exit code.
int run_solve(const SolveArgs& args);

}  // namespace lobfix_app
