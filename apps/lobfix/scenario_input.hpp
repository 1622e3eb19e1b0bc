// Reading a scenario file (stations, transmitter) for coverage, simulate and evaluate: prints
// every problem as file:line:column: reason and returns the exit code.
#pragma once

#include <optional>
#include <string>

#include "lobfix/simulate.hpp"

namespace lobfix_app {

/// kExitOk with the scenario in `out`, or the exit code to stop with (printed already).
int load_scenario(const std::string& path, std::optional<double> default_sigma_deg,
                  lobfix::Scenario& out);

}  // namespace lobfix_app
