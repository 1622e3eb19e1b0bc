#include "coverage_command.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <iostream>
#include <nlohmann/json.hpp>

#include "exit_codes.hpp"
#include "lobfix/error.hpp"
#include "lobfix/planning.hpp"
#include "lobfix/planning_export.hpp"
#include "lobfix/raster.hpp"
#include "progress.hpp"
#include "scenario_input.hpp"

namespace lobfix_app {

CLI::App* add_coverage_command(CLI::App& app, CoverageArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "coverage",
      "Map the accuracy a planned network of fixed stations would give: the CEP of the "
      "Cramer-Rao bound for a transmitter at each cell, one bearing from every station in "
      "range, as a GeoTIFF in the stations' UTM zone. Cells with fewer than two stations in "
      "range or with all lines of sight nearly collinear are no-data. SITES is a scenario CSV "
      "(docs/planning.md): role,name,lat,lon,sigma_deg,max_range_km (station rows; other rows "
      "and columns are reported and ignored). A prediction, not a guarantee: terrain, "
      "reflections and interference are not in it.");
  cmd->add_option("SITES", args.sites, "station sites, a scenario CSV")->required();
  cmd->add_option("-o,--output", args.output, "the GeoTIFF to write (float32 CEP in metres)")
      ->required();
  cmd->add_option("--contours", args.contour_levels_m,
                  "CEP values (m) to draw as lines, comma-separated, e.g. 250,500,1000")
      ->delimiter(',');
  cmd->add_option("--contours-geojson", args.contours_geojson,
                  "write the contour lines as GeoJSON (needs --contours)");
  cmd->add_option("--sigma-deg", args.sigma_deg, "bearing sigma for sites without sigma_deg");
  cmd->add_option("--cell-m", args.cell_m, "side of a cell")
      ->capture_default_str()
      ->check(CLI::Range(1.0, 100000.0));
  cmd->add_option("--margin-km", args.margin_km, "map this far beyond the outermost stations")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 2000.0));
  cmd->add_option("--min-crossing-deg", args.min_crossing_deg,
                  "cells whose lines of sight all cross at less than this are no-data")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 89.0));
  cmd->add_option("--threads", args.threads, "threads (0: one per processor)")
      ->capture_default_str()
      ->check(CLI::Range(0, 256));
  cmd->add_flag("--json", args.json, "print a machine-readable summary");
  return cmd;
}

int run_coverage(const CoverageArgs& args) {
  using namespace lobfix;
  if (!args.contours_geojson.empty() && args.contour_levels_m.empty()) {
    std::cerr << "lobfix: --contours-geojson needs --contours\n";
    return kExitUsage;
  }
  for (const double level : args.contour_levels_m) {
    if (!(level > 0.0)) {
      std::cerr << "lobfix: --contours " << level << " is not a CEP above 0 m\n";
      return kExitUsage;
    }
  }
  Scenario scenario;
  if (const int rc = load_scenario(args.sites, args.sigma_deg, scenario); rc != kExitOk)
    return rc;
  if (scenario.transmitter) {
    std::cerr << "warning: " << scenario.transmitter->source.file << ":"
              << scenario.transmitter->source.line
              << ": the transmitter row is not used by coverage (every cell is a transmitter)\n";
  }
  std::vector<PlannedStation> stations;
  for (const ScenarioStation& s : scenario.stations) {
    if (s.speed_m_s > 0.0) {
      std::cerr << "warning: " << s.source.file << ":" << s.source.line << ": station '" << s.name
                << "' moves; coverage uses its start position\n";
    }
    stations.push_back({s.name, s.start, s.sigma_deg, s.max_range_m});
  }

  CoverageMap map;
  try {
    const UtmGrid grid = grid_around(stations, args.margin_km * 1000.0, args.cell_m);
    PlanningOptions options;
    options.min_crossing_deg = args.min_crossing_deg;
    options.num_threads = args.threads;
    Progress progress("coverage rows");
    options.progress = progress.callback();
    map = coverage_map(stations, grid, options);
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.diagnostic().reason << "\n";
    return kExitUsage;
  }

  try {
    GeoTiffOptions tiff;
    tiff.nodata = std::nan("");
    tiff.description = "CEP of the Cramer-Rao bound (m), one bearing per station in range";
    tiff.units = "m";
    write_geotiff(args.output, map.grid, map.cep_m, tiff);
    if (!args.contours_geojson.empty())
      write_cep_contours_geojson(args.contours_geojson, map, args.contour_levels_m);
  } catch (const OutputError& e) {
    std::cerr << "lobfix: " << e.what() << "\n";
    return kExitOutputError;
  }

  std::vector<float> usable;
  for (const float v : map.cep_m)
    if (std::isfinite(v))
      usable.push_back(v);
  std::sort(usable.begin(), usable.end());
  const double best = usable.empty() ? 0.0 : usable.front();
  const double median = usable.empty() ? 0.0 : usable[usable.size() / 2];
  const UtmGrid& g = map.grid;
  char zone[16];
  std::snprintf(zone, sizeof zone, "%d%s", g.zone.zone, g.zone.northp ? "N" : "S");
  if (args.json) {
    nlohmann::ordered_json j;
    j["output"] = args.output;
    j["epsg"] = g.zone.epsg();
    j["columns"] = g.columns;
    j["rows"] = g.rows;
    j["cell_m"] = g.cell_m;
    j["stations"] = stations.size();
    j["usable_cells"] = map.usable_cells;
    j["best_cep_m"] = best;
    j["median_cep_m"] = median;
    std::cout << j.dump(2) << "\n";
  } else {
    std::printf("Coverage map %s: %d x %d cells of %.0f m, UTM %s (EPSG:%d)\n", args.output.c_str(),
                g.columns, g.rows, g.cell_m, zone, g.zone.epsg());
    std::printf("  %zu stations; %zu of %zu cells with usable geometry (%.1f%%)\n", stations.size(),
                map.usable_cells, g.size(),
                100.0 * static_cast<double>(map.usable_cells) / static_cast<double>(g.size()));
    if (!usable.empty())
      std::printf("  predicted CEP: best %.0f m, median %.0f m over the usable cells\n", best,
                  median);
    if (!args.contours_geojson.empty())
      std::printf("  contours written to %s\n", args.contours_geojson.c_str());
    std::printf(
        "A prediction from the stated bearing sigmas, not a guarantee: terrain, reflections "
        "and interference are not in it.\n");
  }
  return kExitOk;
}

}  // namespace lobfix_app
