// `lobfix area`: bearings in; the probability map, its highest-density regions and ranked
// search segments out, for the teams.
#pragma once

#include <CLI/CLI.hpp>
#include <string>
#include <vector>

#include "pipeline.hpp"

namespace lobfix_app {

struct AreaArgs {
  InputArgs input;
  FixArgs fix;
  AreaOptionArgs area;
  std::string geotiff;
  std::string geojson;
  std::string kml;
  std::string gpkg;
  std::string gpx;
  std::string segments_csv;
  bool json = false;
  bool quiet = false;
  double ray_length_km = 0.0;
  std::string crs;  ///< --crs: also give the coordinates in this projected CRS
};

CLI::App* add_area_command(CLI::App& app, AreaArgs& args);
int run_area(const AreaArgs& args);

}  // namespace lobfix_app
