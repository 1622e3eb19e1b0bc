#include "report_command.hpp"

#include <fmt/format.h>

#include <chrono>
#include <iostream>
#include <memory>
#include <nlohmann/json.hpp>

#include "crs_output.hpp"
#include "exit_codes.hpp"
#include "lobfix/crs.hpp"
#include "lobfix/error.hpp"
#include "lobfix/export.hpp"
#include "lobfix/report.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/summary.hpp"
#include "verbose.hpp"

namespace lobfix_app {

CLI::App* add_report_command(CLI::App& app, ReportArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "report",
      "Solve the bearings and map the search area as 'area' does, then write a printable "
      "field report: one self-contained HTML file (map, fix in every notation, how far to "
      "trust it, bearing and segment tables, cautions) that opens in any browser without a "
      "network. See docs/report.md. Exit codes: 0 report written, 1 bad input, 2 bad "
      "command line (e.g. unknown --crs), 3 some signal has no fix (the report is still "
      "written and says why), 4 a file could not be written.");
  add_input_options(cmd, args.input);
  add_fix_options(cmd, args.fix, /*with_windows=*/false);
  cmd->add_option("-o,--output", args.output, "the HTML report to write")->required();
  cmd->add_option("--svg", args.svg, "also write the map alone as an SVG file");
  cmd->add_option("--crs", args.crs,
                  "also give the fix, stations and segment centres in this projected CRS "
                  "(e.g. EPSG:2056), through PROJ");
  cmd->add_option("--title", args.title, "the report's title");
  cmd->add_option("--segment-m", args.segment_m, "side of a search segment (m, on the UTM grid)")
      ->capture_default_str()
      ->check(CLI::Range(10.0, 100000.0));
  cmd->add_option("--cell-m", args.cell_m,
                  "side of a map cell (m); must divide --segment-m; 0 picks one")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 100000.0));
  cmd->add_option("--area-km", args.area_km,
                  "side of the square mapped around the fix (km); 0 sizes it from the fix's "
                  "uncertainty")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 2000.0));
  cmd->add_option("--regions", args.regions,
                  "probabilities of the highest-probability regions, comma-separated")
      ->delimiter(',')
      ->capture_default_str();
  cmd->add_option("--segments-cover", args.segments_cover,
                  "the segments cover the region of this probability")
      ->capture_default_str()
      ->check(CLI::Range(0.5, 0.999));
  cmd->add_option("--wild-fraction", args.wild_fraction,
                  "chance that any one bearing is wild (a reflection)")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 0.49));
  cmd->add_option("--merge-below", args.merge_below,
                  "a square holding less POA than this joins its best neighbouring segment")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 0.5));
  cmd->add_option("--searched", args.searched,
                  "an unsuccessful search: SEGMENT:POD, e.g. S01:0.7; repeat for several")
      ->take_all()
      ->allow_extra_args(false);
  cmd->add_flag("--json", args.json, "print the JSON summary (as 'area --json') instead of text");
  cmd->add_flag("-q,--quiet", args.quiet, "print no summary (files and errors only)");
  return cmd;
}

int run_report(const ReportArgs& args) {
  using namespace lobfix;
  SearchAreaOptions options;
  options.map.cell_m = args.cell_m;
  options.map.align_m = args.segment_m;
  options.map.half_side_m = args.area_km * 500.0;
  options.map.wild_fraction = args.wild_fraction;
  options.region_probabilities = args.regions;
  options.segments.region_probability = args.segments_cover;
  options.segments.merge_below_poa = args.merge_below;
  for (const std::string& text : args.searched) {
    const auto report = parse_search_report(text);
    if (!report) {
      std::cerr << "lobfix: --searched " << text
                << ": write SEGMENT:POD, e.g. S01:0.7 or S01:70%\n";
      return kExitUsage;
    }
    options.searched.push_back(*report);
  }
  for (const double p : args.regions) {
    if (!(p > 0.0 && p < 1.0)) {
      std::cerr << "lobfix: --regions " << p << " is not a probability between 0 and 1\n";
      return kExitUsage;
    }
  }
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
  try {
    for (const FixResult& r : solved.results) {
      const auto t_area = std::chrono::steady_clock::now();
      areas.push_back(make_search_area(loaded.bearings, r, options));
      const SearchArea& a = areas.back();
      if (a.map.ok) {
        say(
            fmt::format("search area of '{}': {} x {} cells of {} m, {} computed one by one, "
                        "{} segments, in {:.0f} ms",
                        a.signal, a.map.grid.columns, a.map.grid.rows, a.map.grid.cell_m,
                        a.map.cells_evaluated, a.plan.segments.size(), ms_since(t_area)));
      }
    }
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.diagnostic().reason << "\n";
    return kExitUsage;
  }

  const RunInfo run = make_run_info(args.input, loaded, solved);
  ReportOptions report;
  if (!args.title.empty())
    report.title = args.title;
  report.crs = crs.get();
  try {
    write_text_file(args.output, report_html(run, loaded.bearings, solved.results, areas, report));
    if (!args.svg.empty())
      write_text_file(args.svg, report_map_svg(loaded.bearings, solved.results, areas, report));
  } catch (const OutputError& e) {
    std::cerr << "lobfix: " << e.what() << "\n";
    return kExitOutputError;
  }

  if (args.json) {
    std::string json = json_summary(run, loaded.bearings, solved.results, areas);
    if (crs)
      json = with_crs_json(json, *crs, loaded.bearings, solved.results, areas);
    std::cout << json;
  } else if (!args.quiet) {
    const std::string text = text_summary(run, loaded.bearings, solved.results, areas);
    std::cout << (crs ? with_crs_text(text, *crs, loaded.bearings, solved.results, areas) : text);

    std::cout << "\nReport written to " << args.output
              << (args.svg.empty() ? "" : ", map to " + args.svg)
              << ": open it in a browser, or print it (A4 or US Letter).\n";
  }
  return solved.all_fixed ? kExitOk : kExitNoFix;
}

}  // namespace lobfix_app
