// `lobfix next`: the current bearings and candidate spots in, the spots ranked by the
// predicted 95% area after one more bearing from each out.
#pragma once

#include <CLI/CLI.hpp>
#include <optional>
#include <string>
#include <vector>

#include "pipeline.hpp"

namespace lobfix_app {

struct NextArgs {
  InputArgs input;
  FixArgs fix;
  std::string spots;
  double travel_km = 0.0;
  int rings = 3;
  int ring_points = 16;
  std::vector<std::string> teams;
  std::optional<double> next_sigma_deg;
  std::string signal;
  int top = 10;
  bool json = false;
  std::string geojson;
};

CLI::App* add_next_command(CLI::App& app, NextArgs& args);
int run_next(const NextArgs& args);

}  // namespace lobfix_app
