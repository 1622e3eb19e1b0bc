// `lobfix report`: bearings in; the printable field report (one self-contained HTML file) and
// optionally the map alone as SVG out. docs/report.md.
#pragma once

#include <CLI/CLI.hpp>
#include <string>
#include <vector>

#include "pipeline.hpp"

namespace lobfix_app {

struct ReportArgs {
  InputArgs input;
  FixArgs fix;
  std::string output;
  std::string svg;
  std::string crs;
  std::string title;
  double cell_m = 0.0;
  double segment_m = 250.0;
  double area_km = 0.0;
  std::vector<double> regions{0.5, 0.95};
  double segments_cover = 0.95;
  double wild_fraction = 0.01;
  double merge_below = 0.002;
  std::vector<std::string> searched;
  bool json = false;
  bool quiet = false;
};

CLI::App* add_report_command(CLI::App& app, ReportArgs& args);
int run_report(const ReportArgs& args);

}  // namespace lobfix_app
