#include "simulate_command.hpp"

#include <iostream>

#include "exit_codes.hpp"
#include "lobfix/error.hpp"
#include "lobfix/simulate.hpp"
#include "lobfix/time.hpp"
#include "scenario_input.hpp"

namespace lobfix_app {

void add_scenario_options(CLI::App* cmd, ScenarioArgs& args) {
  cmd->add_option("SCENARIO", args.scenario,
                  "scenario CSV: role (station or transmitter), name, lat, lon, and optionally "
                  "sigma_deg, max_range_km, speed_m_s, course_deg, bearings, interval_s, start_s "
                  "(docs/planning.md)")
      ->required();
  cmd->add_option("--sigma-deg", args.sigma_deg, "bearing sigma for stations without sigma_deg");
  cmd->add_option("--seed", args.seed, "seed of the random draws (same seed, same output)")
      ->capture_default_str();
  cmd->add_option("--start", args.start, "time of the scenario's start (ISO 8601 with a zone)")
      ->capture_default_str();
  cmd->add_option("--heading-sigma-deg", args.heading_sigma_deg,
                  "heading error of moving stations (1-sigma); above 0 their bearings are "
                  "written relative to the heading")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 90.0));
  cmd->add_option("--wild-rate", args.wild_rate,
                  "share of wild bearings (reflections): uniform in direction")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 1.0));
}

CLI::App* add_simulate_command(CLI::App& app, SimulateArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "simulate",
      "Write the bearings an invented scenario would give (for rehearsals and for checking a "
      "plan): stations fixed or moving on straight legs, a transmitter fixed or moving, "
      "Gaussian bearing noise, heading errors and wild bearings, all from --seed. The "
      "bearings go to a lobfix CSV that `lobfix solve` reads; the truth to a separate file. "
      "Simulated data are for practice only: never mix them with a real hunt's bearings.");
  add_scenario_options(cmd, args.scenario);
  cmd->add_option("-o,--output", args.output, "the bearing CSV to write ('-': standard output)")
      ->required();
  cmd->add_option("--truth", args.truth,
                  "write the truth: transmitter position, exact bearing and error per row");
  cmd->add_option("--gpx", args.gpx, "write the tracks of moving stations (and transmitter)");
  cmd->add_option("--signal", args.signal, "signal label written on every row");
  return cmd;
}

int run_simulate(const SimulateArgs& args) {
  using namespace lobfix;
  Scenario scenario;
  if (const int rc = load_scenario(args.scenario.scenario, args.scenario.sigma_deg, scenario);
      rc != kExitOk)
    return rc;
  SimulationOptions options;
  std::string reason;
  const std::optional<std::int64_t> start = parse_iso8601_ns(args.scenario.start, &reason);
  if (!start) {
    std::cerr << "lobfix: --start " << reason << "\n";
    return kExitUsage;
  }
  options.start_unix_ns = *start;
  options.seed = args.scenario.seed;
  options.heading_sigma_deg = args.scenario.heading_sigma_deg;
  options.wild_rate = args.scenario.wild_rate;
  options.signal = args.signal;
  std::vector<SimulatedBearing> bearings;
  try {
    bearings = simulate_bearings(scenario, options);
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << args.scenario.scenario << ": " << e.diagnostic().reason << "\n";
    return kExitInputError;
  }
  if (bearings.empty()) {
    std::cerr << "lobfix: no station hears the transmitter: no bearing to write\n";
    return kExitNoFix;
  }
  try {
    if (!args.truth.empty())
      write_truth_csv(args.truth, bearings);
    if (!args.gpx.empty())
      write_tracks_gpx(args.gpx, bearings);
    if (args.output == "-")
      std::cout << format_simulated_csv(bearings, args.signal);
    else
      write_simulated_csv(args.output, bearings, args.signal);
  } catch (const OutputError& e) {
    std::cerr << "lobfix: " << e.what() << "\n";
    return kExitOutputError;
  }
  int wild = 0;
  for (const SimulatedBearing& b : bearings)
    wild += b.wild ? 1 : 0;
  if (args.output != "-") {
    std::cout << bearings.size() << " simulated bearings (" << wild << " wild) from "
              << scenario.stations.size() << " stations written to " << args.output << ", seed "
              << args.scenario.seed << "\n";
  }
  return kExitOk;
}

}  // namespace lobfix_app
