// `lobfix simulate`: an invented scenario in, a seeded bearing file (lobfix CSV), its truth
// and GPX tracks out.
#pragma once

#include <CLI/CLI.hpp>
#include <optional>
#include <string>

namespace lobfix_app {

/// The scenario options shared by simulate and evaluate.
struct ScenarioArgs {
  std::string scenario;
  std::optional<double> sigma_deg;
  unsigned long long seed = 1;
  std::string start = "2026-01-01T00:00:00Z";
  double heading_sigma_deg = 0.0;
  double wild_rate = 0.0;
};
void add_scenario_options(CLI::App* cmd, ScenarioArgs& args);

struct SimulateArgs {
  ScenarioArgs scenario;
  std::string output;
  std::string truth;
  std::string gpx;
  std::string signal;
};

CLI::App* add_simulate_command(CLI::App& app, SimulateArgs& args);
int run_simulate(const SimulateArgs& args);

}  // namespace lobfix_app
