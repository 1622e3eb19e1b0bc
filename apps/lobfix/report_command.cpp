#include "report_command.hpp"

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
  add_area_options(cmd, args.area);
  cmd->add_flag("--json", args.json, "print the JSON summary (as 'area --json') instead of text");
  cmd->add_flag("-q,--quiet", args.quiet, "print no summary (files and errors only)");
  return cmd;
}

int run_report(const ReportArgs& args) {
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
