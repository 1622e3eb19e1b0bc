#include "scenario_input.hpp"

#include <iostream>

#include "exit_codes.hpp"

namespace lobfix_app {

int load_scenario(const std::string& path, std::optional<double> default_sigma_deg,
                  lobfix::Scenario& out) {
  using namespace lobfix;
  if (default_sigma_deg && !(*default_sigma_deg > 0.0 && *default_sigma_deg <= 90.0)) {
    std::cerr << "lobfix: --sigma-deg must be in (0, 90]\n";
    return kExitUsage;
  }
  ScenarioReadResult read;
  try {
    read = read_scenario_csv(path, default_sigma_deg);
  } catch (const InputError& e) {
    std::cerr << e.what() << "\n";
    return kExitInputError;
  }
  for (const Diagnostic& w : read.warnings)
    std::cerr << "warning: " << w.to_string() << "\n";
  if (!read.errors.empty()) {
    for (const Diagnostic& d : read.errors)
      std::cerr << d.to_string() << "\n";
    const std::size_t n = read.errors.size();
    std::cerr << "lobfix: " << n << (n == 1 ? " problem" : " problems") << " in " << path
              << "; nothing was written.\n";
    return kExitInputError;
  }
  if (read.scenario.stations.empty()) {
    std::cerr << "lobfix: " << path << " has no station row\n";
    return kExitInputError;
  }
  out = std::move(read.scenario);
  return kExitOk;
}

}  // namespace lobfix_app
