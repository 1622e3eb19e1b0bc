// `lobfix evaluate`: many simulated hunts of one scenario, solved like `lobfix solve`; the
// RMSE against the Cramer-Rao bound and the coverage of the confidence ellipses.
#pragma once

#include <CLI/CLI.hpp>

#include "pipeline.hpp"
#include "simulate_command.hpp"

namespace lobfix_app {

struct EvaluateArgs {
  ScenarioArgs scenario;
  FixArgs fix;
  int trials = 1000;
  bool regions = false;
  double wild_fraction = 0.01;
  bool json = false;
};

CLI::App* add_evaluate_command(CLI::App& app, EvaluateArgs& args);
int run_evaluate(const EvaluateArgs& args);

}  // namespace lobfix_app
