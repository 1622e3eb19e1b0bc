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
  AreaOptionArgs area;
  bool json = false;
  bool quiet = false;
};

CLI::App* add_report_command(CLI::App& app, ReportArgs& args);
int run_report(const ReportArgs& args);

}  // namespace lobfix_app
