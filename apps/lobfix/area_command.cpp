#include "area_command.hpp"

#include <filesystem>
#include <iostream>
#include <memory>

#include "crs_output.hpp"
#include "exit_codes.hpp"
#include "lobfix/error.hpp"
#include "lobfix/export.hpp"
#include "lobfix/raster.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/summary.hpp"

namespace lobfix_app {

namespace {

// One GeoTIFF per signal: the name as given for the first, "-2", "-3"... before the
// extension for the others.
std::string numbered(const std::string& path, std::size_t n) {
  if (n == 0)
    return path;
  const std::filesystem::path p(path);
  return (p.parent_path() /
          (p.stem().string() + "-" + std::to_string(n + 1) + p.extension().string()))
      .string();
}

}  // namespace

CLI::App* add_area_command(CLI::App& app, AreaArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "area",
      "Solve the bearings as 'solve' does, then map where the transmitter may be: a "
      "probability map, its highest-probability regions, and search segments on the UTM/MGRS "
      "grid ranked by their probability of area (POA), for the teams. See "
      "docs/search-area.md.");
  add_input_options(cmd, args.input);
  add_fix_options(cmd, args.fix, /*with_windows=*/false);
  add_area_options(cmd, args.area);
  cmd->add_option("--geotiff", args.geotiff, "write the probability per cell as a GeoTIFF");
  cmd->add_option("--geojson", args.geojson,
                  "write stations, rays, fix, ellipses, regions and segments as GeoJSON");
  cmd->add_option("--kml", args.kml, "write the same as KML");
  cmd->add_option("--gpkg", args.gpkg, "write every layer to a GeoPackage");
  cmd->add_option("--gpx", args.gpx, "write GPX waypoints of the fix and segment centres");
  cmd->add_option("--segments-csv", args.segments_csv, "write the team list of segments as CSV");
  cmd->add_flag("--json", args.json, "print a machine-readable JSON summary instead of text");
  cmd->add_flag("-q,--quiet", args.quiet, "print no summary (files and errors only)");
  cmd->add_option("--crs", args.crs,
                  "also give the fix, the stations and the segment centres in this projected "
                  "CRS (e.g. EPSG:2056), in the summary and --json");
  cmd->add_option("--ray-length-km", args.ray_length_km,
                  "length of the drawn rays; 0 draws each a little past its fix")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 20000.0));
  return cmd;
}

int run_area(const AreaArgs& args) {
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

  std::vector<SearchArea> areas;
  if (const int rc = make_search_areas(args.area, loaded.bearings, solved.results, areas);
      rc != kExitOk)
    return rc;
  // A signal without a fix was reported by solve_bearings; one with a fix but no map here.
  bool all_mapped = true;
  for (std::size_t i = 0; i < areas.size(); ++i) {
    const SearchArea& a = areas[i];
    if (!a.map.ok && solved.results[i].fix.ok()) {
      all_mapped = false;
      std::cerr << "lobfix: no search area for "
                << (a.signal.empty() ? std::string("the bearings") : "signal '" + a.signal + "'")
                << ": " << a.map.message << "\n";
    }
  }

  if (solved.any_fixed) {
    ExportOptions export_options;
    export_options.ray_length_m = args.ray_length_km * 1000.0;
    try {
      if (!args.geotiff.empty()) {
        std::size_t n = 0;
        for (const SearchArea& a : areas) {
          if (!a.map.ok)
            continue;
          GeoTiffOptions tiff;
          tiff.description = "probability per cell, signal " + (a.signal.empty() ? "-" : a.signal);
          const std::vector<float> cells(a.map.mass.begin(), a.map.mass.end());
          write_geotiff(numbered(args.geotiff, n++), a.map.grid, cells, tiff);
        }
      }
      if (!args.geojson.empty())
        write_geojson(args.geojson, loaded.bearings, solved.results, areas, export_options);
      if (!args.kml.empty())
        write_kml(args.kml, loaded.bearings, solved.results, areas, export_options);
      if (!args.gpkg.empty())
        write_geopackage(args.gpkg, loaded.bearings, solved.results, areas, export_options);
      if (!args.gpx.empty())
        write_gpx_waypoints(args.gpx, solved.results, areas);
      if (!args.segments_csv.empty())
        write_text_file(args.segments_csv, segments_csv(areas));
    } catch (const OutputError& e) {
      std::cerr << "lobfix: " << e.what() << "\n";
      return kExitOutputError;
    }
  }

  const RunInfo run = make_run_info(args.input, loaded, solved);
  if (args.json) {
    const std::string json = json_summary(run, loaded.bearings, solved.results, areas);
    std::cout << (crs ? with_crs_json(json, *crs, loaded.bearings, solved.results, areas) : json);
  } else if (!args.quiet) {
    const std::string text = text_summary(run, loaded.bearings, solved.results, areas);
    std::cout << (crs ? with_crs_text(text, *crs, loaded.bearings, solved.results, areas) : text);
  }
  return solved.all_fixed && all_mapped ? kExitOk : kExitNoFix;
}

}  // namespace lobfix_app
