#include "solve_command.hpp"

#include <cstdio>
#include <iostream>
#include <string>
#include <vector>

#include "exit_codes.hpp"
#include "lobfix/csv_reader.hpp"
#include "lobfix/error.hpp"
#include "lobfix/export.hpp"
#include "lobfix/solver.hpp"
#include "lobfix/summary.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix_app {

CLI::App* add_solve_command(CLI::App& app, SolveArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "solve",
      "Solve a fix from a CSV of bearings.\n"
      "Each row is one bearing: time (ISO 8601 with Z or an offset), station, lat, lon "
      "(WGS 84 degrees), bearing_deg (true, clockwise from north, toward the transmitter), "
      "sigma_deg (1-sigma uncertainty), and optionally pos_sigma_m, alt_m and signal "
      "(bearings with different signal labels get one fix each). See docs/input-format.md.");
  cmd->add_option("INPUT", args.input, "bearings CSV file ('-' reads standard input)")->required();
  cmd->add_option("--geojson", args.geojson, "write stations, rays, fix and ellipses as GeoJSON");
  cmd->add_option("--kml", args.kml, "write the same as KML (for Google-Earth-style viewers)");
  cmd->add_flag("--json", args.json, "print a machine-readable JSON summary instead of text");
  cmd->add_flag("-q,--quiet", args.quiet, "print no summary (files and errors only)");
  cmd->add_option("--confidence", args.confidence,
                  "ellipse probabilities, comma-separated, each between 0 and 1")
      ->delimiter(',')
      ->capture_default_str();
  cmd->add_option("--sigma-deg", args.sigma_deg,
                  "bearing sigma (deg) for rows without a sigma_deg value");
  cmd->add_option("--max-range-km", args.max_range_km,
                  "refuse fixes farther than this from any station (long-range HF needs the "
                  "default; geodesic rays meet again near their antipode)")
      ->capture_default_str()
      ->check(CLI::Range(0.001, 15000.0));
  cmd->add_option("--ray-length-km", args.ray_length_km,
                  "length of the drawn rays; 0 draws each a little past its fix")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 20000.0));
  cmd->add_option("--alpha", args.alpha,
                  "significance level of the chi-square check of the stated sigmas")
      ->capture_default_str()
      ->check(CLI::Range(1e-6, 0.5));
  cmd->add_option("--seed", args.seed, "seed for the sampled start pairs (large inputs)")
      ->capture_default_str();
  cmd->add_flag("--skip-bad", args.skip_bad,
                "skip rows with bad cells (each is listed on stderr) instead of failing");
  return cmd;
}

int run_solve(const SolveArgs& args) {
  using namespace lobfix;
  CsvReadOptions read_options;
  read_options.default_sigma_deg = args.sigma_deg;
  if (args.sigma_deg && !(*args.sigma_deg > 0.0 && *args.sigma_deg <= 90.0)) {
    std::cerr << "lobfix: --sigma-deg must be in (0, 90]\n";
    return kExitUsage;
  }
  for (const double p : args.confidence) {
    if (!(p > 0.0 && p < 1.0)) {
      std::cerr << "lobfix: --confidence " << p << " is not a probability between 0 and 1\n";
      return kExitUsage;
    }
  }
  CsvReadResult read;
  try {
    read = args.input == "-" ? read_bearings_csv(std::cin, "<stdin>", read_options)
                             : read_bearings_csv_file(args.input, read_options);
  } catch (const InputError& e) {
    std::cerr << e.what() << "\n";
    return kExitInputError;
  }
  for (const Diagnostic& w : read.warnings)
    std::cerr << "warning: " << w.to_string() << "\n";
  if (!read.row_errors.empty()) {
    for (const Diagnostic& d : read.row_errors) {
      std::cerr << (args.skip_bad ? "skipped: " : "") << d.to_string() << "\n";
    }
    if (!args.skip_bad) {
      const std::size_t n = read.row_errors.size();
      std::cerr << "lobfix: " << n << (n == 1 ? " problem" : " problems")
                << " in the input; nothing was written. Correct the file, or use --skip-bad to "
                   "leave those "
                   "rows out.\n";
      return kExitInputError;
    }
  }

  SolveOptions solve_options;
  solve_options.max_range_m = args.max_range_km * 1000.0;
  solve_options.seed = args.seed;
  UncertaintyOptions uncertainty_options;
  uncertainty_options.probabilities = args.confidence;
  uncertainty_options.alpha = args.alpha;

  std::vector<FixResult> results;
  try {
    for (Fix& fix : solve_by_signal(read.bearings, solve_options)) {
      FixResult r;
      r.uncertainty = describe_uncertainty(fix, uncertainty_options);
      r.fix = std::move(fix);
      results.push_back(std::move(r));
    }
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.diagnostic().reason << "\n";
    return kExitUsage;
  }
  if (read.bearings.empty()) {
    std::cerr << "lobfix: no usable bearings in " << args.input << "\n";
    return kExitNoFix;
  }

  bool all_fixed = true;
  bool any_fixed = false;
  for (const FixResult& r : results) {
    all_fixed = all_fixed && r.fix.ok();
    any_fixed = any_fixed || r.fix.ok();
    if (!r.fix.ok()) {
      std::cerr << "lobfix: no fix for "
                << (r.fix.signal.empty() ? std::string("the bearings")
                                         : "signal '" + r.fix.signal + "'")
                << ": " << r.fix.message << "\n";
    }
  }

  RunInfo run;
  run.input = args.input;
  run.rows_read = read.rows_read;
  run.version = LOBFIX_VERSION;
  if (args.skip_bad)
    run.skipped = read.row_errors;
  run.warnings = read.warnings;

  // Files only when there is a fix to show; each appears whole or not at all.
  if (any_fixed) {
    ExportOptions export_options;
    export_options.ray_length_m = args.ray_length_km * 1000.0;
    try {
      if (!args.geojson.empty())
        write_geojson(args.geojson, read.bearings, results, export_options);
      if (!args.kml.empty())
        write_kml(args.kml, read.bearings, results, export_options);
    } catch (const OutputError& e) {
      std::cerr << "lobfix: " << e.what() << "\n";
      return kExitOutputError;
    }
  }

  if (args.json) {
    std::cout << json_summary(run, read.bearings, results);
  } else if (!args.quiet) {
    std::cout << text_summary(run, read.bearings, results);
  }
  return all_fixed ? kExitOk : kExitNoFix;
}

}  // namespace lobfix_app
