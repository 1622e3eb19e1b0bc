#include "solve_command.hpp"

#include <iostream>
#include <memory>

#include "crs_output.hpp"
#include "exit_codes.hpp"
#include "lobfix/error.hpp"
#include "lobfix/export.hpp"
#include "lobfix/summary.hpp"

namespace lobfix_app {

CLI::App* add_solve_command(CLI::App& app, SolveArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "solve",
      "Solve a fix from a file of bearings (CSV, or JSON Lines with the same field names).\n"
      "Each row is one bearing: time (ISO 8601 with Z or an offset, or Unix seconds), "
      "station, lat, lon (WGS 84 degrees; or leave them empty and give the station's GPS "
      "track with --track), bearing_deg (clockwise, toward the transmitter) with its "
      "reference (true, magnetic, grid, or relative to the platform's heading), sigma_deg "
      "(1-sigma), and optionally pos_sigma_m, alt_m, signal (one fix per label), heading_deg, "
      "bearing_alt_deg (a mirror candidate) or two-antenna phase readings. See "
      "docs/input-format.md.");
  add_input_options(cmd, args.input);
  add_fix_options(cmd, args.fix);
  cmd->add_option("--geojson", args.geojson, "write stations, rays, fix and ellipses as GeoJSON");
  cmd->add_option("--kml", args.kml, "write the same as KML (for Google-Earth-style viewers)");
  cmd->add_flag("--json", args.json, "print a machine-readable JSON summary instead of text");
  cmd->add_flag("-q,--quiet", args.quiet, "print no summary (files and errors only)");
  cmd->add_option("--crs", args.crs,
                  "also give the fix and the stations in this projected CRS (e.g. EPSG:2056), "
                  "in the summary and --json");
  cmd->add_option("--ray-length-km", args.ray_length_km,
                  "length of the drawn rays; 0 draws each a little past its fix")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 20000.0));
  return cmd;
}

int run_solve(const SolveArgs& args) {
  using namespace lobfix;
  std::unique_ptr<ProjectedCrs> crs;
  if (const int rc = open_output_crs(args.crs, crs); rc != kExitOk)
    return rc;
  LoadedInput loaded;
  if (const int rc = load_bearings(args.input, loaded); rc != kExitOk)
    return rc;
  SolvedRun solved;
  if (const int rc = solve_bearings(args.fix, loaded.bearings, solved); rc != kExitOk)
    return rc;

  // Files only when there is a fix to show; each appears whole or not at all.
  if (solved.any_fixed) {
    ExportOptions export_options;
    export_options.ray_length_m = args.ray_length_km * 1000.0;
    try {
      if (!args.geojson.empty())
        write_geojson(args.geojson, loaded.bearings, solved.results, export_options);
      if (!args.kml.empty())
        write_kml(args.kml, loaded.bearings, solved.results, export_options);
    } catch (const OutputError& e) {
      std::cerr << "lobfix: " << e.what() << "\n";
      return kExitOutputError;
    }
  }

  const RunInfo run = make_run_info(args.input, loaded, solved);
  if (args.json) {
    const std::string json = json_summary(run, loaded.bearings, solved.results);
    std::cout << (crs ? with_crs_json(json, *crs, loaded.bearings, solved.results, {}) : json);
  } else if (!args.quiet) {
    const std::string text = text_summary(run, loaded.bearings, solved.results);
    std::cout << (crs ? with_crs_text(text, *crs, loaded.bearings, solved.results, {}) : text);
  }
  return solved.all_fixed ? kExitOk : kExitNoFix;
}

}  // namespace lobfix_app
