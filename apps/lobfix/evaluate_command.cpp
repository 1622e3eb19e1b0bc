#include "evaluate_command.hpp"

#include <cmath>
#include <cstdio>
#include <iostream>
#include <nlohmann/json.hpp>

#include "exit_codes.hpp"
#include "lobfix/error.hpp"
#include "lobfix/evaluate.hpp"
#include "lobfix/robust.hpp"
#include "lobfix/time.hpp"
#include "progress.hpp"
#include "scenario_input.hpp"

namespace lobfix_app {

CLI::App* add_evaluate_command(CLI::App& app, EvaluateArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "evaluate",
      "Check a planned geometry before going out: simulate the scenario many times (trial t "
      "with seed + t), solve each like `lobfix solve`, and report the RMSE of the fixes "
      "against the Cramer-Rao bound and how often the 50% and 95% ellipses hold the "
      "transmitter. The transmitter must stay put. A prediction from the stated sigmas, not "
      "a guarantee: real bearings carry errors no scenario has.");
  add_scenario_options(cmd, args.scenario);
  cmd->add_option("--trials", args.trials, "number of simulated hunts")
      ->capture_default_str()
      ->check(CLI::Range(1, 10000000));
  // The solve options of add_fix_options that apply (its --seed would clash with the
  // scenario's, and windows do not apply to a fixed transmitter).
  cmd->add_option("--confidence", args.fix.confidence,
                  "ellipse probabilities whose coverage is counted, comma-separated")
      ->delimiter(',')
      ->capture_default_str();
  cmd->add_option("--robust", args.fix.robust, "loss for wild bearings, as for solve")
      ->capture_default_str()
      ->check(CLI::IsMember({"none", "huber", "cauchy", "andrews"}));
  cmd->add_option("--robust-tuning", args.fix.robust_tuning, "tuning constant (0: usual)")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 100.0));
  cmd->add_flag("--exclude-outliers", args.fix.exclude_outliers,
                "leave outliers out and solve the rest again, as for solve");
  cmd->add_option("--max-range-km", args.fix.max_range_km, "as for solve")
      ->capture_default_str()
      ->check(CLI::Range(0.001, 15000.0));
  cmd->add_flag("--regions", args.regions,
                "also count how often the probability map's highest-density regions of the "
                "same probabilities hold the transmitter (as `lobfix area` draws them; slower)");
  cmd->add_option("--wild-fraction", args.wild_fraction,
                  "the maps' chance that any one bearing is wild, as for area")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 0.49));
  cmd->add_flag("--json", args.json, "print a machine-readable report");
  return cmd;
}

int run_evaluate(const EvaluateArgs& args) {
  using namespace lobfix;
  for (const double p : args.fix.confidence) {
    if (!(p > 0.0 && p < 1.0)) {
      std::cerr << "lobfix: --confidence " << p << " is not a probability between 0 and 1\n";
      return kExitUsage;
    }
  }
  Scenario scenario;
  if (const int rc = load_scenario(args.scenario.scenario, args.scenario.sigma_deg, scenario);
      rc != kExitOk)
    return rc;
  std::string reason;
  const std::optional<std::int64_t> start = parse_iso8601_ns(args.scenario.start, &reason);
  if (!start) {
    std::cerr << "lobfix: --start " << reason << "\n";
    return kExitUsage;
  }
  EvaluationOptions options;
  options.trials = args.trials;
  options.simulation.seed = args.scenario.seed;
  options.simulation.start_unix_ns = *start;
  options.simulation.heading_sigma_deg = args.scenario.heading_sigma_deg;
  options.simulation.wild_rate = args.scenario.wild_rate;
  options.solve.loss = *parse_robust_loss(args.fix.robust);
  options.solve.loss_tuning = args.fix.robust_tuning;
  options.solve.exclude_outliers = args.fix.exclude_outliers;
  options.solve.max_range_m = args.fix.max_range_km * 1000.0;
  options.probabilities = args.fix.confidence;
  options.regions = args.regions;
  options.map.wild_fraction = args.wild_fraction;
  Evaluation ev;
  try {
    Progress progress("evaluate trials");
    options.progress = progress.callback();
    ev = evaluate_geometry(scenario, options);
  } catch (const InputError& e) {
    const Diagnostic& d = e.diagnostic();
    std::cerr << (d.file.empty() ? "lobfix: " + d.reason : d.to_string()) << "\n";
    return kExitInputError;
  }
  const double ratio = ev.bound.usable && ev.fixed > 0 ? ev.rmse_m / ev.bound.rms_m : NAN;
  if (args.json) {
    nlohmann::ordered_json j;
    j["scenario"] = args.scenario.scenario;
    j["trials"] = ev.trials;
    j["fixed"] = ev.fixed;
    j["seed"] = args.scenario.seed;
    j["bearings_per_trial"] = ev.bearings_per_trial;
    j["robust_loss"] = args.fix.robust;
    j["rmse_m"] = ev.rmse_m;
    j["bound_rms_m"] = ev.bound.usable ? nlohmann::ordered_json(ev.bound.rms_m) : nullptr;
    j["rmse_over_bound"] = std::isfinite(ratio) ? nlohmann::ordered_json(ratio) : nullptr;
    j["median_miss_m"] = ev.median_miss_m;
    j["bound_cep_m"] = ev.bound.usable ? nlohmann::ordered_json(ev.bound.cep_m) : nullptr;
    nlohmann::ordered_json cov = nlohmann::ordered_json::array();
    for (std::size_t i = 0; i < ev.probabilities.size(); ++i)
      cov.push_back({{"probability", ev.probabilities[i]}, {"coverage", ev.coverage[i]}});
    j["coverage"] = cov;
    if (!ev.region_coverage.empty()) {
      nlohmann::ordered_json rc = nlohmann::ordered_json::array();
      for (std::size_t i = 0; i < ev.probabilities.size(); ++i)
        rc.push_back({{"probability", ev.probabilities[i]}, {"coverage", ev.region_coverage[i]}});
      j["region_coverage"] = rc;
    }
    std::cout << j.dump(2) << "\n";
  } else {
    std::printf("Evaluated %s: %d trials from seed %llu, %d bearings each, robust loss %s\n",
                args.scenario.scenario.c_str(), ev.trials, args.scenario.seed,
                ev.bearings_per_trial, args.fix.robust.c_str());
    std::printf("  fixed in %d of %d trials\n", ev.fixed, ev.trials);
    if (ev.bound.usable) {
      std::printf("  RMSE %.1f m against the Cramer-Rao bound %.1f m (ratio %.3f)\n", ev.rmse_m,
                  ev.bound.rms_m, ratio);
      std::printf("  median miss %.1f m against the bound's CEP %.1f m\n", ev.median_miss_m,
                  ev.bound.cep_m);
    } else {
      std::printf("  RMSE %.1f m; no Cramer-Rao bound (geometry not usable)\n", ev.rmse_m);
    }
    for (std::size_t i = 0; i < ev.probabilities.size(); ++i) {
      std::printf("  %g%% ellipse held the transmitter in %.1f%% of the fixes\n",
                  100.0 * ev.probabilities[i], 100.0 * ev.coverage[i]);
    }
    for (std::size_t i = 0; i < ev.region_coverage.size(); ++i) {
      std::printf("  %g%% region of the probability map held it in %.1f%% of the fixes\n",
                  100.0 * ev.probabilities[i], 100.0 * ev.region_coverage[i]);
    }
    std::printf(
        "A prediction from the stated sigmas, not a guarantee: real bearings carry errors no "
        "scenario has.\n");
  }
  return ev.fixed > 0 ? kExitOk : kExitNoFix;
}

}  // namespace lobfix_app
